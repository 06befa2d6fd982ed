//! An outside witness for the lock: version control.
//!
//! A lock's own hash only catches careless edits; anyone can rewrite a file
//! and its hash together. Where the analysis lives in a git repository, the
//! first commit that contains the lock is independent evidence that the
//! plan existed in that history, and its place in the history (after its
//! parents, before or after the data file's first commit) is harder to
//! fake than any date.
//!
//! History is read in-process with the `gix` crate, opened *isolated*: no
//! system, global or environment configuration, and this build of gix has
//! no filter, hook, attribute, fsmonitor or signature-program support
//! compiled in. Nothing the checked repository's `.git/config`,
//! `.gitattributes` or hooks say can run a program: `verify` is run on
//! folders received from strangers. The lock's blob id is computed here from
//! its bytes (`blob <len>\0` + content, git's object format), never by asking
//! git to hash the work-tree file, which would apply the repository's clean
//! filters.
//!
//! Dates in git are whatever the committer's clock (or environment) said;
//! the flags below compare them with each other and with the history's
//! order, which is what a reviewer can check, and say where they disagree.

use crate::lock::rfc3339_utc;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// At most this many commits are read; a longer history is read up to
/// here, newest first, and the witness says so.
pub const MAX_COMMITS: usize = 100_000;

/// What version control says about a lock file.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "state")]
pub enum Witness {
    /// The lock is in git history; the first commit that added it as it is
    /// now.
    Committed {
        /// Commit id (hex).
        commit: String,
        /// Committer date, UTC (`YYYY-MM-DDTHH:MM:SSZ`): the committer's claim.
        date: String,
        /// Whether the commit carries a signature, and of which kind.
        #[serde(default)]
        signature: Signature,
        /// Where the history and the dates disagree with the lock's story.
        #[serde(default, skip_serializing_if = "Vec::is_empty")]
        flags: Vec<Flag>,
    },
    /// The folder is in a git repository, but the lock is not committed (as
    /// it is now).
    NotCommitted,
    /// No git repository here.
    NoGit,
}

/// A commit's signature as attest can tell it without running any program.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Signature {
    /// No signature on the commit.
    #[default]
    Unsigned,
    /// A signature is present; attest does not check it (that needs the
    /// signer's public key and a trust decision; `git verify-commit` does).
    Signed {
        /// "OpenPGP", "SSH" or "X.509" (from the signature's armour).
        format: String,
    },
}

/// Something about the lock's commit that a reviewer should weigh.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "flag")]
pub enum Flag {
    /// The commit's date is earlier than one of its parents' dates, which a
    /// true clock cannot produce: the date was set by hand or the clock was
    /// wrong.
    DatedBeforeParent {
        /// The parent's committer date (UTC).
        parent_date: String,
    },
    /// The commit claims a date before the lock says it was written.
    DatedBeforeLock {
        /// The lock's own `locked_at`.
        locked_at: String,
    },
    /// The data file was in history before the lock: its first commit is an
    /// ancestor of the lock's first commit.
    DataCommittedBefore {
        /// The data file's first commit.
        commit: String,
        /// Its committer date (UTC).
        date: String,
    },
    /// The data file and the lock were first committed together, so history
    /// cannot show which came first.
    DataCommittedTogether,
    /// The data file's first commit is on another line of history, with an
    /// earlier committer date than the lock's commit.
    DataDatedBefore {
        /// The data file's first commit.
        commit: String,
        /// Its committer date (UTC).
        date: String,
    },
    /// The history is longer than attest reads; older commits were not
    /// examined.
    HistoryTruncated,
}

/// A repository opened for reading only, with no outside configuration.
struct Repo {
    repo: gix::Repository,
    root: PathBuf,
}

fn open(near: &Path) -> Option<Repo> {
    let dir = near.canonicalize().ok()?;
    let repo = gix::ThreadSafeRepository::discover_opts(
        &dir,
        gix::discover::upwards::Options::default(),
        |_, _| gix::open::Options::isolated(),
    )
    .ok()?
    .to_thread_local();
    let root = repo.workdir()?.canonicalize().ok()?;
    Some(Repo { repo, root })
}

/// The path of `file` inside the work tree, `/`-separated.
fn relative(root: &Path, file: &Path) -> Option<String> {
    let dir = file.parent().filter(|d| !d.as_os_str().is_empty());
    let dir = dir.unwrap_or(Path::new(".")).canonicalize().ok()?;
    let rel = dir.strip_prefix(root).ok()?.join(file.file_name()?);
    let parts: Vec<String> = rel
        .components()
        .map(|c| c.as_os_str().to_str().map(str::to_string))
        .collect::<Option<_>>()?;
    Some(parts.join("/"))
}

