//! Property tests for the rank tests and the Hodges–Lehmann selection.
//! Every property is a hand-derivable identity (symmetry under swapping
//! groups or negating differences, probabilities in [0, 1], and selection
//! agreeing with sorting all n1·n2 values, exact p by listing every split,
//! intervals agreeing with the test), so no expected value comes from the
//! code under test.

use attest::stats::hodges_lehmann::{
    hl_one_sample, hl_shift, kth_pairwise_difference, kth_walsh_average,
};
use attest::stats::mann_whitney::mann_whitney;
use attest::stats::wilcoxon::wilcoxon_signed_rank;
use attest::stats::Alternative;
use proptest::prelude::*;

/// Small samples with many ties (half-integers from a short range) or
/// continuous values.
fn sample(max: usize) -> impl Strategy<Value = Vec<f64>> {
    prop_oneof![
        prop::collection::vec((-6i32..6).prop_map(|v| v as f64 * 0.5), 1..max),
        prop::collection::vec(-1e3f64..1e3, 1..max),
    ]
}

fn sorted(mut v: Vec<f64>) -> Vec<f64> {
    v.sort_by(f64::total_cmp);
    v
}

fn brute_median(v: &[f64]) -> f64 {
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * v[n / 2 - 1] + 0.5 * v[n / 2]
    }
}

/// About 30 ranks spread over `0..len`, always including both ends.
fn ks(len: usize) -> impl Iterator<Item = usize> {
    let step = (len / 30).max(1);
    (0..len).step_by(step).chain(std::iter::once(len - 1))
}

const ALTS: [Alternative; 3] = [
    Alternative::TwoSided,
    Alternative::Greater,
    Alternative::Less,
];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn pairwise_selection_equals_brute_force(x in sample(40), y in sample(40)) {
        let all = sorted(x.iter().flat_map(|a| y.iter().map(move |b| a - b)).collect());
        for k in ks(all.len()) {
            prop_assert_eq!(kth_pairwise_difference(&x, &y, k), Some(all[k]));
        }
        prop_assert_eq!(kth_pairwise_difference(&x, &y, all.len()), None);
        prop_assert_eq!(hl_shift(&x, &y).unwrap(), brute_median(&all));
    }

    #[test]
    fn walsh_selection_equals_brute_force(d in sample(50)) {
        let s = sorted(d.clone());
        let mut w = Vec::new();
        for i in 0..s.len() {
            for j in i..s.len() {
                w.push(0.5 * s[i] + 0.5 * s[j]);
            }
        }
        let w = sorted(w);
        for k in ks(w.len()) {
            prop_assert_eq!(kth_walsh_average(&d, k), Some(w[k]));
        }
        prop_assert_eq!(hl_one_sample(&d).unwrap(), brute_median(&w));
    }

    #[test]
    fn swapping_groups_mirrors_mann_whitney(x in sample(30), y in sample(30)) {
        for alt in ALTS {
            let (Ok(a), Ok(b)) = (
                mann_whitney(&x, &y, alt, 0.9),
                mann_whitney(&y, &x, alt.flipped(), 0.9),
            ) else {
                continue; // every value tied: an error both ways
            };
            prop_assert!((0.0..=1.0).contains(&a.p));
            prop_assert!((a.p - b.p).abs() <= 1e-12 * a.p.max(1e-300), "{} vs {}", a.p, b.p);
            prop_assert_eq!(a.rank_biserial, -b.rank_biserial);
            prop_assert_eq!(a.estimate, -b.estimate);
            prop_assert_eq!(a.interval.low, b.interval.high.map(|v| -v));
            prop_assert_eq!(a.interval.high, b.interval.low.map(|v| -v));
            let (lo, hi) = (a.rank_biserial_interval.low, b.rank_biserial_interval.high);
            prop_assert_eq!(lo.is_some(), hi.is_some());
            if let (Some(l), Some(h)) = (lo, hi) {
                prop_assert!((l + h).abs() < 1e-12);
            }
            let n = (x.len() * y.len()) as f64;
            prop_assert!((a.statistic + b.statistic - n).abs() < 1e-9);
        }
    }

    #[test]
    fn negating_differences_mirrors_wilcoxon(d in sample(40)) {
        let neg: Vec<f64> = d.iter().map(|v| -v).collect();
        for alt in ALTS {
            let (Ok(a), Ok(b)) = (
                wilcoxon_signed_rank(&d, alt, 0.95),
                wilcoxon_signed_rank(&neg, alt.flipped(), 0.95),
            ) else {
                continue; // all differences zero
            };
            prop_assert!((0.0..=1.0).contains(&a.p));
            prop_assert!((a.p - b.p).abs() <= 1e-12 * a.p.max(1e-300), "{} vs {}", a.p, b.p);
            prop_assert_eq!(a.rank_biserial, -b.rank_biserial);
            prop_assert_eq!(a.estimate, -b.estimate);
            prop_assert_eq!(a.interval.low, b.interval.high.map(|v| -v));
            prop_assert_eq!(a.n_used + a.zeros_dropped, d.len());
        }
    }
}

