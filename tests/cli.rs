//! End-to-end tests of the `attest` binary on fixture folders: the plan →
//! lock → run spine, its refusals, and its headline numbers against
//! published reference values.
// Reference values are kept exactly as their sources print them.
#![allow(clippy::excessive_precision, clippy::inconsistent_digit_grouping)]

mod common;

use common::{case, plan_json, Case};
use serde_json::Value;

const PLAN: &str = r#"attest = 1
title = "Loaf volume"
alpha = 0.05

[data]
path = "data/loaves.csv"

[[hypothesis]]
id = "H1"
claim = "Long proofing gives larger loaves."
design = "independent"
outcome = "volume_ml"
group = "proof"
levels = ["long", "standard"]
alternative = "greater"
method = "welch-t"
"#;

const DATA: &str = "loaf,proof,volume_ml\n1,long,1850\n2,standard,1790\n3,long,1822\n4,standard,1801\n5,long,1870\n6,standard,1765\n7,long,1811\n8,standard,1779\n";

fn loaves() -> Case {
    let c = Case::new();
    c.write("data/loaves.csv", DATA);
    c
}

fn hash_of(text: &str) -> String {
    let c = loaves();
    c.write("a.toml", text);
    c.attest(&["lock", "a.toml"]).success();
    plan_json(&c.read("a.lock"))["plan_sha256"]
        .as_str()
        .unwrap()
        .to_string()
}

#[test]
fn comments_whitespace_and_key_order_keep_the_hash() {
    let base = hash_of(PLAN);
    let commented = PLAN.replace(
        "alpha = 0.05",
        "# the usual level\nalpha   =   0.05   # two-sided family",
    );
    assert_eq!(hash_of(&commented), base);
    let reordered = PLAN.replace(
        "alternative = \"greater\"\nmethod = \"welch-t\"",
        "method = \"welch-t\"\nalternative = \"greater\"",
    );
    assert_eq!(hash_of(&reordered), base);
    // 5e-2 is the same number as 0.05; the canonical form normalises it.
    assert_eq!(hash_of(&PLAN.replace("alpha = 0.05", "alpha = 5e-2")), base);
    // Writing a default explicitly does not change the meaning either.
    assert_eq!(
        hash_of(&PLAN.replace("alpha = 0.05", "alpha = 0.05\nconfidence = 0.95")),
        base
    );
}

#[test]
fn every_change_of_meaning_changes_the_hash() {
    let base = hash_of(PLAN);
    for (from, to) in [
        ("alpha = 0.05", "alpha = 0.01"),
        ("alternative = \"greater\"", "alternative = \"two-sided\""),
        ("method = \"welch-t\"", "method = \"student-t\""),
        ("outcome = \"volume_ml\"", "outcome = \"loaf\""),
        (
            "levels = [\"long\", \"standard\"]",
            "levels = [\"standard\", \"long\"]",
        ),
    ] {
        assert_ne!(hash_of(&PLAN.replace(from, to)), base, "{from} → {to}");
    }
}

#[test]
fn locking_twice_refuses_and_keeps_the_first_lock() {
    let c = loaves();
    c.write("a.toml", PLAN);
    c.attest(&["lock", "a.toml"]).success();
    let first = c.read("a.lock");
    let out = c.attest(&["lock", "a.toml"]).failure().code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(err.starts_with("error: a.toml is already locked"), "{err}");
    assert!(err.contains("help: a lock is never overwritten"), "{err}");
    assert_eq!(c.read("a.lock"), first);
}

#[test]
fn running_without_a_lock_refuses() {
    let c = loaves();
    c.write("a.toml", PLAN);
    let out = c.attest(&["run", "a.toml"]).failure().code(1);
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(err.starts_with("error: a.toml has no lock"), "{err}");
    assert!(!c.exists("out/a/results.json"));
}

#[test]
fn unlocked_run_is_stamped_not_preregistered() {
    let c = loaves();
    c.write("a.toml", PLAN);
    c.attest(&["run", "--unlocked", "a.toml"]).success();
    let r: Value = serde_json::from_str(&c.read("out/a/results.json")).unwrap();
    assert_eq!(r["lock"], "unlocked");
}