/// One commit as the witness needs it.
struct Node {
    parents: Vec<gix::ObjectId>,
    seconds: i64,
    lock: bool,
    data: bool,
}

/// Reads history from HEAD, newest first, at most [`MAX_COMMITS`].
fn history(
    repo: &gix::Repository,
    lock_path: &str,
    lock_blob: gix::ObjectId,
    data_path: Option<&str>,
) -> Option<(BTreeMap<gix::ObjectId, Node>, bool)> {
    let head = repo.head_id().ok()?.detach();
    let mut nodes = BTreeMap::new();
    let mut queue = std::collections::VecDeque::from([head]);
    let mut seen = BTreeSet::from([head]);
    let mut truncated = false;
    while let Some(id) = queue.pop_front() {
        if nodes.len() >= MAX_COMMITS {
            truncated = true;
            break;
        }
        // A commit missing from a shallow or damaged repository ends that
        // line of history.
        let Ok(commit) = repo.find_commit(id) else {
            continue;
        };
        let seconds = commit.committer().ok().and_then(|s| s.time().ok());
        let seconds = seconds.map_or(0, |t| t.seconds);
        let tree = commit.tree().ok();
        let entry = |p: &str| {
            tree.as_ref()
                .and_then(|t| t.lookup_entry_by_path(p).ok().flatten())
        };
        let lock = entry(lock_path).is_some_and(|e| e.object_id() == lock_blob);
        let data = data_path.is_some_and(|p| entry(p).is_some_and(|e| e.mode().is_blob()));
        let parents: Vec<gix::ObjectId> = commit.parent_ids().map(|p| p.detach()).collect();
        for p in &parents {
            if seen.insert(*p) {
                queue.push_back(*p);
            }
        }
        nodes.insert(
            id,
            Node {
                parents,
                seconds,
                lock,
                data,
            },
        );
    }
    Some((nodes, truncated))
}

/// The commits that introduce a property (it holds there and in none of
/// their parents), the one deepest in history first: fewest ancestors, then
/// smallest id, so the choice never depends on dates.
fn first_with(
    nodes: &BTreeMap<gix::ObjectId, Node>,
    has: impl Fn(&Node) -> bool,
) -> Option<gix::ObjectId> {
    nodes
        .iter()
        .filter(|(_, n)| has(n) && !n.parents.iter().any(|p| nodes.get(p).is_some_and(&has)))
        .map(|(id, _)| (ancestors(nodes, *id).len(), *id))
        .min()
        .map(|(_, id)| id)
}

fn ancestors(nodes: &BTreeMap<gix::ObjectId, Node>, id: gix::ObjectId) -> BTreeSet<gix::ObjectId> {
    let mut out = BTreeSet::new();
    let mut stack = vec![id];
    while let Some(c) = stack.pop() {
        if let Some(n) = nodes.get(&c) {
            for p in &n.parents {
                if out.insert(*p) {
                    stack.push(*p);
                }
            }
        }
    }
    out
}

fn signature_of(commit: &gix::Commit<'_>) -> Signature {
    match commit.signature() {
        Ok(Some((sig, _))) => {
            let text = String::from_utf8_lossy(sig.as_ref());
            let format = if text.contains("BEGIN SSH SIGNATURE") {
                "SSH"
            } else if text.contains("BEGIN SIGNED MESSAGE") {
                "X.509"
            } else {
                "OpenPGP"
            };
            Signature::Signed {
                format: format.into(),
            }
        }
        _ => Signature::Unsigned,
    }
}

