//! The lock: a sealed record of the plan, written before any data are read.
//!
//! A lock file (`<stem>.lock`, JSON) holds the canonical plan, its hash, the
//! time it was sealed (UTC; `SOURCE_DATE_EPOCH` is honoured for
//! reproducible builds), the tool version, and an honest note of whether
//! the data file already existed then (with its hash if it did). It also
//! carries a hash of its own content, so a hand edit is detected; that only
//! catches careless edits, which is why `git` history is consulted as an
//! outside witness where there is one. A lock is never overwritten.

use crate::error::{Failure, Result};
use crate::plan::canonical::{canonical_value, plan_hash, sha256_hex};
use crate::plan::{AnalysisFile, Plan};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// Version of the lock-file format.
pub const LOCK_FORMAT: u32 = 1;

/// The lock file's content.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LockFile {
    /// Lock-file format version.
    pub lock_format: u32,
    /// Always "attest".
    pub tool: String,
    /// attest version that wrote the lock.
    pub version: String,
    /// When the plan was sealed (UTC, RFC 3339, seconds).
    pub locked_at: String,
    /// The analysis file's name, relative to its folder.
    pub analysis_file: String,
    /// SHA-256 of the canonical plan.
    pub plan_sha256: String,
    /// The canonical plan.
    pub plan: Plan,
    /// The data file at lock time.
    pub data: LockedData,
    /// SHA-256 of this record's canonical JSON without this field.
    pub content_sha256: String,
}

/// What the lock recorded about the data file.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct LockedData {
    /// The path from the plan.
    pub path: String,
    /// Whether the file existed when the plan was locked.
    pub existed: bool,
    /// Its SHA-256 if it existed.
    pub sha256: Option<String>,
}

/// The lock path for an analysis file: same folder, same stem, `.lock`.
pub fn lock_path(analysis: &Path) -> PathBuf {
    analysis.with_extension("lock")
}

impl LockFile {
    /// Seals a plan now (or at `SOURCE_DATE_EPOCH`).
    /// `data_path` is `None` for data in a database, which a lock never reads.
    pub fn seal(file: &AnalysisFile, data_path: Option<&Path>) -> Result<LockFile> {
        let data_hash = match data_path {
            None => None,
            Some(p) => match std::fs::metadata(p) {
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => None,
                _ => {
                    let file = crate::files::open_regular(
                        p,
                        "read the data file",
                        crate::files::Links::Follow,
                    )?;
                    Some(hash_stream(file).map_err(|e| Failure::io("read the data file", p, &e))?)
                }
            },
        };
        let mut lock = LockFile {
            lock_format: LOCK_FORMAT,
            tool: "attest".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            locked_at: rfc3339_utc(now_epoch()),
            analysis_file: file_name(&file.path),
            plan_sha256: plan_hash(&file.plan),
            plan: file.plan.clone(),
            data: LockedData {
                path: file.plan.data.path.clone(),
                existed: data_hash.is_some(),
                sha256: data_hash,
            },
            content_sha256: String::new(),
        };
        lock.content_sha256 = lock.own_hash();
        Ok(lock)
    }

    /// The hash of everything but `content_sha256`.
    pub fn own_hash(&self) -> String {
        let mut v = serde_json::to_value(self).expect("a lock always serialises");
        if let Some(map) = v.as_object_mut() {
            map.remove("content_sha256");
        }
        sha256_hex(v.to_string().as_bytes())
    }

    /// Whether the stored plan and content hashes match the content.
    pub fn intact(&self) -> bool {
        self.content_sha256 == self.own_hash() && self.plan_sha256 == plan_hash(&self.plan)
    }

    /// The lock as written to disk (pretty JSON, trailing newline).
    pub fn to_text(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("a lock always serialises");
        s.push('\n');
        s
    }

    /// Reads a lock file. A lock that does not parse is reported as such.
    pub fn read(path: &Path) -> Result<(LockFile, Vec<u8>)> {
        let bytes = crate::files::read_bounded(
            path,
            "read the lock",
            crate::files::Links::Follow,
            crate::files::MAX_LOCK,
        )?;
        let lock: LockFile = serde_json::from_slice(&bytes).map_err(|e| {
            Failure::input(format!("the lock file cannot be read: {e}"))
                .at(path, e.line().max(1), Some(e.column().max(1)))
                .help("a lock is written by `attest lock` and never edited by hand; restore it from version control")
        })?;
        if lock.lock_format != LOCK_FORMAT {
            return Err(Failure::input(format!(
                "lock format {} is not supported by this build",
                lock.lock_format
            ))
            .in_file(path)
            .help(format!("this build reads lock format {LOCK_FORMAT}")));
        }
        Ok((lock, bytes))
    }

    /// The canonical plan value stored in the lock.
    pub fn plan_value(&self) -> serde_json::Value {
        canonical_value(&self.plan)
    }
}

/// The SHA-256 (hex) of everything `r` yields, read in blocks.
pub fn hash_stream(mut r: impl std::io::Read) -> std::io::Result<String> {
    use sha2::Digest;
    let mut h = sha2::Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    loop {
        match r.read(&mut buf)? {
            0 => break,
            n => h.update(&buf[..n]),
        }
    }
    Ok(crate::plan::canonical::hex(&h.finalize()))
}

/// The file-name part of a path, as text.
pub fn file_name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Seconds since the Unix epoch: `SOURCE_DATE_EPOCH` if set and valid,
/// otherwise the system clock.
pub fn now_epoch() -> i64 {
    if let Ok(s) = std::env::var("SOURCE_DATE_EPOCH") {
        if let Ok(v) = s.trim().parse::<i64>() {
            return v;
        }
    }
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0)
}

/// Formats epoch seconds as `YYYY-MM-DDTHH:MM:SSZ`.
///
/// Civil-from-days conversion after Hinnant (2013), "chrono-Compatible
/// Low-Level Date Algorithms".
pub fn rfc3339_utc(epoch: i64) -> String {
    let days = epoch.div_euclid(86_400);
    let secs = epoch.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = if m <= 2 { y + 1 } else { y };
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        secs / 3600,
        secs % 3600 / 60,
        secs % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn epoch_formats() {
        // Unix epoch and a known instant (common practice: 10^9 s is
        // 2001-09-09T01:46:40Z).
        assert_eq!(rfc3339_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(rfc3339_utc(1_000_000_000), "2001-09-09T01:46:40Z");
        assert_eq!(rfc3339_utc(951_782_400), "2000-02-29T00:00:00Z");
    }
}
