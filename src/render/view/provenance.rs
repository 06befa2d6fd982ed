//! What each piece of evidence shows, and what it does not, in one
//! sentence each: the words the report, the terminal and `verify` use for
//! the lock's own date, its self-hash, the git commit and its flags.
//!
//! The wording is deliberately modest. A sceptical reader should come away
//! knowing which claims rest only on the author's word.

use crate::results::Results;
use crate::witness::{Flag, Signature, Witness};

/// The first 12 characters of a hash or commit id, as every output shows it.
pub(crate) fn short(h: &str) -> &str {
    h.get(..12).unwrap_or(h)
}

fn day(t: &str) -> &str {
    t.get(..10).unwrap_or(t)
}

/// What a witness flag means, for a reviewer (plain text).
pub fn flag_sentence(f: &Flag) -> String {
    match f {
        Flag::DatedBeforeParent { parent_date } => format!(
            "the commit is dated before its own parent commit ({}), which a true clock cannot produce: its date was set by hand or the clock was wrong",
            day(parent_date)
        ),
        Flag::DatedBeforeLock { locked_at } => format!(
            "the commit is dated before the lock says it was written ({}): one of the two dates is wrong",
            day(locked_at)
        ),
        Flag::DataCommittedBefore { commit, date } => format!(
            "the data were committed before the plan: the data file's first commit {} (dated {}) comes earlier in the history than the lock's",
            short(commit),
            day(date)
        ),
        Flag::DataCommittedTogether => {
            "the data file was first committed in the same commit as the lock, so the history cannot show that the plan came first".into()
        }
        Flag::DataDatedBefore { commit, date } => format!(
            "the data file's first commit {} is on another line of history and dated {}, before the lock's commit",
            short(commit),
            day(date)
        ),
        Flag::HistoryTruncated => format!(
            "the history is longer than attest reads ({} commits); older commits were not examined",
            crate::witness::MAX_COMMITS
        ),
    }
}

/// What the signature on the lock's commit shows (plain text).
pub fn signature_sentence(s: &Signature) -> String {
    match s {
        Signature::Unsigned => {
            "The commit is not signed, so nothing shows who made it.".into()
        }
        Signature::Signed { format } => format!(
            "The commit carries an {format} signature; attest does not check it; git verify-commit with the signer's public key does."
        ),
    }
}

/// The witness in one line, for the terminal and `verify` (plain text).
pub fn witness_line(w: &Witness) -> String {
    match w {
        Witness::Committed {
            commit,
            date,
            signature,
            flags,
        } => {
            let mut s = format!(
                "first committed in {} (committer date {date}, {})",
                short(commit),
                match signature {
                    Signature::Unsigned => "unsigned".to_string(),
                    Signature::Signed { format } => format!("{format}-signed, not checked"),
                }
            );
            for f in flags {
                s.push_str("; flagged: ");
                s.push_str(&flag_sentence(f));
            }
            s
        }
        Witness::NotCommitted => "not committed".into(),
        Witness::NoGit => "no git repository here".into(),
    }
}

/// The witness sentences of the report's status paragraph (plain text; the
/// caller escapes for Markdown).
pub fn witness_sentences(w: &Witness) -> Vec<String> {
    match w {
        Witness::Committed {
            commit,
            date,
            signature,
            flags,
        } => {
            let mut out = vec![format!(
                "Outside record: the lock was first committed to git in {} on {} (the committer's date).",
                short(commit),
                day(date)
            )];
            for f in flags {
                let mut s = flag_sentence(f);
                if let Some(first) = s.get(..1) {
                    s = format!("Caution: {}{}.", first.to_uppercase(), &s[1..]);
                }
                out.push(s);
            }
            out.push(signature_sentence(signature));
            out
        }
        Witness::NotCommitted => vec![
            "Outside record: the lock is not committed to git yet, so only its own date vouches for it.".into(),
        ],
        Witness::NoGit => {
            vec!["Outside record: none; the analysis is not in a git repository.".into()]
        }
    }
}

/// One honest sentence per piece of evidence: what it shows and what it
/// does not (plain text).
pub fn evidence(r: &Results) -> Vec<String> {
    let mut out = Vec::new();
    if let Some(l) = &r.lock_record {
        out.push(format!(
            "What the lock's time shows: {} is the author's clock when the lock was written; anyone can set that clock, so it shows nothing to an outsider by itself.",
            l.locked_at
        ));
        out.push("What the lock's self-hash shows: accidental edits only; whoever edits a lock can recompute it.".into());
        out.push(match &l.witness {
            Witness::Committed { .. } => "What the git commit shows: the lock is part of that history and that the history has not been rewritten since others copied it; its dates are the committer's claim, not a third party's.".into(),
            _ => "What git shows: no commit holds this lock, so no history vouches for when it was written.".into(),
        });
        out.push(if l.data_existed {
            "What the lock says of the data: the data file already existed when the plan was sealed.".into()
        } else {
            "What the lock says of the data: the data file did not exist when the plan was sealed; that is the author's statement.".into()
        });
    } else {
        out.push(
            "What the lock shows: there is none, so nothing shows that this plan was written before the data were seen."
                .into(),
        );
    }
    out.push("What nothing shows: no mechanism proves the data were unseen when the plan was written; a lock, a commit, a timestamp or a signature can show the plan existed by some time, never what its author had looked at.".into());
    out.push("What the manifest shows: manifest.sha256 lists every file of this report with its SHA-256, so attest verify notices a file edited, added or removed after the run; it proves nothing about who ran it or when.".into());
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_flag_reads_as_a_sentence() {
        let flags = [
            Flag::DatedBeforeParent {
                parent_date: "2026-11-02T10:00:00Z".into(),
            },
            Flag::DatedBeforeLock {
                locked_at: "2026-11-02T09:00:00Z".into(),
            },
            Flag::DataCommittedBefore {
                commit: "a".repeat(40),
                date: "2026-11-01T10:00:00Z".into(),
            },
            Flag::DataCommittedTogether,
            Flag::HistoryTruncated,
        ];
        let w = Witness::Committed {
            commit: "b".repeat(40),
            date: "2020-01-01T00:00:00Z".into(),
            signature: Signature::Unsigned,
            flags: flags.to_vec(),
        };
        let s = witness_sentences(&w);
        assert_eq!(s.len(), flags.len() + 2);
        assert!(s[1].starts_with("Caution: The commit is dated before its own parent"));
        assert!(
            s[3].contains("The data were committed before the plan"),
            "{}",
            s[3]
        );
        assert!(s.last().unwrap().contains("not signed"));
        assert!(witness_line(&w).contains("flagged: the commit is dated before the lock"));
    }
}
