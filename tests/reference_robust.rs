//! Brunner–Munzel and trimmed-mean t tests checked against scipy 1.17.1
//! and statsmodels 0.15.0 via tests/reference/gen_robust.py (stored with
//! inputs in tests/reference/robust.json): scipy.stats.brunnermunzel,
//! statsmodels rank_compare_2indep (interval for θ), permutation p by
//! enumerating every split with scipy's statistic, scipy.stats.ttest_ind
//! with trim, scipy's trim_mean/winsorize for the one-sample form,
//! statsmodels tost_prob_superior, scipy's exact mannwhitneyu and
//! wilcoxon on shifted data for the rank equivalence tests, and
//! scipy.stats.ttest_ind(trim=…) on shifted data (two groups) or the
//! trimmed pieces shifted by each bound (one sample) for equivalence on
//! trimmed means.

use attest::stats::brunner_munzel::{brunner_munzel, brunner_munzel_permutation, BmInference};
use attest::stats::equivalence_rank::{
    tost_hodges_lehmann, tost_prob_superiority, tost_signed_rank,
};
use attest::stats::rank_tests::RankOptions;
use attest::stats::yuen::{normal_winsorised_sd, tost_trimmed, trimmed_t_one_sample, yuen};
use attest::stats::Alternative;
use serde_json::Value;

mod common;
use common::fixture::{alt, f, vec};

const SOURCE: &str = "scipy 1.17.1 / statsmodels 0.15.0 via tests/reference/gen_robust.py";

fn load() -> Value {
    serde_json::from_str(include_str!("reference/robust.json")).expect("robust.json parses")
}

fn close(got: f64, want: f64, rel: f64, what: &str) {
    let tol = rel * want.abs().max(1e-300);
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got:e}, want {want:e} (rel tol {rel:e}; {SOURCE})"
    );
}

/// The two one-sided p values of a TOST and their maximum against the
/// reference case's `p_lower`, `p_upper` and `p`.
fn tost_ps([lower, upper, p]: [f64; 3], c: &Value, rel: f64, name: &str) {
    close(lower, f(&c["p_lower"]), rel, &format!("p lower {name}"));
    close(upper, f(&c["p_upper"]), rel, &format!("p upper {name}"));
    close(p, f(&c["p"]), rel, &format!("p {name}"));
}

fn close_opt(got: Option<f64>, want: &Value, rel: f64, what: &str) {
    match (got, want.as_f64()) {
        (Some(g), Some(w)) => close(g, w, rel, what),
        (None, None) => {}
        (g, w) => panic!("{what}: got {g:?}, want {w:?} ({SOURCE})"),
    }
}

#[test]
fn generator_recorded_the_versions() {
    let doc = load();
    assert_eq!(doc["scipy_version"], "1.17.1");
    assert_eq!(doc["statsmodels_version"], "0.15.0");
}

#[test]
fn brunner_munzel_matches_scipy_and_statsmodels() {
    let doc = load();
    let level = f(&doc["level"]);
    let cases = doc["brunner_munzel"].as_array().unwrap();
    assert!(cases.len() >= 20);
    let mut permutation_checked = 0;
    for c in cases {
        let name = format!("{} {}", c["name"], c["alternative"]);
        let (x, y, a) = (vec(&c["x"]), vec(&c["y"]), alt(&c["alternative"]));
        let r = brunner_munzel(&x, &y, a, level).unwrap_or_else(|e| panic!("{name}: {e}"));
        close(
            r.estimate,
            f(&c["estimate"]),
            1e-12,
            &format!("theta {name}"),
        );
        let BmInference::TApproximation {
            statistic,
            df,
            p,
            interval,
        } = r.inference
        else {
            panic!("{name}: unexpected zero variance");
        };
        close(statistic, f(&c["t"]), 1e-10, &format!("t {name}"));
        close(df, f(&c["df"]), 1e-10, &format!("df {name}"));
        close(p, f(&c["p"]), 1e-9, &format!("p {name}"));
        close_opt(
            interval.low,
            &c["interval"][0],
            1e-9,
            &format!("low {name}"),
        );
        close_opt(
            interval.high,
            &c["interval"][1],
            1e-9,
            &format!("high {name}"),
        );
        if let Some(want) = c["permutation_p"].as_f64() {
            let splits = c["splits"].as_u64().unwrap();
            let q = brunner_munzel_permutation(&x, &y, a, splits, 1).unwrap();
            assert!(q.exact && q.splits == splits, "{name}");
            close(q.p, want, 1e-12, &format!("permutation p {name}"));
            permutation_checked += 1;
        }
    }
    assert!(permutation_checked >= 9);
}

