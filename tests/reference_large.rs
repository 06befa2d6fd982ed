//! Checks means, standard deviations and t-tests on large samples against
//! values computed outside the project: scipy 1.17.1 and mpmath 1.3.0 (50
//! digits) via tests/reference/gen_large.py (fixture
//! tests/reference/large.json, which records the data as tenths).
//!
//! The samples hold 4,000 to 6,000 values recorded to one decimal around
//! 50, so thousands of them share one binary exponent: the shape on which
//! an accumulator that drops carries goes wrong by whole units, where the
//! small reference samples of the other checks never reach.

use attest::stats::describe::describe;
use attest::stats::ttest::{paired_t, student_t, welch_t, TTest};
use attest::stats::Alternative;
use serde_json::Value;

const SRC: &str = "scipy 1.17.1 and mpmath 1.3.0 via tests/reference/gen_large.py";

fn fixture() -> Value {
    serde_json::from_str(include_str!("reference/large.json")).expect("fixture parses")
}

/// The values the generator used: the double nearest each k / 10.
fn sample(f: &Value, key: &str) -> Vec<f64> {
    f[key]
        .as_array()
        .unwrap()
        .iter()
        .map(|k| k.as_i64().unwrap() as f64 / 10.0)
        .collect()
}

fn check(what: &str, got: f64, want: f64, rel: f64) {
    assert!(
        (got - want).abs() <= rel * want.abs(),
        "{what}: got {got:e}, want {want:e} ({SRC}), rel err {:e}",
        ((got - want) / want).abs()
    );
}

fn compare(what: &str, r: &TTest, want: &Value) {
    let w = |k: &str| want[k].as_f64().unwrap();
    check(&format!("{what} t"), r.t, w("t"), 1e-10);
    check(&format!("{what} df"), r.df, w("df"), 1e-10);
    check(&format!("{what} p"), r.p, w("p"), 1e-9);
    // Interval ends relative to the interval's scale (an end may lie near 0).
    let scale = r.estimate.abs() + (w("ci_high") - w("ci_low")).abs();
    for (got, key) in [(r.interval.low, "ci_low"), (r.interval.high, "ci_high")] {
        let g = got.expect("a two-sided interval has both ends");
        assert!(
            (g - w(key)).abs() <= 1e-10 * scale,
            "{what} {key}: got {g:e}, want {:e} ({SRC})",
            w(key)
        );
    }
}

#[test]
fn large_sample_means_and_sds_match_exact_arithmetic() {
    let f = fixture();
    for key in ["x", "y", "before", "after"] {
        let d = describe(&sample(&f, &format!("{key}_tenths"))).unwrap();
        let want = &f["moments"][key];
        // mpmath's 50-digit mean rounded to a double; attest's mean is
        // within half an ulp of the exact mean: 1 ulp apart at most.
        check(
            &format!("{key} mean"),
            d.mean,
            want["mean"].as_f64().unwrap(),
            2.3e-16,
        );
        check(
            &format!("{key} sd"),
            d.sd.unwrap(),
            want["sd"].as_f64().unwrap(),
            1e-13,
        );
    }
}

#[test]
fn large_sample_t_tests_match_scipy() {
    let f = fixture();
    let (x, y) = (sample(&f, "x_tenths"), sample(&f, "y_tenths"));
    let two = Alternative::TwoSided;
    compare("Welch", &welch_t(&x, &y, two, 0.95).unwrap(), &f["welch"]);
    compare(
        "Student",
        &student_t(&x, &y, two, 0.95).unwrap(),
        &f["student"],
    );
    let (b, a) = (sample(&f, "before_tenths"), sample(&f, "after_tenths"));
    compare(
        "paired",
        &paired_t(&b, &a, two, 0.95).unwrap(),
        &f["paired"],
    );
}
