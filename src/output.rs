//! Writing outputs so that a reader sees a whole set or none.
//!
//! An output folder (`out/<stem>/`) is one set: every file of one run, and
//! `manifest.sha256` listing each with its SHA-256. A run writes the new set
//! into a staging folder beside the target (created exclusively, with a
//! name no one else uses), writes the manifest last, and then swaps the
//! staging folder into place by rename: on Linux an atomic exchange of the
//! two folders, elsewhere two renames with a moment in which the target is
//! absent. A reader therefore sees the old set or the new set, never a mix.
//!
//! Runs that write beside each other serialise on an advisory lock of the
//! parent folder (held only for the write phase), so the second run waits
//! for the first instead of mixing with it.
//!
//! A staging folder left by a killed run is recognised by its name and by
//! the list inside it (the manifest, or the list of names a run writes
//! before its first file); the next run deletes exactly the files that list
//! names, and nothing else. A folder holding files attest did not write is
//! refused unless forced; forced, those files are carried over untouched.
//!
//! A file that must never be replaced (the lock) is created with a hard
//! link from an exclusively created temporary file, which fails rather than
//! overwrite.

use crate::error::{Failure, Result};
use std::collections::{BTreeMap, BTreeSet};
use std::io::Write;
use std::path::{Component, Path, PathBuf};

/// The manifest of an output set: `<sha256>  <file>` per line, sorted, the
/// format `sha256sum --check` reads.
pub const MANIFEST: &str = "manifest.sha256";
/// The list of files earlier versions of attest kept in an output folder.
pub const LEGACY_LIST: &str = ".attest-outputs";
/// Inside a staging folder: the names the run is about to write.
const PENDING: &str = ".attest-pending";
/// The most entries attest lists in one output folder.
pub const MAX_ENTRIES: usize = 100_000;

/// Creates `path` with `bytes`, refusing if it exists (never overwrites).
pub fn create_new(path: &Path, bytes: &[u8]) -> Result<()> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let res = (|| -> std::io::Result<()> {
        let (tmp, mut f) = exclusive_file(dir, &format!(".{name}.attest-new-"))?;
        let written = f
            .write_all(bytes)
            .and_then(|_| f.sync_all())
            .and_then(|_| std::fs::hard_link(&tmp, path));
        let _ = std::fs::remove_file(&tmp);
        written
    })();
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

/// A name that is unlikely to exist: the process id, the clock's
/// nanoseconds and a counter. Uniqueness is enforced by exclusive creation;
/// the name only makes collisions rare.
fn fresh_name(prefix: &str) -> String {
    use std::sync::atomic::{AtomicU64, Ordering};
    static COUNTER: AtomicU64 = AtomicU64::new(0);
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.subsec_nanos())
        .unwrap_or(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    format!("{prefix}{}-{nanos:08x}{n}", std::process::id())
}

