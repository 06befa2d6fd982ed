//! `attest verify`: does a report reproduce from its plan, lock and data?
//!
//! Reads the `results.json` of a report, finds the analysis file it names,
//! re-runs the analysis in memory and compares, item by item: the plan
//! hash, the lock (replaced? edited by hand? plan changed since?), the data
//! hash, the tool version, and every output byte. Each item gets one line,
//! `same` or `changed: …`; verification passes only when every output
//! reproduces and nothing that was hashed changed.

use crate::error::{Failure, Kind, Result};
use crate::files::{self, Links};
use crate::lock::{self, LockFile};
use crate::output::MANIFEST;
use crate::pipeline;
use crate::plan::canonical::{plan_hash, sha256_hex};
use crate::plan::validate;
use crate::render::view::provenance::short;
use crate::results::{LockState, Results};
use crate::witness::Witness;
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Component, Path, PathBuf};

/// What one comparison found.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Outcome {
    /// Compared and the same.
    Same,
    /// A fact reported for information only (nothing was compared).
    Note(String),
    /// Something differs; `fatal` when it makes verification fail.
    Changed {
        /// What changed, in one sentence.
        how: String,
        /// Whether this makes verification fail.
        fatal: bool,
    },
    /// An outside record the report claims cannot be checked here (a git
    /// commit that is gone): neither confirmed nor shown to differ.
    CannotConfirm(String),
}

/// One line of the verification.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Item {
    /// What was compared, e.g. "data" or "report.md".
    pub what: String,
    /// What the comparison found.
    pub outcome: Outcome,
}

