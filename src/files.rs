//! Reading the files a user (or a stranger) hands attest: regular files
//! only, never blocking on a FIFO, never more than a stated size.
//!
//! A FIFO named as the data file would make a plain `open` wait forever for
//! a writer; a device or a folder gives nonsense or an unhelpful error. Each
//! is refused here with a sentence saying what the path is. Where a folder
//! is untrusted (a report handed to `verify`), symlinks are refused too, so
//! a link planted in the folder cannot make attest read a file elsewhere.

use crate::error::{Failure, Result};
use std::fs::File;
use std::io::Read;
use std::path::Path;

/// The largest analysis file attest reads (a plan is a page of TOML).
pub const MAX_PLAN: u64 = 4 << 20;
/// The largest lock file attest reads.
pub const MAX_LOCK: u64 = 16 << 20;
/// The largest single output file `verify` reads (results.json, a report,
/// a figure).
pub const MAX_OUTPUT: u64 = 256 << 20;

/// Whether symlinks are followed when opening.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Links {
    /// Follow symlinks (the user's own files).
    Follow,
    /// Refuse a symlink (files inside a folder being verified).
    Refuse,
}

/// What kind of thing `meta` describes, in words, when not a regular file.
fn not_regular(meta: &std::fs::Metadata) -> Option<&'static str> {
    let t = meta.file_type();
    if t.is_file() {
        return None;
    }
    if t.is_dir() {
        return Some("a folder");
    }
    if t.is_symlink() {
        return Some("a symbolic link");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return Some("a FIFO (named pipe)");
        }
        if t.is_socket() {
            return Some("a socket");
        }
        if t.is_block_device() || t.is_char_device() {
            return Some("a device");
        }
    }
    Some("not a regular file")
}

fn refusal(what: &str, path: &Path, kind: &str) -> Failure {
    Failure::input(format!(
        "cannot {what} {}: it is {kind}, not a regular file",
        path.display()
    ))
    .help("name a regular file")
}

/// Opens `path` for reading if it is a regular file; `what` words the
/// error ("read the data file").
pub fn open_regular(path: &Path, what: &str, links: Links) -> Result<File> {
    // Checked before opening so that a FIFO is never opened at all, and
    // again on the open file, which is what is actually read.
    let pre = match links {
        Links::Follow => std::fs::metadata(path),
        Links::Refuse => std::fs::symlink_metadata(path),
    }
    .map_err(|e| Failure::io(what, path, &e))?;
    if let Some(kind) = not_regular(&pre) {
        return Err(refusal(what, path, kind));
    }
    let file = open_flags(path, links).map_err(|e| match e.raw_os_error() {
        // O_NOFOLLOW on a symlink swapped in after the check.
        #[cfg(unix)]
        Some(code) if code == rustix::io::Errno::LOOP.raw_os_error() => {
            refusal(what, path, "a symbolic link")
        }
        _ => Failure::io(what, path, &e),
    })?;
    let meta = file.metadata().map_err(|e| Failure::io(what, path, &e))?;
    if let Some(kind) = not_regular(&meta) {
        return Err(refusal(what, path, kind));
    }
    Ok(file)
}

#[cfg(unix)]
fn open_flags(path: &Path, links: Links) -> std::io::Result<File> {
    use rustix::fs::OFlags;
    use std::os::unix::fs::OpenOptionsExt;
    let mut flags = OFlags::NONBLOCK | OFlags::NOCTTY;
    if links == Links::Refuse {
        flags |= OFlags::NOFOLLOW;
    }
    std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(flags.bits() as i32)
        .open(path)
}

#[cfg(not(unix))]
fn open_flags(path: &Path, _links: Links) -> std::io::Result<File> {
    File::open(path)
}

/// Reads a regular file of at most `limit` bytes.
pub fn read_bounded(path: &Path, what: &str, links: Links, limit: u64) -> Result<Vec<u8>> {
    let file = open_regular(path, what, links)?;
    let mut bytes = Vec::new();
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| Failure::io(what, path, &e))?;
    if bytes.len() as u64 > limit {
        return Err(Failure::input(format!(
            "cannot {what} {}: it is larger than {} MiB",
            path.display(),
            limit >> 20
        ))
        .help("this is far larger than attest ever writes or needs; check that the right file is named"));
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_folders_and_oversized_files() {
        let t = tempfile::tempdir().unwrap();
        let e = read_bounded(t.path(), "read", Links::Follow, 10).unwrap_err();
        assert!(e.what.contains("a folder"), "{}", e.what);
        let f = t.path().join("big");
        std::fs::write(&f, [0u8; 11]).unwrap();
        let e = read_bounded(&f, "read", Links::Follow, 10).unwrap_err();
        assert!(e.what.contains("larger than"), "{}", e.what);
        std::fs::write(&f, [0u8; 10]).unwrap();
        assert_eq!(
            read_bounded(&f, "read", Links::Follow, 10).unwrap().len(),
            10
        );
    }

    #[cfg(unix)]
    #[test]
    fn refuses_fifos_without_blocking_and_links_when_asked() {
        let t = tempfile::tempdir().unwrap();
        let fifo = t.path().join("pipe");
        rustix::fs::mkfifoat(
            rustix::fs::CWD,
            &fifo,
            rustix::fs::Mode::RUSR | rustix::fs::Mode::WUSR,
        )
        .unwrap();
        let e = read_bounded(&fifo, "read", Links::Follow, 10).unwrap_err();
        assert!(e.what.contains("FIFO"), "{}", e.what);
        let real = t.path().join("real");
        std::fs::write(&real, "x").unwrap();
        let link = t.path().join("link");
        std::os::unix::fs::symlink(&real, &link).unwrap();
        assert!(read_bounded(&link, "read", Links::Follow, 10).is_ok());
        let e = read_bounded(&link, "read", Links::Refuse, 10).unwrap_err();
        assert!(e.what.contains("symbolic link"), "{}", e.what);
        let e = read_bounded(Path::new("/dev/null"), "read", Links::Follow, 10).unwrap_err();
        assert!(e.what.contains("device"), "{}", e.what);
    }
}
