//! Writing outputs safely: every file is written to a temporary name in the
//! same folder and renamed into place, so a reader never sees half a file;
//! a folder holding files attest did not write is refused unless forced;
//! a file that must never be replaced (the lock) is created with a hard
//! link, which fails rather than overwrite.

use crate::error::{Failure, Result};
use std::collections::BTreeSet;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Name of the list of files attest wrote into an output folder.
pub(crate) const MANIFEST: &str = ".attest-outputs";

/// Writes `bytes` to `path` atomically (temp file + rename).
pub(crate) fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = temp_name(path);
    let res = (|| -> std::io::Result<()> {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    res.map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        Failure::io("write", path, &e)
    })
}

/// Creates `path` with `bytes`, refusing if it exists (never overwrites).
pub(crate) fn create_new(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = temp_name(path);
    let res = (|| -> std::io::Result<()> {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::hard_link(&tmp, path)
    })();
    let _ = std::fs::remove_file(&tmp);
    res.map_err(|e| {
        if e.kind() == std::io::ErrorKind::AlreadyExists {
            Failure::input(format!(
                "{} already exists; it is never overwritten",
                path.display()
            ))
        } else {
            Failure::io("create", path, &e)
        }
    })
}

fn temp_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.partial-{}", std::process::id()))
}

/// An output folder that attest may write into.
pub(crate) struct OutDir {
    /// The folder.
    pub dir: PathBuf,
    known: BTreeSet<String>,
    written: BTreeSet<String>,
}

impl OutDir {
    /// Opens (creating if needed) an output folder. Refuses a folder that
    /// holds files attest did not write, unless `force`.
    pub(crate) fn open(dir: &Path, force: bool) -> Result<OutDir> {
        std::fs::create_dir_all(dir)
            .map_err(|e| Failure::io("create the output folder", dir, &e))?;
        let known: BTreeSet<String> = std::fs::read_to_string(dir.join(MANIFEST))
            .map(|s| s.lines().map(str::to_string).collect())
            .unwrap_or_default();
        if !force {
            let mut foreign = Vec::new();
            collect_foreign(dir, dir, &known, &mut foreign)?;
            if let Some(first) = foreign.first() {
                return Err(Failure::input(format!(
                    "the output folder {} holds files attest did not write (e.g. {first})",
                    dir.display()
                ))
                .help("choose an empty folder with --out, or pass --force to write there anyway"));
            }
        }
        Ok(OutDir {
            dir: dir.to_path_buf(),
            known,
            written: BTreeSet::new(),
        })
    }

    /// Writes one output file (relative name, `/`-separated) atomically.
    pub(crate) fn write(&mut self, name: &str, bytes: &[u8]) -> Result<PathBuf> {
        let path = self.dir.join(name);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).map_err(|e| Failure::io("create", parent, &e))?;
        }
        write_atomic(&path, bytes)?;
        self.written.insert(name.to_string());
        Ok(path)
    }

    /// Records what attest has written here, so later runs recognise it.
    pub(crate) fn finish(self) -> Result<()> {
        let all: BTreeSet<&String> = self.known.iter().chain(self.written.iter()).collect();
        let mut text = String::new();
        for n in all {
            text.push_str(n);
            text.push('\n');
        }
        write_atomic(&self.dir.join(MANIFEST), text.as_bytes())
    }
}

fn collect_foreign(
    root: &Path,
    dir: &Path,
    known: &BTreeSet<String>,
    out: &mut Vec<String>,
) -> Result<()> {
    let entries =
        std::fs::read_dir(dir).map_err(|e| Failure::io("read the output folder", dir, &e))?;
    let mut names: Vec<_> = entries.filter_map(|e| e.ok()).map(|e| e.path()).collect();
    names.sort();
    for p in names {
        let rel = p
            .strip_prefix(root)
            .unwrap_or(&p)
            .to_string_lossy()
            .replace('\\', "/");
        if rel == MANIFEST || rel.contains(".partial-") {
            continue;
        }
        if p.is_dir() {
            collect_foreign(root, &p, known, out)?;
        } else if !known.contains(&rel) {
            out.push(rel);
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_foreign_files_and_keeps_own() {
        let t = tempfile::tempdir().unwrap();
        let mut o = OutDir::open(t.path(), false).unwrap();
        o.write("report.md", b"x").unwrap();
        o.finish().unwrap();
        // attest's own files are fine on the next run.
        assert!(OutDir::open(t.path(), false).is_ok());
        std::fs::write(t.path().join("notes.txt"), "mine").unwrap();
        let e = OutDir::open(t.path(), false).err().unwrap();
        assert!(e.what.contains("notes.txt"));
        assert!(OutDir::open(t.path(), true).is_ok());
    }

    #[test]
    fn create_new_never_overwrites() {
        let t = tempfile::tempdir().unwrap();
        let p = t.path().join("a.lock");
        create_new(&p, b"one").unwrap();
        assert!(create_new(&p, b"two").is_err());
        assert_eq!(std::fs::read(&p).unwrap(), b"one");
    }
}
