//! `attest verify`: does a report reproduce from its plan, lock and data?
//!
//! Reads the `results.json` of a report, finds the analysis file it names,
//! re-runs the analysis in memory and compares, item by item: the plan
//! hash, the lock (replaced? edited by hand? plan changed since?), the data
//! hash, the tool version, and every output byte. Each item gets one line,
//! `same` or `changed: …`; verification passes only when every output
//! reproduces and nothing that was hashed changed.

use crate::error::{Failure, Result};
use crate::lock::{self, LockFile};
use crate::pipeline;
use crate::plan::canonical::{plan_hash, sha256_hex};
use crate::plan::validate;
use crate::results::{LockState, Results};
use std::path::{Path, PathBuf};

/// One line of the verification.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Item {
    /// What was compared, e.g. "data" or "report.md".
    pub what: String,
    /// `None` when the same; otherwise what changed.
    pub changed: Option<String>,
    /// Whether a change here makes verification fail.
    pub fatal: bool,
    /// A fact reported for information only (nothing was compared).
    pub note: Option<String>,
}

impl Item {
    fn same(what: impl Into<String>) -> Item {
        Item {
            what: what.into(),
            changed: None,
            fatal: false,
            note: None,
        }
    }
    fn note(what: impl Into<String>, note: impl Into<String>) -> Item {
        Item {
            note: Some(note.into()),
            ..Item::same(what)
        }
    }
    fn changed(what: impl Into<String>, how: impl Into<String>, fatal: bool) -> Item {
        Item {
            what: what.into(),
            changed: Some(how.into()),
            fatal,
            note: None,
        }
    }
}

/// The verification of one report.
pub struct Verification {
    /// The analysis file that was re-run.
    pub analysis: PathBuf,
    /// Every item compared, in order.
    pub items: Vec<Item>,
}

impl Verification {
    /// Whether everything reproduced.
    pub fn passed(&self) -> bool {
        !self.items.iter().any(|i| i.fatal && i.changed.is_some())
    }
}

/// Finds the report folder and its results.json from what the user named.
fn locate(target: &Path) -> Result<(PathBuf, PathBuf)> {
    if target.is_dir() {
        let r = target.join("results.json");
        if !r.exists() {
            return Err(
                Failure::input(format!("{} holds no results.json", target.display())).help(
                    "name the folder `attest run` wrote (e.g. out/loaves) or its results.json",
                ),
            );
        }
        Ok((target.to_path_buf(), r))
    } else {
        let dir = target
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from("."));
        Ok((dir, target.to_path_buf()))
    }
}

/// Where the analysis file named in results.json is: `plan` if given,
/// else the current folder or `analyses/` below it.
fn find_analysis(results: &Results, plan: Option<&Path>) -> Result<PathBuf> {
    if let Some(p) = plan {
        return Ok(p.to_path_buf());
    }
    for dir in [PathBuf::from("."), PathBuf::from("analyses")] {
        let p = dir.join(&results.analysis_file);
        if p.exists() {
            return Ok(if dir == Path::new(".") {
                PathBuf::from(&results.analysis_file)
            } else {
                p
            });
        }
    }
    Err(Failure::input(format!(
        "cannot find the analysis file {} named in the results",
        results.analysis_file
    ))
    .help("run verify from the folder that holds it (or its parent with analyses/), or pass --plan FILE"))
}

