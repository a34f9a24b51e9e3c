//! Finding the line and column of a key path in scheme text.
//!
//! Owns: key paths ([`Seg`]) and a small, indentation-aware locator for block
//! YAML with flow collections on one line (the style schemes are written
//! in). It is a best effort for messages only: when a path cannot be
//! followed to the end (aliases, multi-line flow collections, block
//! scalars), it returns the deepest part it found.
//! Must not: decide anything about validity; nothing depends on it but the
//! position printed in a message.

use std::fmt;

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

/// One logical line: a sequence marker "- " or a piece of content.
#[derive(Debug, Clone)]
struct LLine<'a> {
    /// 1-based line number.
    line: usize,
    /// 0-based column of the content (or of the "-").
    indent: usize,
    item: bool,
    text: &'a str,
}

/// Index of the comment start ('#' after whitespace or at the start,
/// outside quotes), or the length.
fn comment_start(s: &str) -> usize {
    let b = s.as_bytes();
    let mut quote: Option<u8> = None;
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        match quote {
            Some(b'"') => {
                if c == b'\\' {
                    i += 1;
                } else if c == b'"' {
                    quote = None;
                }
            }
            Some(_) => {
                if c == b'\'' {
                    quote = None;
                }
            }
            None => {
                let prev = if i == 0 { b' ' } else { b[i - 1] };
                let at_token = matches!(prev, b' ' | b'\t' | b'[' | b'{' | b',' | b':');
                if c == b'#' && (i == 0 || prev == b' ' || prev == b'\t') {
                    return i;
                }
                if (c == b'"' || c == b'\'') && at_token {
                    quote = Some(c);
                }
            }
        }
        i += 1;
    }
    b.len()
}

/// Locates key paths in one text.
pub struct Locator<'a> {
    lines: Vec<LLine<'a>>,
}

impl<'a> Locator<'a> {
    pub fn new(text: &'a str) -> Self {
        let mut lines = Vec::new();
        for (n, raw) in text.lines().enumerate() {
            let content = &raw[..comment_start(raw)];
            let content = content.trim_end();
            if content.trim().is_empty()
                || content.starts_with("---")
                || content.starts_with("...")
                || content.starts_with('%')
            {
                continue;
            }
            let mut indent = content.len() - content.trim_start_matches(' ').len();
            let mut rest = &content[indent..];
            loop {
                if rest == "-" || rest.starts_with("- ") {
                    lines.push(LLine {
                        line: n + 1,
                        indent,
                        item: true,
                        text: "",
                    });
                    let after = &rest[1..];
                    let trimmed = after.trim_start_matches(' ');
                    indent += 1 + after.len() - trimmed.len();
                    rest = trimmed;
                    if rest.is_empty() {
                        break;
                    }
                } else {
                    lines.push(LLine {
                        line: n + 1,
                        indent,
                        item: false,
                        text: rest,
                    });
                    break;
                }
            }
        }
        Locator { lines }
    }

    /// Line and column (1-based) of a key path: of its last segment when it
    /// can be followed to the end, else of the deepest segment found.
    pub fn locate(&self, path: &KeyPath) -> Option<(usize, usize)> {
        self.locate_occurrence(path, 0)
    }

    /// As [`Locator::locate`], but the last key segment matches its
    /// `occurrence`-th appearance (0-based) among its siblings, for
    /// duplicated keys.
    pub fn locate_occurrence(&self, path: &KeyPath, occurrence: usize) -> Option<(usize, usize)> {
        let mut lo = 0usize;
        let mut hi = self.lines.len();
        let mut found: Option<(usize, usize)> = None;
        let segs = &path.0;
        for (n, seg) in segs.iter().enumerate() {
            let occ = if n + 1 == segs.len() { occurrence } else { 0 };
            match seg {
                Seg::Key(k) => {
                    let Some(m) = self.lines[lo..hi]
                        .iter()
                        .filter(|l| !l.item)
                        .map(|l| l.indent)
                        .min()
                    else {
                        return found;
                    };
                    let mut seen = 0;
                    let mut hit = None;
                    for j in lo..hi {
                        let l = &self.lines[j];
                        if l.item || l.indent != m {
                            continue;
                        }
                        if let Some(after) = key_match(l.text, k) {
                            if seen == occ {
                                hit = Some((j, after));
                                break;
                            }
                            seen += 1;
                        }
                    }
                    let Some((j, after)) = hit else {
                        return found;
                    };
                    let l = &self.lines[j];
                    found = Some((l.line, l.indent + 1));
                    let value = strip_props(l.text[after..].trim());
                    if value.is_empty() || value.starts_with('|') || value.starts_with('>') {
                        lo = j + 1;
                        hi = (j + 1..hi)
                            .find(|&t| {
                                let x = &self.lines[t];
                                !(x.indent > m || (x.item && x.indent == m))
                            })
                            .unwrap_or(hi);
                    } else {
                        // Inline value: follow the rest of the path in flow style.
                        let col0 = l.indent + after;
                        return Some(
                            flow_locate(l.line, col0, &l.text[after..], &segs[n + 1..])
                                .unwrap_or(found.unwrap_or((l.line, l.indent + 1))),
                        );
                    }
                }
                Seg::Index(i) => {
                    let Some(m) = self.lines[lo..hi]
                        .iter()
                        .filter(|l| l.item)
                        .map(|l| l.indent)
                        .min()
                    else {
                        return found;
                    };
                    let Some(j) = (lo..hi)
                        .filter(|&t| self.lines[t].item && self.lines[t].indent == m)
                        .nth(*i)
                    else {
                        return found;
                    };
                    let l = &self.lines[j];
                    found = Some((l.line, l.indent + 1));
                    lo = j + 1;
                    hi = (j + 1..hi)
                        .find(|&t| self.lines[t].indent <= m)
                        .unwrap_or(hi);
                    // A marker followed by inline flow content on its line.
                    if let Some(next) = self.lines.get(lo) {
                        if lo < hi && next.line == l.line && !next.item {
                            let t = next.text;
                            if t.starts_with('[') || t.starts_with('{') {
                                return Some(
                                    flow_locate(next.line, next.indent, t, &segs[n + 1..])
                                        .unwrap_or((l.line, l.indent + 1)),
                                );
                            }
                        }
                    }
                }
            }
        }
        found
    }
}

