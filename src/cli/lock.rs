//! The lock of a scan written to a file: `.FILE.lock` beside the output,
//! created new (never opened if it exists) and holding the process id, so
//! that two runs on one output (two `--resume` of the same partial file)
//! cannot both append to it. Removed when the run ends, on success and on
//! every error; a lock left by a killed run (its process gone) is taken
//! over with a note.
//!
//! Owns: the lock file. Must not: touch the output or the partial file.

use levelplan::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The lock file of an output path (links already followed): `.NAME.lock`.
pub fn lock_path(out: &Path) -> Option<PathBuf> {
    let name = out.file_name()?;
    let lock = format!(".{}.lock", name.to_string_lossy());
    Some(match out.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.join(lock),
        _ => PathBuf::from(lock),
    })
}

/// A held lock; dropping it removes the file.
#[derive(Debug)]
pub struct Lock {
    path: PathBuf,
}

impl Drop for Lock {
    fn drop(&mut self) {
        let _ = fs::remove_file(&self.path);
    }
}

fn held(path: &Path, source: std::io::Error) -> Error {
    Error::Output {
        path: path.to_path_buf(),
        source,
    }
}

/// Whether process `pid` runs (and, where the system says, runs this
/// program). Without `/proc` a lock is always taken as held.
fn alive(pid: u32) -> bool {
    let proc_dir = Path::new("/proc");
    if !proc_dir.join("self").exists() {
        return true;
    }
    let Ok(theirs) = fs::read_to_string(proc_dir.join(pid.to_string()).join("comm")) else {
        // Gone, or not ours to read: a process that exists but cannot be
        // read counts as alive.
        return proc_dir.join(pid.to_string()).exists();
    };
    // A reused pid of another program does not hold our lock.
    fs::read_to_string(proc_dir.join("self/comm")).map_or(true, |ours| ours == theirs)
}

/// Take the lock at `path`, or refuse (exit 1) naming the process that
/// holds it.
pub fn acquire(path: &Path) -> Result<Lock, Error> {
    for _ in 0..3 {
        match fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(path)
        {
            Ok(mut f) => {
                let lock = Lock {
                    path: path.to_path_buf(),
                };
                writeln!(f, "{}", std::process::id()).map_err(|e| held(path, e))?;
                return Ok(lock);
            }
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {}
            Err(e) => return Err(held(path, e)),
        }
        let text = fs::read_to_string(path).unwrap_or_default();
        let Ok(pid) = text.trim().parse::<u32>() else {
            // Being written by its creator this very moment, or damaged.
            std::thread::sleep(std::time::Duration::from_millis(50));
            if fs::read_to_string(path).is_ok_and(|t| t.trim().parse::<u32>().is_ok()) {
                continue;
            }
            return Err(held(
                path,
                std::io::Error::other(
                    "the lock file holds no process id; if no other levelplan writes this output, delete it",
                ),
            ));
        };
        if alive(pid) {
            return Err(held(
                path,
                std::io::Error::other(format!(
                    "another levelplan (process {pid}) is writing this output; wait for it to end, or delete the lock if process {pid} is not levelplan"
                )),
            ));
        }
        eprintln!(
            "levelplan: note: taking over {} from process {pid}, which no longer runs",
            path.display()
        );
        let _ = fs::remove_file(path);
    }
    Err(held(
        path,
        std::io::Error::other("the lock changed hands while it was being taken; try again"),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_lock_is_exclusive_and_removed_when_dropped() {
        let dir = std::env::temp_dir().join(format!("levelplan-lock-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let p = lock_path(&dir.join("s.csv")).unwrap();
        assert_eq!(p, dir.join(".s.csv.lock"));
        let first = acquire(&p).unwrap();
        let e = acquire(&p).unwrap_err().to_string();
        assert!(
            e.contains(&format!("process {}", std::process::id())),
            "{e}"
        );
        drop(first);
        assert!(!p.exists());
        // A lock of a process that does not run (pid beyond the kernel's
        // largest, 2^22) is taken over.
        fs::write(&p, "4999999\n").unwrap();
        let taken = acquire(&p).unwrap();
        assert_eq!(
            fs::read_to_string(&p).unwrap().trim(),
            std::process::id().to_string()
        );
        drop(taken);
        fs::remove_dir_all(&dir).unwrap();
    }
}
