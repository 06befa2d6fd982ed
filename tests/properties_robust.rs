//! Property tests for the Brunner–Munzel and trimmed-mean tests. Each
//! property is a hand-derivable identity — swapping the groups mirrors
//! every figure, shifting both groups changes nothing, a probability stays
//! in [0, 1] — so no expected value comes from the code under test.

use attest::stats::brunner_munzel::{brunner_munzel, brunner_munzel_permutation, BmInference};
use attest::stats::yuen::{trimmed_t_one_sample, yuen};
use attest::stats::Alternative;
use proptest::prelude::*;

/// Small samples, often tied (a short grid) or continuous.
fn sample() -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![
        prop::collection::vec((-5i32..5).prop_map(f64::from), 2..14),
        prop::collection::vec(-1e3f64..1e3, 2..14),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn brunner_munzel_mirrors_when_groups_swap(x in sample(), y in sample()) {
        let a = brunner_munzel(&x, &y, Alternative::Greater, 0.95).unwrap();
        let b = brunner_munzel(&y, &x, Alternative::Less, 0.95).unwrap();
        prop_assert!((0.0..=1.0).contains(&a.estimate));
        prop_assert!((a.estimate + b.estimate - 1.0).abs() < 1e-12);
        match (a.inference, b.inference) {
            (
                BmInference::TApproximation { statistic: s, p: p1, df: d1, .. },
                BmInference::TApproximation { statistic: t, p: p2, df: d2, .. },
            ) => {
                prop_assert!((s + t).abs() <= 1e-9 * s.abs().max(1.0));
                prop_assert!((p1 - p2).abs() <= 1e-9);
                prop_assert!((d1 - d2).abs() <= 1e-9 * d1);
            }
            (BmInference::ZeroVariance, BmInference::ZeroVariance) => {}
            (l, r) => prop_assert!(false, "{:?} vs {:?}", l, r),
        }
    }

    #[test]
    fn permutation_p_mirrors_and_is_a_probability(
        x in prop::collection::vec((0i32..6).prop_map(f64::from), 2..6),
        y in prop::collection::vec((0i32..6).prop_map(f64::from), 2..6),
    ) {
        let a = brunner_munzel_permutation(&x, &y, Alternative::Greater, 10_000, 3).unwrap();
        let b = brunner_munzel_permutation(&y, &x, Alternative::Less, 10_000, 3).unwrap();
        prop_assert!(a.exact && b.exact);
        prop_assert!(a.p > 0.0 && a.p <= 1.0);
        prop_assert!((a.p - b.p).abs() < 1e-12, "{} vs {}", a.p, b.p);
    }

    #[test]
    fn yuen_mirrors_and_ignores_a_common_shift(
        x in prop::collection::vec(-1e3f64..1e3, 5..30),
        y in prop::collection::vec(-1e3f64..1e3, 5..30),
        shift in -100.0f64..100.0,
        trim in prop::sample::select(vec![0.0, 0.1, 0.2, 0.25]),
    ) {
        let a = yuen(&x, &y, trim, Alternative::TwoSided, 0.95).unwrap();
        let b = yuen(&y, &x, trim, Alternative::TwoSided, 0.95).unwrap();
        prop_assert!((a.statistic + b.statistic).abs() <= 1e-9 * a.statistic.abs().max(1.0));
        prop_assert!((a.p - b.p).abs() <= 1e-12);
        prop_assert!((a.effect + b.effect).abs() <= 1e-9 * a.effect.abs().max(1.0));
        let xs: Vec<f64> = x.iter().map(|v| v + shift).collect();
        let ys: Vec<f64> = y.iter().map(|v| v + shift).collect();
        let c = yuen(&xs, &ys, trim, Alternative::TwoSided, 0.95).unwrap();
        prop_assert!((a.statistic - c.statistic).abs() <= 1e-6 * a.statistic.abs().max(1.0));
        // The one-sample form against a reference equals the shifted data against 0.
        let o = trimmed_t_one_sample(&x, shift, trim, Alternative::Greater, 0.95).unwrap();
        let z: Vec<f64> = x.iter().map(|v| v - shift).collect();
        let q = trimmed_t_one_sample(&z, 0.0, trim, Alternative::Greater, 0.95).unwrap();
        prop_assert!((o.statistic - q.statistic).abs() <= 1e-6 * o.statistic.abs().max(1.0));
    }
}
