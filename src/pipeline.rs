//! The one place that drives the steps in order: plan → lock → data →
//! stats → results → render → files. Each command of the CLI is one
//! function here; none of them prints anything.

use crate::analysis;
use crate::data;
use crate::error::{Failure, Result};
use crate::lock::{self, LockFile};
use crate::output::{self, create_new};
use crate::plan::canonical::{canonical_value, diff, plan_hash, sha256_hex};
use crate::plan::{validate, AnalysisFile};
use crate::render;
use crate::results::*;
use rayon::prelude::*;
use std::path::{Path, PathBuf};

/// Options of `attest run`.
#[derive(Clone, Debug, Default)]
pub(crate) struct RunOptions {
    /// Output folder; `out/<stem>/` under the current folder when absent.
    pub out: Option<PathBuf>,
    /// Run without a lock; outputs are stamped "not preregistered".
    pub unlocked: bool,
    /// A folder of the user's own templates.
    pub templates: Option<PathBuf>,
    /// Write into a folder that holds files attest did not write.
    pub force: bool,
}

/// What `run` produced.
pub(crate) struct RunOutcome {
    /// The results model.
    pub results: Results,
    /// Where the outputs are.
    pub out_dir: PathBuf,
}

/// What `lock` produced.
pub(crate) struct LockOutcome {
    /// The sealed lock.
    pub lock: LockFile,
    /// Where it was written.
    pub lock_path: PathBuf,
    /// The preregistration documents written.
    pub written: Vec<PathBuf>,
    /// What version control says about the new lock.
    pub witness: crate::witness::Witness,
}

/// `attest check`: parse and validate, touching no data.
pub(crate) fn check(path: &Path) -> Result<AnalysisFile> {
    let file = validate::load(path)?;
    // A sample-size plan that cannot be met is a plan error, found now.
    planned_sizes(&file.plan)?;
    // So are value names that cannot be told apart.
    render::values::check_plan(&file.plan, &lock::file_name(path)).map_err(|e| e.in_file(path))?;
    Ok(file)
}

/// The default output folder for an analysis file: `out/<stem>/`.
pub(crate) fn default_out(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "analysis".into());
    PathBuf::from("out").join(stem)
}

fn plan_dir(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// `attest lock`: validate, seal, and render the preregistration document.
pub(crate) fn lock(
    path: &Path,
    out: Option<&Path>,
    templates: Option<&Path>,
    force: bool,
) -> Result<LockOutcome> {
    let file = check(path)?;
    let lock_path = lock::lock_path(path);
    if lock_path.exists() {
        return Err(Failure::input(format!("{} is already locked ({} exists)", path.display(), lock_path.display()))
            .help("a lock is never overwritten; to change the plan, edit it and declare a [[deviation]], or start a new analysis file"));
    }
    // A database source is not read at the lock: there is no file to
    // hash, and the lock records the query (in the plan) instead.
    let data_path = file.plan.data.file().map(|f| plan_dir(path).join(f));
    if data_path.as_ref().is_some_and(|p| p.exists()) {
        // Columns and levels that are not there are found now, from the
        // header and the labels alone, not after the lock at `run`.
        data::check_labels(&file.plan, &plan_dir(path))?;
    }
    let sealed = LockFile::seal(&file, data_path.as_deref())?;
    let docs = plan_documents(&sealed, templates)?;
    let out_dir = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_out(path));
    // Everything is checked before anything is written: the output folder
    // here, the lock's name by its exclusive creation just before the
    // documents become visible. A refused lock leaves nothing behind.
    let target = output::prepare(&out_dir, force)?;
    // The rest of an earlier set in the folder stays with it (a report of
    // an earlier lock is still a record); the manifest covers both.
    let mut set = target.current_files(&["plan.md", "plan.html"])?;
    set.extend(docs);
    let text = sealed.to_text();
    let created = std::cell::Cell::new(false);
    let result = target.write(&set, || {
        create_new(&lock_path, text.as_bytes())?;
        created.set(true);
        Ok(())
    });
    let set_written = match result {
        Ok(w) => w,
        Err(e) => {
            if created.get() {
                let _ = std::fs::remove_file(&lock_path);
            }
            return Err(e);
        }
    };
    let mut written = vec![lock_path.clone()];
    written.extend(
        set_written
            .into_iter()
            .filter(|p| p.ends_with("plan.md") || p.ends_with("plan.html")),
    );
    let witness = crate::witness::witness(
        &lock_path,
        sealed.to_text().as_bytes(),
        &sealed.locked_at,
        data_path.as_deref(),
    );
    Ok(LockOutcome {
        lock: sealed,
        lock_path,
        written,
        witness,
    })
}

