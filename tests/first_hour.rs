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
    for sub in ["check", "lock", "run", "verify", "power", "values", "new"] {
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