#[test]
fn yuen_matches_scipy() {
    let doc = load();
    let level = f(&doc["level"]);
    for c in doc["yuen"].as_array().unwrap() {
        let name = format!("{} {}", c["name"], c["alternative"]);
        let t = yuen(
            &vec(&c["x"]),
            &vec(&c["y"]),
            f(&c["trim"]),
            alt(&c["alternative"]),
            level,
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        close(t.statistic, f(&c["t"]), 1e-10, &format!("t {name}"));
        close(t.df, f(&c["df"]), 1e-10, &format!("df {name}"));
        close(t.p, f(&c["p"]), 1e-9, &format!("p {name}"));
        close(
            t.estimate,
            f(&c["estimate"]),
            1e-12,
            &format!("diff {name}"),
        );
        close(t.effect, f(&c["effect"]), 1e-9, &format!("d_R {name}"));
        close_opt(
            t.interval.low,
            &c["interval"][0],
            1e-9,
            &format!("low {name}"),
        );
        close_opt(
            t.interval.high,
            &c["interval"][1],
            1e-9,
            &format!("high {name}"),
        );
    }
}

#[test]
fn one_sample_trimmed_t_matches_scipy_pieces() {
    let doc = load();
    let level = f(&doc["level"]);
    for c in doc["trimmed_one_sample"].as_array().unwrap() {
        let name = format!("{} {}", c["name"], c["alternative"]);
        let t = trimmed_t_one_sample(
            &vec(&c["x"]),
            f(&c["reference"]),
            f(&c["trim"]),
            alt(&c["alternative"]),
            level,
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        close(t.statistic, f(&c["t"]), 1e-10, &format!("t {name}"));
        close(t.p, f(&c["p"]), 1e-9, &format!("p {name}"));
        close(t.estimate, f(&c["estimate"]), 1e-12, &format!("est {name}"));
        close(t.effect, f(&c["effect"]), 1e-9, &format!("d_R {name}"));
        close_opt(
            t.interval.low,
            &c["interval"][0],
            1e-9,
            &format!("low {name}"),
        );
        close_opt(
            t.interval.high,
            &c["interval"][1],
            1e-9,
            &format!("high {name}"),
        );
    }
}

#[test]
fn winsorised_constant_matches_numerical_integration() {
    // scipy.stats.norm.expect (numerical quadrature) in the generator.
    let want = f(&load()["normal_winsorised_sd_0.2"]);
    close(normal_winsorised_sd(0.2), want, 1e-10, "c(0.2)");
}

#[test]
fn superiority_tost_matches_statsmodels() {
    let doc = load();
    let cases = doc["tost_prob_superiority"].as_array().unwrap();
    assert!(cases.len() >= 4);
    for c in cases {
        let name = c["name"].to_string();
        let t = tost_prob_superiority(
            &vec(&c["x"]),
            &vec(&c["y"]),
            f(&c["low"]),
            f(&c["high"]),
            0.05,
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        tost_ps([t.p_lower, t.p_upper, t.p], c, 1e-9, &name);
    }
}

#[test]
fn shift_tost_matches_scipy_exact() {
    let doc = load();
    let cases = doc["tost_hodges_lehmann"].as_array().unwrap();
    assert!(cases.len() >= 3);
    for c in cases {
        let name = c["name"].to_string();
        let t = tost_hodges_lehmann(
            &vec(&c["x"]),
            &vec(&c["y"]),
            f(&c["low"]),
            f(&c["high"]),
            0.05,
            &RankOptions::default(),
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        tost_ps([t.p_lower, t.p_upper, t.p], c, 1e-10, &name);
    }
}

#[test]
fn pratt_normal_approximation_matches_scipy() {
    use attest::stats::rank_tests::ZeroRule;
    use attest::stats::wilcoxon::wilcoxon_signed_rank_with;
    let doc = load();
    let cases = doc["wilcoxon_pratt_normal"].as_array().unwrap();
    assert!(cases.len() >= 12);
    // The normal approximation, as scipy computes it (no exact count).
    let options = RankOptions {
        zeros: ZeroRule::KeepInRanking,
        exact_max_cells: 0,
        ..RankOptions::default()
    };
    for c in cases {
        let name = format!("{} {}", c["name"], c["alternative"]);
        let t = wilcoxon_signed_rank_with(&vec(&c["d"]), alt(&c["alternative"]), 0.95, &options)
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        close(t.p, f(&c["p"]), 1e-10, &format!("p {name}"));
    }
}

#[test]
fn signed_rank_tost_matches_scipy_exact() {
    let doc = load();
    let cases = doc["tost_signed_rank"].as_array().unwrap();
    assert!(cases.len() >= 3);
    for c in cases {
        let name = c["name"].to_string();
        let t = tost_signed_rank(
            &vec(&c["d"]),
            f(&c["low"]),
            f(&c["high"]),
            0.05,
            &RankOptions::default(),
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        tost_ps([t.p_lower, t.p_upper, t.p], c, 1e-10, &name);
    }
}

/// One trimmed-mean TOST case against its reference: t, df and p of both
/// one-sided tests.
fn check_trimmed_tost(t: &attest::stats::equivalence::Tost, c: &Value, name: &str) {
    close(
        t.t_lower,
        f(&c["t_lower"]),
        1e-10,
        &format!("t lower {name}"),
    );
    close(
        t.t_upper,
        f(&c["t_upper"]),
        1e-10,
        &format!("t upper {name}"),
    );
    close(t.df, f(&c["df"]), 1e-10, &format!("df {name}"));
    tost_ps([t.p_lower, t.p_upper, t.p], c, 1e-9, name);
}

#[test]
fn trimmed_tost_matches_scipy() {
    let doc = load();
    let two = doc["tost_trimmed_two"].as_array().unwrap();
    assert!(two.len() >= 3);
    for c in two {
        let name = c["name"].to_string();
        let r = yuen(
            &vec(&c["x"]),
            &vec(&c["y"]),
            f(&c["trim"]),
            Alternative::TwoSided,
            0.9,
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        let t = tost_trimmed(&r, f(&c["low"]), f(&c["high"]), 0.05).unwrap();
        check_trimmed_tost(&t, c, &name);
    }
    let one = doc["tost_trimmed_one"].as_array().unwrap();
    assert!(one.len() >= 3);
    for c in one {
        let name = c["name"].to_string();
        let r = trimmed_t_one_sample(
            &vec(&c["x"]),
            f(&c["reference"]),
            f(&c["trim"]),
            Alternative::TwoSided,
            0.9,
        )
        .unwrap_or_else(|e| panic!("{name}: {e}"));
        let t = tost_trimmed(&r, f(&c["low"]), f(&c["high"]), 0.05).unwrap();
        check_trimmed_tost(&t, c, &name);
    }
}
