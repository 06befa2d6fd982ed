//! Evidence a sceptic accepts: `run`, `lock` and `verify` on a folder set up
//! by someone hostile (planted git filters, hooks, symlinks, FIFOs, paths
//! that climb out), output sets that are whole or absent under concurrent
//! and killed runs, and the git witness checked against the history.
//!
//! Everything here uses the real binary, the real filesystem and real git.

mod common;

use common::Case;
use std::path::Path;
use std::process::Command;

const PLAN: &str = r#"attest = 1
title = "Kiln trial"
[data]
path = "kiln.csv"
[[hypothesis]]
id = "H1"
claim = "The new kiln fires harder tiles."
design = "independent"
outcome = "hardness"
group = "kiln"
levels = ["new", "old"]
alternative = "greater"
method = "welch-t"
"#;

const DATA: &str =
    "kiln,hardness\nnew,6.2\nold,5.1\nnew,6.8\nold,5.6\nnew,5.9\nold,5.4\nnew,6.5\nold,4.8\n";

/// Real git, isolated from this machine's own configuration, with a fixed
/// identity and the given committer date.
fn git(dir: &Path, date: &str, args: &[&str]) {
    let out = Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(args)
        .env("GIT_CONFIG_NOSYSTEM", "1")
        .env("GIT_CONFIG_GLOBAL", "/dev/null")
        .env("GIT_AUTHOR_NAME", "Tester")
        .env("GIT_AUTHOR_EMAIL", "tester@example.invalid")
        .env("GIT_COMMITTER_NAME", "Tester")
        .env("GIT_COMMITTER_EMAIL", "tester@example.invalid")
        .env("GIT_AUTHOR_DATE", date)
        .env("GIT_COMMITTER_DATE", date)
        .output()
        .expect("git runs");
    assert!(
        out.status.success(),
        "git {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

fn code_and_text(a: &assert_cmd::assert::Assert) -> (i32, String) {
    let o = a.get_output();
    (
        o.status.code().unwrap_or(-1),
        format!(
            "{}{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        ),
    )
}

/// The one line of `verify` output about `what`.
fn line<'a>(text: &'a str, what: &str) -> &'a str {
    text.lines()
        .find(|l| l.trim_start().starts_with(&format!("{what} ")))
        .unwrap_or_else(|| panic!("no line for {what} in\n{text}"))
}

fn kiln() -> Case {
    let c = Case::new();
    c.write("kiln.toml", PLAN);
    c.write("kiln.csv", DATA);
    c
}

#[test]
fn planted_git_filters_hooks_and_programs_never_run() {
    let c = kiln();
    let marker = c.path().join("PWNED");
    let dir = c.path();
    git(dir, "2026-11-02T10:00:00+00:00", &["init", "-q"]);
    c.attest(&["lock", "kiln.toml"]).success();
    git(dir, "2026-11-02T10:00:00+00:00", &["add", "."]);
    git(
        dir,
        "2026-11-02T10:00:00+00:00",
        &["commit", "-q", "-m", "Lock the plan"],
    );
    // Now the folder turns hostile: every way a repository's own files can
    // make a git command run a program writes the marker.
    let evil = format!("#!/bin/sh\necho ran >> '{}'\ncat\n", marker.display());
    c.write("evil.sh", &evil);
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(dir.join("evil.sh"), std::fs::Permissions::from_mode(0o755))
            .unwrap();
    }
    let mut config = std::fs::read_to_string(dir.join(".git/config")).unwrap();
    config.push_str(
        "[filter \"x\"]\n\tclean = ./evil.sh\n\tsmudge = ./evil.sh\n\tprocess = ./evil.sh\n\trequired = true\n\
         [core]\n\tfsmonitor = ./evil.sh\n\thooksPath = hooks\n\tpager = ./evil.sh\n\
         [diff]\n\texternal = ./evil.sh\n\
         [gpg]\n\tprogram = ./evil.sh\n\
         [log]\n\tshowSignature = true\n",
    );
    std::fs::write(dir.join(".git/config"), config).unwrap();
    c.write(".gitattributes", "* filter=x diff=x\n");
    for hook in [
        "post-checkout",
        "pre-commit",
        "post-index-change",
        "reference-transaction",
    ] {
        c.write(&format!("hooks/{hook}"), &evil);
        c.write(&format!(".git/hooks/{hook}"), &evil);
    }

    c.attest(&["run", "kiln.toml"]).success();
    let report = c.read("out/kiln/report.md");
    assert!(
        report.contains("first committed to git in"),
        "the witness still reads history: {report}"
    );
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 0, "{text}");
    assert!(
        line(&text, "lock in git").contains("first committed in"),
        "{text}"
    );
    c.write(
        "second.toml",
        &PLAN.replace("Kiln trial", "Second kiln trial"),
    );
    c.attest(&["lock", "second.toml"]).success();
    assert!(
        !marker.exists(),
        "a planted program ran: {}",
        std::fs::read_to_string(&marker).unwrap_or_default()
    );

    // Control: the planted filter is live, so the test above could fail.
    // Real git running in this folder executes it.
    let _ = Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(["hash-object", "kiln.lock"])
        .env("GIT_CONFIG_NOSYSTEM", "1")
        .env("GIT_CONFIG_GLOBAL", "/dev/null")
        .output()
        .unwrap();
    assert!(
        marker.exists(),
        "the planted filter did not work as a control"
    );
}