/// Creates a new file with a fresh name in `dir` (`O_EXCL`: never through
/// an existing name or symlink).
fn exclusive_file(dir: &Path, prefix: &str) -> std::io::Result<(PathBuf, std::fs::File)> {
    for _ in 0..100 {
        let p = dir.join(fresh_name(prefix));
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&p)
        {
            Ok(f) => return Ok((p, f)),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
    Err(std::io::Error::other("no free temporary name"))
}

/// What a folder entry is, for the set check.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Entry {
    /// A regular file.
    File,
    /// Anything else, in words ("a symbolic link", "a FIFO (named pipe)").
    Other(&'static str),
}

/// Every entry below `dir` by `/`-separated relative path, folders walked
/// (never through a symlink) but not listed themselves.
pub fn list_files(dir: &Path) -> Result<BTreeMap<String, Entry>> {
    fn walk(root: &Path, dir: &Path, out: &mut BTreeMap<String, Entry>) -> Result<()> {
        let entries =
            std::fs::read_dir(dir).map_err(|e| Failure::io("read the folder", dir, &e))?;
        for e in entries {
            let e = e.map_err(|e| Failure::io("read the folder", dir, &e))?;
            let p = e.path();
            let meta = std::fs::symlink_metadata(&p).map_err(|e| Failure::io("read", &p, &e))?;
            let rel = p
                .strip_prefix(root)
                .unwrap_or(&p)
                .to_string_lossy()
                .replace('\\', "/");
            if meta.is_dir() {
                walk(root, &p, out)?;
            } else {
                let kind = if meta.is_file() {
                    Entry::File
                } else if meta.file_type().is_symlink() {
                    Entry::Other("a symbolic link")
                } else {
                    Entry::Other("not a regular file")
                };
                out.insert(rel, kind);
            }
            if out.len() > MAX_ENTRIES {
                return Err(Failure::input(format!(
                    "{} holds more than {MAX_ENTRIES} files; attest never writes that many",
                    root.display()
                ))
                .help("name the folder attest wrote"));
            }
        }
        Ok(())
    }
    let mut out = BTreeMap::new();
    walk(dir, dir, &mut out)?;
    Ok(out)
}

/// Whether `name` is a plain relative path (no root, no `..`, no `.`).
fn plain_relative(name: &str) -> bool {
    !name.is_empty()
        && Path::new(name)
            .components()
            .all(|c| matches!(c, Component::Normal(_)))
}

/// The manifest text of `files`, sorted by name.
pub fn manifest_text(files: &[(String, Vec<u8>)]) -> String {
    let sorted: BTreeMap<&str, String> = files
        .iter()
        .map(|(n, b)| (n.as_str(), crate::plan::canonical::sha256_hex(b)))
        .collect();
    sorted.iter().map(|(n, h)| format!("{h}  {n}\n")).collect()
}

/// Reads a manifest; `None` when a line is not `<64 hex>  <plain path>`.
pub fn parse_manifest(text: &str) -> Option<BTreeMap<String, String>> {
    text.lines()
        .map(|line| {
            let (h, n) = line.split_once("  ")?;
            let hex = h.len() == 64 && h.bytes().all(|b| b.is_ascii_hexdigit());
            (hex && plain_relative(n)).then(|| (n.to_string(), h.to_ascii_lowercase()))
        })
        .collect()
}

/// The names a folder's own lists say attest wrote there.
fn own_names(dir: &Path) -> BTreeSet<String> {
    let read = |name: &str| {
        crate::files::read_bounded(
            &dir.join(name),
            "read",
            crate::files::Links::Refuse,
            crate::files::MAX_LOCK,
        )
        .ok()
        .map(|b| String::from_utf8_lossy(&b).into_owned())
    };
    let mut names: BTreeSet<String> = [MANIFEST, LEGACY_LIST, PENDING]
        .iter()
        .map(|s| s.to_string())
        .collect();
    if let Some(m) = read(MANIFEST).and_then(|t| parse_manifest(&t)) {
        names.extend(m.into_keys());
    }
    for list in [LEGACY_LIST, PENDING] {
        if let Some(t) = read(list) {
            names.extend(t.lines().filter(|n| plain_relative(n)).map(str::to_string));
        }
    }
    names
}

/// Deletes the files of an abandoned attest folder that its own lists name,
/// then its empty subfolders and itself if empty. Returns whether the
/// folder is gone; anything it does not list stays.
fn clear_own(dir: &Path) -> bool {
    let own = own_names(dir);
    let Ok(found) = list_files(dir) else {
        return false;
    };
    let mut folders = BTreeSet::new();
    for (name, kind) in &found {
        if kind == &Entry::File && own.contains(name) {
            let _ = std::fs::remove_file(dir.join(name));
        }
        let mut p = Path::new(name.as_str()).parent();
        while let Some(d) = p.filter(|d| !d.as_os_str().is_empty()) {
            folders.insert(d.to_path_buf());
            p = d.parent();
        }
    }
    // Deepest first; a folder that still holds something stays.
    for d in folders.iter().rev() {
        let _ = std::fs::remove_dir(dir.join(d));
    }
    std::fs::remove_dir(dir).is_ok()
}

/// The folder that holds `target` and the target's own name.
fn split_target(target: &Path) -> Result<(PathBuf, String)> {
    let name = match target.components().next_back() {
        Some(Component::Normal(n)) => n.to_string_lossy().into_owned(),
        _ => {
            return Err(Failure::input(format!(
                "the output folder {} must be a folder of its own, not `.`, `..` or a root",
                target.display()
            ))
            .help("name a folder for the outputs, e.g. --out out/trial"))
        }
    };
    let parent = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Ok((parent, name))
}

fn staging_prefix(name: &str) -> String {
    format!(".{name}.attest-staging-")
}

/// A check of an output folder before anything is written.
pub struct Target {
    parent: PathBuf,
    name: String,
    /// The folder.
    pub dir: PathBuf,
    /// Files in the folder that attest did not write (kept when forced).
    foreign: Vec<String>,
    /// Holds the advisory lock of the parent folder.
    _guard: std::fs::File,
}

/// Opens `target` for a new output set: takes the parent folder's advisory
/// lock (waiting for another run to finish), cleans staging folders that
/// killed runs left, and refuses a symlink, a file, or a folder holding
/// files attest did not write (unless `force`).
pub fn prepare(target: &Path, force: bool) -> Result<Target> {
    let (parent, name) = split_target(target)?;
    std::fs::create_dir_all(&parent)
        .map_err(|e| Failure::io("create the output folder", &parent, &e))?;
    let guard = std::fs::File::open(&parent)
        .map_err(|e| Failure::io("open the output folder", &parent, &e))?;
    fs4::fs_std::FileExt::lock_exclusive(&guard)
        .map_err(|e| Failure::io("lock the output folder", &parent, &e))?;
    let prefix = staging_prefix(&name);
    if let Ok(entries) = std::fs::read_dir(&parent) {
        for e in entries.flatten() {
            let is_dir = e.file_type().is_ok_and(|t| t.is_dir());
            if is_dir && e.file_name().to_string_lossy().starts_with(&prefix) {
                // Under the lock no other run is writing: this is stale.
                clear_own(&e.path());
            }
        }
    }
    let mut foreign = Vec::new();
    match std::fs::symlink_metadata(target) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
        Err(e) => return Err(Failure::io("read the output folder", target, &e)),
        Ok(m) if m.file_type().is_symlink() => {
            return Err(Failure::input(format!(
                "the output folder {} is a symbolic link",
                target.display()
            ))
            .help("attest replaces its output folder as a whole; name the real folder with --out"))
        }
        Ok(m) if !m.is_dir() => {
            return Err(Failure::input(format!(
                "the output folder {} exists and is not a folder",
                target.display()
            ))
            .help("choose another folder with --out"))
        }
        Ok(_) => {
            let own = own_names(target);
            for (n, kind) in list_files(target)? {
                if kind != Entry::File || !own.contains(&n) {
                    foreign.push(n);
                }
            }
        }
    }
    if let Some(first) = foreign.first().filter(|_| !force) {
        return Err(Failure::input(format!(
            "the output folder {} holds files attest did not write (e.g. {})",
            target.display(),
            crate::error::clean(first)
        ))
        .help("choose an empty folder with --out, or pass --force to write there anyway (those files are kept)"));
    }
    Ok(Target {
        dir: target.to_path_buf(),
        parent,
        name,
        foreign,
        _guard: guard,
    })
}

