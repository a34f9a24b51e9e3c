//! Finding the line and column of a key path in scheme text.
//!
//! Owns: key paths ([`Seg`], [`KeyPath`]) and the locator, which follows a
//! key path through the YAML reader's position tree ([`crate::yaml::tree`]).
//! It is for messages only: when a path cannot be followed to the end
//! (through an alias, say), it returns the position of the deepest part it
//! found.
//! Must not: decide anything about validity; nothing depends on it but the
//! position printed in a message.

use crate::yaml::{self, Node, NodeKind};
use std::fmt;
use std::marker::PhantomData;

/// One step of a key path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Seg {
    Key(String),
    Index(usize),
}

/// A key path, printed as `fields.probe.envelope.duration` or
/// `couplings[1].dipole`.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct KeyPath(pub Vec<Seg>);

impl KeyPath {
    pub fn root() -> Self {
        KeyPath(Vec::new())
    }
    /// This path extended by a key.
    pub fn k(&self, key: &str) -> Self {
        let mut v = self.0.clone();
        v.push(Seg::Key(key.to_string()));
        KeyPath(v)
    }
    /// This path extended by a sequence index.
    pub fn i(&self, index: usize) -> Self {
        let mut v = self.0.clone();
        v.push(Seg::Index(index));
        KeyPath(v)
    }
}

impl fmt::Display for KeyPath {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        for (n, s) in self.0.iter().enumerate() {
            match s {
                Seg::Key(k) if n == 0 => write!(f, "{k}")?,
                Seg::Key(k) => write!(f, ".{k}")?,
                Seg::Index(i) => write!(f, "[{i}]")?,
            }
        }
        Ok(())
    }
}

/// Locates key paths in one text.
pub struct Locator<'a> {
    root: Option<Node>,
    text: PhantomData<&'a str>,
}

impl<'a> Locator<'a> {
    /// Read the positions of `text` (nothing is found in text that is not
    /// valid YAML).
    pub fn new(text: &'a str) -> Self {
        Locator {
            root: yaml::tree(text),
            text: PhantomData,
        }
    }

    /// Line and column (1-based) of a key path: of its last segment (the
    /// key, or the start of the list item) when it can be followed to the
    /// end, else of the deepest segment found.
    pub fn locate(&self, path: &KeyPath) -> Option<(usize, usize)> {
        self.locate_occurrence(path, 0)
    }

    /// As [`Locator::locate`], but the last key segment matches its
    /// `occurrence`-th appearance (0-based) among its siblings, for
    /// duplicated keys.
    pub fn locate_occurrence(&self, path: &KeyPath, occurrence: usize) -> Option<(usize, usize)> {
        let mut node = self.root.as_ref()?;
        let mut found = None;
        let segs = &path.0;
        for (n, seg) in segs.iter().enumerate() {
            let occ = if n + 1 == segs.len() { occurrence } else { 0 };
            let (at, next) = match (seg, &node.kind) {
                (Seg::Key(k), NodeKind::Map(entries)) => {
                    match entries
                        .iter()
                        .filter(|(key, _)| key_matches(key, k))
                        .nth(occ)
                    {
                        Some((key, value)) => (key, value),
                        None => return found,
                    }
                }
                (Seg::Index(i), NodeKind::Seq(items)) => match items.get(*i) {
                    Some(item) => (item, item),
                    None => return found,
                },
                _ => return found,
            };
            found = Some((at.line, at.column));
            node = next;
        }
        found
    }
}