/// Midranks of `v` by counting (rank = #below + (#equal + 1)/2), doubled.
fn doubled_midranks(v: &[f64]) -> Vec<u64> {
    v.iter()
        .map(|a| {
            let below = v.iter().filter(|b| *b < a).count() as u64;
            let equal = v.iter().filter(|b| *b == a).count() as u64;
            2 * below + equal + 1
        })
        .collect()
}

/// One-sided exact p of U1 by listing every split (bitmasks of size n1).
fn brute_mw_p(x: &[f64], y: &[f64], greater: bool) -> f64 {
    let pooled: Vec<f64> = x.iter().chain(y).copied().collect();
    let r = doubled_midranks(&pooled);
    let (n1, n) = (x.len(), pooled.len());
    let observed: u64 = r[..n1].iter().sum();
    let (mut hits, mut total) = (0u64, 0u64);
    for mask in 0u32..(1 << n) {
        if mask.count_ones() as usize != n1 {
            continue;
        }
        let s: u64 = (0..n).filter(|i| mask >> i & 1 == 1).map(|i| r[i]).sum();
        total += 1;
        hits += u64::from(if greater {
            s >= observed
        } else {
            s <= observed
        });
    }
    hits as f64 / total as f64
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// The tied exact p is the share of splits at least as extreme
    /// (counted here by bitmask enumeration, independent of the DP).
    #[test]
    fn tied_exact_p_equals_enumeration(
        x in prop::collection::vec((0i32..4).prop_map(f64::from), 1..7),
        y in prop::collection::vec((0i32..4).prop_map(f64::from), 1..7),
    ) {
        for (alt, greater) in [(Alternative::Greater, true), (Alternative::Less, false)] {
            let Ok(t) = mann_whitney(&x, &y, alt, 0.95) else {
                continue; // every value equal
            };
            let want = brute_mw_p(&x, &y, greater);
            prop_assert!((t.p - want).abs() <= 1e-12 * want, "{} vs {}", t.p, want);
        }
    }

    /// With an exact p, the interval excludes 0 exactly when p < α
    /// (untied data, so the shift and the test agree exactly).
    #[test]
    fn exact_interval_excludes_zero_iff_p_below_alpha(
        x in prop::collection::btree_set(-40i32..40, 1..8),
        y in prop::collection::btree_set(-40i32..40, 1..8),
        level in prop::sample::select(vec![0.8, 0.9, 0.95]),
    ) {
        // Odd x, even y: no ties and no zero differences.
        let x: Vec<f64> = x.iter().map(|v| f64::from(2 * v + 1)).collect();
        let y: Vec<f64> = y.iter().map(|v| f64::from(2 * v)).collect();
        let alpha = attest::stats::alpha_of_level(level);
        for alt in ALTS {
            let t = mann_whitney(&x, &y, alt, level).unwrap();
            let excludes = t.interval.low.is_some_and(|l| l > 0.0)
                || t.interval.high.is_some_and(|h| h < 0.0);
            prop_assert_eq!(excludes, t.p < alpha, "{:?} p = {} level {}", alt, t.p, level);
        }
    }

    /// The same for the signed-rank interval (distinct |d|, no zeros).
    #[test]
    fn signed_rank_interval_excludes_zero_iff_p_below_alpha(
        mags in prop::collection::btree_set(1i32..60, 1..10),
        signs in prop::collection::vec(any::<bool>(), 10),
        level in prop::sample::select(vec![0.8, 0.9, 0.95]),
    ) {
        let d: Vec<f64> = mags
            .iter()
            .zip(&signs)
            .map(|(&m, &s)| f64::from(if s { m } else { -m }))
            .collect();
        let alpha = attest::stats::alpha_of_level(level);
        for alt in ALTS {
            let t = wilcoxon_signed_rank(&d, alt, level).unwrap();
            let excludes = t.interval.low.is_some_and(|l| l > 0.0)
                || t.interval.high.is_some_and(|h| h < 0.0);
            prop_assert_eq!(excludes, t.p < alpha, "{:?} p = {} level {}", alt, t.p, level);
        }
    }
}