/// A test-only pause in the write phase (debug builds): with
/// `ATTEST_TEST_PAUSE_WRITE=FILE`, a run creates FILE after writing half of
/// its staged files and sleeps, so a test can kill it there.
fn test_pause() {
    #[cfg(debug_assertions)]
    if let Some(p) = std::env::var_os("ATTEST_TEST_PAUSE_WRITE") {
        let _ = std::fs::write(p, b"paused");
        std::thread::sleep(std::time::Duration::from_secs(60));
    }
}

fn write_staged(staging: &Path, files: &[(String, Vec<u8>)]) -> std::io::Result<()> {
    let new_file = |rel: &str, bytes: &[u8]| -> std::io::Result<()> {
        let p = staging.join(rel);
        if let Some(d) = p.parent() {
            std::fs::create_dir_all(d)?;
        }
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&p)?;
        f.write_all(bytes)
    };
    let pending: String = files.iter().map(|(n, _)| format!("{n}\n")).collect();
    new_file(PENDING, pending.as_bytes())?;
    for (i, (name, bytes)) in files.iter().enumerate() {
        if i == files.len() / 2 {
            test_pause();
        }
        new_file(name, bytes)?;
    }
    new_file(MANIFEST, manifest_text(files).as_bytes())?;
    std::fs::remove_file(staging.join(PENDING))?;
    sync_set(staging, files)
}

