//! Output files written whole or not at all: bytes go to a temporary file in
//! the same directory, which is renamed over the target only when complete.
//!
//! Owns: atomic file replacement. Must not: format anything. An interrupted
//! or failed run never leaves a partial file and never clobbers an existing one.

use levelplan::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn temp_path(target: &Path, attempt: u32) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = format!(".{name}.levelplan-{}-{attempt}.tmp", std::process::id());
    match target.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.join(tmp),
        _ => PathBuf::from(tmp),
    }
}

/// Create a new temporary file next to `target`. The file must not exist
/// yet (`create_new`): a name that is taken, by a leftover of an earlier
/// run or by a symbolic link planted in a shared directory, is skipped
/// rather than followed or truncated.
fn create_temp(target: &Path) -> std::io::Result<(PathBuf, fs::File)> {
    let mut last = None;
    for attempt in 0..16 {
        let tmp = temp_path(target, attempt);
        match fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)
        {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => last = Some(e),
            Err(e) => return Err(e),
        }
    }
    Err(last.unwrap_or_else(|| std::io::Error::other("no temporary file name left")))
}

/// Write `bytes` to `target` atomically (temporary file + rename).
pub fn write_atomic(target: &Path, bytes: &[u8]) -> Result<(), Error> {
    let err = |source: std::io::Error| Error::Output {
        path: target.to_path_buf(),
        source,
    };
    let (tmp, mut f) = create_temp(target).map_err(err)?;
    let result = f.write_all(bytes).and_then(|_| f.sync_all()).and_then(|_| {
        drop(f);
        fs::rename(&tmp, target)
    });
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

    // A symbolic link planted where the temporary file will be created (the
    // name is predictable) is not followed: the file it points to stays.
    #[cfg(unix)]
    #[test]
    fn planted_link_is_not_followed() {
        let dir = std::env::temp_dir().join(format!("levelplan-link-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let victim = dir.join("victim");
        fs::write(&victim, b"precious\n").unwrap();
        let target = dir.join("out.csv");
        std::os::unix::fs::symlink(&victim, temp_path(&target, 0)).unwrap();
        write_atomic(&target, b"result\n").unwrap();
        assert_eq!(fs::read(&victim).unwrap(), b"precious\n");
        assert_eq!(fs::read(&target).unwrap(), b"result\n");
        fs::remove_dir_all(&dir).unwrap();
    }
}
