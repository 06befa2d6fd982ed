//! What a new user meets first: `attest new` for each design (checked,
//! locked and run on the demo data as written), the help texts, shell
//! completions and the manual page.

mod common;

use common::{copy_dir, root, Case};

fn with_demos() -> Case {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    c
}

#[test]
fn a_new_plan_for_each_design_checks_locks_and_runs() {
    let c = with_demos();
    for design in ["independent", "paired", "one-sample"] {
        let name = format!("first-{design}");
        let file = format!("analyses/{name}.toml");
        c.attest(&["new", &name, "--design", design]).success();
        let text = c.read(&file);
        assert!(text.contains(&format!("design = \"{design}\"")), "{text}");
        c.attest(&["check", &file]).success();
        c.attest(&["lock", &file]).success();
        c.attest(&["run", &file]).success();
        assert!(c.exists(&format!("out/{name}/report.html")));
    }
}

#[test]
fn new_never_overwrites_and_checks_the_method() {
    let c = with_demos();
    c.attest(&["new", "trial"]).success();
    let before = c.read("analyses/trial.toml");
    let out = c.attest(&["new", "trial"]).failure().code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    insta::assert_snapshot!("new_refuses_to_overwrite", err);
    assert_eq!(c.read("analyses/trial.toml"), before);
    let out = c
        .attest(&["new", "other", "--design", "paired", "--method", "welch-t"])
        .failure()
        .code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    insta::assert_snapshot!("new_method_must_fit", err);
}

#[test]
fn help_texts_are_stable() {
    let c = Case::new();
    for cmd in [
        vec!["--help"],
        vec!["run", "--help"],
        vec!["power", "--help"],
        vec!["verify", "--help"],
        vec!["new", "--help"],
    ] {
        let out = c.attest(&cmd).success();
        let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
        insta::assert_snapshot!(format!("help_{}", cmd[0].trim_start_matches('-')), text);
    }
}

#[test]
fn completions_and_man_page_come_from_the_same_definitions() {
    let c = Case::new();
    let out = c.attest(&["completions", "bash"]).success();
    let bash = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    for sub in [
        "check", "rehearse", "lock", "run", "verify", "power", "values", "new",
    ] {
        assert!(bash.contains(sub), "completion lacks {sub}");
    }
    let out = c.attest(&["man"]).success();
    let man = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(man.contains(".TH attest 1"), "{man}");
    assert!(man.contains("verify"), "{man}");
}

#[test]
fn no_colour_without_a_terminal() {
    let c = with_demos();
    let out = c.attest(&["run", "analyses/loaves.toml"]).success();
    let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(
        !text.contains('\u{1b}'),
        "escape codes in piped output: {text:?}"
    );
}

#[test]
fn the_paired_starter_runs_in_its_long_layout_too() {
    // Following the starter's own comment: delete `first`/`second`, remove
    // the "# " from the four long-layout lines, point it at long data.
    let c = with_demos();
    c.attest(&["new", "long-pairs", "--design", "paired"])
        .success();
    let wide = c.read("analyses/long-pairs.toml");
    let keys = ["outcome =", "pair_by =", "condition =", "levels ="];
    let long: Vec<String> = wide
        .lines()
        .filter(|l| !l.starts_with("first =") && !l.starts_with("second ="))
        .map(|l| match l.strip_prefix("# ") {
            Some(rest) if keys.iter().any(|k| rest.starts_with(k)) => rest.to_string(),
            _ => l.replace("data/commute.csv", "data/commute-long.csv"),
        })
        .collect();
    // The demo's wide file, rewritten one row per measurement.
    let csv = c.read("analyses/data/commute.csv");
    let mut rows = vec!["commuter,occasion,stress".to_string()];
    for line in csv.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        rows.push(format!("{},before,{}", f[0], f[1]));
        rows.push(format!("{},after,{}", f[0], f[2]));
    }
    c.write("analyses/data/commute-long.csv", &(rows.join("\n") + "\n"));
    c.write("analyses/long-pairs.toml", &(long.join("\n") + "\n"));
    c.attest(&["check", "analyses/long-pairs.toml"]).success();
    c.attest(&["run", "--unlocked", "analyses/long-pairs.toml"])
        .success();
    let r: serde_json::Value =
        serde_json::from_str(&c.read("out/long-pairs/results.json")).unwrap();
    // Both layouts analyse the same 40 commuters (analyses/data/commute.csv).
    assert_eq!(r["hypotheses"][0]["groups"][0]["n"], 40);
}

/// Runs `attest ARGS` with its standard error going into a pipe whose
/// reader has already gone, and returns the exit code.
fn code_with_stderr_closed(args: &str) -> i32 {
    let c = Case::new();
    let bin = assert_cmd::cargo::cargo_bin("attest");
    // `true` ends at once; a moment later attest writes to the pipe it left.
    let script = format!("{{ sleep 0.3; \"$0\" {args}; echo $? > code; }} 2>&1 >/dev/null | true");
    let status = std::process::Command::new("sh")
        .arg("-c")
        .arg(script)
        .arg(&bin)
        .current_dir(c.path())
        .status()
        .unwrap();
    assert!(status.success());
    c.read("code").trim().parse().unwrap()
}

#[test]
fn a_closed_stderr_ends_with_the_exit_code_not_a_panic() {
    // 101 would be a panic; 1 is the documented code for bad input.
    assert_eq!(code_with_stderr_closed("check missing.toml"), 1);
    assert_eq!(
        code_with_stderr_closed(
            "power --design independent --smallest-effect 0.4 --chance-to-detect 0.9 --alternative one-sided"
        ),
        1
    );
}