/// Asks git history about the lock at `lock_path` (whose bytes are
/// `lock_bytes` and whose own date is `locked_at`), and about the data file
/// at `data_path`.
pub fn witness(
    lock_path: &Path,
    lock_bytes: &[u8],
    locked_at: &str,
    data_path: Option<&Path>,
) -> Witness {
    let dir = match lock_path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let Some(r) = open(dir) else {
        return Witness::NoGit;
    };
    let Some(lock_rel) = relative(&r.root, lock_path) else {
        return Witness::NoGit;
    };
    let data_rel = data_path.and_then(|p| relative(&r.root, p));
    let Ok(blob) = gix::objs::compute_hash(r.repo.object_hash(), gix::objs::Kind::Blob, lock_bytes)
    else {
        return Witness::NotCommitted;
    };
    let Some((nodes, truncated)) = history(&r.repo, &lock_rel, blob, data_rel.as_deref()) else {
        return Witness::NotCommitted;
    };
    let Some(first) = first_with(&nodes, |n| n.lock) else {
        return Witness::NotCommitted;
    };
    let Ok(commit) = r.repo.find_commit(first) else {
        return Witness::NotCommitted;
    };
    let node = &nodes[&first];
    let date = rfc3339_utc(node.seconds);
    let mut flags = Vec::new();
    if let Some(parent) = node
        .parents
        .iter()
        .filter_map(|p| nodes.get(p))
        .map(|p| p.seconds)
        .filter(|s| *s > node.seconds)
        .max()
    {
        flags.push(Flag::DatedBeforeParent {
            parent_date: rfc3339_utc(parent),
        });
    }
    if is_utc_stamp(locked_at) && date.as_str() < locked_at {
        flags.push(Flag::DatedBeforeLock {
            locked_at: locked_at.to_string(),
        });
    }
    if let Some(data) = first_with(&nodes, |n| n.data) {
        let d = &nodes[&data];
        if data == first {
            flags.push(Flag::DataCommittedTogether);
        } else if ancestors(&nodes, first).contains(&data) {
            flags.push(Flag::DataCommittedBefore {
                commit: data.to_string(),
                date: rfc3339_utc(d.seconds),
            });
        } else if !ancestors(&nodes, data).contains(&first) && d.seconds < node.seconds {
            flags.push(Flag::DataDatedBefore {
                commit: data.to_string(),
                date: rfc3339_utc(d.seconds),
            });
        }
    }
    if truncated {
        flags.push(Flag::HistoryTruncated);
    }
    Witness::Committed {
        commit: first.to_string(),
        date,
        signature: signature_of(&commit),
        flags,
    }
}

/// Whether `s` has the shape `YYYY-MM-DDTHH:MM:SSZ`, so that comparing it
/// as text compares instants.
fn is_utc_stamp(text: &str) -> bool {
    let b = text.as_bytes();
    b.len() == 20
        && b.iter().enumerate().all(|(i, c)| match i {
            4 | 7 => *c == b'-',
            10 => *c == b'T',
            13 | 16 => *c == b':',
            19 => *c == b'Z',
            _ => c.is_ascii_digit(),
        })
}

