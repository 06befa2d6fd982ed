//! Exact p values of the rank tests with ties and zeros, checked against
//! brute-force enumeration in exact rationals (every split of the pooled
//! sample, every sign pattern) by tests/reference/gen_ties.py, stored with
//! its inputs in tests/reference/ties.json. The generator shares no code
//! or method with the dynamic programme under test. Also: log10 p in the
//! far tails against mpmath (tests/reference/gen_log_tails.py).

use attest::stats::mann_whitney::mann_whitney;
use attest::stats::rank_tests::{RankOptions, ZeroRule};
use attest::stats::wilcoxon::wilcoxon_signed_rank_with;
use attest::stats::{Alternative, RankPMethod};
use serde_json::Value;

mod common;
use common::fixture::{alt, vec};

const SOURCE: &str = "brute-force enumeration, tests/reference/gen_ties.py";

fn load() -> Value {
    serde_json::from_str(include_str!("reference/ties.json")).expect("ties.json parses")
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
        assert_eq!(t.interval.low, c["interval"][0].as_f64(), "HL low {name}");
        assert_eq!(t.interval.high, c["interval"][1].as_f64(), "HL high {name}");
    }
}

/// log10 p where p underflows: mpmath at 60 digits via
/// tests/reference/gen_log_tails.py (tests/reference/log_tails.json).
#[test]
fn log_tails_match_mpmath() {
    use attest::stats::dist::{log_normal_sf, log_t_sf};
    let doc: Value =
        serde_json::from_str(include_str!("reference/log_tails.json")).expect("log_tails.json");
    assert_eq!(doc["mpmath_version"], "1.3.0");
    let rel = |got: f64, want: f64| (got - want).abs() / want.abs();
    for c in doc["t"].as_array().unwrap() {
        let (t, df, want) = (
            c["t"].as_f64().unwrap(),
            c["df"].as_f64().unwrap(),
            c["ln_sf"].as_f64().unwrap(),
        );
        let got = log_t_sf(t, df);
        assert!(
            rel(got, want) < 1e-10,
            "t = {t}, df = {df}: {got} vs {want} (mpmath)"
        );
    }
    for c in doc["normal"].as_array().unwrap() {
        let (z, want) = (c["z"].as_f64().unwrap(), c["ln_sf"].as_f64().unwrap());
        let got = log_normal_sf(z);
        assert!(rel(got, want) < 1e-12, "z = {z}: {got} vs {want} (mpmath)");
    }
}

/// A p below double range is carried as log10 p, not as a bare 0.
#[test]
fn underflowing_p_keeps_its_log() {
    use attest::stats::ttest::one_sample_t;
    // 30 values 1 and 1 + 2⁻⁵²: t ≈ 1e17 at 29 df, p ≈ 1e-480.
    let x: Vec<f64> = (0..30)
        .map(|i| 1.0 + (i % 2) as f64 * f64::EPSILON)
        .collect();
    let t = one_sample_t(&x, 0.0, Alternative::Greater, 0.95).unwrap();
    assert_eq!(t.p, 0.0);
    assert!(t.log10_p.is_finite() && t.log10_p < -300.0, "{}", t.log10_p);
    // Large separated samples: the normal approximation's z is far out.
    let x: Vec<f64> = (0..3000).map(|i| i as f64).collect();
    let y: Vec<f64> = (0..3000).map(|i| 1e6 + i as f64).collect();
    let r = mann_whitney(&x, &y, Alternative::Less, 0.95).unwrap();
    assert_eq!(r.p_detail, RankPMethod::NormalApproximation);
    assert_eq!(r.p, 0.0);
    assert!(r.log10_p < -300.0 && r.log10_p.is_finite(), "{}", r.log10_p);
}