/// Reads the lock of an analysis file and compares it with the plan.
fn lock_state(
    file: &AnalysisFile,
    unlocked: bool,
) -> Result<(
    LockState,
    Option<LockRecord>,
    Vec<crate::plan::canonical::FieldChange>,
)> {
    let lock_path = lock::lock_path(&file.path);
    if unlocked {
        return Ok((LockState::Unlocked, None, Vec::new()));
    }
    if !lock_path.exists() {
        return Err(Failure::input(format!("{} has no lock ({} is missing)", file.path.display(), lock_path.display()))
            .help(format!("seal the plan first with `attest lock {}`, or pass --unlocked to run it as not preregistered", file.path.display())));
    }
    let (lock, bytes) = LockFile::read(&lock_path)?;
    let record = LockRecord {
        sha256: sha256_hex(&bytes),
        locked_at: lock.locked_at.clone(),
        locked_with: lock.version.clone(),
        plan_sha256: lock.plan_sha256.clone(),
        data_existed: lock.data.existed,
        data_sha256: lock.data.sha256.clone(),
        intact: lock.intact(),
        rehearsals: crate::rehearsal::records(&file.path)?,
        witness: crate::witness::witness(
            &lock_path,
            &bytes,
            &lock.locked_at,
            file.plan
                .data
                .file()
                .map(|f| plan_dir(&file.path).join(f))
                .as_deref(),
        ),
        evidence: crate::seal::evidence(&lock_path),
    };
    let changes = diff(&lock.plan_value(), &canonical_value(&file.plan));
    let state = if changes.is_empty() && record.intact {
        LockState::AsLocked
    } else {
        LockState::Deviates
    };
    Ok((state, Some(record), changes))
}

/// Runs every hypothesis of an analysis file and builds the results
/// model, writing nothing. When a change since the lock alters the
/// analysis, the plan exactly as locked runs too (`as_locked`).
pub(crate) fn compute(path: &Path, unlocked: bool) -> Result<Results> {
    let file = validate::load(path)?;
    let (state, record, changes) = lock_state(&file, unlocked)?;
    let dir = plan_dir(path);
    let ds = data::load(&file.plan, &dir)?;
    let outcome = analyse_all(&file.plan, &ds, None)?;
    let analysis_file = lock::file_name(path);
    let command = if unlocked {
        format!("attest run --unlocked {analysis_file}")
    } else {
        format!("attest run {analysis_file}")
    };
    let as_locked = if changes.iter().any(|c| changes_analysis(&c.field)) {
        let (lock, _) = LockFile::read(&lock::lock_path(path))?;
        // The file is read again only when the locked plan reads it
        // differently (another path, format, rule or column).
        let same_rows = lock.plan.data == file.plan.data
            && lock.plan.exclude == file.plan.exclude
            && data::used_columns(&lock.plan) == data::used_columns(&file.plan);
        Some(Box::new(run_as_locked(
            &lock.plan,
            &dir,
            same_rows.then_some(&ds),
        )))
    } else {
        None
    };
    let mut r = results_of(&file, (state, record, changes), &ds, &dir, outcome, command);
    r.as_locked = as_locked;
    Ok(r)
}

/// Whether a change of this canonical field changes the analysis (rather
/// than only the words around it: title, authors, summary, a claim, a
/// label or a unit).
fn changes_analysis(field: &str) -> bool {
    let root = field.split(['.', '[']).next().unwrap_or(field);
    let last = field.rsplit('.').next().unwrap_or(field);
    !(["title", "authors", "summary"].contains(&root)
        || ["claim", "label", "units"].contains(&last))
}

