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
//!   ("recursion limit exceeded").
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

    #[test]
    fn aliases_within_budget_work() {
        let v = value_from_str("p: &p {shape: sech}\nq: *p\n").unwrap();
        assert_eq!(v["q"]["shape"].as_str(), Some("sech"));
    }
}
