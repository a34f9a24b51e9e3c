//! The position tree of a YAML document: where each node and key starts.
//!
//! Owns: [`Node`], [`tree`] (built from the reader's parser events) and
//! finding what starts at a position ([`node_at`]), for messages.
//! Must not: validate anything; nothing depends on it but positions and
//! paths printed in messages.

use super::MAX_NODES;
use serde_saphyr::granit_parser::{Event, Parser, ScalarStyle};
use std::fmt::Write as _;

/// One node of a YAML document with the position where it starts.
#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// 1-based line.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
    pub kind: NodeKind,
}

/// What a [`Node`] is.
#[derive(Debug, Clone, PartialEq)]
pub enum NodeKind {
    /// Key and value nodes in file order (duplicates kept).
    Map(Vec<(Node, Node)>),
    Seq(Vec<Node>),
    /// The text after escape processing; `plain` if written without quotes
    /// or block indicator.
    Scalar {
        text: String,
        plain: bool,
    },
    /// `*name`: not followed.
    Alias,
}

impl Node {
    /// The key text, if this node is a scalar.
    pub fn scalar_text(&self) -> Option<&str> {
        match &self.kind {
            NodeKind::Scalar { text, .. } => Some(text),
            _ => None,
        }
    }
}

/// The position tree of the first document of `text`, or `None` if the
/// text is not valid YAML, holds no document or exceeds the node budget.
/// For messages only: nothing validates through it.
pub fn tree(text: &str) -> Option<Node> {
    enum Frame {
        Map(Node, Vec<(Node, Node)>, Option<Node>),
        Seq(Node, Vec<Node>),
    }
    let mut stack: Vec<Frame> = Vec::new();
    let mut count = 0usize;
    for ev in Parser::new_from_str(text) {
        let (ev, span) = ev.ok()?;
        let at = |kind| Node {
            line: span.start.line(),
            column: span.start.col() + 1,
            kind,
        };
        let done = match ev {
            Event::MappingStart(..) => {
                stack.push(Frame::Map(at(NodeKind::Alias), Vec::new(), None));
                None
            }
            Event::SequenceStart(..) => {
                stack.push(Frame::Seq(at(NodeKind::Alias), Vec::new()));
                None
            }
            Event::MappingEnd => match stack.pop()? {
                Frame::Map(mut n, entries, _) => {
                    n.kind = NodeKind::Map(entries);
                    Some(n)
                }
                Frame::Seq(..) => return None,
            },
            Event::SequenceEnd => match stack.pop()? {
                Frame::Seq(mut n, items) => {
                    n.kind = NodeKind::Seq(items);
                    Some(n)
                }
                Frame::Map(..) => return None,
            },
            Event::Scalar(text, style, ..) => Some(at(NodeKind::Scalar {
                text: text.into_owned(),
                plain: style == ScalarStyle::Plain,
            })),
            Event::Alias(_) => Some(at(NodeKind::Alias)),
            _ => None,
        };
        let Some(node) = done else { continue };
        count += 1;
        if count > MAX_NODES {
            return None;
        }
        match stack.last_mut() {
            None => return Some(node),
            Some(Frame::Seq(_, items)) => items.push(node),
            Some(Frame::Map(_, entries, key)) => match key.take() {
                None => *key = Some(node),
                Some(k) => entries.push((k, node)),
            },
        }
    }
    None
}

/// A key path step, printed as `.key` or `[index]`.
pub(super) fn push_step(path: &mut String, key: Option<&str>, index: usize) {
    match key {
        Some(k) if path.is_empty() => path.push_str(k),
        Some(k) => {
            path.push('.');
            path.push_str(k);
        }
        None => {
            let _ = write!(path, "[{index}]");
        }
    }
}

/// A node found at a position: its key path and the node (for a mapping
/// key, the key's value).
pub(super) struct Hit<'t> {
    pub(super) path: String,
    /// The key found (key mode) and the path of its mapping.
    pub(super) key: Option<(&'t Node, String)>,
    pub(super) node: &'t Node,
}

/// What starts at (line, column): with `key`, the deepest mapping key
/// starting there; otherwise the shallowest node starting there.
pub(super) fn node_at(root: &Node, line: usize, column: usize, key: bool) -> Option<Hit<'_>> {
    let here = |n: &Node| n.line == line && n.column == column;
    let mut best: Option<(usize, Hit)> = None;
    // Depth-first in file order, iterative: (node, its path, its depth).
    let mut todo: Vec<(&Node, String, usize)> = vec![(root, String::new(), 0)];
    while let Some((n, path, depth)) = todo.pop() {
        if !key && here(n) {
            // Pre-order: an ancestor comes before its descendants.
            return Some(Hit {
                path,
                key: None,
                node: n,
            });
        }
        match &n.kind {
            NodeKind::Map(entries) => {
                for (k, v) in entries.iter().rev() {
                    let mut p = path.clone();
                    push_step(&mut p, Some(k.scalar_text().unwrap_or("?")), 0);
                    if key && here(k) && best.as_ref().is_none_or(|b| depth + 1 > b.0) {
                        let hit = Hit {
                            path: p.clone(),
                            key: Some((k, path.clone())),
                            node: v,
                        };
                        best = Some((depth + 1, hit));
                    }
                    todo.push((v, p, depth + 1));
                }
            }
            NodeKind::Seq(items) => {
                for (i, v) in items.iter().enumerate().rev() {
                    let mut p = path.clone();
                    push_step(&mut p, None, i);
                    todo.push((v, p, depth + 1));
                }
            }
            _ => {}
        }
    }
    best.map(|(_, h)| h)
}

/// A node described for "found ...".
pub(super) fn describe(n: &Node) -> String {
    match &n.kind {
        NodeKind::Map(_) => "a mapping".into(),
        NodeKind::Seq(_) => "a list".into(),
        NodeKind::Alias => "an alias".into(),
        NodeKind::Scalar { text, plain } => {
            if *plain {
                if matches!(text.as_str(), "" | "~" | "null" | "Null" | "NULL") {
                    return "an empty value".into();
                }
                if matches!(
                    text.as_str(),
                    "true" | "True" | "TRUE" | "false" | "False" | "FALSE"
                ) {
                    return format!("the boolean {text}");
                }
                if text.parse::<f64>().is_ok() {
                    return format!("the number {text}");
                }
            }
            format!("the string '{text}'")
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tree_has_positions_and_paths() {
        let t = tree("a:\n  b: [1, {c: x}]\n- bad").is_none();
        assert!(t, "invalid YAML has no tree");
        let root = tree("a:\n  b: [1, {c: x}]\n").unwrap();
        let h = node_at(&root, 2, 11, true).unwrap();
        assert_eq!(
            (h.path.as_str(), h.node.scalar_text()),
            ("a.b[1].c", Some("x"))
        );
        let h = node_at(&root, 2, 6, false).unwrap();
        assert_eq!(
            (h.path.as_str(), describe(h.node).as_str()),
            ("a.b", "a list")
        );
    }
}
