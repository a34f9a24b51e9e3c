//! The one door to the YAML reader.
//!
//! Owns: every call into the YAML library (`serde-saphyr` and the parser it
//! re-exports), the reading options every scheme is read with (strict YAML
//! 1.2 booleans, duplicate keys passed on to the caller, non-finite numbers
//! passed on), the input budgets, the translation of the library's errors
//! into [`YamlError`] (line, column, key path, what was expected, what was
//! found), and a position tree of a document ([`Node`]) for locating keys.
//!
//! Budgets (each refused with a located message, before any large
//! allocation; the library enforces them while it reads):
//! - [`MAX_FILE_BYTES`]: a scheme text may be at most 1 MiB.
//! - [`MAX_NODES`]: at most 1,000,000 YAML nodes, counted after alias
//!   expansion (the "billion laughs" file and one long anchor replayed by
//!   many aliases are refused by it).
//! - [`MAX_DEPTH`]: nesting (block or flow) at most 128 levels deep.
//! - [`MAX_SCALAR_BYTES`]: at most 4 MiB of scalar text, counted after
//!   alias expansion (a long string replayed by many aliases).
//! - [`MAX_ALIAS_DEPTH`]: aliases replaying aliases at most 64 deep.
//!
//! Must not: know about schemes, units or the model; print.

use serde::de::{self, DeserializeOwned, Deserializer, MapAccess, SeqAccess, Visitor};
use serde::Deserialize;
use serde_saphyr::budget::BudgetBreach;
use serde_saphyr::granit_parser::ErrorKind as ParserErrorKind;
use serde_saphyr::{
    DuplicateKeyPolicy, Error as LibError, ExternalMessageSource, NonFiniteFloatPolicy, Options,
};
use std::fmt;

mod tree;
use tree::{describe, node_at, push_step, Hit};
pub use tree::{tree, Node, NodeKind};

/// Largest accepted scheme text (bytes).
pub const MAX_FILE_BYTES: usize = 1 << 20;
/// Largest number of YAML nodes (scalars, sequences, mappings), counted
/// after alias expansion.
pub const MAX_NODES: usize = 1_000_000;
/// Deepest accepted nesting of sequences and mappings.
pub const MAX_DEPTH: usize = 128;
/// Most bytes of scalar text, counted after alias expansion.
pub const MAX_SCALAR_BYTES: usize = 4 << 20;
/// Deepest chain of aliases replaying anchors that contain aliases.
pub const MAX_ALIAS_DEPTH: usize = 64;

/// What went wrong while reading YAML.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum YamlErrorKind {
    /// The text is larger than [`MAX_FILE_BYTES`].
    TooLarge,
    /// More than [`MAX_NODES`] nodes after alias expansion.
    TooManyNodes,
    /// Nesting deeper than [`MAX_DEPTH`].
    TooDeep,
    /// More than [`MAX_SCALAR_BYTES`] of scalar text after alias expansion.
    TooMuchText,
    /// Aliases replaying aliases deeper than [`MAX_ALIAS_DEPTH`].
    Aliases,
    /// Not valid YAML (scanner or parser error), or more than one document.
    Syntax,
    /// Valid YAML whose shape does not match what was asked for (unknown
    /// key, wrong type, ...).
    Data,
}

// Same shape as validate/fields.rs FieldInfo: plain fields of a different record.
/// A YAML error, located and phrased as "expected X, found Y".
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("expected {expected}, found {found}")]
pub struct YamlError {
    pub kind: YamlErrorKind,
    /// 1-based line, if known.
    pub line: Option<usize>,
    /// 1-based column (in characters), if known.
    pub column: Option<usize>,
    /// Key path of the node the error is about (`fields.probe`,
    /// `couplings[1].dipole`), if known.
    pub path: Option<String>,
    /// What was expected there.
    pub expected: String,
    /// What was found, without location.
    pub found: String,
}

impl YamlError {
    fn new(kind: YamlErrorKind, expected: String, found: String) -> Self {
        YamlError {
            kind,
            line: None,
            column: None,
            path: None,
            expected,
            found,
        }
    }
}

