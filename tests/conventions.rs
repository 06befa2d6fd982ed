//! The rank-test conventions a plan states change the run, and the run's
//! numbers match outside references: the brute-force enumeration of
//! tests/reference/gen_ties.py (ties.json), scipy 1.17 through
//! tests/reference/gen_ranks.py (ranks.json) and
//! tests/reference/gen_conventions.py (conventions.json), and mpmath for
//! the log of a p that underflows.

mod common;

use common::{close, Case};
use serde_json::Value;
use std::fmt::Write as _;

fn reference(name: &str) -> Value {
    let path = common::root().join("tests/reference").join(name);
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

/// A one-sample plan on column `value` of d.csv against `reference`,
/// with `extra` lines added to the hypothesis.
fn one_sample_plan(reference: f64, method: &str, extra: &str) -> String {
    format!(
        r#"attest = 1
title = "Conventions"

[data]
path = "d.csv"

[[hypothesis]]
id = "H1"
claim = "The readings differ from the reference value."
design = "one-sample"
outcome = "value"
reference = {reference}
alternative = "two-sided"
method = "{method}"
{extra}
"#
    )
}

/// Runs `plan` unlocked on `data`; returns the case, its results.json
/// and its report.md.
fn run(plan: &str, data: &str) -> (Case, Value, String) {
    let case = Case::new();
    case.write("p.toml", plan);
    case.write("d.csv", data);
    case.attest(&["run", "--unlocked", "--quiet", "p.toml", "--out", "out"])
        .success();
    let results = serde_json::from_str(&case.read("out/results.json")).unwrap();
    let report = case.read("out/report.md");
    (case, results, report)
}

fn column(values: &[f64], shift: f64) -> String {
    let mut s = String::from("value\n");
    for v in values {
        writeln!(s, "{}", v + shift).unwrap();
    }
    s
}

fn ties_case(name: &str, zeros: &str) -> Value {
    reference("ties.json")["wilcoxon"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == name && c["zeros"] == zeros && c["alternative"] == "two-sided")
        .unwrap()
        .clone()
}

#[test]
fn the_zero_rule_changes_the_signed_rank_p_as_the_enumeration_says() {
    let drop = ties_case("small_scale_10", "drop");
    let keep = ties_case("small_scale_10", "keep-in-ranking");
    let data = column(&floats(&drop["d"]), 0.0);
    let wilcoxon = "wilcoxon-signed-rank";
    let (_c, by_default, report_default) = run(&one_sample_plan(0.0, wilcoxon, ""), &data);
    let (_c, pratt, report_pratt) = run(
        &one_sample_plan(0.0, wilcoxon, "zero_differences = \"keep-in-ranking\""),
        &data,
    );
    let (t0, t1) = (
        &by_default["hypotheses"][0]["test"],
        &pratt["hypotheses"][0]["test"],
    );
    close(
        t0["p"].as_f64().unwrap(),
        drop["p"].as_f64().unwrap(),
        1e-12,
    );
    close(
        t1["p"].as_f64().unwrap(),
        keep["p"].as_f64().unwrap(),
        1e-12,
    );
    assert_ne!(t0["p"], t1["p"]);
    close(
        t0["statistic"].as_f64().unwrap(),
        drop["w_plus"].as_f64().unwrap(),
        1e-12,
    );
    close(
        t1["statistic"].as_f64().unwrap(),
        keep["w_plus"].as_f64().unwrap(),
        1e-12,
    );
    assert_eq!(t0["p_detail"], "exact-with-ties");
    assert_eq!(t1["p_detail"], "exact-with-ties");
    assert_eq!(t0["zero_rule"], "drop");
    assert_eq!(t1["zero_rule"], "keep-in-ranking");
    assert_eq!(
        (t0["zeros_dropped"].as_u64(), t0["zeros_ranked"].as_u64()),
        (Some(1), Some(0))
    );
    assert_eq!(
        (t1["zeros_dropped"].as_u64(), t1["zeros_ranked"].as_u64()),
        (Some(0), Some(1))
    );
    assert!(
        report_default.contains("Wilcoxon's rule); 1 dropped."),
        "{report_default}"
    );
    assert!(
        report_pratt.contains("(Pratt's rule, as the plan states); 1 ranked."),
        "{report_pratt}"
    );
    assert!(report_pratt
        .contains("is exact, from the permutation distribution of the statistic given the ties."));
}

#[test]
fn switching_off_the_continuity_correction_matches_scipy() {
    let c = &reference("conventions.json")["continuity"];
    let data = column(&floats(&c["d"]), 0.0);
    let wilcoxon = "wilcoxon-signed-rank";
    let (_c, with, report_with) = run(&one_sample_plan(0.0, wilcoxon, ""), &data);
    let (_c, without, report_without) = run(
        &one_sample_plan(0.0, wilcoxon, "continuity_correction = false"),
        &data,
    );
    let (t0, t1) = (
        &with["hypotheses"][0]["test"],
        &without["hypotheses"][0]["test"],
    );
    close(
        t0["p"].as_f64().unwrap(),
        c["p"]["with"].as_f64().unwrap(),
        1e-9,
    );
    close(
        t1["p"].as_f64().unwrap(),
        c["p"]["without"].as_f64().unwrap(),
        1e-9,
    );
    assert_ne!(t0["p"], t1["p"]);
    assert_eq!(t0["p_detail"], "normal-approximation");
    assert_eq!(t0["continuity_correction"], true);
    assert_eq!(t1["continuity_correction"], false);
    assert!(report_with.contains("corrected for ties and continuity."));
    assert!(report_without.contains("without a continuity correction (as the plan states)."));
    let lockable = Case::new();
    lockable.write(
        "p.toml",
        &one_sample_plan(0.0, wilcoxon, "continuity_correction = false"),
    );
    lockable
        .attest(&["lock", "p.toml", "--out", "doc"])
        .success();
    let plan_doc = lockable.read("doc/plan.md");
    assert!(
        plan_doc.contains("it carries no continuity correction."),
        "{plan_doc}"
    );
}

#[test]
fn a_p_that_underflows_is_given_by_its_log() {
    let u = &reference("conventions.json")["underflow"];
    let mut data = String::from("site,score\n");
    for (site, key) in [("a", "a"), ("b", "b")] {
        for v in floats(&u[key]) {
            writeln!(data, "{site},{v}").unwrap();
        }
    }
    let plan = r#"attest = 1
title = "Underflow"

[data]
path = "d.csv"

[[hypothesis]]
id = "H1"
claim = "Site a scores differently from site b."
design = "independent"
outcome = "score"
group = "site"
levels = ["a", "b"]
alternative = "two-sided"
method = "mann-whitney"
"#;
    let (_c, results, report) = run(plan, &data);
    let t = &results["hypotheses"][0]["test"];
    assert_eq!(t["p"].as_f64(), Some(0.0));
    assert_eq!(t["p_detail"], "normal-approximation");
    close(t["z"].as_f64().unwrap(), u["z"].as_f64().unwrap(), 1e-9);
    close(
        t["log10_p"].as_f64().unwrap(),
        u["log10_p"].as_f64().unwrap(),
        1e-9,
    );
    let want = format!(
        "log₁₀ *p* = \u{2212}{:.1}.",
        -u["log10_p"].as_f64().unwrap()
    );
    assert!(report.contains(&want), "{want} not in {report}");
    assert!(report.contains("smaller than the smallest number the computation can hold"));
}

#[test]
fn the_one_sample_signed_rank_estimate_is_the_pseudo_median_of_the_difference() {
    // ranks.json (scipy and brute-force Walsh averages) gives the
    // pseudo-median of d and its exact interval; the sample is d + 10
    // against the reference 10, so every estimate must be that of d.
    let case = reference("ranks.json")["wilcoxon"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "normal_9" && c["alternative"] == "two-sided")
        .unwrap()
        .clone();
    let data = column(&floats(&case["d"]), 10.0);
    let hl = case["hl"].as_f64().unwrap();
    let iv = floats(&case["interval"]);
    let check = |e: &Value| {
        assert_eq!(e["name"], "Hodges–Lehmann estimate");
        close(e["value"].as_f64().unwrap(), hl, 1e-9);
        close(e["ci_low"].as_f64().unwrap(), iv[0], 1e-9);
        close(e["ci_high"].as_f64().unwrap(), iv[1], 1e-9);
    };
    // As the preregistered test.
    let (_c, r, _) = run(&one_sample_plan(10.0, "wilcoxon-signed-rank", ""), &data);
    check(&r["hypotheses"][0]["estimate"]);
    close(
        r["hypotheses"][0]["p"].as_f64().unwrap(),
        case["p"].as_f64().unwrap(),
        1e-12,
    );
    // As a robustness row beside the one-sample t, on the same scale as
    // the t's mean difference.
    let (_c, r, _) = run(
        &one_sample_plan(10.0, "one-sample-t", "robustness = true"),
        &data,
    );
    let h = &r["hypotheses"][0];
    let row = h["robustness"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["method"] == "wilcoxon-signed-rank")
        .expect("a signed-rank robustness row");
    check(&row["estimate"]);
    let mean: f64 = floats(&case["d"]).iter().sum::<f64>() / 9.0;
    close(h["estimate"]["value"].as_f64().unwrap(), mean, 1e-9);
}