/// Verifies one report.
pub fn verify(
    target: &Path,
    plan: Option<&Path>,
    templates: Option<&Path>,
) -> Result<Verification> {
    let (dir, results_path) = locate(target)?;
    let text = std::fs::read(&results_path).map_err(|e| Failure::io("read", &results_path, &e))?;
    let recorded: Results = serde_json::from_slice(&text).map_err(|e| {
        Failure::input(format!("results.json cannot be read: {e}"))
            .at(&results_path, e.line().max(1), Some(e.column().max(1)))
            .help(
                "results.json is written by `attest run`; restore it from the report you received",
            )
    })?;
    let analysis = find_analysis(&recorded, plan)?;
    let mut items = Vec::new();

    let file = validate::load(&analysis)?;
    let hash = plan_hash(&file.plan);
    items.push(if hash == recorded.plan_sha256 {
        Item::same("plan")
    } else {
        Item::changed(
            "plan",
            format!(
                "plan hash {} → {}",
                short(&recorded.plan_sha256),
                short(&hash)
            ),
            true,
        )
    });

    let unlocked = recorded.lock == LockState::Unlocked;
    if !unlocked {
        items.extend(lock_items(&analysis, &recorded, &hash)?);
    }

    let data_path = analysis
        .parent()
        .unwrap_or(Path::new(""))
        .join(&file.plan.data.path);
    match std::fs::read(&data_path) {
        Ok(bytes) => {
            let h = sha256_hex(&bytes);
            items.push(if h == recorded.data.sha256 {
                Item::same("data")
            } else {
                Item::changed(
                    "data",
                    format!(
                        "data changed: {} sha256 {} → {}",
                        file.plan.data.path,
                        short(&recorded.data.sha256),
                        short(&h)
                    ),
                    true,
                )
            });
        }
        Err(e) => return Err(Failure::io("read the data file", &data_path, &e)),
    }

    let version = env!("CARGO_PKG_VERSION");
    items.push(if recorded.version == version {
        Item::same("tool version")
    } else {
        Item::changed(
            "tool version",
            format!(
                "tool version differs: report {} , this attest {version}",
                recorded.version
            ),
            false,
        )
    });

    let mut fresh = pipeline::compute(&analysis, unlocked)?;
    // Committing the lock after the run is progress, not a change: compare
    // outputs as of the recorded witness and report the current one.
    if let (Some(now), Some(then)) = (fresh.lock_record.as_mut(), recorded.lock_record.as_ref()) {
        let current = std::mem::replace(&mut now.witness, then.witness.clone());
        // Evidence added beside the lock after the run is not a change of
        // the report (the cli checks it all with seal::check_all), but
        // every piece the report lists must still be there and sound.
        let present = std::mem::replace(&mut now.evidence, then.evidence.clone());
        for e in then.evidence.iter().filter(|e| !present.contains(e)) {
            items.push(Item::changed(
                "evidence",
                format!(
                    "the report lists {}, which is not sound evidence beside the lock",
                    crate::seal::printable(&e.file)
                ),
                true,
            ));
        }
        items.push(Item::note("lock in git", describe_witness(&current)));
    }
    let outputs = pipeline::render_outputs(&fresh, templates)?;
    for (name, bytes) in outputs {
        let path = dir.join(&name);
        items.push(match std::fs::read(&path) {
            Ok(old) if old == bytes => Item::same(name),
            Ok(_) => Item::changed(name.clone(), "differs from a fresh run", true),
            Err(_) => Item::changed(name.clone(), "is missing from the report", true),
        });
    }
    Ok(Verification { analysis, items })
}

fn lock_items(analysis: &Path, recorded: &Results, plan_hash_now: &str) -> Result<Vec<Item>> {
    let mut items = Vec::new();
    let lock_path = lock::lock_path(analysis);
    if !lock_path.exists() {
        items.push(Item::changed(
            "lock",
            format!("lock missing: {} does not exist", lock_path.display()),
            true,
        ));
        return Ok(items);
    }
    let (lock, bytes) = LockFile::read(&lock_path)?;
    let h = sha256_hex(&bytes);
    let was = recorded
        .lock_record
        .as_ref()
        .map(|r| r.sha256.clone())
        .unwrap_or_default();
    items.push(if h == was {
        Item::same("lock")
    } else {
        Item::changed(
            "lock",
            format!(
                "lock replaced: sha256 {} → {}, now locked at {}",
                short(&was),
                short(&h),
                lock.locked_at
            ),
            true,
        )
    });
    if !lock.intact() {
        items.push(Item::changed(
            "lock content",
            "the lock was edited by hand: its content does not match its own hash",
            true,
        ));
    }
    items.push(if lock.plan_sha256 == plan_hash_now {
        Item::same("plan against lock")
    } else {
        Item::changed(
            "plan against lock",
            "plan changed since lock",
            recorded.lock == LockState::AsLocked,
        )
    });
    Ok(items)
}

fn describe_witness(w: &crate::witness::Witness) -> String {
    match w {
        crate::witness::Witness::Committed { commit, date } => {
            format!("first committed in {} on {date}", short(commit))
        }
        crate::witness::Witness::NotCommitted => "not committed".into(),
        crate::witness::Witness::NoGit => "no git here".into(),
    }
}

fn short(h: &str) -> &str {
    &h[..h.len().min(12)]
}