/// Refuse a text longer than [`MAX_FILE_BYTES`].
pub fn check_size(len: usize) -> Result<(), YamlError> {
    if len > MAX_FILE_BYTES {
        return Err(YamlError::new(
            YamlErrorKind::TooLarge,
            format!("a text of at most {MAX_FILE_BYTES} bytes (1 MiB)"),
            format!(
                "the file has {len} bytes, more than the limit of {MAX_FILE_BYTES} bytes (1 MiB)"
            ),
        ));
    }
    Ok(())
}

/// The reading options: budgets, YAML 1.2 booleans (`yes`, `no`, `on`,
/// `off`, `y`, `n` are text), duplicate keys handed to the caller (the
/// validator names both places), `.inf`/`.nan`/`1e400` passed on as
/// numbers (the validator refuses them with their location), `017` and
/// `1_000` kept as text, `<<` an ordinary key (no merging). The
/// deliberate differences are listed in `docs/scheme-format.md`.
fn options(non_finite: NonFiniteFloatPolicy) -> Options {
    serde_saphyr::options! {
        budget: serde_saphyr::budget! {
            max_depth: MAX_DEPTH,
            flow_nesting_limit: MAX_DEPTH,
            max_nodes: MAX_NODES,
            // Events include collection ends: at most about twice the nodes.
            max_events: 4 * MAX_NODES,
            max_aliases: MAX_NODES,
            max_anchors: MAX_NODES,
            max_total_scalar_bytes: MAX_SCALAR_BYTES,
            // The node and scalar budgets bound alias expansion; the ratio
            // heuristic would refuse a scheme that reuses one envelope in
            // more than 100 places.
            enforce_alias_anchor_ratio: false,
            max_documents: 1,
        },
        alias_limits: serde_saphyr::alias_limits! {
            max_total_replayed_events: 4 * MAX_NODES,
            max_replay_stack_depth: MAX_ALIAS_DEPTH,
        },
        strict_booleans: true,
        duplicate_keys: DuplicateKeyPolicy::PassThrough,
        non_finite_float_policy: non_finite,
        leading_zero_numbers_as_strings: true,
        underscored_numbers_as_strings: true,
        merge_keys: serde_saphyr::MergeKeyPolicy::AsOrdinary,
        with_snippet: false,
    }
}

/// Deserialize a `T` from YAML text within the budgets. Non-finite numbers
/// (`.inf`, `.nan`, `1e400`) reach `T` as such.
///
/// The budgets come first: a text that breaks one is refused for that,
/// even where `T` would have stopped earlier at an unknown key.
pub fn from_str<T: DeserializeOwned>(text: &str) -> Result<T, YamlError> {
    check_size(text.len())?;
    let opts = || options(NonFiniteFloatPolicy::PassThrough);
    match serde_saphyr::from_str_with_options(text, opts()) {
        Ok(v) => Ok(v),
        Err(e) => {
            let err = translate(&e, text);
            if err.kind == YamlErrorKind::Data {
                // Walk the whole document (every alias expanded) for a
                // budget the typed reading did not reach.
                if let Err(e) = serde_saphyr::from_str_with_options::<Walk>(text, opts()) {
                    let first = translate(&e, text);
                    if first.kind != YamlErrorKind::Data {
                        return Err(first);
                    }
                }
            }
            Err(err)
        }
    }
}

/// Any YAML node, walked and dropped (allocates nothing).
struct Walk;

impl<'de> Deserialize<'de> for Walk {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Walk, D::Error> {
        d.deserialize_any(WalkVisitor)
    }
}

struct WalkVisitor;

/// The scalar visits of [`WalkVisitor`]: each takes its value and drops it.
macro_rules! drop_scalars {
    ($($visit:ident($t:ty)),* $(,)?) => {
        $(fn $visit<E: de::Error>(self, _: $t) -> Result<Walk, E> {
            Ok(Walk)
        })*
    };
}