/// The plan exactly as locked, run on the data its own settings read.
/// A locked plan that cannot run at all (its column was renamed since,
/// say) is recorded with the reason instead of failing the run.
fn run_as_locked(plan: &crate::plan::Plan, dir: &Path, ds: Option<&data::Dataset>) -> LockedRun {
    let ran = match ds {
        Some(ds) => analyse_all(plan, ds, None),
        None => data::load(plan, dir).and_then(|ds| analyse_all(plan, &ds, None)),
    };
    match ran {
        Ok((hypotheses, not_computed, correction_applied)) => LockedRun {
            plan_sha256: plan_hash(plan),
            hypotheses,
            not_computed,
            correction_applied,
            not_run: None,
        },
        Err(f) => LockedRun {
            plan_sha256: plan_hash(plan),
            hypotheses: Vec::new(),
            not_computed: Vec::new(),
            correction_applied: Correction::None,
            not_run: Some(f.what),
        },
    }
}

/// What [`analyse_all`] returns: the results, the hypotheses not
/// computed, and the correction that applied.
type Analysed = (Vec<HypothesisResult>, Vec<NotComputed>, Correction);

/// The lock state, the lock's record and the changes since the lock.
type LockView = (
    LockState,
    Option<LockRecord>,
    Vec<crate::plan::canonical::FieldChange>,
);

/// The results model of a plan run on a loaded dataset.
fn results_of(
    file: &AnalysisFile,
    (lock, lock_record, changes): LockView,
    ds: &data::Dataset,
    dir: &Path,
    (hypotheses, not_computed, correction_applied): Analysed,
    command: String,
) -> Results {
    let plan = &file.plan;
    Results {
        tool: "attest".into(),
        rehearsal: None,
        version: env!("CARGO_PKG_VERSION").into(),
        plan_sha256: plan_hash(plan),
        lock,
        lock_record,
        changes,
        deviations: file.deviations.clone(),
        plan: plan.clone(),
        data: DataRecord {
            path: plan.data.path.clone(),
            source: plan.data.source,
            sha256: ds.sha256.clone(),
            rows: ds.rows,
            outside_plan_folder: plan.data.source.is_none() && outside(dir, &ds.path),
        },
        hypotheses,
        not_computed,
        as_locked: None,
        correction_applied,
        command,
        analysis_file: lock::file_name(&file.path),
    }
}

/// What `rehearse` produced.
pub(crate) struct RehearseOutcome {
    /// The blinded results.
    pub results: Results,
    /// Where the outputs are.
    pub out_dir: PathBuf,
    /// The record written beside the lock, when a lock exists.
    pub recorded: Option<PathBuf>,
}

/// The default folder of a rehearsal: `out/<stem>.rehearsal/`, beside the
/// run's folder and never inside it, so neither output set ever holds
/// files of the other.
pub(crate) fn default_rehearsal_out(path: &Path) -> PathBuf {
    let run = default_out(path);
    let name = run
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    run.with_file_name(format!("{name}.rehearsal"))
}

