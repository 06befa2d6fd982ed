//! Audit and regeneration: `verify` on every kind of tampering, deviations
//! on the record, batch runs that keep going past a broken analysis, and
//! the unchanged-outputs check.

mod common;

use common::{copy_dir, root, Case, DEMOS};
use serde_json::Value;

const PLAN: &str = r#"attest = 1
title = "Oven trial"
[data]
path = "oven.csv"
[[hypothesis]]
id = "H1"
claim = "The new oven bakes taller loaves."
design = "independent"
outcome = "height_cm"
group = "oven"
levels = ["new", "old"]
alternative = "greater"
method = "welch-t"
"#;

const DATA: &str = "oven,height_cm\nnew,11.2\nold,10.1\nnew,11.8\nold,10.6\nnew,10.9\nold,10.4\nnew,11.5\nold,9.8\n";

/// A locked and run analysis in a temporary folder.
fn ran() -> Case {
    let c = Case::new();
    c.write("oven.toml", PLAN);
    c.write("oven.csv", DATA);
    c.attest(&["lock", "oven.toml"]).success();
    c.attest(&["run", "oven.toml"]).success();
    c
}

fn verify(c: &Case) -> (i32, String) {
    let out = c.attest(&["verify", "out/oven"]).get_output().clone();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
    )
}

#[test]
fn an_untouched_report_verifies() {
    let c = ran();
    let (code, text) = verify(&c);
    assert_eq!(code, 0, "{text}");
    assert!(text.contains("  plan "), "{text}");
    assert!(text.ends_with("the report reproduces\n"), "{text}");
    assert!(!text.contains("changed:"), "{text}");
}

#[test]
fn edited_data_are_named_with_both_hashes() {
    let c = ran();
    let before = common::plan_json(&c.read("out/oven/results.json"))["data"]["sha256"]
        .as_str()
        .unwrap()
        .to_string();
    c.write("oven.csv", &DATA.replace("new,11.2", "new,12.2"));
    let after = attest::plan::canonical::sha256_hex(c.read("oven.csv").as_bytes());
    let (code, text) = verify(&c);
    assert_eq!(code, 2, "{text}");
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("data "))
        .unwrap();
    assert!(
        line.contains(&format!(
            "changed: oven.csv sha256 {} → {}",
            &before[..12],
            &after[..12]
        )),
        "{line}"
    );
    // Said once: the line is about the data already.
    assert!(!line.contains("data changed"), "{line}");
    assert!(
        text.lines().any(|l| l.trim_start().starts_with("report.md")
            && l.contains("changed: differs from a fresh run")),
        "{text}"
    );
}

#[test]
fn a_plan_edited_after_the_lock_warns_and_a_declared_deviation_is_printed() {
    let c = Case::new();
    c.write("oven.toml", PLAN);
    c.write("oven.csv", DATA);
    c.attest(&["lock", "oven.toml"]).success();
    // Without a declared deviation: the terminal names the field and asks for one.
    c.write(
        "oven.toml",
        &PLAN.replace("alternative = \"greater\"", "alternative = \"two-sided\""),
    );
    let out = c.attest(&["run", "oven.toml"]).success();
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(
        err.contains(
            "lock: plan differs from the lock in hypotheses[H1].alternative (greater → two-sided)"
        ),
        "{err}"
    );
    assert!(err.contains("no [[deviation]] is declared"), "{err}");
    // With one: the report prints it next to the field-by-field changes.
    let declared = "\n[[deviation]]\ndate = \"2026-11-20\"\nchange = \"two-sided instead of greater\"\nreason = \"The reviewers asked for a two-sided test.\"\n";
    c.write(
        "oven.toml",
        &format!(
            "{}{declared}",
            PLAN.replace("alternative = \"greater\"", "alternative = \"two-sided\"")
        ),
    );
    let out = c.attest(&["run", "oven.toml", "--force"]).success();
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(!err.contains("no [[deviation]] is declared"), "{err}");
    let md = c.read("out/oven/report.md");
    assert!(md.contains("**Ran with deviations from the lock**"), "{md}");
    assert!(
        md.contains("| hypotheses\\[H1\\].alternative | greater | two-sided |")
            || md.contains("hypotheses[H1].alternative"),
        "{md}"
    );
    assert!(
        md.contains("The reviewers asked for a two-sided test."),
        "{md}"
    );
    let r: Value = serde_json::from_str(&c.read("out/oven/results.json")).unwrap();
    assert_eq!(r["lock"], "deviates");
    assert_eq!(r["deviations"][0]["date"], "2026-11-20");
}