#[test]
fn verify_reports_each_edited_extra_and_missing_file_on_its_own_line() {
    let c = kiln();
    c.attest(&["lock", "kiln.toml"]).success();
    c.attest(&["run", "kiln.toml"]).success();
    let html = c
        .read("out/kiln/plan.html")
        .replace("harder tiles", "much harder tiles");
    c.write("out/kiln/plan.html", &html);
    c.write("out/kiln/figures/h1-extra.svg", "<svg/>");
    std::fs::remove_file(c.path().join("out/kiln/values.tex")).unwrap();
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 2, "{text}");
    assert!(
        line(&text, "plan.html").contains("changed: was edited after the run"),
        "{text}"
    );
    assert!(
        line(&text, "figures/h1-extra.svg").contains("changed: is an extra file"),
        "{text}"
    );
    assert!(
        line(&text, "values.tex").contains("changed: is missing"),
        "{text}"
    );
    assert!(line(&text, "report.md").ends_with("same"), "{text}");
}

#[cfg(unix)]
#[test]
fn verify_refuses_symlinks_in_the_report_and_paths_that_leave_the_folder() {
    let c = kiln();
    c.attest(&["run", "--unlocked", "kiln.toml"]).success();
    let secret = tempfile::tempdir().unwrap();
    std::fs::write(secret.path().join("secret.txt"), "private").unwrap();
    // A figure replaced by a link to a file elsewhere.
    std::fs::remove_file(c.path().join("out/kiln/figures/h1-qq.svg")).unwrap();
    std::os::unix::fs::symlink(
        secret.path().join("secret.txt"),
        c.path().join("out/kiln/figures/h1-qq.svg"),
    )
    .unwrap();
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 2, "{text}");
    assert!(
        line(&text, "figures/h1-qq.svg").contains("symbolic link"),
        "{text}"
    );
    assert!(!text.contains("private"), "{text}");

    // results.json naming an analysis file that climbs out.
    let results = c.read("out/kiln/results.json");
    c.write(
        "out/kiln/results.json",
        &results.replace(
            "\"analysis_file\": \"kiln.toml\"",
            "\"analysis_file\": \"../kiln.toml\"",
        ),
    );
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 1, "{text}");
    assert!(
        text.starts_with(
            "error: out/kiln/results.json: the results name the analysis file ../kiln.toml"
        ),
        "{text}"
    );
    assert!(text.contains("\nhelp: "), "{text}");

    // A data file that is a link to a file outside the folder.
    c.write("out/kiln/results.json", &results);
    std::fs::write(secret.path().join("kiln.csv"), DATA).unwrap();
    std::fs::remove_file(c.path().join("kiln.csv")).unwrap();
    std::os::unix::fs::symlink(secret.path().join("kiln.csv"), c.path().join("kiln.csv")).unwrap();
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 1, "{text}");
    assert!(
        text.contains("lies outside the folder being verified"),
        "{text}"
    );

    // The analysis file itself a link to one outside.
    std::fs::write(secret.path().join("kiln.toml"), PLAN).unwrap();
    std::fs::remove_file(c.path().join("kiln.toml")).unwrap();
    std::os::unix::fs::symlink(secret.path().join("kiln.toml"), c.path().join("kiln.toml"))
        .unwrap();
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 1, "{text}");
    assert!(
        text.contains("the analysis file kiln.toml lies outside the folder being verified"),
        "{text}"
    );
}