/// `attest rehearse`: the whole plan on blinded data (see `rehearsal`).
pub(crate) fn rehearse(
    path: &Path,
    out: Option<&Path>,
    seed: Option<u64>,
    templates: Option<&Path>,
    force: bool,
) -> Result<RehearseOutcome> {
    let file = check(path)?;
    let lock_path = lock::lock_path(path);
    let locked = lock_path.exists();
    let (state, record, changes) = lock_state(&file, !locked)?;
    let dir = plan_dir(path);
    let ds = data::load(&file.plan, &dir)?;
    let plan = &file.plan;
    let seed = seed.unwrap_or(plan.seed);
    let outcome = analyse_all(plan, &ds, Some(seed))?;
    let designs: Vec<_> = plan.hypotheses.iter().map(|h| h.design).collect();
    let command = format!("attest rehearse --seed {seed} {}", lock::file_name(path));
    let mut results = results_of(&file, (state, record, changes), &ds, &dir, outcome, command);
    results.rehearsal = Some(Rehearsal {
        notice: crate::rehearsal::NOTICE.into(),
        seed,
        blinding: crate::rehearsal::blinding_words(&designs),
    });
    let files = crate::rehearsal::stamp(render::render_run(&results, templates)?);
    let out_dir = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_rehearsal_out(path));
    let target = output::prepare(&out_dir, force)?;
    let mut recorded = None;
    target.write(&files, || {
        if locked {
            let lock_sha = results
                .lock_record
                .as_ref()
                .map(|l| l.sha256.clone())
                .unwrap_or_default();
            let rec = RehearsalRecord {
                at: lock::rfc3339_utc(lock::now_epoch()),
                data_sha256: ds.sha256.clone(),
                lock_sha256: lock_sha,
                seed,
                version: env!("CARGO_PKG_VERSION").into(),
            };
            recorded = Some(crate::rehearsal::record(path, &rec)?);
        }
        Ok(())
    })?;
    Ok(RehearseOutcome {
        results,
        out_dir,
        recorded,
    })
}

/// Every hypothesis of a plan on a loaded dataset: the results, the
/// hypotheses whose values leave their test undefined, and the correction
/// that applied. Selecting a hypothesis' values fails the whole plan (a
/// column or level that is not there is a plan error); a test that cannot
/// be computed on the values fails only its hypothesis, unless no
/// hypothesis can be computed at all. `blind` (a seed) blinds each
/// hypothesis' values before the analysis, for a rehearsal.
pub(crate) fn analyse_all(
    plan: &crate::plan::Plan,
    ds: &data::Dataset,
    blind: Option<u64>,
) -> Result<Analysed> {
    let outcomes = plan
        .hypotheses
        .par_iter()
        .enumerate()
        .map(|(i, h)| {
            let mut sel = data::select(ds, plan, h)?;
            if let Some(seed) = blind {
                crate::rehearsal::blind(&mut sel, h, seed, i);
            }
            let rows = sel.flow.clone();
            match analysis::analyse(plan, h, sel) {
                Ok(r) => Ok(Ok(r)),
                Err(f) if f.kind == crate::error::Kind::Input => {
                    let prefix = format!("hypothesis {}: ", h.id);
                    let reason = f.what.strip_prefix(&prefix).unwrap_or(&f.what).to_string();
                    Ok(Err((
                        f,
                        NotComputed {
                            id: h.id.clone(),
                            claim: h.claim.clone(),
                            reason,
                            rows,
                        },
                    )))
                }
                Err(f) => Err(f),
            }
        })
        .collect::<Vec<Result<_>>>()
        // The first failing hypothesis in plan order, whichever thread met
        // it first: rayon's collect into a `Result` returns any one of
        // several errors ("the one returned is not deterministic").
        .into_iter()
        .collect::<Result<Vec<_>>>()?;
    let mut hyps = Vec::new();
    let mut not_computed = Vec::new();
    let mut first_failure = None;
    for o in outcomes {
        match o {
            Ok(r) => hyps.push(r),
            Err((f, nc)) => {
                first_failure.get_or_insert(f);
                not_computed.push(nc);
            }
        }
    }
    if hyps.is_empty() {
        if let Some(f) = first_failure {
            // Nothing to report: the refusal says why.
            return Err(f);
        }
    }
    let correction = analysis::adjust_family(plan, &mut hyps, not_computed.len());
    Ok((hyps, not_computed, correction))
}

/// Whether `data` lies outside the folder tree of the analysis file.
fn outside(plan_dir: &Path, data: &Path) -> bool {
    match (plan_dir.canonicalize(), data.canonicalize()) {
        (Ok(d), Ok(f)) => !f.starts_with(d),
        _ => true,
    }
}