impl<'de> Visitor<'de> for WalkVisitor {
    type Value = Walk;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any YAML node")
    }
    drop_scalars!(
        visit_bool(bool),
        visit_i64(i64),
        visit_u64(u64),
        visit_i128(i128),
        visit_u128(u128),
        visit_f64(f64),
        visit_str(&str),
        visit_bytes(&[u8]),
    );
    fn visit_unit<E: de::Error>(self) -> Result<Walk, E> {
        Ok(Walk)
    }
    fn visit_none<E: de::Error>(self) -> Result<Walk, E> {
        Ok(Walk)
    }
    fn visit_some<D: Deserializer<'de>>(self, d: D) -> Result<Walk, D::Error> {
        Walk::deserialize(d)
    }
    fn visit_newtype_struct<D: Deserializer<'de>>(self, d: D) -> Result<Walk, D::Error> {
        Walk::deserialize(d)
    }
    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Walk, A::Error> {
        while seq.next_element::<Walk>()?.is_some() {}
        Ok(Walk)
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Walk, A::Error> {
        while map.next_entry::<Walk, Walk>()?.is_some() {}
        Ok(Walk)
    }
    fn visit_enum<A: de::EnumAccess<'de>>(self, data: A) -> Result<Walk, A::Error> {
        use de::VariantAccess;
        let (Walk, variant) = data.variant::<Walk>()?;
        variant.newtype_variant::<Walk>()
    }
}

/// Remove " at line N, column M" (and the library's alias notes "(defined
/// at ...)", "(used at ...)") from a message.
fn strip_marks(msg: &str) -> String {
    let mut out = msg.to_string();
    for pat in [" (defined at line ", " (used at line "] {
        while let Some(i) = out.find(pat) {
            let end = out[i..].find(')').map_or(out.len(), |j| i + j + 1);
            out.replace_range(i..end, "");
        }
    }
    while let Some(i) = out.find(" at line ") {
        let tail = &out[i + " at line ".len()..];
        let digits = tail.chars().take_while(char::is_ascii_digit).count();
        let mut end = i + " at line ".len() + digits;
        if let Some(t) = out[end..].strip_prefix(", column ") {
            end += ", column ".len() + t.chars().take_while(char::is_ascii_digit).count();
        }
        if digits == 0 {
            break;
        }
        out.replace_range(i..end, "");
    }
    out
}

/// serde's and the library's "expected" wording in ours.
fn rephrase_expected(exp: &str) -> String {
    match exp.strip_prefix("struct ") {
        Some(name) => format!("a mapping of {name} keys"),
        None => match exp {
            "a sequence" | "sequence start" => "a list".to_string(),
            "mapping start" | "a map" => "a mapping".to_string(),
            "string scalar" | "scalar" => "a single value".to_string(),
            other => other.to_string(),
        },
    }
}