/// Makes the staged set durable before it is swapped into place. On Linux
/// one `syncfs` of the staging folder's file system covers every file of
/// the set (a folder of 50 analyses costs 50 calls, not one per file);
/// elsewhere each file and the folder are synced in turn.
fn sync_set(staging: &Path, files: &[(String, Vec<u8>)]) -> std::io::Result<()> {
    #[cfg(target_os = "linux")]
    {
        let _ = files;
        let dir = std::fs::File::open(staging)?;
        rustix::fs::syncfs(&dir).map_err(std::io::Error::from)
    }
    #[cfg(not(target_os = "linux"))]
    {
        for name in files.iter().map(|f| f.0.as_str()).chain([MANIFEST]) {
            std::fs::File::open(staging.join(name))?.sync_all()?;
        }
        std::fs::File::open(staging)?.sync_all()
    }
}

impl Target {
    /// The files of the set now in the folder (attest's own, as its
    /// manifest or list names them), except `replacing`: what a partial
    /// update (a new lock's documents) keeps of the set it replaces.
    pub fn current_files(&self, replacing: &[&str]) -> Result<Vec<(String, Vec<u8>)>> {
        if !self.dir.is_dir() {
            return Ok(Vec::new());
        }
        let own = own_names(&self.dir);
        let mut out = Vec::new();
        for (name, kind) in list_files(&self.dir)? {
            let skip = [MANIFEST, LEGACY_LIST, PENDING].contains(&name.as_str())
                || replacing.contains(&name.as_str());
            if kind == Entry::File && own.contains(&name) && !skip {
                let bytes = crate::files::read_bounded(
                    &self.dir.join(&name),
                    "read",
                    crate::files::Links::Refuse,
                    crate::files::MAX_OUTPUT,
                )?;
                out.push((name, bytes));
            }
        }
        Ok(out)
    }

    /// Writes `files` as the folder's new set. `before_swap` runs once the
    /// set is staged whole and before it becomes visible; its failure
    /// leaves the old set in place.
    pub fn write(
        self,
        files: &[(String, Vec<u8>)],
        before_swap: impl FnOnce() -> Result<()>,
    ) -> Result<Vec<PathBuf>> {
        for (n, _) in files {
            if !plain_relative(n) || n == MANIFEST {
                return Err(Failure::internal(format!(
                    "output name {n} is not a plain file name"
                )));
            }
        }
        let staging = self.make_staging()?;
        let staged = write_staged(&staging, files)
            .map_err(|e| Failure::io("write the outputs into", &staging, &e))
            .and_then(|_| before_swap());
        if let Err(e) = staged {
            clear_own(&staging);
            return Err(e);
        }
        self.swap(&staging)?;
        let mut written: Vec<PathBuf> = files.iter().map(|(n, _)| self.dir.join(n)).collect();
        written.push(self.dir.join(MANIFEST));
        Ok(written)
    }

