//! Output files written whole or not at all: bytes go to a temporary file in
//! the same directory, which is renamed over the target only when complete.
//!
//! Owns: atomic file replacement. Must not: format anything. An interrupted
//! or failed run never leaves a partial file and never clobbers an existing one.

use crate::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn temp_path(target: &Path) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = format!(".{name}.levelplan-{}.tmp", std::process::id());
    match target.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.join(tmp),
        _ => PathBuf::from(tmp),
    }
}

/// Write `bytes` to `target` atomically (temporary file + rename).
pub fn write_atomic(target: &Path, bytes: &[u8]) -> Result<(), Error> {
    let tmp = temp_path(target);
    let err = |source: std::io::Error| Error::Output {
        path: target.to_path_buf(),
        source,
    };
    let result = (|| {
        let mut f = fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        fs::rename(&tmp, target)
    })();
    if let Err(e) = result {
        let _ = fs::remove_file(&tmp);
        return Err(err(e));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn failed_write_leaves_existing_file_alone() {
        let dir = std::env::temp_dir().join(format!("levelplan-out-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let target = dir.join("a.csv");
        write_atomic(&target, b"first\n").unwrap();
        // A target inside a missing directory fails; nothing else is touched.
        assert!(write_atomic(&dir.join("missing/b.csv"), b"x").is_err());
        assert_eq!(fs::read(&target).unwrap(), b"first\n");
        let leftovers: Vec<_> = fs::read_dir(&dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
            .collect();
        assert!(leftovers.is_empty());
        fs::remove_dir_all(&dir).unwrap();
    }
}