/// Take a library error apart: kind, position, path, expected, found.
fn translate(e: &LibError, text: &str) -> YamlError {
    use YamlErrorKind as K;
    let inner = unwrap(e);
    let (line, column) = match e.location() {
        Some(l) if l.line() > 0 => (
            usize::try_from(l.line()).ok(),
            usize::try_from(l.column()).ok(),
        ),
        _ => (None, None),
    };
    let msg = || strip_marks(&inner.to_string());
    // (kind, expected, found, whether the position is a key).
    let mut at = At::Value;
    let mut dup_key: Option<String> = None;
    let (kind, expected, found) = match inner {
        LibError::Budget { breach, .. } => budget_error(breach),
        LibError::AliasReplayLimitExceeded { .. }
        | LibError::AliasExpansionLimitExceeded { .. } => too_many_nodes(),
        LibError::AliasReplayStackDepthExceeded { .. } => (
            K::Aliases,
            format!("aliases nested at most {MAX_ALIAS_DEPTH} deep"),
            format!("an alias replaying aliases more than {MAX_ALIAS_DEPTH} deep"),
        ),
        LibError::SerdeUnknownField {
            field, expected, ..
        } => {
            at = At::Key { keep: true };
            (
                K::Data,
                format!("one of the keys {}", expected.join(", ")),
                format!("unknown key '{field}'"),
            )
        }
        LibError::SerdeInvalidType {
            unexpected,
            expected,
            ..
        } => {
            at = At::Key { keep: false };
            (K::Data, rephrase_expected(expected), unexpected.clone())
        }
        LibError::SerdeInvalidValue {
            unexpected,
            expected,
            ..
        } => {
            at = At::Either;
            (K::Data, rephrase_expected(expected), unexpected.clone())
        }
        LibError::SerdeInvalidLength { len, expected, .. } => {
            at = At::Key { keep: true };
            (K::Data, rephrase_expected(expected), format!("{len} items"))
        }
        LibError::SerdeMissingField { field, .. } => (
            K::Data,
            format!("the key '{field}'"),
            "the key is missing".to_string(),
        ),
        LibError::Unexpected { expected, .. } => {
            (K::Data, rephrase_expected(expected), String::new())
        }
        LibError::InvalidBooleanStrict { .. } => (
            K::Data,
            "true or false (yes, no, on, off are text in YAML 1.2)".to_string(),
            String::new(),
        ),
        LibError::InvalidScalar { ty, .. } => {
            (K::Data, format!("a value of type {ty}"), String::new())
        }
        LibError::NullIntoString { .. } => (K::Data, "a text value".to_string(), String::new()),
        LibError::DuplicateMappingKey { key, .. } => {
            dup_key = key.clone();
            (
                K::Data,
                "each key once in a mapping".to_string(),
                format!("the key '{}' twice", key.as_deref().unwrap_or("?")),
            )
        }
        // serde-saphyr 2.2.0 does not override serde's
        // `de::Error::duplicate_field`, whose default goes through `custom`
        // with the text "duplicate field `NAME`": it arrives as a plain
        // `Message`, so serde's fixed wording is the only handle on it
        // (`DuplicateMappingKey` is the reader's own check, off here: the
        // policy passes duplicates on so that the validator names both places).
        LibError::Message { msg, .. } if msg.starts_with("duplicate field `") => {
            let key = msg["duplicate field `".len()..]
                .trim_end_matches('`')
                .to_string();
            let found = format!("the key '{key}' twice");
            dup_key = Some(key);
            (K::Data, "each key once in a mapping".to_string(), found)
        }
        LibError::MultipleDocuments { .. } => (
            K::Syntax,
            "a single YAML document".to_string(),
            "a second document".to_string(),
        ),
        LibError::UnknownAnchor { .. } => (
            K::Syntax,
            "an alias to an anchor defined before it".to_string(),
            "an alias to no anchor".to_string(),
        ),
        // The parser's own nesting limits (flow and block, set to
        // MAX_DEPTH through the budget) come as its typed error kind.
        LibError::ExternalMessage { source, .. }
            if matches!(
                source.as_ref(),
                ExternalMessageSource::Parser(scan)
                    if matches!(scan.kind(), ParserErrorKind::RecursionLimitExceeded)
            ) =>
        {
            too_deep()
        }
        _ => (
            K::Syntax,
            "valid YAML".to_string(),
            format!("a syntax error: {}", msg()),
        ),
    };
    let mut err = YamlError {
        kind,
        line,
        column,
        path: None,
        expected,
        found,
    };
    if kind == K::Data {
        locate_data_error(&mut err, text, at, dup_key.as_deref());
    }
    if err.found.is_empty() {
        err.found = msg();
    }
    err
}

/// The node budget's refusal.
fn too_many_nodes() -> (YamlErrorKind, String, String) {
    (
        YamlErrorKind::TooManyNodes,
        format!("at most {MAX_NODES} YAML nodes after alias expansion"),
        format!(
            "the document expands to more than {MAX_NODES} YAML nodes (aliases are \
             counted each time they are used; refusing a possible alias bomb)"
        ),
    )
}

/// Anchors keeping too many copies for their aliases.
fn anchors_too_big() -> (YamlErrorKind, String, String) {
    (
        YamlErrorKind::TooManyNodes,
        format!("at most {MAX_NODES} YAML nodes after alias expansion"),
        "anchors that would keep more node copies for their aliases than the budget \
         allows (refusing a possible alias bomb)"
            .to_string(),
    )
}

/// The depth budget's refusal.
fn too_deep() -> (YamlErrorKind, String, String) {
    (
        YamlErrorKind::TooDeep,
        format!("nesting at most {MAX_DEPTH} levels deep"),
        "deeper nesting".to_string(),
    )
}

