//! A scheme's bytes as read: the size limit, UTF-8 with the place of the
//! first bad byte, the SHA-256 every result states, and the diagnostic of a
//! file that could not be read.
//!
//! Owns: the checks every command applies to a scheme's bytes. Must not:
//! open files (the caller reads at most [`READ_LIMIT`] bytes and passes them
//! here) or parse YAML.

use super::{parse, Diagnostic, SchemeError, SchemeSource};
use crate::model::Model;
use crate::yaml;
use sha2::{Digest, Sha256};

/// Read at most this many bytes of a scheme file: one more than the limit,
/// so a larger file (or one that never ends) is seen to be too large.
pub const READ_LIMIT: u64 = yaml::MAX_FILE_BYTES as u64 + 1;

/// The diagnostic of a scheme file that could not be opened or read.
pub fn unreadable(name: &str, e: &std::io::Error) -> SchemeError {
    let kind = match e.kind() {
        std::io::ErrorKind::NotFound => "no such file",
        std::io::ErrorKind::PermissionDenied => "permission denied",
        _ => "an unreadable file",
    };
    SchemeError::one(
        name,
        Diagnostic::whole_file("a readable scheme file", format!("{kind} ({e})")),
    )
}

/// A scheme's bytes as text: at most [`yaml::MAX_FILE_BYTES`], UTF-8, with
/// the SHA-256 of the bytes. `name` is the file as given, for messages and
/// provenance.
pub fn source_from_bytes(bytes: &[u8], name: &str) -> Result<(String, SchemeSource), SchemeError> {
    if let Err(e) = yaml::check_size(bytes.len()) {
        return Err(SchemeError::one(
            name,
            Diagnostic::whole_file(
                format!(
                    "a scheme file of at most {} bytes (1 MiB)",
                    yaml::MAX_FILE_BYTES
                ),
                format!("a larger file ({})", e.found),
            ),
        ));
    }
    if let Some(enc) = wide_encoding(bytes) {
        return Err(SchemeError::one(
            name,
            Diagnostic::whole_file(
                "UTF-8 text (a UTF-8 byte-order mark is fine)",
                format!("a {enc} file (save it as UTF-8)"),
            ),
        ));
    }
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t.to_string(),
        Err(e) => return Err(not_utf8(bytes, e.valid_up_to(), name)),
    };
    let sha256 = Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect::<String>();
    Ok((
        text,
        SchemeSource {
            path: name.to_string(),
            sha256,
        },
    ))
}

/// The UTF-16 or UTF-32 encoding a file is in, from its byte-order mark or,
/// without one, from the zero bytes beside the ASCII characters a scheme
/// starts with (`ti\0t\0...`). None for anything else.
fn wide_encoding(bytes: &[u8]) -> Option<&'static str> {
    let b = |i: usize| bytes.get(i).copied();
    match (b(0), b(1), b(2), b(3)) {
        (Some(0xff), Some(0xfe), Some(0), Some(0)) => return Some("UTF-32 (little-endian)"),
        (Some(0), Some(0), Some(0xfe), Some(0xff)) => return Some("UTF-32 (big-endian)"),
        (Some(0xff), Some(0xfe), ..) => return Some("UTF-16 (little-endian)"),
        (Some(0xfe), Some(0xff), ..) => return Some("UTF-16 (big-endian)"),
        (Some(x), Some(0), Some(0), Some(0)) if x != 0 => return Some("UTF-32 (little-endian)"),
        (Some(0), Some(0), Some(0), Some(x)) if x != 0 => return Some("UTF-32 (big-endian)"),
        (Some(x), Some(0), Some(y), Some(0)) if x != 0 && y != 0 => {
            return Some("UTF-16 (little-endian)")
        }
        (Some(0), Some(x), Some(0), Some(y)) if x != 0 && y != 0 => {
            return Some("UTF-16 (big-endian)")
        }
        _ => {}
    }
    None
}

/// The first byte that is not UTF-8, with its line and column.
fn not_utf8(bytes: &[u8], at: usize, name: &str) -> SchemeError {
    let before = &bytes[..at];
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    let col = at
        - before
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |p| p + 1)
        + 1;
    SchemeError::one(
        name,
        Diagnostic {
            line: Some(line),
            column: Some(col),
            path: String::new(),
            expected: "UTF-8 text".into(),
            found: format!(
                "a byte that is not UTF-8 (0x{:02x}) at offset {at}",
                bytes[at]
            ),
        },
    )
}

/// Check, hash and validate a scheme's bytes.
pub fn from_bytes(bytes: &[u8], name: &str) -> Result<(Model, SchemeSource), SchemeError> {
    let (text, source) = source_from_bytes(bytes, name)?;
    let model = parse(&text, &source.path)?;
    Ok((model, source))
}
