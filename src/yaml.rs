//! The one door to the YAML parser.
//!
//! Owns: every call into the YAML library (today `serde_yaml` 0.9, whose
//! upstream is unmaintained; a maintained fork with the same API can be
//! swapped in by changing the single `use ... as backend` line below), the
//! input limits, and the translation of the library's errors into
//! [`YamlError`] (line, column, key path, message without location).
//!
//! Limits (each refused with a clear message, before any large allocation):
//! - [`MAX_FILE_BYTES`]: a scheme text may be at most 1 MiB.
//! - [`MAX_NODES`]: at most 1,000,000 YAML nodes after alias expansion. The
//!   backend already stops alias replay after 100 jumps per event of the
//!   file ("repetition limit exceeded"), which defeats the classic "billion
//!   laughs" file, but a single anchor holding a long list replayed by many
//!   aliases still grows quadratically (about 4e10 nodes for a 1 MiB file).
//!   Measured on the development machine (release build): a 10 kB file of
//!   one 2,000-element anchor and 2,000 aliases took the bare backend 1.05 s
//!   and 291 MB; the counting pass here, which allocates nothing, refuses it
//!   in 0.1 s with 2.5 MB, and a 500 kB version in 0.19 s with 24 MB. The
//!   nine-level "billion laughs" file is refused by the backend's repetition
//!   limit in about 10 ms.
//! - [`MAX_DEPTH`]: nesting deeper than 128 levels is refused by the backend
//!   ("recursion limit exceeded"); nested flow collections are refused
//!   before the backend sees them ([`check_flow_depth`]), since its scanner
//!   takes time quadratic in their depth.
//!
//! Must not: know about schemes, units or the model; print.

use serde::de::{
    self, DeserializeOwned, DeserializeSeed, Deserializer, MapAccess, SeqAccess, Visitor,
};
use serde_yaml as backend;
use std::cell::Cell;
use std::fmt;

/// A parsed YAML document (the backend's value tree).
pub type Value = backend::Value;
/// A YAML mapping (keeps the file order).
pub type Mapping = backend::Mapping;
/// A YAML number.
pub type Number = backend::Number;

/// Largest accepted scheme text (bytes).
pub const MAX_FILE_BYTES: usize = 1 << 20;
/// Largest number of YAML nodes (scalars, sequences, mappings), counted
/// after alias expansion.
pub const MAX_NODES: usize = 1_000_000;
/// Deepest accepted nesting (fixed by the backend).
pub const MAX_DEPTH: usize = 128;

/// What went wrong while reading YAML.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum YamlErrorKind {
    /// The text is larger than [`MAX_FILE_BYTES`].
    TooLarge,
    /// More than [`MAX_NODES`] nodes after alias expansion, or the backend's
    /// own repetition limit.
    TooManyNodes,
    /// Nesting deeper than [`MAX_DEPTH`].
    TooDeep,
    /// Not valid YAML (scanner or parser error), or more than one document.
    Syntax,
    /// Valid YAML whose shape does not match what was asked for (unknown
    /// key, wrong type, ...).
    Data,
}

/// A YAML error with its location taken apart.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{message}")]
pub struct YamlError {
    pub kind: YamlErrorKind,
    /// 1-based line, if known.
    pub line: Option<usize>,
    /// 1-based column, if known.
    pub column: Option<usize>,
    /// Dotted key path as reported by the backend ("fields.probe"), if any.
    pub path: Option<String>,
    /// The message without path prefix and without "at line .. column ..".
    pub message: String,
}

impl YamlError {
    fn new(kind: YamlErrorKind, message: String) -> Self {
        YamlError {
            kind,
            line: None,
            column: None,
            path: None,
            message,
        }
    }
}

/// Refuse a text longer than [`MAX_FILE_BYTES`].
pub fn check_size(len: usize) -> Result<(), YamlError> {
    if len > MAX_FILE_BYTES {
        return Err(YamlError::new(
            YamlErrorKind::TooLarge,
            format!(
                "the file has {len} bytes, more than the limit of {MAX_FILE_BYTES} bytes (1 MiB)"
            ),
        ));
    }
    Ok(())
}

