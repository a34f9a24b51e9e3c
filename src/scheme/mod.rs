//! Scheme files: YAML text to a validated [`crate::model::Model`]. (in progress)
