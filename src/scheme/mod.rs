//! Scheme files: YAML text to a validated [`crate::model::Model`].
//! (placeholder with the agreed API; the parser lands from its own branch)

use crate::model::Model;
use std::path::Path;

pub struct SchemeSource {
    pub path: String,
    pub sha256: String,
}

#[derive(Debug, thiserror::Error)]
#[error("{file}: scheme parser not built yet")]
pub struct SchemeError {
    pub file: String,
}

pub fn load(path: &Path) -> Result<(Model, SchemeSource), SchemeError> {
    Err(SchemeError {
        file: path.display().to_string(),
    })
}

pub fn parse(text: &str, file_name: &str) -> Result<Model, SchemeError> {
    let _ = text;
    Err(SchemeError {
        file: file_name.to_string(),
    })
}

pub fn parse_with_overrides(
    text: &str,
    file_name: &str,
    overrides: &[(String, String)],
) -> Result<Model, SchemeError> {
    let _ = (text, overrides);
    Err(SchemeError {
        file: file_name.to_string(),
    })
}

/// The number and unit written at a dot path, e.g. (-20.0, "MHz").
pub fn numeric_value_at(
    text: &str,
    file_name: &str,
    path: &str,
) -> Result<(f64, String), SchemeError> {
    let _ = (text, path);
    Err(SchemeError {
        file: file_name.to_string(),
    })
}
