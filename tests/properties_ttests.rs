//! Property tests for the t-tests and effect sizes: invariances that hold
//! for every data set (hand-derivable identities of the formulas, common
//! practice), checked on random data.

use attest::stats::effect::cohens_d;
use attest::stats::ttest::{one_sample_t, student_t, welch_t, TTest};
use attest::stats::Alternative;
use proptest::prelude::*;

const ALTS: [Alternative; 3] = [
    Alternative::TwoSided,
    Alternative::Greater,
    Alternative::Less,
];

fn group(n: std::ops::Range<usize>) -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(-1e3f64..1e3, n)
}

fn near(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * (1.0 + a.abs().max(b.abs()))
}

type TestFn = fn(
    &[f64],
    &[f64],
    Alternative,
    f64,
) -> Result<attest::stats::ttest::TTest, attest::stats::StatsError>;

fn both(x: &[f64], y: &[f64], a: Alternative) -> Vec<TTest> {
    let tests: [TestFn; 2] = [student_t, welch_t];
    tests.iter().filter_map(|f| f(x, y, a, 0.95).ok()).collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn swapping_groups_flips_t_and_d(x in group(2..15), y in group(2..15)) {
        for a in ALTS {
            for (r, s) in both(&x, &y, a).iter().zip(both(&y, &x, a.flipped())) {
                prop_assert!(near(r.t, -s.t, 1e-9), "t {} vs {}", r.t, s.t);
                prop_assert!(near(r.p, s.p, 1e-9), "p {} vs {}", r.p, s.p);
            }
            if let (Ok(d1), Ok(d2)) = (cohens_d(&x, &y, a, 0.95), cohens_d(&y, &x, a.flipped(), 0.95)) {
                prop_assert!(near(d1.value, -d2.value, 1e-9));
                if let (Some(l), Some(h)) = (d1.interval.low, d2.interval.high) {
                    prop_assert!(near(l, -h, 1e-7), "bounds {l} vs {h}");
                }
            }
        }
    }

    #[test]
    fn shift_and_scale_leave_t_p_d_unchanged(
        x in group(2..12), y in group(2..12), shift in -1e4f64..1e4, scale in 1e-3f64..1e3
    ) {
        let tx: Vec<f64> = x.iter().map(|v| v * scale + shift).collect();
        let ty: Vec<f64> = y.iter().map(|v| v * scale + shift).collect();
        for a in ALTS {
            for (r, s) in both(&x, &y, a).iter().zip(both(&tx, &ty, a)) {
                // Only data whose t is not dominated by rounding of the shift.
                if r.t.abs() < 1e6 {
                    prop_assert!(near(r.t, s.t, 1e-6), "t {} vs {}", r.t, s.t);
                    prop_assert!(near(r.p, s.p, 1e-6), "p {} vs {}", r.p, s.p);
                }
            }
            if let (Ok(d1), Ok(d2)) = (cohens_d(&x, &y, a, 0.9), cohens_d(&tx, &ty, a, 0.9)) {
                prop_assert!(near(d1.value, d2.value, 1e-6));
            }
        }
    }

    #[test]
    fn p_is_a_probability_and_one_sided_halves(x in group(2..20), mu in -1e3f64..1e3) {
        if let Ok(two) = one_sample_t(&x, mu, Alternative::TwoSided, 0.95) {
            let g = one_sample_t(&x, mu, Alternative::Greater, 0.95).unwrap();
            let l = one_sample_t(&x, mu, Alternative::Less, 0.95).unwrap();
            for p in [two.p, g.p, l.p] {
                prop_assert!((0.0..=1.0).contains(&p));
            }
            // On the side of the effect the one-sided p is half the two-sided.
            let side = if two.t >= 0.0 { g.p } else { l.p };
            prop_assert!(near(side, 0.5 * two.p, 1e-12), "{} vs {}", side, two.p);
            // The two one-sided p values add to one.
            prop_assert!(near(g.p + l.p, 1.0, 1e-12));
        }
    }

    #[test]
    fn never_panics_on_odd_input(
        x in prop::collection::vec(prop_oneof![Just(f64::NAN), Just(f64::INFINITY), Just(0.0), -1e300f64..1e300], 0..5),
        y in prop::collection::vec(prop_oneof![Just(0.0), Just(1.0), -1e300f64..1e300], 0..5),
    ) {
        for a in ALTS {
            let _ = student_t(&x, &y, a, 0.95);
            let _ = welch_t(&x, &y, a, 0.95);
            let _ = one_sample_t(&x, 0.0, a, 0.95);
            if let Ok(d) = cohens_d(&x, &y, a, 0.95) {
                prop_assert!(d.value.is_finite());
            }
        }
    }
}