/// Deserialize a `T` from YAML text, after the size check and the node
/// budget pass.
pub fn from_str<T: DeserializeOwned>(text: &str) -> Result<T, YamlError> {
    check_size(text.len())?;
    check_flow_depth(text)?;
    count_nodes(text)?;
    backend::from_str(text).map_err(translate)
}

/// Parse YAML text into a value tree (same limits as [`from_str`]).
pub fn value_from_str(text: &str) -> Result<Value, YamlError> {
    from_str(text)
}

/// Deserialize a `T` from a value tree.
pub fn from_value<T: DeserializeOwned>(value: Value) -> Result<T, YamlError> {
    backend::from_value(value).map_err(translate)
}

/// Refuse flow collections (`[...]`, `{...}`) nested deeper than
/// [`MAX_DEPTH`] in one linear pass, before the backend sees the text.
///
/// The backend enforces the same depth, but only after its scanner has
/// tokenised the whole document, and that scanner re-examines every open
/// flow level at each token: 100,000 nested `[` took 33 s and a 1 MiB file
/// of them about 14 minutes (measured, release build). This pass counts an
/// opening bracket outside quoted scalars, block plain scalars, block
/// scalars and comments where it can open a collection (inside a flow
/// collection, or where a block node may start), so it may undercount
/// unusual files (the backend's own limit then still applies) but never
/// refuses a file the backend would accept.
///
/// The rules it follows, as the library reads YAML: lines break at LF, CR,
/// NEL, LS and PS; a comment starts at `#` after a blank or right after a
/// token other than a plain scalar; a plain scalar in block context runs to
/// the end of its line except at `": "` or `" #"`, and continues on the
/// following lines indented deeper than the block collection holding it
/// (any line at top level), up to a comment or a document marker; a block
/// scalar's body indentation comes from its first non-blank line (or an
/// indentation digit) and the collection holding it. Brackets inside any
/// scalar are text. Most of these rules were learnt from false refusals
/// that fuzzing and the differential test in `tests/scheme_robustness.rs`
/// found (`docs/reliability.md`, findings 8, 9 and 12).
pub fn check_flow_depth(text: &str) -> Result<(), YamlError> {
    // `prev` after a quoted scalar (a quote inside a plain scalar is text).
    const QUOTED: u8 = 0;
    // The YAML library also breaks lines at CR, NEL, LS and PS: map them to
    // LF so that this pass sees the lines the library sees (a comment or a
    // plain scalar ends there).
    let breaks = ['\r', '\u{85}', '\u{2028}', '\u{2029}'];
    let text: std::borrow::Cow<str> = if text.contains(breaks) {
        text.replace("\r\n", "\n").replace(breaks, "\n").into()
    } else {
        text.into()
    };
    let b = text.as_bytes();
    // (No CR is left here: line breaks were mapped to LF above.)
    let blank_at = |j: usize| matches!(b.get(j), None | Some(b' ' | b'\t' | b'\n'));
    let mut depth = 0usize;
    // Where a node may start: a line start, or after one of these indicators.
    let opens = |p: u8| matches!(p, b'\n' | b'[' | b'{' | b',' | b':' | b'-' | b'?');
    // Last significant byte on this line outside scalars (b'\n' at a line start).
    let mut prev = b'\n';
    let mut line_start = 0usize;
    let mut fresh_line = true;
    // A block plain scalar that is still open: Some(indentation of the block
    // collection holding it; -1 at top level).
    let mut plain: Option<isize> = None;
    // Indentation of the block collection that holds a node starting here:
    // set by `key:` (the key's column), `- ` and `? ` (their column); -1
    // once a node has started.
    let mut parent: isize = -1;
    // Column where the current block entry (a key or a node) starts.
    let mut entry: isize = 0;
    let mut entry_pending = false;
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        let col = i - line_start;
        match c {
            b'\n' => {
                prev = b'\n';
                line_start = i + 1;
                fresh_line = true;
            }
            b' ' | b'\t' => {}
            // A comment: after a blank, or (as the library reads it) right
            // after a token that is not a plain scalar, e.g. `"a"#c`, `[#c`.
            b'#' if i == 0
                || matches!(b[i - 1], b' ' | b'\t' | b'\n')
                || (depth == 0 && plain.is_none() && prev != b'x')
                || (depth > 0 && matches!(prev, b'[' | b'{' | b']' | b'}' | b',' | QUOTED)) =>
            {
                // A comment ends a plain scalar: it does not continue past it.
                plain = None;
                while i + 1 < b.len() && b[i + 1] != b'\n' {
                    i += 1;
                }
            }
            _ => {
                if fresh_line {
                    // The line's first significant byte (a tag or an anchor
                    // before a node does not move the node's column).
                    fresh_line = false;
                    if depth == 0 {
                        entry = col as isize;
                        entry_pending = false;
                        let marker = b[i..].starts_with(b"---") || b[i..].starts_with(b"...");
                        if col == 0 && marker && blank_at(i + 3) {
                            // A document marker ends any scalar; a node may
                            // follow it on its line.
                            plain = None;
                            parent = -1;
                            prev = b'-';
                            i += 3;
                            continue;
                        }
                        if plain.is_some_and(|p| col as isize <= p) {
                            plain = None;
                        }
                    }
                }
                if entry_pending {
                    entry = col as isize;
                    entry_pending = false;
                }
                if depth == 0 && plain.is_some() {
                    // Inside a block plain scalar only ": " ends it (" #" is
                    // a comment, above); brackets, quotes, "- " are text.
                    if c == b':' && blank_at(i + 1) {
                        plain = None;
                        parent = entry;
                        prev = b':';
                    } else {
                        prev = b'x';
                    }
                    i += 1;
                    continue;
                }
                match c {
                    b'"' | b'\'' if opens(prev) => {
                        // A quoted scalar: skip to its closing quote.
                        i += 1;
                        while i < b.len() {
                            if b[i] == b'\\' && c == b'"' {
                                i += 1;
                            } else if b[i] == c {
                                if c == b'\'' && b.get(i + 1) == Some(&b'\'') {
                                    i += 1;
                                } else {
                                    break;
                                }
                            }
                            i += 1;
                        }
                        if depth == 0 {
                            parent = -1;
                        }
                        prev = QUOTED;
                    }
                    b'|' | b'>' if depth == 0 && opens(prev) => {
                        // A block scalar, read as the library reads it: an
                        // optional indentation digit in the header; the body
                        // indentation is the digit above the holding
                        // collection, else that of the first non-blank line
                        // (or of a deeper blank line before it), at least
                        // one deeper than the holding collection and at
                        // least 1; the body runs while lines are blank or
                        // indented that far.
                        let mut explicit = None;
                        for k in 1..=2 {
                            match b.get(i + k) {
                                Some(&d @ b'1'..=b'9') => explicit = Some(usize::from(d - b'0')),
                                Some(b'+' | b'-') => {}
                                _ => break,
                            }
                        }
                        while i + 1 < b.len() && b[i + 1] != b'\n' {
                            i += 1;
                        }
                        let min = (parent + 1).max(1) as usize;
                        let mut need = explicit.map(|d| parent.max(0) as usize + d);
                        let mut max_blank = 0usize;
                        // pos: the line break ending the last line read.
                        let mut pos = i + 1;
                        while pos < b.len() {
                            let next = pos + 1;
                            let end = b[next..]
                                .iter()
                                .position(|&x| x == b'\n')
                                .map_or(b.len(), |p| next + p);
                            let line = &b[next..end];
                            let lead = line.iter().take_while(|&&x| x == b' ').count();
                            if line[lead..].iter().all(|&x| matches!(x, b' ' | b'\t')) {
                                if need.is_none() {
                                    max_blank = max_blank.max(lead);
                                }
                                pos = end;
                                continue;
                            }
                            if lead < *need.get_or_insert(lead.max(max_blank).max(min)) {
                                break;
                            }
                            pos = end;
                        }
                        i = pos - 1;
                        parent = -1;
                    }
                    b'!' | b'&' if opens(prev) => {
                        // A tag or an anchor before a node: skip it, the node
                        // that follows still starts here.
                        while i + 1 < b.len() && !matches!(b[i + 1], b' ' | b'\t' | b'\n' | b'\r') {
                            i += 1;
                        }
                    }
                    b'[' | b'{' if depth > 0 || opens(prev) => {
                        depth += 1;
                        if depth > MAX_DEPTH {
                            let line = b[..i].iter().filter(|&&x| x == b'\n').count() + 1;
                            return Err(YamlError {
                                kind: YamlErrorKind::TooDeep,
                                line: Some(line),
                                column: Some(col + 1),
                                path: None,
                                message: format!(
                                    "flow collections nested more than {MAX_DEPTH} levels deep"
                                ),
                            });
                        }
                        parent = -1;
                        prev = c;
                    }
                    b']' | b'}' if depth > 0 => {
                        depth -= 1;
                        prev = c;
                    }
                    // A bracket inside a plain scalar is an ordinary character.
                    b'[' | b'{' | b']' | b'}' => prev = b'x',
                    // Block indicators: ':', '-' and '?' followed by a blank.
                    b':' | b'-' | b'?' if depth == 0 && blank_at(i + 1) => {
                        if c == b':' {
                            parent = entry;
                        } else {
                            parent = col as isize;
                            entry_pending = true;
                        }
                        prev = c;
                    }
                    // A block plain scalar starts where a node may start and
                    // the byte is not an indicator (`key:{{` is one scalar).
                    _ if depth == 0
                        && opens(prev)
                        && !matches!(
                            c,
                            b'*' | b'%' | b'@' | b'`' | b',' | b'|' | b'>' | b'!' | b'&'
                        ) =>
                    {
                        plain = Some(parent);
                        parent = -1;
                        prev = b'x';
                    }
                    // Flow context, or after a complete node: `:`, `-` and
                    // `?` without a blank are text at depth 0.
                    b':' | b'-' | b'?' if depth == 0 => prev = b'x',
                    _ => prev = c,
                }
            }
        }
        i += 1;
    }
    Ok(())
}

