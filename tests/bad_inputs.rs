//! The bad-input catalogue: every folder under `tests/bad_inputs/` is one
//! way a user can hand attest something unusable. Each is copied to a
//! temporary folder and run through the real binary; attest must refuse
//! with exit code 1, an `error: ` line naming the place, a `help: ` line,
//! exactly the stderr in the folder's `stderr.snap`, and no file left
//! behind. See `tests/bad_inputs/README.md` for how to add a case.

mod common;

use assert_cmd::Command;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The case folders, sorted by name so failures come in a stable order.
fn cases() -> Vec<PathBuf> {
    let dir = common::root().join("tests/bad_inputs");
    let mut out: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("tests/bad_inputs exists")
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_dir())
        .collect();
    out.sort();
    out
}

/// Every file (not folder) below `dir`, relative, `/`-separated.
fn files(dir: &Path) -> BTreeSet<String> {
    common::tree(dir).into_keys().collect()
}

/// The command line of a case: the `args` file, else `run --unlocked plan.toml`.
fn args_of(case: &Path) -> Vec<String> {
    match std::fs::read_to_string(case.join("args")) {
        Ok(text) => text.split_whitespace().map(str::to_string).collect(),
        Err(_) => ["run", "--unlocked", "plan.toml"]
            .map(String::from)
            .to_vec(),
    }
}

/// Whether the first line of stderr names a place: `error: FILE:LINE[:COL]: `.
/// Returns the file named and whether a column was given.
fn position(first_line: &str) -> Option<(String, bool)> {
    let rest = first_line.strip_prefix("error: ")?;
    let mut parts = rest.splitn(4, ':');
    let file = parts.next()?.to_string();
    let line = parts.next()?;
    if line.is_empty() || !line.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let next = parts.next()?;
    let has_col = !next.is_empty() && next.bytes().all(|b| b.is_ascii_digit());
    Some((file, has_col))
}

/// Runs one case and returns what went wrong with it, if anything.
fn check(case: &Path) -> Result<(), String> {
    let name = case.file_name().unwrap().to_string_lossy().into_owned();
    let tmp = tempfile::tempdir().unwrap();
    common::copy_dir(case, tmp.path());
    let _ = std::fs::remove_file(tmp.path().join("stderr.snap"));
    let before = files(tmp.path());
    let out = Command::cargo_bin("attest")
        .unwrap()
        .current_dir(tmp.path())
        .env("SOURCE_DATE_EPOCH", "1764547200")
        .env("NO_COLOR", "1")
        .args(args_of(case))
        .output()
        .unwrap();
    let stderr =
        String::from_utf8_lossy(&out.stderr).replace(&tmp.path().display().to_string(), "[TMP]");
    let mut problems = Vec::new();
    if out.status.code() != Some(1) {
        problems.push(format!("exit code {:?}, expected 1", out.status.code()));
    }
    let first = stderr.lines().next().unwrap_or("");
    if !stderr.starts_with("error: ") {
        problems.push("stderr does not start with `error: `".into());
    }
    if !stderr.lines().any(|l| l.starts_with("help: ")) {
        problems.push("stderr has no `help: ` line".into());
    }
    // A case whose failure concerns a whole file (or none) says so in a
    // `whole-file` note; every other case must name file:line, and a plan
    // error also the column.
    if !case.join("whole-file").exists() {
        match position(first) {
            None => problems.push(format!("no file:line in {first:?}")),
            Some((file, has_col)) if file.ends_with(".toml") && !has_col => {
                problems.push(format!("no column for {file} in {first:?}"))
            }
            Some(_) => {}
        }
    }
    let after = files(tmp.path());
    let left: Vec<&String> = after.difference(&before).collect();
    if !left.is_empty() {
        problems.push(format!("files left behind: {left:?}"));
    }
    if let Some(p) = after.iter().find(|f| f.contains(".partial-")) {
        problems.push(format!("partial file left behind: {p}"));
    }
    let mut settings = insta::Settings::clone_current();
    settings.set_snapshot_path(case);
    settings.set_prepend_module_to_snapshot(false);
    settings.set_omit_expression(true);
    settings.set_description(format!("attest {}", args_of(case).join(" ")));
    let snap = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        settings.bind(|| insta::assert_snapshot!("stderr", stderr));
    }));
    if snap.is_err() {
        problems.push("stderr differs from stderr.snap".into());
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(format!(
            "{name}: {}\n--- stderr ---\n{stderr}",
            problems.join("; ")
        ))
    }
}

#[test]
fn every_bad_input_is_refused_cleanly() {
    let cases = cases();
    assert!(cases.len() >= 40, "the catalogue has {} cases", cases.len());
    let failures: Vec<String> = cases.iter().filter_map(|c| check(c).err()).collect();
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n\n")
    );
}

#[test]
fn position_reads_file_line_and_column() {
    assert_eq!(
        position("error: plan.toml:3:9: `alpha` must lie strictly between 0 and 1"),
        Some(("plan.toml".into(), true))
    );
    assert_eq!(
        position("error: data.csv:1: the plan uses column \"x\""),
        Some(("data.csv".into(), false))
    );
    assert_eq!(position("error: plan.toml has no lock"), None);
    assert_eq!(
        position("error: cannot read the data file ./d.csv: No such file"),
        None
    );
}