#[cfg(unix)]
#[test]
fn a_fifo_as_data_is_refused_without_hanging() {
    let c = Case::new();
    c.write("kiln.toml", PLAN);
    let fifo = c.path().join("kiln.csv");
    let ok = Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap()
        .success();
    assert!(ok, "mkfifo");
    for args in [
        &["run", "--unlocked", "kiln.toml"][..],
        &["lock", "kiln.toml"][..],
    ] {
        let started = std::time::Instant::now();
        let a = assert_cmd::Command::cargo_bin("attest")
            .unwrap()
            .current_dir(c.path())
            .args(args)
            .timeout(std::time::Duration::from_secs(20))
            .assert();
        let (code, text) = code_and_text(&a);
        assert_eq!(code, 1, "{args:?}: {text}");
        assert!(
            text.contains("it is a FIFO (named pipe), not a regular file"),
            "{text}"
        );
        assert!(text.contains("\nhelp: "), "{text}");
        assert!(started.elapsed().as_secs() < 20);
    }
    assert!(!c.exists("kiln.lock") && !c.exists("out"));
}

#[test]
fn control_characters_in_user_text_are_escaped_on_the_terminal() {
    let c = Case::new();
    c.write(
        "kiln.toml",
        // TOML's own escapes put ESC and BEL into the title.
        &PLAN.replace("Kiln trial", "Kiln \\u001b[2J\\u001b]0;owned\\u0007 trial"),
    );
    c.write("kiln.csv", DATA);
    let (code, text) = code_and_text(&c.attest(&["check", "kiln.toml"]));
    assert_eq!(code, 0, "{text}");
    assert!(
        !text.contains('\u{1b}') && !text.contains('\u{7}'),
        "{text:?}"
    );
    assert!(text.contains("Kiln \\u{1b}[2J"), "{text}");
    // A data cell with an escape sequence, in an error.
    c.write("kiln.toml", PLAN);
    c.write(
        "kiln.csv",
        "kiln,hardness\nnew,6.2\u{1b}[31m\nold,5.1\nnew,6.8\nold,5.6\n",
    );
    let (code, text) = code_and_text(&c.attest(&["run", "--unlocked", "kiln.toml"]));
    assert_eq!(code, 1, "{text}");
    assert!(!text.contains('\u{1b}'), "{text:?}");
}

/// Every file of an output folder matches its manifest, and the manifest
/// names every file: the set is whole.
fn assert_whole(dir: &Path) -> String {
    let files = common::tree(dir);
    let manifest = String::from_utf8(files["manifest.sha256"].clone()).unwrap();
    let mut listed = std::collections::BTreeMap::new();
    for l in manifest.lines() {
        let (h, n) = l.split_once("  ").unwrap();
        listed.insert(n.to_string(), h.to_string());
    }
    for (name, bytes) in &files {
        if name == "manifest.sha256" {
            continue;
        }
        // SHA-256 from the sha2 crate (FIPS 180-4), independent of the
        // binary's own manifest writer.
        use sha2::Digest;
        let h: String = sha2::Sha256::digest(bytes)
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect();
        assert_eq!(
            listed.get(name),
            Some(&h),
            "{name} does not match the manifest"
        );
    }
    assert_eq!(listed.len() + 1, files.len(), "manifest and folder differ");
    let results = String::from_utf8(files["results.json"].clone()).unwrap();
    let report = String::from_utf8(files["report.md"].clone()).unwrap();
    let unlocked = results.contains("\"lock\": \"unlocked\"");
    assert_eq!(
        unlocked,
        report.contains("**Not preregistered**"),
        "report.md and results.json come from different runs"
    );
    results
}