/// The preregistration documents of a lock: `plan.md` and `plan.html`.
fn plan_documents(lock: &LockFile, templates: Option<&Path>) -> Result<Vec<(String, Vec<u8>)>> {
    let planned = planned_sizes(&lock.plan)?;
    let docs = render::render_plan(lock, &planned, templates)?;
    Ok(vec![
        ("plan.md".into(), docs.plan_md.into_bytes()),
        ("plan.html".into(), docs.plan_html.into_bytes()),
    ])
}

/// The bytes of every output of a run, by relative file name: the
/// preregistration documents of the lock (when there is one, rendered
/// afresh so the set is whole), the figures, values, reports, and
/// `results.json`.
pub(crate) fn render_outputs(
    results: &Results,
    templates: Option<&Path>,
    analysis: &Path,
) -> Result<Vec<(String, Vec<u8>)>> {
    let mut files = match results.lock {
        LockState::Unlocked => Vec::new(),
        _ => plan_documents(&LockFile::read(&lock::lock_path(analysis))?.0, templates)?,
    };
    files.extend(
        render::render_run(results, templates)?
            .into_iter()
            .map(|o| (o.name, o.bytes)),
    );
    Ok(files)
}

/// `attest run` for one analysis file.
pub(crate) fn run(path: &Path, opts: &RunOptions) -> Result<RunOutcome> {
    let results = compute(path, opts.unlocked)?;
    let files = render_outputs(&results, opts.templates.as_deref(), path)?;
    let out_dir = opts.out.clone().unwrap_or_else(|| default_out(path));
    output::prepare(&out_dir, opts.force)?.write(&files, || Ok(()))?;
    Ok(RunOutcome { results, out_dir })
}

/// Expands files and folders into analysis files: a folder contributes
/// every `*.toml` below it, sorted by path, so batch order is stable.
pub(crate) fn expand(paths: &[PathBuf]) -> Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let mut found = Vec::new();
            collect_toml(p, &mut found)?;
            found.sort();
            if found.is_empty() {
                return Err(Failure::input(format!(
                    "{} holds no analysis files (*.toml)",
                    p.display()
                )));
            }
            out.extend(found);
        } else {
            out.push(p.clone());
        }
    }
    let mut stems = std::collections::BTreeMap::new();
    for p in &out {
        if let Some(other) = stems.insert(default_out(p), p.clone()) {
            return Err(Failure::input(format!(
                "{} and {} would both write to {}",
                other.display(),
                p.display(),
                default_out(p).display()
            ))
            .help("give the analysis files different names"));
        }
    }
    Ok(out)
}

fn collect_toml(dir: &Path, out: &mut Vec<PathBuf>) -> Result<()> {
    let entries = std::fs::read_dir(dir).map_err(|e| Failure::io("read the folder", dir, &e))?;
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            collect_toml(&p, out)?;
        } else if p.extension().is_some_and(|x| x == "toml") {
            out.push(p);
        }
    }
    Ok(())
}

/// Compares what a run would write with what the output folder holds,
/// writing nothing. Returns the names of files that differ or are missing.
pub(crate) fn unchanged(path: &Path, opts: &RunOptions) -> Result<(Results, Vec<String>)> {
    let results = compute(path, opts.unlocked)?;
    let mut files = render_outputs(&results, opts.templates.as_deref(), path)?;
    let manifest = output::manifest_text(&files);
    files.push((output::MANIFEST.into(), manifest.into_bytes()));
    let out_dir = opts.out.clone().unwrap_or_else(|| default_out(path));
    let differing = files
        .iter()
        .filter(|(name, bytes)| {
            std::fs::read(out_dir.join(name)).ok().as_deref() != Some(bytes.as_slice())
        })
        .map(|(name, _)| name.clone())
        .collect();
    Ok((results, differing))
}

/// The planned size of each hypothesis that states a sample-size plan.
pub(crate) fn planned_sizes(
    plan: &crate::plan::Plan,
) -> Result<Vec<Option<crate::analysis::planning::Planned>>> {
    plan.hypotheses
        .iter()
        .map(|h| {
            h.planning
                .as_ref()
                .map(|p| crate::analysis::planning::planned(h, p, plan.alpha))
                .transpose()
        })
        .collect()
}