/// Count the nodes of the document after alias expansion, allocating
/// nothing, and fail once [`MAX_NODES`] is passed. Returns the count.
pub fn count_nodes(text: &str) -> Result<usize, YamlError> {
    let count = Cell::new(0usize);
    let de = backend::Deserializer::from_str(text);
    match (Budget { count: &count }).deserialize(de) {
        Ok(()) => Ok(count.get()),
        Err(e) => {
            if count.get() > MAX_NODES {
                Err(YamlError::new(
                    YamlErrorKind::TooManyNodes,
                    format!(
                        "the document expands to more than {MAX_NODES} YAML nodes \
                         (aliases are counted each time they are used)"
                    ),
                ))
            } else {
                Err(translate(e))
            }
        }
    }
}

/// A seed that walks any YAML node, counting it and its children.
#[derive(Clone, Copy)]
struct Budget<'a> {
    count: &'a Cell<usize>,
}

impl Budget<'_> {
    fn tick<E: de::Error>(&self) -> Result<(), E> {
        let n = self.count.get() + 1;
        self.count.set(n);
        if n > MAX_NODES {
            return Err(E::custom("node budget exceeded"));
        }
        Ok(())
    }
}

impl<'de> DeserializeSeed<'de> for Budget<'_> {
    type Value = ();
    fn deserialize<D: Deserializer<'de>>(self, d: D) -> Result<(), D::Error> {
        d.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for Budget<'_> {
    type Value = ();

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any YAML node")
    }
    fn visit_bool<E: de::Error>(self, _: bool) -> Result<(), E> {
        self.tick()
    }
    fn visit_i64<E: de::Error>(self, _: i64) -> Result<(), E> {
        self.tick()
    }
    fn visit_i128<E: de::Error>(self, _: i128) -> Result<(), E> {
        self.tick()
    }
    fn visit_u64<E: de::Error>(self, _: u64) -> Result<(), E> {
        self.tick()
    }
    fn visit_u128<E: de::Error>(self, _: u128) -> Result<(), E> {
        self.tick()
    }
    fn visit_f64<E: de::Error>(self, _: f64) -> Result<(), E> {
        self.tick()
    }
    fn visit_str<E: de::Error>(self, _: &str) -> Result<(), E> {
        self.tick()
    }
    fn visit_bytes<E: de::Error>(self, _: &[u8]) -> Result<(), E> {
        self.tick()
    }
    fn visit_none<E: de::Error>(self) -> Result<(), E> {
        self.tick()
    }
    fn visit_unit<E: de::Error>(self) -> Result<(), E> {
        self.tick()
    }
    fn visit_some<D: Deserializer<'de>>(self, d: D) -> Result<(), D::Error> {
        self.tick()?;
        d.deserialize_any(self)
    }
    fn visit_newtype_struct<D: Deserializer<'de>>(self, d: D) -> Result<(), D::Error> {
        self.tick()?;
        d.deserialize_any(self)
    }
    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
        self.tick()?;
        while seq.next_element_seed(self)?.is_some() {}
        Ok(())
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<(), A::Error> {
        self.tick()?;
        while map.next_key_seed(self)?.is_some() {
            map.next_value_seed(self)?;
        }
        Ok(())
    }
    fn visit_enum<A: de::EnumAccess<'de>>(self, data: A) -> Result<(), A::Error> {
        // A tagged node (`!tag value`): count the tag and walk the value.
        use de::VariantAccess;
        self.tick()?;
        let ((), variant) = data.variant_seed(self)?;
        variant.newtype_variant_seed(self)
    }
}

