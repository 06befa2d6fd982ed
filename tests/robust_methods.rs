//! Brunner–Munzel, the trimmed-mean t-test and the equivalence tests of
//! the rank and robust methods, run through the real binary from a plan,
//! against the outside references of tests/reference/gen_robust.py
//! (robust.json): scipy 1.17.1 `brunnermunzel`, `ttest_ind(trim=…)`,
//! `mannwhitneyu` and `wilcoxon` on shifted data, statsmodels 0.15.0
//! `rank_compare_2indep` (interval for θ and its TOST), and the
//! studentised permutation p by enumerating every split.

mod common;

use common::Case;
use serde_json::Value;
use std::fmt::Write as _;

fn robust() -> Value {
    let path = common::root().join("tests/reference/robust.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// The reference case `name` (with `alternative`, when the list has one).
fn case(list: &str, name: &str, alternative: Option<&str>) -> Value {
    robust()[list]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == name && alternative.is_none_or(|a| c["alternative"] == a))
        .unwrap_or_else(|| panic!("no case {name} in {list}"))
        .clone()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn close(got: &Value, want: &Value, rel: f64, what: &str) {
    let (g, w) = (got.as_f64().unwrap(), want.as_f64().unwrap());
    assert!(
        (g - w).abs() <= rel * w.abs().max(1e-300),
        "{what}: got {g:e}, want {w:e} (gen_robust.py)"
    );
}

/// Two groups `a` and `b` as rows of `arm,score`.
fn groups(x: &[f64], y: &[f64]) -> String {
    let mut s = String::from("arm,score\n");
    for v in x {
        writeln!(s, "a,{v}").unwrap();
    }
    for v in y {
        writeln!(s, "b,{v}").unwrap();
    }
    s
}

/// Paired rows whose differences `first − second` are `d` exactly.
fn pairs(d: &[f64]) -> String {
    let mut s = String::from("after,before\n");
    for v in d {
        writeln!(s, "{v},0").unwrap();
    }
    s
}

/// One value per row.
fn column(x: &[f64]) -> String {
    let mut s = String::from("score\n");
    for v in x {
        writeln!(s, "{v}").unwrap();
    }
    s
}

/// A plan with one hypothesis whose design lines are `design`.
fn plan(design: &str) -> String {
    format!(
        r#"attest = 1
title = "Rank and robust methods"
seed = 11

[data]
path = "d.csv"

[[hypothesis]]
id = "H1"
claim = "The first set tends to be larger."
{design}
"#
    )
}

const INDEPENDENT: &str =
    "design = \"independent\"\noutcome = \"score\"\ngroup = \"arm\"\nlevels = [\"a\", \"b\"]";
const PAIRED: &str = "design = \"paired\"\nfirst = \"after\"\nsecond = \"before\"";

/// Runs `plan` on `data`; returns the one hypothesis of results.json and
/// the report.
fn run(plan: &str, data: &str) -> (Value, String) {
    let c = Case::new();
    c.write("p.toml", plan);
    c.write("d.csv", data);
    c.attest(&["run", "--unlocked", "--quiet", "p.toml", "--out", "out"])
        .success();
    let r: Value = serde_json::from_str(&c.read("out/results.json")).unwrap();
    (r["hypotheses"][0].clone(), c.read("out/report.md"))
}

#[test]
fn brunner_munzel_in_large_groups_uses_the_t_approximation() {
    for alt in ["two-sided", "greater", "less"] {
        let c = case("brunner_munzel", "large_35x42", Some(alt));
        let (h, report) = run(
            &plan(&format!(
                "{INDEPENDENT}\nalternative = \"{alt}\"\nmethod = \"brunner-munzel\""
            )),
            &groups(&floats(&c["x"]), &floats(&c["y"])),
        );
        let t = &h["test"];
        assert_eq!(t["method"], "brunner-munzel");
        assert_eq!(t["p_detail"], "t-approximation");
        close(&t["statistic"], &c["t"], 1e-10, "t");
        close(&t["df"], &c["df"], 1e-10, "df");
        close(&t["p"], &c["p"], 1e-9, "p");
        close(&t["estimate"]["value"], &c["estimate"], 1e-12, "theta");
        assert_eq!(t["estimate"]["name"], "probability of superiority");
        // An open side of a one-sided interval is the edge of [0, 1].
        let edge = |i: usize, open: f64| {
            if c["interval"][i].is_null() {
                assert_eq!(t["estimate"][["ci_low", "ci_high"][i]], open, "{alt}");
            } else {
                close(
                    &t["estimate"][["ci_low", "ci_high"][i]],
                    &c["interval"][i],
                    1e-9,
                    "ci",
                );
            }
        };
        edge(0, 0.0);
        edge(1, 1.0);
        assert!(report.contains("Satterthwaite"), "{alt}");
    }
}

#[test]
fn brunner_munzel_in_small_groups_counts_every_split() {
    for alt in ["two-sided", "greater", "less"] {
        let c = case("brunner_munzel", "small_ties", Some(alt));
        let (h, report) = run(
            &plan(&format!(
                "{INDEPENDENT}\nalternative = \"{alt}\"\nmethod = \"brunner-munzel\""
            )),
            &groups(&floats(&c["x"]), &floats(&c["y"])),
        );
        let t = &h["test"];
        assert_eq!(t["p_detail"], "studentised-permutation", "{alt}");
        assert_eq!(t["permutations"], c["splits"], "{alt}");
        close(&t["p"], &c["permutation_p"], 1e-12, "permutation p");
        assert!(report.contains("Neubert & Brunner, 2007"));
    }
}

#[test]
fn checked_falls_back_to_brunner_munzel_only_when_the_plan_says_so() {
    let c = case("brunner_munzel", "skewed_40x45", Some("two-sided"));
    let data = groups(&floats(&c["x"]), &floats(&c["y"]));
    let (h, report) = run(
        &plan(&format!(
            "{INDEPENDENT}\nmethod = \"checked\"\nrank_fallback = \"brunner-munzel\""
        )),
        &data,
    );
    assert_eq!(h["checks"]["branch"], "not-normal");
    assert_eq!(h["method"], "brunner-munzel");
    close(&h["p"], &c["p"], 1e-9, "p");
    assert!(report.contains("Brunner–Munzel test"));
    // Without the key the rule keeps Mann–Whitney, as it always has.
    let (h, _) = run(
        &plan(&format!("{INDEPENDENT}\nmethod = \"checked\"")),
        &data,
    );
    assert_eq!(h["method"], "mann-whitney");
    // Brunner–Munzel is then a robustness check, with the same p.
    let bm = h["robustness"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["method"] == "brunner-munzel")
        .expect("Brunner–Munzel among the robustness checks")
        .clone();
    close(&bm["p"], &c["p"], 1e-9, "robustness p");
}

#[test]
fn yuen_matches_scipy_through_the_binary() {
    for alt in ["two-sided", "greater", "less"] {
        let c = case("yuen", "outlier", Some(alt));
        let (h, report) = run(
            &plan(&format!(
                "{INDEPENDENT}\nalternative = \"{alt}\"\nmethod = \"trimmed-t\""
            )),
            &groups(&floats(&c["x"]), &floats(&c["y"])),
        );
        let t = &h["test"];
        assert_eq!(t["trim"], 0.2);
        close(&t["statistic"], &c["t"], 1e-10, "t");
        close(&t["df"], &c["df"], 1e-10, "df");
        close(&t["p"], &c["p"], 1e-9, "p");
        close(&t["estimate"]["value"], &c["estimate"], 1e-12, "estimate");
        assert_eq!(t["estimate"]["name"], "trimmed mean difference");
        close(&t["effects"][0]["value"], &c["effect"], 1e-10, "d_R");
        assert_eq!(t["effects"][0]["name"], "robust-d");
        assert!(report.contains("Yuen's 1974 test"));
    }
}

#[test]
fn paired_and_one_sample_trimmed_t_match_their_reference() {
    let c = case("trimmed_one_sample", "paired_diffs_g0.1", Some("greater"));
    let (h, report) = run(
        &plan(&format!(
            "{PAIRED}\nalternative = \"greater\"\nmethod = \"trimmed-t\"\ntrim = 0.1"
        )),
        &pairs(&floats(&c["x"])),
    );
    let t = &h["test"];
    assert_eq!(t["estimate"]["name"], "trimmed mean of the differences");
    close(&t["statistic"], &c["t"], 1e-10, "t");
    close(&t["df"], &c["df"], 1e-12, "df");
    close(&t["p"], &c["p"], 1e-9, "p");
    close(&t["effects"][0]["value"], &c["effect"], 1e-10, "d_R");
    assert!(report.contains("not the difference of the two trimmed means"));

    let c = case("trimmed_one_sample", "reference_value", Some("two-sided"));
    let (h, _) = run(
        &plan(
            "design = \"one-sample\"\noutcome = \"score\"\nreference = 10\nmethod = \"trimmed-t\"",
        ),
        &column(&floats(&c["x"])),
    );
    let t = &h["test"];
    close(&t["estimate"]["value"], &c["estimate"], 1e-12, "estimate");
    close(&t["p"], &c["p"], 1e-9, "p");
}

#[test]
fn rank_equivalence_matches_its_references() {
    // The Hodges–Lehmann shift (scipy mannwhitneyu on shifted data).
    let c = case("tost_hodges_lehmann", "hl_0", None);
    let bounds = format!("[{}, {}]", c["low"], c["high"]);
    let (h, report) = run(
        &plan(&format!(
            "{INDEPENDENT}\nmethod = \"mann-whitney\"\nequivalence = {bounds}"
        )),
        &groups(&floats(&c["x"]), &floats(&c["y"])),
    );
    let e = &h["equivalence"];
    assert_eq!(e["on"], "Hodges–Lehmann shift");
    assert!(e["t_lower"].is_null() && e["df"].is_null());
    for k in ["p_lower", "p_upper", "p"] {
        close(&e[k], &c[k], 1e-10, k);
    }
    close(&h["p"], &c["p"], 1e-10, "hypothesis p");
    assert!(report.contains("two one-sided Mann–Whitney tests on the shifted values"));

    // The pseudo-median of paired differences (scipy wilcoxon, shifted).
    let c = case("tost_signed_rank", "sr_0", None);
    let (h, _) = run(
        &plan(&format!(
            "{PAIRED}\nmethod = \"wilcoxon-signed-rank\"\nequivalence = [{}, {}]",
            c["low"], c["high"]
        )),
        &pairs(&floats(&c["d"])),
    );
    for k in ["p_lower", "p_upper", "p"] {
        close(&h["equivalence"][k], &c[k], 1e-10, k);
    }

    // The probability of superiority (statsmodels tost_prob_superior).
    let c = case("tost_prob_superiority", "ps_0", None);
    let (h, report) = run(
        &plan(&format!(
            "{INDEPENDENT}\nmethod = \"brunner-munzel\"\nequivalence = [{}, {}]",
            c["low"], c["high"]
        )),
        &groups(&floats(&c["x"]), &floats(&c["y"])),
    );
    let e = &h["equivalence"];
    assert_eq!(e["on"], "probability of superiority");
    for k in ["p_lower", "p_upper", "p"] {
        close(&e[k], &c[k], 1e-9, k);
    }
    assert!(report.contains("Equivalence on the probability of superiority"));
}

#[test]
fn trimmed_equivalence_matches_scipy() {
    let c = case("tost_trimmed_two", "yuen_0", None);
    let (h, _) = run(
        &plan(&format!(
            "{INDEPENDENT}\nmethod = \"trimmed-t\"\ntrim = {}\nequivalence = [{}, {}]",
            c["trim"], c["low"], c["high"]
        )),
        &groups(&floats(&c["x"]), &floats(&c["y"])),
    );
    let e = &h["equivalence"];
    assert_eq!(e["on"], "trimmed mean difference");
    for k in ["t_lower", "t_upper", "df", "p_lower", "p_upper", "p"] {
        close(&e[k], &c[k], 1e-9, k);
    }
    // Support is decided on the TOST p, at the plan's alpha.
    let supported = c["p"].as_f64().unwrap() < 0.05;
    assert_eq!(h["decision"] == "reject", supported);
}

#[test]
fn groups_that_do_not_overlap_are_worded_not_broken() {
    let x: Vec<f64> = (0..6).map(|i| 20.0 + i as f64).collect();
    let y: Vec<f64> = (0..7).map(|i| i as f64).collect();
    let (h, report) = run(
        &plan(&format!("{INDEPENDENT}\nmethod = \"brunner-munzel\"")),
        &groups(&x, &y),
    );
    let t = &h["test"];
    assert!(t["statistic"].is_null() && t["df"].is_null());
    assert_eq!(t["estimate"]["value"], 1.0);
    assert_eq!(t["p_detail"], "studentised-permutation");
    // Of the C(13, 6) = 1716 splits, two are as extreme two-sided: the
    // observed one (six highest values first, t = +∞) and the six lowest
    // first (t = −∞); every other split overlaps.
    close(&t["p"], &Value::from(2.0 / 1716.0), 1e-12, "p");
    assert!(report.contains("the groups do not overlap"));
    assert!(!report.contains("NaN") && !report.contains("∞"));
    assert!(
        report.contains("95% CI [.00, 1.00]"),
        "the interval is all of [0, 1]"
    );
}