#[test]
fn a_plan_edited_after_the_run_fails_verification() {
    let c = ran();
    c.write(
        "oven.toml",
        &PLAN.replace("method = \"welch-t\"", "method = \"student-t\""),
    );
    let (code, text) = verify(&c);
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("changed: plan hash"), "{text}");
    assert!(text.contains("changed: plan changed since lock"), "{text}");
}

#[test]
fn a_hand_edited_lock_is_detected() {
    let c = ran();
    let lock = c
        .read("oven.lock")
        .replace("\"alpha\": 0.05", "\"alpha\": 0.1");
    c.write("oven.lock", &lock);
    let (code, text) = verify(&c);
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("lock replaced"), "{text}");
    assert!(text.contains("the lock was edited by hand"), "{text}");
    // The other lock lines agree: an edited lock vouches for nothing, so the
    // plan is not reported "same" as it, nor is git consulted about it.
    let line = |what: &str| {
        text.lines()
            .find(|l| l.trim_start().starts_with(what))
            .unwrap_or_else(|| panic!("no `{what}` line in {text}"))
            .to_string()
    };
    assert!(
        line("plan against lock").contains("changed: not compared"),
        "{text}"
    );
    assert!(
        line("lock in git").contains("not consulted: the lock was edited by hand"),
        "{text}"
    );
    // A run says so too, and does not call it "as locked".
    let out = c.attest(&["run", "oven.toml", "--force"]).success();
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(err.contains("it was edited by hand"), "{err}");
    let r: Value = serde_json::from_str(&c.read("out/oven/results.json")).unwrap();
    assert_eq!(r["lock"], "deviates");
    assert_eq!(r["lock_record"]["intact"], false);
}

#[test]
fn a_lock_deleted_and_recreated_shows_its_new_time_and_the_existing_data() {
    let c = ran();
    let old: Value = serde_json::from_str(&c.read("oven.lock")).unwrap();
    assert_eq!(old["data"]["existed"], true);
    std::fs::remove_file(c.path().join("oven.lock")).unwrap();
    let out = assert_cmd::Command::cargo_bin("attest")
        .unwrap()
        .current_dir(c.path())
        .env("SOURCE_DATE_EPOCH", "1767225600")
        .args(["lock", "oven.toml", "--force"])
        .assert()
        .success();
    let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(
        text.contains("the data file already existed at lock time"),
        "{text}"
    );
    let (code, text) = verify(&c);
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("lock replaced"), "{text}");
    assert!(
        text.contains("now locked at 2026-01-01T00:00:00Z"),
        "{text}"
    );
}

#[test]
fn an_edited_output_is_named() {
    let c = ran();
    let md = c
        .read("out/oven/report.md")
        .replace("supported", "strongly supported");
    c.write("out/oven/report.md", &md);
    let (code, text) = verify(&c);
    assert_eq!(code, 2, "{text}");
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("report.md "))
        .unwrap();
    // The manifest names the edit before any re-run is needed.
    assert!(
        line.ends_with(
            "changed: was edited after the run: its SHA-256 differs from the manifest's"
        ),
        "{text}"
    );
    assert!(
        text.contains("  report.html") && text.contains("same"),
        "{text}"
    );
}

#[test]
fn a_batch_run_keeps_going_past_a_broken_analysis() {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    c.write("analyses/broken.toml", "attest = 1\ntitle = \"Broken\"\n[data]\npath = \"data/none.csv\"\n[[hypothesis]]\nid = \"H1\"\n");
    let out = c.attest(&["run", "analyses"]).failure().code(1);
    let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(text.starts_with("file"), "{text}");
    let broken = text.lines().find(|l| l.contains("broken.toml")).unwrap();
    assert!(broken.contains("failed"), "{broken}");
    for name in DEMOS {
        assert!(
            c.exists(&format!("out/{name}/report.html")),
            "{name} has no report"
        );
        let line = text
            .lines()
            .find(|l| l.contains(&format!("{name}.toml")))
            .unwrap();
        assert!(line.contains(" ok "), "{line}");
    }
    assert!(
        text.trim_end()
            .ends_with("7 analyses, 6 ok, 1 with problems"),
        "{text}"
    );
}

#[test]
fn expect_same_fails_when_outputs_would_change() {
    let c = ran();
    c.attest(&["run", "--expect-same", "oven.toml"]).success();
    c.write("oven.csv", &DATA.replace("old,9.8", "old,9.9"));
    let out = c
        .attest(&["run", "--expect-same", "oven.toml"])
        .failure()
        .code(2);
    let text = String::from_utf8_lossy(&out.get_output().stdout).into_owned();
    assert!(
        text.contains("changed") && text.contains("results.json"),
        "{text}"
    );
}