impl Item {
    fn same(what: impl Into<String>) -> Item {
        Item {
            what: what.into(),
            outcome: Outcome::Same,
        }
    }
    fn note(what: impl Into<String>, note: impl Into<String>) -> Item {
        Item {
            what: what.into(),
            outcome: Outcome::Note(note.into()),
        }
    }
    fn changed(what: impl Into<String>, how: impl Into<String>, fatal: bool) -> Item {
        Item {
            what: what.into(),
            outcome: Outcome::Changed {
                how: how.into(),
                fatal,
            },
        }
    }
    fn cannot_confirm(what: impl Into<String>, why: impl Into<String>) -> Item {
        Item {
            what: what.into(),
            outcome: Outcome::CannotConfirm(why.into()),
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
    /// The exit code: 2 when something changed, else 4 when an outside
    /// record could not be confirmed, else 0.
    pub fn exit_code(&self) -> i32 {
        let changed = self
            .items
            .iter()
            .any(|i| matches!(i.outcome, Outcome::Changed { fatal: true, .. }));
        let unconfirmed = self
            .items
            .iter()
            .any(|i| matches!(i.outcome, Outcome::CannotConfirm(_)));
        if changed {
            Kind::Verification.exit_code()
        } else if unconfirmed {
            Kind::Unconfirmed.exit_code()
        } else {
            0
        }
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
        // A report (report.html, report.md, …) is checked through the
        // results.json written beside it.
        if target.file_name() != Some("results.json".as_ref()) {
            let r = dir.join("results.json");
            if !r.is_file() {
                return Err(Failure::input(format!(
                    "no results.json beside {}; verify checks a report through it",
                    target.display()
                ))
                .help("keep the report's folder whole as `attest run` wrote it (report.html, results.json, figures/)"));
            }
            return Ok((dir, r));
        }
        Ok((dir, target.to_path_buf()))
    }
}

/// Refuses a report whose results.json names an analysis file that is not
/// a bare file name, or a data file by an absolute path: a report handed
/// over by someone else must not make `verify` read a file of their
/// choosing elsewhere on this machine.
fn refuse_foreign_paths(raw: &serde_json::Value, results_path: &Path) -> Result<()> {
    if let Some(name) = raw.get("analysis_file").and_then(|v| v.as_str()) {
        let p = Path::new(name);
        let bare = p.components().count() == 1
            && matches!(p.components().next(), Some(Component::Normal(_)));
        if !bare {
            return Err(Failure::input(format!(
                "the results name the analysis file {}, which is not a plain file name",
                crate::error::clean(name)
            ))
            .in_file(results_path)
            .help("attest writes a bare file name there; a path that is absolute or climbs with `..` is refused. Pass --plan FILE to name the analysis file yourself"));
        }
    }
    let data = raw.pointer("/data/path").and_then(|v| v.as_str());
    if let Some(path) = data.filter(|p| Path::new(p).is_absolute()) {
        return Err(Failure::input(format!(
            "the results name the data file {}, an absolute path",
            crate::error::clean(path)
        ))
        .in_file(results_path)
        .help("a report meant to be checked elsewhere names its data relative to the analysis file; verify does not read absolute paths from a report"));
    }
    Ok(())
}

/// Where the analysis file named in results.json is: `plan` if given,
/// else the current folder or `analyses/` below it (the name is a bare
/// file name: see [`refuse_foreign_paths`]).
fn find_analysis(results: &Results, plan: Option<&Path>) -> Result<PathBuf> {
    if let Some(p) = plan {
        return Ok(p.to_path_buf());
    }
    let name = Path::new(&results.analysis_file);
    for dir in [PathBuf::from("."), PathBuf::from("analyses")] {
        let p = dir.join(name);
        if p.exists() {
            return Ok(if dir == Path::new(".") {
                name.to_path_buf()
            } else {
                p
            });
        }
    }
    Err(Failure::input(format!(
        "cannot find the analysis file {} named in the results",
        crate::error::clean(&results.analysis_file)
    ))
    .help("run verify from the folder that holds it (or its parent with analyses/), or pass --plan FILE"))
}

/// The folder `verify` may read in: the current folder, or the folder of
/// the analysis file named with `--plan` when that lies elsewhere.
fn boundary(analysis: &Path) -> Result<PathBuf> {
    let cwd = Path::new(".")
        .canonicalize()
        .map_err(|e| Failure::io("read the current folder", Path::new("."), &e))?;
    let plan_dir = analysis
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
        .canonicalize()
        .map_err(|e| Failure::io("read the folder of", analysis, &e))?;
    Ok(if plan_dir.starts_with(&cwd) {
        cwd
    } else {
        plan_dir
    })
}

/// Refuses `path` unless it resolves (symlinks included) inside `root`.
fn within(root: &Path, path: &Path, what: &str) -> Result<()> {
    let Ok(real) = path.canonicalize() else {
        // A missing file is reported where it is read.
        return Ok(());
    };
    if real.starts_with(root) {
        return Ok(());
    }
    Err(Failure::input(format!(
        "the {what} {} lies outside the folder being verified",
        path.display()
    ))
    .help("verify reads only the folder it is run in (and the analysis file named with --plan); copy the file into it, or run verify where the file lives"))
}

/// Verifies one report. Writes nothing, runs no program, and reads only
/// inside the boundary (see [`boundary`]) and the report folder.
pub fn verify(
    target: &Path,
    plan: Option<&Path>,
    templates: Option<&Path>,
    run_query: bool,
) -> Result<Verification> {
    let (dir, results_path) = locate(target)?;
    let text = files::read_bounded(
        &results_path,
        "read the results",
        Links::Refuse,
        files::MAX_OUTPUT,
    )?;
    let parse_error = |e: serde_json::Error| {
        Failure::input(format!("results.json cannot be read: {e}"))
            .at(&results_path, e.line().max(1), Some(e.column().max(1)))
            .help(
                "results.json is written by `attest run`; restore it from the report you received",
            )
    };
    // The paths a report names are checked before anything else is read
    // from it, whatever else its results.json holds.
    let raw: serde_json::Value = serde_json::from_slice(&text).map_err(parse_error)?;
    refuse_foreign_paths(&raw, &results_path)?;
    let recorded: Results = serde_json::from_slice(&text).map_err(parse_error)?;
    if recorded.rehearsal.is_some() {
        return Err(Failure::input(format!(
            "{} is a rehearsal on blinded data, not a report: none of its numbers is a result, so there is nothing to verify",
            crate::error::clean(&results_path.display().to_string())
        ))
        .help("verify the folder `attest run` wrote (out/<stem>/); rehearse again to refresh a rehearsal"));
    }
    let analysis = find_analysis(&recorded, plan)?;
    let root = boundary(&analysis)?;
    if plan.is_none() {
        // Found by the name in the report: a link out of the folder is
        // refused like any other path that leaves it.
        within(&root, &analysis, "analysis file")?;
    }
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
        within(&root, &lock::lock_path(&analysis), "lock")?;
        items.extend(lock_items(&analysis, &recorded, &hash)?);
    }

    let engine = file.plan.data.source;
    // The data line stands here in the list; its hash comes from the run.
    let data_at = items.len();
    match engine {
        Some(e) if !run_query => {
            return Err(Failure::input(format!(
                "the report's data are the rows of a query on {}, and verify connects to no database it was not told to",
                e.display()
            ))
            .help("pass --run-query to let verify connect to the database in the plan's [data] `connect` and run its `query` again; the folder names both, so do this only for a plan you trust"));
        }
        Some(crate::plan::Engine::Duckdb) => {
            if let Some(db) = &file.plan.data.connect {
                let db = analysis.parent().unwrap_or(Path::new("")).join(db);
                within(&root, &db, "database file")?;
            }
        }
        Some(crate::plan::Engine::Postgres) => {}
        None => {
            let data_path = analysis
                .parent()
                .unwrap_or(Path::new(""))
                .join(&file.plan.data.path);
            within(&root, &data_path, "data file")?;
            // Refused now if it is no regular file; its hash comes from the
            // run below, which reads and hashes the bytes it analyses (one
            // read of the data, not two).
            files::open_regular(&data_path, "read the data file", Links::Follow)?;
        }
    }

    let version = env!("CARGO_PKG_VERSION");
    items.push(if recorded.version == version {
        Item::same("tool version")
    } else {
        Item::changed(
            "tool version",
            format!(
                "tool version differs: report {}, this attest {version}",
                crate::error::clean(&recorded.version)
            ),
            false,
        )
    });

    let mut fresh = pipeline::compute(&analysis, unlocked)?;
    // The data file's hash, or the count table's for a query, as the run
    // just computed it.
    let what = match engine {
        Some(e) => crate::data::source::source_name(e),
        None => file.plan.data.path.clone(),
    };
    items.insert(
        data_at,
        data_item(&fresh.data.sha256, &recorded.data.sha256, &what),
    );
    // Committing the lock after the run is progress, not a change: compare
    // outputs as of the recorded witness and report the current one.
    if let Some(now) = fresh.lock_record.as_mut() {
        let then = recorded.lock_record.as_ref().map(|r| r.witness.clone());
        let current = match then {
            Some(then) => std::mem::replace(&mut now.witness, then),
            None => now.witness.clone(),
        };
        // Evidence added beside the lock after the run is not a change of
        // the report (the cli checks it all with seal::check_all), but
        // every piece the report lists must still be there and sound.
        if let Some(then) = recorded.lock_record.as_ref() {
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
        }
        let then = recorded.lock_record.as_ref().map(|r| &r.witness);
        let lock_edited = items
            .iter()
            .any(|i| i.what == "lock content" && matches!(i.outcome, Outcome::Changed { .. }));
        items.push(if lock_edited {
            Item::note("lock in git", "not consulted: the lock was edited by hand")
        } else {
            witness_item(then, &current, &analysis)
        });
    }
    let outputs = pipeline::render_outputs(&fresh, templates, &analysis)?;
    items.extend(output_items(&dir, &outputs)?);
    Ok(Verification { analysis, items })
}

/// The data line: the hash read now against the one the report records.
fn data_item(now: &str, then: &str, name: &str) -> Item {
    if now == then {
        Item::same("data")
    } else {
        Item::changed(
            "data",
            format!(
                "{} sha256 {} → {}",
                crate::error::clean(name),
                short(then),
                short(now)
            ),
            true,
        )
    }
}

/// The witness line: the commit the report names must still be the lock's
/// first commit here; a commit that is gone is its own line.
fn witness_item(then: Option<&Witness>, now: &Witness, analysis: &Path) -> Item {
    const WHAT: &str = "lock in git";
    let Some(Witness::Committed {
        commit: claimed, ..
    }) = then
    else {
        return Item::note(WHAT, describe_witness(now));
    };
    if let Witness::Committed { commit, .. } = now {
        if commit == claimed {
            return Item::note(WHAT, describe_witness(now));
        }
    }
    let dir = analysis
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let exists = crate::witness::commit_exists(dir, claimed);
    let why = match (now, exists) {
        (Witness::NoGit, _) => "there is no git repository here to look in".to_string(),
        (_, false) => {
            "that commit cannot be found in this repository (history rewritten, or not included)"
                .to_string()
        }
        (Witness::Committed { commit, .. }, true) => {
            format!("the lock is now first found in {} instead", short(commit))
        }
        (Witness::NotCommitted, true) => {
            "that commit exists but the current history does not hold this lock".to_string()
        }
    };
    Item::cannot_confirm(
        WHAT,
        format!("the report names commit {}, but {why}", short(claimed)),
    )
}

/// One line per output file: each file the fresh run writes, each file the
/// manifest lists, and each file found in the folder.
fn output_items(dir: &Path, outputs: &[(String, Vec<u8>)]) -> Result<Vec<Item>> {
    let mut items = Vec::new();
    let found = crate::output::list_files(dir)?;
    let manifest = match found.get(MANIFEST) {
        Some(crate::output::Entry::File) => {
            let bytes = files::read_bounded(
                &dir.join(MANIFEST),
                "read the manifest",
                Links::Refuse,
                files::MAX_OUTPUT,
            )?;
            match crate::output::parse_manifest(&String::from_utf8_lossy(&bytes)) {
                Some(m) => {
                    items.push(Item::same(MANIFEST));
                    m
                }
                None => {
                    items.push(Item::changed(
                        MANIFEST,
                        "cannot be read: a line is not `<sha256>  <file>`",
                        true,
                    ));
                    BTreeMap::new()
                }
            }
        }
        _ => {
            items.push(Item::changed(
                MANIFEST,
                "is missing from the report, so nothing shows which files belong to it",
                true,
            ));
            BTreeMap::new()
        }
    };
    let fresh: BTreeMap<&str, &[u8]> = outputs
        .iter()
        .map(|(n, b)| (n.as_str(), b.as_slice()))
        .collect();
    let mut names: BTreeSet<&str> = fresh.keys().copied().collect();
    names.extend(manifest.keys().map(String::as_str));
    names.extend(
        found
            .keys()
            .map(String::as_str)
            .filter(|n| *n != MANIFEST && *n != crate::output::LEGACY_LIST),
    );
    for name in names {
        let shown = crate::error::clean(name).into_owned();
        let listed = manifest.get(name);
        let item = match (found.get(name), fresh.get(name)) {
            (None, _) => Item::changed(shown, "is missing from the report", true),
            (Some(crate::output::Entry::Other(kind)), _) => {
                Item::changed(shown, format!("is {kind}, not a file attest wrote"), true)
            }
            (Some(crate::output::Entry::File), want) => {
                let bytes =
                    files::read_bounded(&dir.join(name), "read", Links::Refuse, files::MAX_OUTPUT)?;
                let h = sha256_hex(&bytes);
                match (listed, want) {
                    (None, None) => Item::changed(
                        shown,
                        "is an extra file: neither the manifest nor a fresh run has it",
                        true,
                    ),
                    (None, Some(_)) => Item::changed(shown, "is not listed in the manifest", true),
                    (Some(l), _) if *l != h => Item::changed(
                        shown,
                        "was edited after the run: its SHA-256 differs from the manifest's",
                        true,
                    ),
                    (Some(_), None) => Item::changed(
                        shown,
                        "is listed in the manifest, but a fresh run does not write it",
                        true,
                    ),
                    (Some(_), Some(w)) if *w != bytes.as_slice() => {
                        Item::changed(shown, "differs from a fresh run", true)
                    }
                    (Some(_), Some(_)) => Item::same(shown),
                }
            }
        };
        items.push(item);
    }
    Ok(items)
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
                crate::error::clean(&lock.locked_at)
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
    items.push(if !lock.intact() {
        Item::changed(
            "plan against lock",
            "not compared: a lock edited by hand proves nothing about the plan",
            true,
        )
    } else if lock.plan_sha256 == plan_hash_now {
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

fn describe_witness(w: &Witness) -> String {
    crate::render::view::provenance::witness_line(w)
}