/// Skip an anchor (`&name`) or tag (`!tag`) before a value.
fn strip_props(mut s: &str) -> &str {
    loop {
        if s.starts_with('&') || s.starts_with('!') {
            s = match s.find(' ') {
                Some(i) => s[i..].trim_start(),
                None => "",
            };
        } else {
            return s;
        }
    }
}

/// If `text` starts with key `k` (plain or quoted) followed by ':', the byte
/// offset just after the ':'.
fn key_match(text: &str, k: &str) -> Option<usize> {
    let candidates = [k.to_string(), format!("\"{k}\""), format!("'{k}'")];
    for c in &candidates {
        if let Some(rest) = text.strip_prefix(c.as_str()) {
            let trimmed = rest.trim_start_matches(' ');
            if let Some(after) = trimmed.strip_prefix(':') {
                if after.is_empty() || after.starts_with(' ') || c.len() > k.len() {
                    return Some(text.len() - after.len());
                }
            }
        }
    }
    None
}

/// Follow `segs` inside one line of flow content `text`, which starts at
/// 0-based column `col0` of line `line`. Returns the position of the last
/// segment it could follow.
fn flow_locate(line: usize, col0: usize, text: &str, segs: &[Seg]) -> Option<(usize, usize)> {
    let lead = text.len() - text.trim_start().len();
    let mut off = lead;
    let mut found = None;
    for seg in segs {
        let rest = &text[off..];
        let rel = match seg {
            Seg::Key(k) => flow_key(rest, k),
            Seg::Index(i) => flow_index(rest, *i),
        };
        match rel {
            Some(r) => {
                off += r;
                found = Some((line, col0 + off + 1));
                // Move past the key to its value.
                if let Seg::Key(_) = seg {
                    if let Some(c) = text[off..].find(':') {
                        off += c + 1;
                        off += text[off..].len() - text[off..].trim_start().len();
                    }
                }
            }
            None => return found,
        }
    }
    found
}

/// Offset of key `k` at depth 1 of the flow mapping starting in `s`.
fn flow_key(s: &str, k: &str) -> Option<usize> {
    let b = s.as_bytes();
    let mut depth = 0i32;
    let mut quote: Option<u8> = None;
    let mut token_start = true;
    for (i, &c) in b.iter().enumerate() {
        if let Some(q) = quote {
            if c == q {
                quote = None;
            }
            continue;
        }
        match c {
            b'{' | b'[' => {
                depth += 1;
                token_start = true;
                continue;
            }
            b'}' | b']' => {
                depth -= 1;
                if depth <= 0 {
                    return None;
                }
            }
            b',' => {
                token_start = true;
                continue;
            }
            b' ' => continue,
            _ => {}
        }
        if token_start && depth == 1 && key_match(&s[i..], k).is_some() {
            return Some(i);
        }
        if c == b'"' || c == b'\'' {
            quote = Some(c);
        }
        token_start = false;
    }
    None
}

/// Offset of element `idx` of the flow sequence starting in `s`.
fn flow_index(s: &str, idx: usize) -> Option<usize> {
    let b = s.as_bytes();
    if b.first() != Some(&b'[') {
        return None;
    }
    let mut depth = 0i32;
    let mut quote: Option<u8> = None;
    let mut count = 0usize;
    let mut want_start = false;
    for (i, &c) in b.iter().enumerate() {
        if let Some(q) = quote {
            if c == q {
                quote = None;
            }
            continue;
        }
        if want_start && c != b' ' {
            if count == idx {
                return Some(i);
            }
            want_start = false;
        }
        match c {
            b'[' | b'{' => {
                depth += 1;
                if depth == 1 {
                    want_start = true;
                }
            }
            b']' | b'}' => {
                depth -= 1;
                if depth == 0 {
                    return None;
                }
            }
            b',' if depth == 1 => {
                count += 1;
                want_start = true;
            }
            b'"' | b'\'' => quote = Some(c),
            _ => {}
        }
    }
    None
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