#[test]
fn a_plan_edited_after_locking_runs_as_deviating_and_names_the_field() {
    let c = loaves();
    c.write("a.toml", PLAN);
    c.attest(&["lock", "a.toml"]).success();
    c.attest(&["run", "a.toml"]).success();
    let r: Value = serde_json::from_str(&c.read("out/a/results.json")).unwrap();
    assert_eq!(r["lock"], "as-locked");
    c.write("a.toml", &PLAN.replace("alpha = 0.05", "alpha = 0.1"));
    let out = c.attest(&["run", "a.toml"]).success();
    let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(
        err.contains("lock: plan differs from the lock in alpha (0.05 → 0.1)"),
        "{err}"
    );
    let r: Value = serde_json::from_str(&c.read("out/a/results.json")).unwrap();
    assert_eq!(r["lock"], "deviates");
    assert_eq!(r["changes"][0]["field"], "alpha");
    assert_eq!(r["changes"][0]["locked"], "0.05");
    assert_eq!(r["changes"][0]["current"], "0.1");
}

#[test]
fn bad_plans_point_at_file_line_and_column() {
    let cases = [
        (
            "alpha = 0.05",
            "alpha = 1.5",
            "error: a.toml:3:9: `alpha` must lie strictly between 0 and 1, found 1.5",
        ),
        (
            "method = \"welch-t\"",
            "method = \"welsh-t\"",
            "error: a.toml:16:10: `method` = \"welsh-t\" is not a known value",
        ),
        (
            "alternative =",
            "alternativ =",
            "error: a.toml:15:1: unknown key `alternativ`",
        ),
    ];
    for (from, to, expected) in cases {
        let c = loaves();
        c.write("a.toml", &PLAN.replace(from, to));
        let out = c.attest(&["check", "a.toml"]).failure().code(1);
        let err = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
        assert!(
            err.starts_with(expected),
            "expected {expected:?}, got {err:?}"
        );
        assert!(err.contains("\nhelp: "), "{err}");
    }
}

/// Student (1908), "The probable error of a mean", Biometrika 6(1): paired
/// t = 4.062 with 9 df, two-sided p = .00283 (widely reprinted; from
/// memory, and reproduced to the digits below by scipy 1.17.1
/// `ttest_rel`/`ttest_1samp` on tests/cases/sleep/sleep.csv).
#[test]
fn paired_and_one_sample_t_match_students_sleep_data() {
    let c = case("sleep");
    c.attest(&["run", "--unlocked", "sleep.toml"]).success();
    let r: Value = serde_json::from_str(&c.read("out/sleep/results.json")).unwrap();
    let h1 = &r["hypotheses"][0];
    common::close(
        h1["statistic"].as_f64().unwrap(),
        4.062_127_683_382_037,
        1e-10,
    );
    assert_eq!(h1["df"].as_f64().unwrap(), 9.0);
    common::close(h1["p"].as_f64().unwrap(), 0.002_832_890_197_384_273, 1e-9);
    let h2 = &r["hypotheses"][1];
    common::close(
        h2["statistic"].as_f64().unwrap(),
        3.679_915_894_795_188_4,
        1e-10,
    );
    common::close(h2["p"].as_f64().unwrap(), 0.005_076_132_649_772_409, 1e-9);
}

/// NIST StRD AtmWtAg: certified between-instrument F = 15.9467335677930;
/// Student t² must equal it (relative 1e-7: float64 keeps about 9 digits on
/// these data, see tests/reference/nist/PROVENANCE.md). Welch df
/// 43.25183428359630 is derived exactly in PROVENANCE.md (not certified).
#[test]
fn student_and_welch_t_match_nist_atmwtag() {
    let c = case("atmwtag");
    c.attest(&["run", "--unlocked", "silver.toml"]).success();
    let r: Value = serde_json::from_str(&c.read("out/silver/results.json")).unwrap();
    let t = r["hypotheses"][0]["statistic"].as_f64().unwrap();
    common::close(t * t, 15.946_733_567_793_0, 1e-7);
    assert_eq!(r["hypotheses"][0]["df"].as_f64().unwrap(), 46.0);
    let welch = &r["hypotheses"][1];
    common::close(
        welch["statistic"].as_f64().unwrap(),
        3.993_336_145_103_862,
        1e-7,
    );
    common::close(welch["df"].as_f64().unwrap(), 43.251_834_283_596_30, 1e-7);
}
