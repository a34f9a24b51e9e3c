//! Output files written whole or not at all: bytes go to a temporary file in
//! the same directory, which is renamed over the target only when complete.
//! A symbolic link is written through (its target is replaced, the link
//! stays); a target that exists and is not a regular file (a device such as
//! `/dev/null`, a FIFO) is written directly, since renaming over it would
//! replace the device by a file.
//!
//! Owns: atomic file replacement, following links to the file they name,
//! opening devices and FIFOs. Must not: format anything. An interrupted or
//! failed run never leaves a partial regular file and never clobbers an
//! existing one.

use levelplan::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Most symbolic links followed from an output path to its file (as the
/// kernel's own limit for one lookup).
pub const MAX_LINKS: usize = 40;

/// How long an output FIFO may be without a reader before the write is
/// refused (instead of blocking for ever).
pub const FIFO_WAIT: Duration = Duration::from_secs(2);

/// Where an output's bytes go once links are followed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Target {
    /// A regular file, or a name not taken yet: written atomically.
    File(PathBuf),
    /// An existing file that is not regular (a device, a FIFO): written
    /// directly, in place.
    Direct(PathBuf),
}

fn out_error(path: &Path, source: std::io::Error) -> Error {
    Error::Output {
        path: path.to_path_buf(),
        source,
    }
}

/// Follow symbolic links from `path` to the file they name; a dangling
/// link ends at the name it points to (which the write then creates).
pub fn follow(path: &Path) -> std::io::Result<PathBuf> {
    let mut p = path.to_path_buf();
    for _ in 0..MAX_LINKS {
        match fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => {
                let to = fs::read_link(&p)?;
                p = match p.parent() {
                    Some(dir) if to.is_relative() => dir.join(to),
                    _ => to,
                };
            }
            Ok(_) => return Ok(p),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(p),
            Err(e) => return Err(e),
        }
    }
    Err(std::io::Error::other(format!(
        "more than {MAX_LINKS} symbolic links in a row"
    )))
}

/// Where the bytes for `target` go: links followed, then a regular file
/// (or a new name) or a device/FIFO. A directory is an error.
pub fn resolve(target: &Path) -> Result<Target, Error> {
    let p = follow(target).map_err(|e| out_error(target, e))?;
    match fs::metadata(&p) {
        Ok(m) if m.is_dir() => Err(out_error(
            target,
            std::io::Error::other("it is a directory"),
        )),
        Ok(m) if !m.is_file() => Ok(Target::Direct(p)),
        _ => Ok(Target::File(p)),
    }
}

/// Open an existing device or FIFO for writing, in place. A FIFO is opened
/// without blocking: with no reader the open fails (ENXIO), and it is
/// tried again for [`FIFO_WAIT`] before the write is refused.
pub fn open_direct(path: &Path) -> Result<fs::File, Error> {
    let mut opts = fs::OpenOptions::new();
    opts.write(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        // O_NONBLOCK: 0o4000 on Linux and the BSDs' 0x0004 differ, so ask
        // only where the value is known.
        #[cfg(any(target_os = "linux", target_os = "android"))]
        opts.custom_flags(0o4000);
        #[cfg(any(target_os = "macos", target_os = "freebsd", target_os = "openbsd"))]
        opts.custom_flags(0x0004);
    }
    let start = Instant::now();
    loop {
        match opts.open(path) {
            Ok(f) => return Ok(f),
            // ENXIO (6 on Linux and the BSDs): a FIFO with no reader yet.
            Err(e) if e.raw_os_error() == Some(6) && start.elapsed() < FIFO_WAIT => {
                std::thread::sleep(Duration::from_millis(20));
            }
            Err(e) if e.raw_os_error() == Some(6) => {
                return Err(out_error(
                    path,
                    std::io::Error::other(format!(
                        "no process reads this FIFO (waited {} s); start the reader first",
                        FIFO_WAIT.as_secs()
                    )),
                ))
            }
            Err(e) => return Err(out_error(path, e)),
        }
    }
}

/// A writer over a file opened without blocking (a FIFO): a full pipe
/// (`WouldBlock`) is waited out rather than reported as an error.
pub struct Patient(pub fs::File);

impl Write for Patient {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        loop {
            match self.0.write(buf) {
                Err(e) if e.kind() == std::io::ErrorKind::WouldBlock => {
                    std::thread::sleep(Duration::from_millis(2));
                }
                r => return r,
            }
        }
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.0.flush()
    }
}

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

/// Write `bytes` to `target`: atomically (temporary file + rename) for a
/// regular file or a new name, through symbolic links, and directly into a
/// device or FIFO.
pub fn write_atomic(target: &Path, bytes: &[u8]) -> Result<(), Error> {
    match resolve(target)? {
        Target::Direct(p) => {
            let mut w = Patient(open_direct(&p)?);
            w.write_all(bytes)
                .and_then(|_| w.flush())
                .map_err(|e| out_error(&p, e))
        }
        Target::File(p) => replace(&p, bytes),
    }
}

/// Replace the regular file `target` (no link) by `bytes`, atomically.
fn replace(target: &Path, bytes: &[u8]) -> Result<(), Error> {
    let err = |source: std::io::Error| out_error(target, source);
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
