//! An outside witness for the lock: version control.
//!
//! A lock's own hash only catches careless edits; anyone can rewrite a file
//! and its hash together. Where the analysis lives in a git work tree, the
//! first commit that contains the lock is independent evidence of when the
//! plan was fixed. This module asks git, read-only, and never fails a
//! command because git is absent or unhelpful: it says so instead.

use serde::{Deserialize, Serialize};
use std::path::Path;
use std::process::Command;

/// What version control says about a lock file.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "state")]
pub enum Witness {
    /// The lock is in git history; the first commit that added it.
    Committed {
        /// Commit hash.
        commit: String,
        /// Commit date (committer date, ISO 8601 as git prints it).
        date: String,
    },
    /// The folder is a git work tree, but the lock is not committed yet.
    NotCommitted,
    /// No git work tree (or no git program) here.
    NoGit,
}

fn git(dir: &Path, args: &[&str]) -> Option<String> {
    let out = Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(args)
        .output()
        .ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
}

/// Asks git about `lock_path`.
pub(crate) fn witness(lock_path: &Path) -> Witness {
    let dir = match lock_path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let Some(name) = lock_path.file_name() else {
        return Witness::NoGit;
    };
    if git(dir, &["rev-parse", "--is-inside-work-tree"]).as_deref() != Some("true") {
        return Witness::NoGit;
    }
    let name = name.to_string_lossy();
    // The witness is the first commit holding the lock *as it is now*: a
    // lock deleted and re-created is dated by its own first commit, not by
    // its predecessor's.
    let Some(blob) = git(dir, &["hash-object", "--", &name]) else {
        return Witness::NotCommitted;
    };
    let Some(log) = git(dir, &["log", "--reverse", "--format=%H %cI", "--", &name]) else {
        return Witness::NotCommitted;
    };
    for line in log.lines() {
        let (commit, date) = line.split_once(' ').unwrap_or((line, ""));
        let spec = format!("{commit}:./{name}");
        if git(dir, &["rev-parse", "--verify", "--quiet", &spec]).as_deref() == Some(blob.as_str())
        {
            return Witness::Committed {
                commit: commit.to_string(),
                date: date.to_string(),
            };
        }
    }
    Witness::NotCommitted
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run(dir: &Path, args: &[&str]) {
        let ok = Command::new("git")
            .arg("-C")
            .arg(dir)
            .args(args)
            .env("GIT_AUTHOR_NAME", "t")
            .env("GIT_AUTHOR_EMAIL", "t@example.invalid")
            .env("GIT_COMMITTER_NAME", "t")
            .env("GIT_COMMITTER_EMAIL", "t@example.invalid")
            .env("GIT_COMMITTER_DATE", "2026-11-02T10:00:00+00:00")
            .output()
            .unwrap()
            .status
            .success();
        assert!(ok, "git {args:?}");
    }

    #[test]
    fn follows_the_lock_into_git_history() {
        let t = tempfile::tempdir().unwrap();
        let p = t.path().join("a.lock");
        std::fs::write(&p, "{}").unwrap();
        run(t.path(), &["init", "-q"]);
        assert_eq!(witness(&p), Witness::NotCommitted);
        run(t.path(), &["add", "a.lock"]);
        run(t.path(), &["commit", "-q", "-m", "lock"]);
        let first = match witness(&p) {
            Witness::Committed { commit, date } => {
                assert_eq!(commit.len(), 40);
                assert!(date.starts_with("2026-11-02T10:00:00"), "{date}");
                commit
            }
            other => panic!("expected a commit, got {other:?}"),
        };
        // A lock replaced on disk is not vouched for by the old commit.
        std::fs::write(&p, "{\"replaced\": true}").unwrap();
        assert_eq!(witness(&p), Witness::NotCommitted);
        run(t.path(), &["commit", "-q", "-am", "new lock"]);
        match witness(&p) {
            Witness::Committed { commit, .. } => assert_ne!(commit, first),
            other => panic!("expected the second commit, got {other:?}"),
        }
    }
}
