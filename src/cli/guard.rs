//! The files one command reads and writes are distinct: an output that is
//! one of the inputs (by the same name, another spelling, a symbolic link
//! or a hard link) would destroy the input, so the run is refused before
//! anything is computed or written.
//!
//! Owns: the identity of files (canonical path; device and inode where the
//! file exists). Must not: open or write files.

use super::output::follow;
use levelplan::error::Error;
use std::path::{Path, PathBuf};

/// What makes two names the same file.
#[derive(Debug, Clone, PartialEq, Eq)]
struct FileId {
    /// The canonical path (links resolved); for a name not taken yet, its
    /// directory's canonical path joined with the name.
    path: PathBuf,
    /// Device and inode of an existing file (Unix).
    node: Option<(u64, u64)>,
    /// An existing file that is not a regular file (a device, a FIFO):
    /// writing it does not replace what it holds.
    special: bool,
}

impl FileId {
    fn same(&self, other: &FileId) -> bool {
        self.path == other.path || (self.node.is_some() && self.node == other.node)
    }
}

fn file_id(name: &Path) -> FileId {
    let p = follow(name).unwrap_or_else(|_| name.to_path_buf());
    let meta = std::fs::metadata(&p).ok();
    let path = std::fs::canonicalize(&p).unwrap_or_else(|_| {
        let dir = match p.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let dir = std::fs::canonicalize(&dir).unwrap_or(dir);
        p.file_name().map_or(p.clone(), |n| dir.join(n))
    });
    #[cfg(unix)]
    let node = {
        use std::os::unix::fs::MetadataExt;
        meta.as_ref().map(|m| (m.dev(), m.ino()))
    };
    // Elsewhere the canonical path alone decides (a hard link is missed).
    #[cfg(not(unix))]
    let node = None;
    FileId {
        path,
        node,
        special: meta.is_some_and(|m| !m.is_file()),
    }
}

/// Refuse (exit 2) when an output is one of the inputs or two outputs are
/// the same file. `outputs` are (flag, path if given); a device or FIFO given as an
/// output is exempt (writing `/dev/null` twice harms nothing).
pub fn distinct(inputs: &[&Path], outputs: &[(&str, Option<&Path>)]) -> Result<(), Error> {
    let ins: Vec<FileId> = inputs.iter().map(|p| file_id(p)).collect();
    let mut seen: Vec<(&str, &Path, FileId)> = Vec::new();
    for &(flag, out) in outputs {
        let Some(out) = out else { continue };
        let id = file_id(out);
        if id.special {
            continue;
        }
        if let Some((i, _)) = ins.iter().enumerate().find(|(_, i)| i.same(&id)) {
            return Err(Error::BadArgument {
                what: flag.to_string(),
                message: format!(
                    "{} is the input {} (the same file, by name or through a link): writing it would destroy the input; choose another output",
                    out.display(),
                    inputs[i].display()
                ),
            });
        }
        if let Some((other, other_path, _)) = seen.iter().find(|(_, _, s)| s.same(&id)) {
            return Err(Error::BadArgument {
                what: flag.to_string(),
                message: format!(
                    "{} is also the output of {other} ({}): give each output its own file",
                    out.display(),
                    other_path.display()
                ),
            });
        }
        seen.push((flag, out, id));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spellings_and_links_of_one_file_are_the_same() {
        let dir = std::env::temp_dir().join(format!("levelplan-guard-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let a = dir.join("a.yaml");
        std::fs::write(&a, b"x").unwrap();
        let dotted = dir.join(".").join("a.yaml");
        assert!(distinct(&[&a], &[("--out", Some(&dotted))]).is_err());
        std::fs::hard_link(&a, dir.join("h.yaml")).unwrap();
        assert!(distinct(&[&a], &[("--out", Some(&dir.join("h.yaml")))]).is_err());
        assert!(distinct(&[&a], &[("--out", Some(&dir.join("new.csv")))]).is_ok());
        let (o1, o2) = (dir.join("o.csv"), dir.join("./o.csv"));
        assert!(distinct(&[&a], &[("--out", Some(&o1)), ("--plot", Some(&o2))]).is_err());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
