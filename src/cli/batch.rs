//! Several analyses in one command: run in parallel, a progress bar on a
//! terminal, and a summary table at the end. Every analysis that can
//! produce its outputs does, whatever happens to the others.

use crate::error::{clean, Kind, Result};
use crate::pipeline::{self, RunOptions};
use crate::results::{Decision, LockState};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// One analysis' line in the summary.
struct Row {
    file: String,
    status: String,
    hypotheses: String,
    problem: String,
    kind: Option<Kind>,
    /// Hypotheses that could not be computed (the outputs were written).
    not_computed: usize,
}

/// Runs (or compares, with `expect_same`) every analysis and prints the table.
pub(crate) fn run(
    files: &[PathBuf],
    opts: &RunOptions,
    expect_same: bool,
    quiet: bool,
) -> Result<i32> {
    let bar = if quiet || !std::io::stderr().is_terminal() {
        ProgressBar::with_draw_target(Some(files.len() as u64), ProgressDrawTarget::hidden())
    } else {
        ProgressBar::new(files.len() as u64)
    };
    bar.set_style(
        ProgressStyle::with_template("{bar:30} {pos}/{len} {msg}")
            .unwrap_or_else(|_| ProgressStyle::default_bar()),
    );
    let rows: Vec<Row> = files
        .par_iter()
        .map(|f| {
            let row = one(f, opts, expect_same);
            bar.inc(1);
            row
        })
        .collect();
    bar.finish_and_clear();
    let worst = rows
        .iter()
        .filter_map(|r| r.kind)
        .map(Kind::exit_code)
        .max()
        .unwrap_or(0);
    // A failure outranks hypotheses that could not be computed: exit 5
    // only when every analysis wrote its outputs.
    let worst = if worst == 0 && rows.iter().any(|r| r.not_computed > 0) {
        crate::error::NOT_COMPUTED
    } else {
        worst
    };
    if !quiet || worst != 0 {
        super::say(&table(&rows))?;
    }
    Ok(worst)
}

fn one(file: &Path, opts: &RunOptions, expect_same: bool) -> Row {
    let name = file.display().to_string();
    let outcome = if expect_same {
        pipeline::unchanged(file, opts)
    } else {
        pipeline::run(file, opts).map(|o| (o.results, Vec::new()))
    };
    match outcome {
        Ok((r, diff)) => {
            let supported = r
                .hypotheses
                .iter()
                .filter(|h| h.decision == Decision::Reject)
                .count();
            let lock_problem = match r.lock {
                LockState::Deviates => Some("deviates from the lock"),
                LockState::Unlocked => Some("not preregistered"),
                LockState::AsLocked => None,
            };
            let (status, problem, kind) = if !diff.is_empty() {
                (
                    "changed",
                    format!("differs: {}", diff.join(", ")),
                    Some(Kind::Verification),
                )
            } else if !r.not_computed.is_empty() {
                (
                    if expect_same { "same" } else { "ok" },
                    format!("{} not computed", r.not_computed.len()),
                    None,
                )
            } else {
                (
                    if expect_same { "same" } else { "ok" },
                    lock_problem.unwrap_or("").to_string(),
                    None,
                )
            };
            Row {
                file: name,
                status: status.into(),
                hypotheses: format!("{} ({} supported)", r.hypotheses.len(), supported),
                problem,
                kind,
                not_computed: r.not_computed.len(),
            }
        }
        Err(f) => Row {
            file: name,
            status: "failed".into(),
            hypotheses: "–".into(),
            problem: f.what.clone(),
            kind: Some(f.kind),
            not_computed: 0,
        },
    }
}

fn table(rows: &[Row]) -> String {
    let w = |f: fn(&Row) -> &str, head: &str| {
        rows.iter()
            .map(|r| clean(f(r)).chars().count())
            .max()
            .unwrap_or(0)
            .max(head.len())
    };
    let (wf, ws, wh) = (
        w(|r| &r.file, "file"),
        w(|r| &r.status, "status"),
        w(|r| &r.hypotheses, "hypotheses"),
    );
    let mut s = format!(
        "{:<wf$}  {:<ws$}  {:<wh$}  worst problem\n",
        "file", "status", "hypotheses"
    );
    for r in rows {
        let line = format!(
            "{:<wf$}  {:<ws$}  {:<wh$}  {}",
            clean(&r.file),
            r.status,
            r.hypotheses,
            clean(&r.problem)
        );
        s.push_str(line.trim_end());
        s.push('\n');
    }
    let failed = rows.iter().filter(|r| r.kind.is_some()).count();
    s.push_str(&format!(
        "{} analyses, {} ok, {} with problems",
        rows.len(),
        rows.len() - failed,
        failed
    ));
    s
}