    fn make_staging(&self) -> Result<PathBuf> {
        let prefix = staging_prefix(&self.name);
        for _ in 0..100 {
            let p = self.parent.join(fresh_name(&prefix));
            // mkdir never follows a symlink at its last component: a name
            // planted as a link fails here with "exists" and is skipped.
            match std::fs::create_dir(&p) {
                Ok(()) => return Ok(p),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
                Err(e) => return Err(Failure::io("create a staging folder in", &self.parent, &e)),
            }
        }
        Err(Failure::internal(format!(
            "no free staging name in {}",
            self.parent.display()
        )))
    }

    /// Puts the staged set in place of the target; the old set (if any) is
    /// moved aside and cleared.
    fn swap(&self, staging: &Path) -> Result<()> {
        let fail = |e: std::io::Error| {
            clear_own(staging);
            Failure::io("put the new outputs in place at", &self.dir, &e)
        };
        match std::fs::rename(staging, &self.dir) {
            Ok(()) => return Ok(()),
            // The target exists and is not empty: exchange below.
            Err(e)
                if matches!(
                    e.kind(),
                    std::io::ErrorKind::DirectoryNotEmpty | std::io::ErrorKind::AlreadyExists
                ) => {}
            Err(e) => return Err(fail(e)),
        }
        let old = exchange(staging, &self.dir, &self.parent, &self.name).map_err(fail)?;
        // Files the user keeps in the folder (with --force) move into the
        // new set untouched.
        for rel in &self.foreign {
            let to = self.dir.join(rel);
            if let Some(d) = to.parent() {
                let _ = std::fs::create_dir_all(d);
            }
            let _ = std::fs::rename(old.join(rel), &to);
        }
        clear_own(&old);
        Ok(())
    }
}

/// Exchanges `staging` and `target`; returns where the old set now is.
#[cfg(any(target_os = "linux", target_os = "android"))]
fn exchange(
    staging: &Path,
    target: &Path,
    _parent: &Path,
    _name: &str,
) -> std::io::Result<PathBuf> {
    use rustix::fs::{renameat_with, RenameFlags, CWD};
    renameat_with(CWD, staging, CWD, target, RenameFlags::EXCHANGE)?;
    Ok(staging.to_path_buf())
}