/// Remove every " at line N column M" and " at position N" from a message.
fn strip_marks(msg: &str) -> String {
    let mut out = String::with_capacity(msg.len());
    let mut rest = msg;
    loop {
        let cand = [" at line ", " at position "]
            .iter()
            .filter_map(|p| rest.find(p).map(|i| (i, *p)))
            .min_by_key(|(i, _)| *i);
        let Some((i, pat)) = cand else {
            out.push_str(rest);
            break;
        };
        out.push_str(&rest[..i]);
        let mut tail = &rest[i + pat.len()..];
        tail = tail.trim_start_matches(|c: char| c.is_ascii_digit());
        if pat == " at line " {
            if let Some(t) = tail.strip_prefix(" column ") {
                tail = t.trim_start_matches(|c: char| c.is_ascii_digit());
            }
        }
        rest = tail;
    }
    out
}

/// Take a backend error apart.
fn translate(e: backend::Error) -> YamlError {
    let (line, column) = match e.location() {
        Some(l) => (Some(l.line()), Some(l.column())),
        None => (None, None),
    };
    let full = strip_marks(&e.to_string());
    // Messages with a key path read "path.to.key: message"; the path has no
    // spaces.
    let (path, message) = match full.split_once(": ") {
        Some((p, m)) if !p.is_empty() && !p.contains(' ') => (Some(p.to_string()), m.to_string()),
        _ => (None, full.clone()),
    };
    let kind = if message.contains("recursion limit exceeded") {
        YamlErrorKind::TooDeep
    } else if message.contains("repetition limit exceeded") {
        return YamlError {
            kind: YamlErrorKind::TooManyNodes,
            line,
            column,
            path,
            message: "aliases are replayed too often (more than 100 alias jumps per \
                      event of the file); refusing a possible alias bomb"
                .to_string(),
        };
    } else if message.starts_with("invalid type")
        || message.starts_with("invalid value")
        || message.starts_with("unknown field")
        || message.starts_with("unknown variant")
        || message.starts_with("missing field")
        || message.starts_with("invalid length")
        || message.starts_with("duplicate field")
    {
        YamlErrorKind::Data
    } else {
        YamlErrorKind::Syntax
    };
    YamlError {
        kind,
        line,
        column,
        path,
        message,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::Instant;

    #[test]
    fn strips_locations() {
        assert_eq!(
            strip_marks("did not find expected key at line 3 column 5, while parsing a block mapping at line 1 column 1"),
            "did not find expected key, while parsing a block mapping"
        );
    }

    #[test]
    fn syntax_error_has_line_and_column() {
        let e = value_from_str("a: 1\nb: [1, 2\nc: 3\n").unwrap_err();
        assert_eq!(e.kind, YamlErrorKind::Syntax);
        assert!(e.line.is_some() && e.column.is_some(), "{e:?}");
        assert!(!e.message.contains(" at line "), "{e:?}");
    }

    #[test]
    fn refuses_large_text() {
        let text = format!("a: \"{}\"\n", "x".repeat(MAX_FILE_BYTES));
        let e = value_from_str(&text).unwrap_err();
        assert_eq!(e.kind, YamlErrorKind::TooLarge);
        assert!(e.message.contains("1048576"), "{}", e.message);
    }

    /// The classic nine-level "billion laughs" file (10^9 strings if every
    /// alias were expanded).
    fn billion_laughs() -> String {
        let mut s = String::from(
            "a0: &a0 [\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\"]\n",
        );
        for i in 1..=9 {
            let p = i - 1;
            s.push_str(&format!(
                "a{i}: &a{i} [*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p},*a{p}]\n"
            ));
        }
        s
    }

    // Measured (2-core machine, test profile): refused in well under a
    // millisecond by the backend's repetition limit before any counting.
    #[test]
    fn billion_laughs_is_refused_quickly() {
        let t = Instant::now();
        let e = value_from_str(&billion_laughs()).unwrap_err();
        assert_eq!(e.kind, YamlErrorKind::TooManyNodes, "{e:?}");
        assert!(e.message.contains("alias bomb"), "{e:?}");
        assert!(t.elapsed().as_secs_f64() < 1.0);
    }

    /// One anchored list replayed by many aliases: the backend's repetition
    /// limit (100 jumps per event) allows this, the node budget refuses it.
    #[test]
    fn quadratic_alias_file_is_refused_quickly() {
        let n = 100_000;
        let mut s = String::from("a: &a [");
        s.push_str(&"1,".repeat(n));
        s.push_str("1]\nb: [");
        s.push_str(&"*a,".repeat(n));
        s.push_str("*a]\n");
        assert!(s.len() < MAX_FILE_BYTES);
        let t = Instant::now();
        let e = value_from_str(&s).unwrap_err();
        let dt = t.elapsed().as_secs_f64();
        assert_eq!(e.kind, YamlErrorKind::TooManyNodes, "{e:?}");
        assert!(dt < 5.0, "took {dt} s");
    }

    #[test]
    fn deep_nesting_is_refused() {
        let depth = 10_000;
        let s = format!("{}1{}", "[".repeat(depth), "]".repeat(depth));
        let e = value_from_str(&s).unwrap_err();
        assert_eq!(e.kind, YamlErrorKind::TooDeep, "{e:?}");
    }

    /// Nested flow collections are refused in one pass, however many there
    /// are: 500,000 levels (a 1 MiB file) took the backend about 14 minutes.
    #[test]
    fn deep_flow_nesting_is_refused_in_linear_time() {
        for open in ["[", "{a: "] {
            let n = 500_000 / open.len();
            let close = if open == "[" { "]" } else { "}" };
            let s = format!("title: {}1{}\n", open.repeat(n), close.repeat(n));
            let t = Instant::now();
            let e = value_from_str(&s).unwrap_err();
            assert_eq!(e.kind, YamlErrorKind::TooDeep, "{e:?}");
            assert_eq!(
                (e.line, e.column),
                (Some(1), Some(7 + 129 * open.len() - open.len() + 1))
            );
            assert!(t.elapsed().as_secs_f64() < 1.0, "{:?}", t.elapsed());
        }
    }

    /// The pre-check never refuses what the backend reads: brackets inside
    /// quoted or plain scalars and comments do not count, and 128 levels of
    /// real nesting pass it.
    #[test]
    fn flow_depth_check_ignores_scalars_and_comments() {
        let many = "[".repeat(300);
        let text = format!(
            "a: \"{many}\"\nb: '{many}'\nc: x{many}\n# {many}\nd: [\"]]\", 'it''s [', 1] # [[[\n\
             e: |\n  {many}\n\n  {many}\nf: [!!str \"{many}\", &x '{many}', *x]\n\
             g:\n  - >-\n    {many}\n  - h\n"
        );
        assert!(check_flow_depth(&text).is_ok());
        assert!(value_from_str(&text).is_ok());
        let ok = format!("a: {}1{}\n", "[".repeat(MAX_DEPTH), "]".repeat(MAX_DEPTH));
        assert!(check_flow_depth(&ok).is_ok());
        let deep = format!(
            "a: {}1{}\n",
            "[".repeat(MAX_DEPTH + 1),
            "]".repeat(MAX_DEPTH + 1)
        );
        assert!(check_flow_depth(&deep).is_err());
    }

    /// Block plain scalars run on across lines and past "- ", ", ", quotes
    /// and brackets; the pre-check must read them as text (the first case
    /// is the fuzzer's finding, shortened), yet still refuse real nesting
    /// placed right after such scalars.
    #[test]
    fn flow_depth_check_follows_block_plain_scalars() {
        let many = "[".repeat(300);
        let texts = [
            format!("# comment\n  text at top level\n{many}ay\"x{many}\n# end\n"),
            format!("a: x - {many}\n"),
            format!("a: x, {many}\n"),
            format!("a: x ? {many}\n"),
            format!("a: it's\n  {many}\n"),
            format!("- x\n  {many}\n"),
            format!("a: b\n  c {many}\n\n  d {many}\n"),
            format!("- k: v\n   {many}\n"),
            format!("a:\n  x\n  {many}\n"),
            // Found by the differential test in tests/scheme_robustness.rs:
            format!("\"q[\"#{many}\n"),
            format!("!!str key: x\n  {many}\n"),
            format!(" |\n {many}\n"),
            format!("- |2\n   {many}\n"),
        ];
        for text in &texts {
            assert!(value_from_str(text).is_ok(), "backend refuses {text:?}");
            assert!(check_flow_depth(text).is_ok(), "pre-check refuses {text:?}");
        }
        let deep = format!("{}1{}", "[".repeat(300), "]".repeat(300));
        let bombs = [
            format!("- x\n- {deep}\n"),
            format!("a: x\nb: {deep}\n"),
            format!("a:\n  x\nb: {deep}\n"),
            format!("a: x # c\nb: {deep}\n"),
            format!("--- {deep}\n"),
            format!("a\n--- {deep}\n"),
            format!("k:\n  - x\n  - {deep}\n"),
            format!("- - x\n  - {deep}\n"),
            format!("- k: v\n  j: {deep}\n"),
            format!("? x\n: {deep}\n"),
            // Block scalars end where the library ends them.
            format!("- - |\n  - {deep}\n"),
            format!("a: |1\n  x\nb: {deep}\n"),
        ];
        for text in &bombs {
            let e = check_flow_depth(text).expect_err(text);
            assert_eq!(e.kind, YamlErrorKind::TooDeep, "{text:?}");
        }
        // The library breaks lines at CR, NEL, LS and PS as well as LF; so
        // does the pre-check (a CR-only file would otherwise be one line,
        // one plain scalar, and hide the nesting).
        for br in ["\r", "\r\n", "\u{85}", "\u{2028}", "\u{2029}"] {
            let text = format!("a: x{br}  y {many}{br}b: z{br}");
            assert!(value_from_str(&text).is_ok(), "backend refuses {text:?}");
            assert!(
                check_flow_depth(&text).is_ok(),
                "pre-check refuses {text:?}"
            );
            for text in [
                format!("- x{br}- {deep}{br}"),
                format!("# c{br}- {deep}{br}"),
            ] {
                let e = check_flow_depth(&text).unwrap_err();
                assert_eq!(e.kind, YamlErrorKind::TooDeep, "{text:?}");
                assert_eq!(e.line, Some(2), "{text:?}");
            }
        }
    }

    #[test]
    fn aliases_within_budget_work() {
        let v = value_from_str("p: &p {shape: sech}\nq: *p\n").unwrap();
        assert_eq!(v["q"]["shape"].as_str(), Some("sech"));
    }
}
