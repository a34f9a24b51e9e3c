//! The binary end to end, one test binary: exit codes, formats, files,
//! limits and refusals, scans, and the documents that show real output
//! (README, cookbook, JSON golden files). Each module was a test file of
//! its own; they share one binary so the suite links a few executables
//! instead of one per file. Run one module with
//! `cargo test --release --test cli cli_scan::`.

mod cli_support;

mod cli;
mod cli_scan;
mod cookbook;
mod honesty;
mod hygiene;
mod json_golden;
mod limits;
mod model_text;
mod open_csv;
mod output_files;
mod readme;
mod scan_links;
mod sublevels;