/// Without an atomic exchange: the old set moves aside, the new one in.
#[cfg(not(any(target_os = "linux", target_os = "android")))]
fn exchange(staging: &Path, target: &Path, parent: &Path, name: &str) -> std::io::Result<PathBuf> {
    let aside = parent.join(fresh_name(&staging_prefix(name)));
    std::fs::rename(target, &aside)?;
    if let Err(e) = std::fs::rename(staging, target) {
        let _ = std::fs::rename(&aside, target);
        return Err(e);
    }
    Ok(aside)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn set(names: &[&str]) -> Vec<(String, Vec<u8>)> {
        names
            .iter()
            .map(|n| (n.to_string(), n.as_bytes().to_vec()))
            .collect()
    }

    #[test]
    fn writes_a_whole_set_and_replaces_it() {
        let t = tempfile::tempdir().unwrap();
        let out = t.path().join("x");
        prepare(&out, false)
            .unwrap()
            .write(&set(&["a.md", "figures/one.svg"]), || Ok(()))
            .unwrap();
        let m = parse_manifest(&std::fs::read_to_string(out.join(MANIFEST)).unwrap()).unwrap();
        assert_eq!(
            m.keys().collect::<Vec<_>>(),
            vec!["a.md", "figures/one.svg"]
        );
        // The manifest's hash is the SHA-256 of the bytes (FIPS 180-4 test
        // vector "abc" is checked in plan::canonical; here: consistency).
        assert_eq!(m["a.md"], crate::plan::canonical::sha256_hex(b"a.md"));
        prepare(&out, false)
            .unwrap()
            .write(&set(&["b.md"]), || Ok(()))
            .unwrap();
        let files = list_files(&out).unwrap();
        assert_eq!(
            files.keys().collect::<Vec<_>>(),
            vec!["b.md", MANIFEST],
            "the old set's files are gone, not mixed in"
        );
        // Nothing is left beside the target.
        let beside: Vec<_> = std::fs::read_dir(t.path()).unwrap().flatten().collect();
        assert_eq!(beside.len(), 1);
    }

    #[test]
    fn refuses_foreign_files_and_keeps_them_when_forced() {
        let t = tempfile::tempdir().unwrap();
        let out = t.path().join("x");
        prepare(&out, false)
            .unwrap()
            .write(&set(&["a.md"]), || Ok(()))
            .unwrap();
        std::fs::write(out.join("notes.txt"), "mine").unwrap();
        let e = prepare(&out, false).err().unwrap();
        assert!(e.what.contains("notes.txt"), "{}", e.what);
        prepare(&out, true)
            .unwrap()
            .write(&set(&["a.md"]), || Ok(()))
            .unwrap();
        assert_eq!(
            std::fs::read_to_string(out.join("notes.txt")).unwrap(),
            "mine"
        );
    }

    #[test]
    fn a_failed_step_before_the_swap_keeps_the_old_set() {
        let t = tempfile::tempdir().unwrap();
        let out = t.path().join("x");
        prepare(&out, false)
            .unwrap()
            .write(&set(&["a.md"]), || Ok(()))
            .unwrap();
        let e = prepare(&out, false)
            .unwrap()
            .write(&set(&["b.md"]), || Err(Failure::input("refused")));
        assert!(e.is_err());
        assert!(out.join("a.md").exists() && !out.join("b.md").exists());
        assert_eq!(std::fs::read_dir(t.path()).unwrap().count(), 1);
    }

    #[test]
    fn stale_staging_loses_only_its_own_files() {
        let t = tempfile::tempdir().unwrap();
        let stale = t.path().join(".x.attest-staging-1-dead");
        std::fs::create_dir_all(stale.join("figures")).unwrap();
        std::fs::write(stale.join(PENDING), "report.md\nfigures/a.svg\n").unwrap();
        std::fs::write(stale.join("report.md"), "half").unwrap();
        std::fs::write(stale.join("figures/a.svg"), "half").unwrap();
        let other = t.path().join(".x.attest-staging-2-notours");
        std::fs::create_dir(&other).unwrap();
        std::fs::write(other.join("precious.txt"), "keep").unwrap();
        prepare(&t.path().join("x"), false).unwrap();
        assert!(!stale.exists());
        assert_eq!(
            std::fs::read_to_string(other.join("precious.txt")).unwrap(),
            "keep"
        );
    }

    #[test]
    fn refuses_dot_and_symlinked_targets() {
        assert!(prepare(Path::new("."), false).is_err());
        #[cfg(unix)]
        {
            let t = tempfile::tempdir().unwrap();
            std::fs::create_dir(t.path().join("real")).unwrap();
            std::os::unix::fs::symlink(t.path().join("real"), t.path().join("x")).unwrap();
            let e = prepare(&t.path().join("x"), true).err().unwrap();
            assert!(e.what.contains("symbolic link"), "{}", e.what);
        }
    }

    #[test]
    fn manifest_lines_must_be_plain() {
        let h = "0".repeat(64);
        assert!(parse_manifest(&format!("{h}  a.md\n")).is_some());
        assert!(parse_manifest(&format!("{h}  ../a.md\n")).is_none());
        assert!(parse_manifest(&format!("{h}  /etc/passwd\n")).is_none());
        assert!(parse_manifest("nonsense\n").is_none());
    }

    #[test]
    fn create_new_never_overwrites() {
        let t = tempfile::tempdir().unwrap();
        let p = t.path().join("a.lock");
        create_new(&p, b"one").unwrap();
        assert!(create_new(&p, b"two").is_err());
        assert_eq!(std::fs::read(&p).unwrap(), b"one");
        assert_eq!(std::fs::read_dir(t.path()).unwrap().count(), 1);
    }
}
