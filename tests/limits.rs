//! Limits: inputs far larger than usual in one dimension must either work
//! in bounded memory or be refused with a clear message. The cheap cases
//! run here through the real binary; the 2 GB file and the timing of each
//! case are in the on-demand `tests/bench/limits.py` (DEVELOPERS.md has
//! its record). The row cap is unit-tested in `src/data/read.rs`.

mod common;

use attest::plan::validate::{parse, MAX_HYPOTHESES};
use common::Case;
use std::fmt::Write as _;
use std::path::Path;

const PLAN: &str = r#"attest = 1
title = "Limits"
alpha = 0.05

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
method = "welch-t"
"#;

/// Rows `site,note,score` for sites a and b (ten each, invented scores).
fn base_rows(out: &mut String) {
    for i in 0..20 {
        let site = if i % 2 == 0 { "a" } else { "b" };
        writeln!(out, "{site},ok,{}.{}", 40 + (i * 7) % 13, i % 10).unwrap();
    }
}

/// Runs the plan unlocked on `data` in a fresh case; returns the case and
/// its results.json.
fn run_on(data: &str) -> (Case, serde_json::Value) {
    let case = Case::new();
    case.write("p.toml", PLAN);
    case.write("d.csv", data);
    case.attest(&["run", "--unlocked", "--quiet", "p.toml", "--out", "out"])
        .success();
    let results = serde_json::from_str(&case.read("out/results.json")).unwrap();
    (case, results)
}

#[test]
fn a_one_megabyte_cell_is_read_and_kept_out_of_the_report() {
    // One cell of 1 MiB in a column the plan does not use, and one as a
    // group label the plan does not select.
    let big = "x".repeat(1 << 20);
    let mut data = String::from("site,note,score\n");
    base_rows(&mut data);
    writeln!(data, "a,{big},41.5").unwrap();
    writeln!(data, "{big},ok,39.0").unwrap();
    let (case, r) = run_on(&data);
    let rows = &r["hypotheses"][0]["rows"];
    assert_eq!(rows["other_levels"], 1);
    assert_eq!(rows["analysed"], serde_json::json!([11, 10]));
    let html = std::fs::metadata(case.path().join("out/report.html")).unwrap();
    assert!(html.len() < 1 << 20, "report.html is {} bytes", html.len());
}

#[test]
fn a_grouping_column_with_a_hundred_thousand_levels_is_counted() {
    // 100,000 distinct site labels besides a and b: they are counted as
    // rows of other levels, not listed.
    let mut data = String::from("site,note,score\n");
    base_rows(&mut data);
    for i in 0..100_000 {
        writeln!(data, "site-{i:06},ok,{}", 30 + i % 40).unwrap();
    }
    let (case, r) = run_on(&data);
    assert_eq!(r["hypotheses"][0]["rows"]["other_levels"], 100_000);
    assert!(!case.read("out/report.md").contains("site-000017"));
}

#[test]
fn the_hypothesis_cap_is_exact() {
    let block = |i: usize| {
        format!(
            "[[hypothesis]]\nid = \"Q{i}\"\nclaim = \"c\"\ndesign = \"independent\"\noutcome = \"score\"\ngroup = \"site\"\nlevels = [\"a\", \"b\"]\nmethod = \"welch-t\"\n"
        )
    };
    let head = "attest = 1\ntitle = \"Cap\"\n[data]\npath = \"d.csv\"\n";
    let plan = |n: usize| head.to_string() + &(1..=n).map(block).collect::<String>();
    let at_cap = parse(Path::new("p.toml"), &plan(MAX_HYPOTHESES)).unwrap();
    assert_eq!(at_cap.plan.hypotheses.len(), MAX_HYPOTHESES);
    let over = parse(Path::new("p.toml"), &plan(MAX_HYPOTHESES + 1)).unwrap_err();
    assert!(over.what.contains("one file holds at most 200"), "{over:?}");
    // The message points at the first hypothesis over the cap.
    let line = over.location.unwrap().line.unwrap();
    assert_eq!(line, 5 + 8 * MAX_HYPOTHESES);
}