#[test]
fn concurrent_runs_never_leave_a_mixed_set() {
    let c = kiln();
    c.attest(&["lock", "kiln.toml"]).success();
    let bin = assert_cmd::cargo::cargo_bin("attest");
    let mut states = std::collections::BTreeSet::new();
    for _ in 0..8 {
        let spawn = |extra: &[&str]| {
            Command::new(&bin)
                .current_dir(c.path())
                .env("SOURCE_DATE_EPOCH", "1764547200")
                .args(["run", "--quiet", "kiln.toml"])
                .args(extra)
                .stdout(std::process::Stdio::null())
                .stderr(std::process::Stdio::null())
                .spawn()
                .unwrap()
        };
        let mut a = spawn(&[]);
        let mut b = spawn(&["--unlocked"]);
        assert!(a.wait().unwrap().success());
        assert!(b.wait().unwrap().success());
        let results = assert_whole(&c.path().join("out/kiln"));
        states.insert(results.contains("\"lock\": \"unlocked\""));
        // Nothing is left beside the set.
        let beside: Vec<String> = std::fs::read_dir(c.path().join("out"))
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert_eq!(beside, vec!["kiln".to_string()]);
    }
    assert!(!states.is_empty());
}

#[cfg(all(unix, debug_assertions))]
#[test]
fn a_run_killed_while_writing_leaves_the_old_set_and_its_staging_is_cleared() {
    let c = kiln();
    c.attest(&["run", "--unlocked", "kiln.toml"]).success();
    let before = common::tree(&c.path().join("out/kiln"));
    c.write("kiln.csv", &DATA.replace("6.2", "7.2"));
    let pause = c.path().join("paused");
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("attest"))
        .current_dir(c.path())
        .env("SOURCE_DATE_EPOCH", "1764547200")
        .env("ATTEST_TEST_PAUSE_WRITE", &pause)
        .args(["run", "--quiet", "--unlocked", "kiln.toml"])
        .spawn()
        .unwrap();
    let start = std::time::Instant::now();
    while !pause.exists() {
        assert!(
            start.elapsed().as_secs() < 60,
            "the run never reached its write phase"
        );
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    child.kill().unwrap(); // SIGKILL
    child.wait().unwrap();
    assert_eq!(
        common::tree(&c.path().join("out/kiln")),
        before,
        "the old set changed"
    );
    let staging: Vec<_> = std::fs::read_dir(c.path().join("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains("attest-staging"))
        .collect();
    assert_eq!(
        staging.len(),
        1,
        "the killed run's staging folder is there: {staging:?}"
    );
    // A folder of the user's that happens to share the prefix is not attest's.
    c.write("out/.kiln.attest-staging-mine/notes.txt", "keep");
    c.attest(&["run", "--quiet", "--unlocked", "kiln.toml"])
        .success();
    assert!(
        !c.path().join("out").join(&staging[0]).exists(),
        "stale staging not cleaned"
    );
    assert_eq!(c.read("out/.kiln.attest-staging-mine/notes.txt"), "keep");
    let results = assert_whole(&c.path().join("out/kiln"));
    assert_ne!(common::tree(&c.path().join("out/kiln")), before);
    assert!(results.contains("\"lock\": \"unlocked\""));
}

#[cfg(unix)]
#[test]
fn planted_symlinks_at_staging_and_temporary_names_are_never_followed() {
    let c = kiln();
    c.attest(&["run", "--unlocked", "kiln.toml"]).success();
    let victim = tempfile::tempdir().unwrap();
    std::fs::write(victim.path().join("report.md"), "victim").unwrap();
    std::fs::write(victim.path().join("manifest.sha256"), "victim").unwrap();
    let out = c.path().join("out");
    // Links at staging-like names beside the target, at the old temporary
    // names inside it, and at the lock's temporary name.
    for name in [
        ".kiln.attest-staging-1-0",
        ".kiln.attest-staging-link",
        "kiln/.report.md.partial-1",
    ] {
        std::os::unix::fs::symlink(victim.path(), out.join(name)).unwrap();
    }
    std::os::unix::fs::symlink(victim.path(), c.path().join(".kiln.lock.attest-new-x")).unwrap();
    c.attest(&["run", "--unlocked", "--force", "kiln.toml"])
        .success();
    c.attest(&["lock", "kiln.toml", "--force"]).success();
    assert_eq!(std::fs::read_dir(victim.path()).unwrap().count(), 2);
    assert_eq!(
        std::fs::read_to_string(victim.path().join("report.md")).unwrap(),
        "victim"
    );
    assert_eq!(
        std::fs::read_to_string(victim.path().join("manifest.sha256")).unwrap(),
        "victim"
    );
    // The output folder itself as a link is refused, not written through.
    std::fs::rename(out.join("kiln"), c.path().join("elsewhere")).unwrap();
    std::os::unix::fs::symlink(victim.path(), out.join("kiln")).unwrap();
    let (code, text) = code_and_text(&c.attest(&["run", "--force", "kiln.toml"]));
    assert_eq!(code, 1, "{text}");
    assert!(text.contains("is a symbolic link"), "{text}");
    assert_eq!(std::fs::read_dir(victim.path()).unwrap().count(), 2);
}

#[test]
fn a_refused_lock_writes_nothing() {
    let c = kiln();
    c.write("out/kiln/notes.txt", "mine");
    let before = common::tree(c.path());
    let (code, text) = code_and_text(&c.attest(&["lock", "kiln.toml"]));
    assert_eq!(code, 1, "{text}");
    assert!(text.contains("holds files attest did not write"), "{text}");
    assert_eq!(common::tree(c.path()), before);
    assert!(!c.exists("kiln.lock"));
    // An output folder that is a file: refused before the lock is written.
    std::fs::remove_dir_all(c.path().join("out")).unwrap();
    c.write("out/kiln", "a file");
    let before = common::tree(c.path());
    let (code, text) = code_and_text(&c.attest(&["lock", "kiln.toml"]));
    assert_eq!(code, 1, "{text}");
    assert_eq!(common::tree(c.path()), before);
}

#[test]
fn backdated_commits_data_committed_first_and_vanished_witnesses_are_flagged() {
    let c = kiln();
    let dir = c.path();
    git(dir, "2026-11-02T10:00:00+00:00", &["init", "-q"]);
    git(dir, "2026-11-02T10:00:00+00:00", &["add", "kiln.csv"]);
    git(
        dir,
        "2026-11-02T10:00:00+00:00",
        &["commit", "-q", "-m", "Add the measurements"],
    );
    c.attest(&["lock", "kiln.toml"]).success();
    git(
        dir,
        "2020-01-01T00:00:00+00:00",
        &["add", "kiln.toml", "kiln.lock"],
    );
    git(
        dir,
        "2020-01-01T00:00:00+00:00",
        &["commit", "-q", "-m", "Lock the plan"],
    );
    c.attest(&["run", "kiln.toml"]).success();
    let report = c.read("out/kiln/report.md");
    for said in [
        "first committed to git in",
        "on 2020-01-01 (the committer's date)",
        "Caution: The commit is dated before its own parent commit (2026-11-02)",
        "Caution: The commit is dated before the lock says it was written (2025-12-01)",
        "Caution: The data were committed before the plan",
        "The commit is not signed",
        "no mechanism proves the data were unseen",
    ] {
        assert!(
            report.contains(said),
            "{said:?} not in the report:\n{report}"
        );
    }
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 0, "{text}");
    assert!(
        line(&text, "lock in git").contains("flagged: the data were committed before the plan"),
        "{text}"
    );

    // The repository is removed: the commit the report names is gone.
    std::fs::remove_dir_all(dir.join(".git")).unwrap();
    let (code, text) = code_and_text(&c.attest(&["verify", "out/kiln"]));
    assert_eq!(code, 4, "{text}");
    assert!(
        line(&text, "lock in git").contains("cannot confirm: the report names commit"),
        "{text}"
    );
    assert!(text.ends_with("cannot be confirmed\n"), "{text}");
}