/// Whether a key node is the key `k` of a path: the same text, or a level
/// name written as a map (`{ manifold: S, F: 2, m_F: 2 }`) whose text form
/// (`scheme::raw::level_name_text`) is `k`, numbers compared by value.
fn key_matches(key: &Node, k: &str) -> bool {
    if let Some(text) = key.scalar_text() {
        return text == k;
    }
    let (NodeKind::Map(entries), Some(inner)) = (
        &key.kind,
        k.strip_prefix('{').and_then(|t| t.strip_suffix('}')),
    ) else {
        return false;
    };
    let wanted: Vec<(&str, &str)> = inner
        .split(", ")
        .filter_map(|p| p.split_once(": "))
        .collect();
    let number = |t: &str| match t.trim().split_once('/') {
        Some((n, d)) => Some(n.trim().parse::<f64>().ok()? / d.trim().parse::<f64>().ok()?),
        None => t.trim().parse::<f64>().ok(),
    };
    wanted.len() == entries.len()
        && entries.iter().all(|(ek, ev)| {
            let (Some(ek), Some(ev)) = (ek.scalar_text(), ev.scalar_text()) else {
                return false;
            };
            wanted.iter().any(|(wk, wv)| {
                *wk == ek
                    && (*wv == ev
                        || (ek != "manifold" && number(wv).is_some() && number(wv) == number(ev)))
            })
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(segs: &[&str]) -> KeyPath {
        KeyPath(
            segs.iter()
                .map(|s| match s.parse::<usize>() {
                    Ok(i) => Seg::Index(i),
                    Err(_) => Seg::Key(s.to_string()),
                })
                .collect(),
        )
    }

    const TEXT: &str = "\
# comment: not a key
title: demo   # trailing
levels:
  g: {energy: \"0 cm^-1\"}
  e:
    energy: \"12578.95 cm^-1\"
    lifetime: \"26.2 ns\"
couplings:
- between: [g, e]
  dipole: \"2.5 ea0\"
-   between: [e, g]
    dipole: 1
fields:
  probe:
    tuned: { to: [g, e], detuning: \"-20 MHz\" }
    envelope:
      shape: samples
      points:
        - [0 ns, 0]
        - [\"1 ns\", 1]
";

    #[test]
    fn finds_block_and_flow_keys() {
        let l = Locator::new(TEXT);
        assert_eq!(l.locate(&p(&["title"])), Some((2, 1)));
        assert_eq!(l.locate(&p(&["levels", "e", "lifetime"])), Some((7, 5)));
        assert_eq!(l.locate(&p(&["levels", "g", "energy"])), Some((4, 7)));
        assert_eq!(l.locate(&p(&["couplings", "1", "dipole"])), Some((12, 5)));
        assert_eq!(
            l.locate(&p(&["couplings", "1", "between", "1"])),
            Some((11, 18))
        );
        assert_eq!(l.locate(&p(&["couplings", "0", "dipole"])), Some((10, 3)));
        assert_eq!(
            l.locate(&p(&["fields", "probe", "tuned", "detuning"])),
            Some((15, 26))
        );
        assert_eq!(
            l.locate(&p(&["fields", "probe", "envelope", "points", "1", "0"])),
            Some((20, 12))
        );
        // Missing leaf: the deepest parent found.
        assert_eq!(
            l.locate(&p(&["fields", "probe", "envelope", "fwhm"])),
            Some((16, 5))
        );
        assert_eq!(l.locate(&p(&["nothing"])), None);
    }

    #[test]
    fn finds_level_names_written_as_maps() {
        let t =
            "initial:\n  mixture:\n    S_F1_m0: 0.5\n    { manifold: S, F: 1, m_F: +1.0 }: 0.5\n";
        let l = Locator::new(t);
        let k = KeyPath::root()
            .k("initial")
            .k("mixture")
            .k("{manifold: S, F: 1, m_F: 1}");
        assert_eq!(l.locate(&k), Some((4, 5)));
        let other = KeyPath::root()
            .k("initial")
            .k("mixture")
            .k("{manifold: S, F: 1, m_F: 0}");
        assert_eq!(l.locate(&other), Some((2, 3)));
    }

    #[test]
    fn finds_second_occurrence() {
        let t = "levels:\n  g: {energy: 1 eV}\n  g: {energy: 2 eV}\n";
        let l = Locator::new(t);
        assert_eq!(l.locate_occurrence(&p(&["levels", "g"]), 1), Some((3, 3)));
    }

    #[test]
    fn prints_paths() {
        assert_eq!(
            KeyPath::root().k("couplings").i(1).k("dipole").to_string(),
            "couplings[1].dipole"
        );
    }
}
