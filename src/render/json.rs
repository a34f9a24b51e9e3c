//! JSON rendering: the reports serialised as they are, with the stable keys
//! of the contract (docs/output-format.md). Keys are added, never renamed.
//!
//! Owns: the JSON layout (pretty-printed, one trailing newline). Must not:
//! compute or convert anything; the keys, their order and their units are
//! those of the report types (`report::json_units` holds the unit changes).

use serde::Serialize;
use std::io::{self, Write};

/// Write a report as pretty-printed JSON followed by a newline.
pub fn write<T: Serialize + ?Sized>(report: &T, w: &mut dyn Write) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *w, report).map_err(io::Error::other)?;
    writeln!(w)
}
