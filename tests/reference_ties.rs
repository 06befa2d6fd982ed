//! Exact p values of the rank tests with ties and zeros, checked against
//! brute-force enumeration in exact rationals (every split of the pooled
//! sample, every sign pattern) by tests/reference/gen_ties.py, stored with
//! its inputs in tests/reference/ties.json. The generator shares no code
//! or method with the dynamic programme under test.

use attest::stats::mann_whitney::mann_whitney;
use attest::stats::rank_tests::{RankOptions, ZeroRule};
use attest::stats::wilcoxon::wilcoxon_signed_rank_with;
use attest::stats::{Alternative, RankPMethod};
use serde_json::Value;

const SOURCE: &str = "brute-force enumeration, tests/reference/gen_ties.py";

fn load() -> Value {
    serde_json::from_str(include_str!("reference/ties.json")).expect("ties.json parses")
}

fn vec(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

fn alt(v: &Value) -> Alternative {
    match v.as_str().expect("alternative") {
        "two-sided" => Alternative::TwoSided,
        "greater" => Alternative::Greater,
        "less" => Alternative::Less,
        other => panic!("unknown alternative {other}"),
    }
}

fn method(v: &Value) -> RankPMethod {
    match v.as_str().expect("method") {
        "exact" => RankPMethod::Exact,
        "exact-with-ties" => RankPMethod::ExactWithTies,
        other => panic!("unknown method {other}"),
    }
}

/// Agreement to 1e-12, relative to p (absolute below 1e-300).
fn close(got: f64, want: f64, what: &str) {
    assert!(
        (got - want).abs() <= 1e-12 * want.abs().max(1e-300),
        "{what}: got {got:e}, want {want:e} ({SOURCE})"
    );
}

#[test]
fn mann_whitney_matches_enumeration() {
    let doc = load();
    let level = doc["level"].as_f64().unwrap();
    let cases = doc["mann_whitney"].as_array().unwrap();
    assert!(cases.len() >= 50, "generator output looks truncated");
    for c in cases {
        let name = format!("{} {}", c["name"], c["alternative"]);
        let t = mann_whitney(&vec(&c["x"]), &vec(&c["y"]), alt(&c["alternative"]), level)
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(t.p_detail, method(&c["method"]), "{name}");
        assert_eq!(t.statistic, c["u1"].as_f64().unwrap(), "U1 {name}");
        close(t.p, c["p"].as_f64().unwrap(), &format!("p {name}"));
        close(
            t.log10_p,
            c["p"].as_f64().unwrap().log10(),
            &format!("log10 p {name}"),
        );
        assert_eq!(t.interval.low, c["interval"][0].as_f64(), "HL low {name}");
        assert_eq!(t.interval.high, c["interval"][1].as_f64(), "HL high {name}");
    }
}

#[test]
fn wilcoxon_matches_enumeration() {
    let doc = load();
    let level = doc["level"].as_f64().unwrap();
    let cases = doc["wilcoxon"].as_array().unwrap();
    assert!(cases.len() >= 60, "generator output looks truncated");
    for c in cases {
        let zeros = match c["zeros"].as_str().unwrap() {
            "drop" => ZeroRule::Drop,
            "keep-in-ranking" => ZeroRule::KeepInRanking,
            other => panic!("unknown zero rule {other}"),
        };
        let name = format!("{} {} {:?}", c["name"], c["alternative"], zeros);
        let options = RankOptions {
            zeros,
            ..RankOptions::default()
        };
        let t = wilcoxon_signed_rank_with(&vec(&c["d"]), alt(&c["alternative"]), level, &options)
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(t.p_detail, method(&c["method"]), "{name}");
        assert_eq!(t.statistic, c["w_plus"].as_f64().unwrap(), "W+ {name}");
        close(t.p, c["p"].as_f64().unwrap(), &format!("p {name}"));
    }
}