/// A budget breach: kind, expected, found.
fn budget_error(breach: &BudgetBreach) -> (YamlErrorKind, String, String) {
    use YamlErrorKind as K;
    match breach {
        BudgetBreach::Depth { .. } => too_deep(),
        BudgetBreach::Nodes { .. } | BudgetBreach::Events { .. } => too_many_nodes(),
        BudgetBreach::ScalarBytes { .. } => (
            K::TooMuchText,
            format!("at most {MAX_SCALAR_BYTES} bytes of text after alias expansion"),
            format!(
                "more than {MAX_SCALAR_BYTES} bytes of text (aliases are counted each \
                 time they are used)"
            ),
        ),
        BudgetBreach::Documents { .. } => (
            K::Syntax,
            "a single YAML document".to_string(),
            "a second document".to_string(),
        ),
        BudgetBreach::Aliases { .. }
        | BudgetBreach::Anchors { .. }
        | BudgetBreach::AliasAnchorRatio { .. }
        | BudgetBreach::RecordedAnchorEvents { .. }
        | BudgetBreach::RecordedAnchorBytes { .. } => anchors_too_big(),
        other => (
            K::Syntax,
            "a YAML text within the reader's budgets".to_string(),
            format!("{other:?}"),
        ),
    }
}

/// The error inside the library's wrappers (aliases, snippets).
fn unwrap(e: &LibError) -> &LibError {
    match e {
        LibError::AliasError { error, .. } => unwrap(error),
        LibError::WithSnippet { error, .. } => unwrap(error),
        other => other,
    }
}

/// How a data error's position is read.
#[derive(Clone, Copy, PartialEq)]
enum At {
    /// At a mapping key (serde's errors point at the key whose value is
    /// wrong; the value is described unless `keep` the library's words).
    Key { keep: bool },
    /// At the value (the reader's own type errors).
    Value,
    /// serde's invalid value: at a key, about the key or its value.
    Either,
}

/// Path and, where wanted, a description of the node a data error points
/// at; a duplicate key is moved to its second occurrence.
fn locate_data_error(err: &mut YamlError, text: &str, at: At, dup: Option<&str>) {
    let Some(root) = tree(text) else { return };
    let hit = match (err.line, err.column) {
        (Some(l), Some(c)) if dup.is_none() => {
            let (first, then) = match at {
                At::Key { .. } | At::Either => (true, false),
                At::Value => (false, true),
            };
            node_at(&root, l, c, first).or_else(|| node_at(&root, l, c, then))
        }
        (Some(l), Some(c)) => node_at(&root, l, c, false),
        _ => Some(Hit {
            path: String::new(),
            key: None,
            node: &root,
        }),
    };
    let Some(Hit {
        mut path,
        key,
        node,
    }) = hit
    else {
        return;
    };
    if let (Some(dup), NodeKind::Map(entries)) = (dup, &node.kind) {
        // A duplicate is reported at its mapping: point at the second key.
        if let Some((k, _)) = entries
            .iter()
            .filter(|(k, _)| k.scalar_text() == Some(dup))
            .nth(1)
        {
            push_step(&mut path, Some(dup), 0);
            err.line = Some(k.line);
            err.column = Some(k.column);
        }
    } else if at == At::Either {
        // An invalid scalar: the key's value, or the key itself when its
        // value is not a scalar (an id refused as a mapping key).
        let culprit = match (key, &node.kind) {
            (Some(_), NodeKind::Scalar { text, .. }) if !text.is_empty() => node,
            (Some((k, parent)), _) => {
                path = parent;
                k
            }
            (None, _) => node,
        };
        if let Some(t) = culprit.scalar_text() {
            err.found = format!("'{t}' ({})", err.found);
        }
    } else if at != (At::Key { keep: true }) || err.found.is_empty() {
        err.found = describe(node);
    }
    err.path = (!path.is_empty()).then_some(path);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn strips_locations() {
        assert_eq!(
            strip_marks("budget breached at line 1, column 34 (defined at line 5, column 9) (used at line 6, column 26)"),
            "budget breached"
        );
        assert_eq!(
            strip_marks("did not find key at line 3, column 5"),
            "did not find key"
        );
    }
}