/// Whether the commit `id` can still be found in the repository around
/// `near` (as an object; reachability is the witness's business).
pub fn commit_exists(near: &Path, id: &str) -> bool {
    let Some(r) = open(near) else {
        return false;
    };
    let Ok(oid) = gix::ObjectId::from_hex(id.as_bytes()) else {
        return false;
    };
    let found = r.repo.find_commit(oid).is_ok();
    found
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::process::Command;

    /// Real git, isolated from the machine's configuration, with a fixed
    /// identity and the given committer date.
    fn git_at(dir: &Path, date: &str, args: &[&str]) {
        let ok = Command::new("git")
            .arg("-C")
            .arg(dir)
            .args(args)
            .env("GIT_CONFIG_NOSYSTEM", "1")
            .env("GIT_CONFIG_GLOBAL", "/dev/null")
            .env("GIT_AUTHOR_NAME", "t")
            .env("GIT_AUTHOR_EMAIL", "t@example.invalid")
            .env("GIT_COMMITTER_NAME", "t")
            .env("GIT_COMMITTER_EMAIL", "t@example.invalid")
            .env("GIT_AUTHOR_DATE", date)
            .env("GIT_COMMITTER_DATE", date)
            .output()
            .unwrap()
            .status
            .success();
        assert!(ok, "git {args:?}");
    }

    fn w(dir: &Path, locked_at: &str) -> Witness {
        let p = dir.join("a.lock");
        witness(
            &p,
            &std::fs::read(&p).unwrap(),
            locked_at,
            Some(&dir.join("d.csv")),
        )
    }

    #[test]
    fn blob_ids_match_git() {
        // Pro Git (Chacon & Straub, 2nd ed.), §10.2 "Git Objects": `echo
        // 'test content' | git hash-object --stdin` prints d670460b…; the
        // empty blob's id is e69de29b… (both also printed by git 2.47).
        let id = |b: &[u8]| {
            gix::objs::compute_hash(gix::hash::Kind::Sha1, gix::objs::Kind::Blob, b)
                .unwrap()
                .to_string()
        };
        assert_eq!(id(b""), "e69de29bb2d1d6434b8b29ae775ad8c2e48c5391");
        assert_eq!(
            id(b"test content\n"),
            "d670460b4b4aece5915caf5c68d12f560a9fe3e4"
        );
    }

    #[test]
    fn follows_the_lock_into_git_history() {
        let t = tempfile::tempdir().unwrap();
        let p = t.path().join("a.lock");
        std::fs::write(&p, "{}").unwrap();
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["init", "-q"]);
        assert_eq!(w(t.path(), "2026-11-02T09:00:00Z"), Witness::NotCommitted);
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["add", "a.lock"]);
        git_at(
            t.path(),
            "2026-11-02T10:00:00+00:00",
            &["commit", "-q", "-m", "lock"],
        );
        let first = match w(t.path(), "2026-11-02T09:00:00Z") {
            Witness::Committed {
                commit,
                date,
                signature,
                flags,
            } => {
                assert_eq!(commit.len(), 40);
                assert_eq!(date, "2026-11-02T10:00:00Z");
                assert_eq!(signature, Signature::Unsigned);
                assert!(flags.is_empty(), "{flags:?}");
                commit
            }
            other => panic!("expected a commit, got {other:?}"),
        };
        assert!(commit_exists(t.path(), &first));
        // A lock replaced on disk is not vouched for by the old commit.
        std::fs::write(&p, "{\"replaced\": true}").unwrap();
        assert_eq!(w(t.path(), "2026-11-02T09:00:00Z"), Witness::NotCommitted);
        git_at(
            t.path(),
            "2026-11-02T11:00:00+00:00",
            &["commit", "-q", "-am", "new lock"],
        );
        match w(t.path(), "2026-11-02T09:00:00Z") {
            Witness::Committed { commit, .. } => assert_ne!(commit, first),
            other => panic!("expected the second commit, got {other:?}"),
        }
    }

    #[test]
    fn flags_backdating_and_data_committed_first() {
        let t = tempfile::tempdir().unwrap();
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["init", "-q"]);
        std::fs::write(t.path().join("d.csv"), "x\n1\n").unwrap();
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["add", "d.csv"]);
        git_at(
            t.path(),
            "2026-11-02T10:00:00+00:00",
            &["commit", "-q", "-m", "data"],
        );
        std::fs::write(t.path().join("a.lock"), "{}").unwrap();
        git_at(t.path(), "2020-01-01T00:00:00+00:00", &["add", "a.lock"]);
        git_at(
            t.path(),
            "2020-01-01T00:00:00+00:00",
            &["commit", "-q", "-m", "lock"],
        );
        let Witness::Committed { date, flags, .. } = w(t.path(), "2026-11-02T09:00:00Z") else {
            panic!("expected a commit");
        };
        assert_eq!(date, "2020-01-01T00:00:00Z");
        assert!(flags.contains(&Flag::DatedBeforeParent {
            parent_date: "2026-11-02T10:00:00Z".into()
        }));
        assert!(flags.contains(&Flag::DatedBeforeLock {
            locked_at: "2026-11-02T09:00:00Z".into()
        }));
        assert!(
            flags
                .iter()
                .any(|f| matches!(f, Flag::DataCommittedBefore { .. })),
            "{flags:?}"
        );
    }

    #[test]
    fn data_committed_with_the_lock_is_flagged() {
        let t = tempfile::tempdir().unwrap();
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["init", "-q"]);
        std::fs::write(t.path().join("d.csv"), "x\n1\n").unwrap();
        std::fs::write(t.path().join("a.lock"), "{}").unwrap();
        git_at(t.path(), "2026-11-02T10:00:00+00:00", &["add", "."]);
        git_at(
            t.path(),
            "2026-11-02T10:00:00+00:00",
            &["commit", "-q", "-m", "both"],
        );
        let Witness::Committed { flags, .. } = w(t.path(), "2026-11-02T09:00:00Z") else {
            panic!("expected a commit");
        };
        assert_eq!(flags, vec![Flag::DataCommittedTogether]);
    }

    #[test]
    fn utc_stamps() {
        assert!(is_utc_stamp("2026-11-02T09:00:00Z"));
        assert!(!is_utc_stamp("2026-11-02T09:00:00+01:00"));
        assert!(!is_utc_stamp("yesterday"));
    }
}
