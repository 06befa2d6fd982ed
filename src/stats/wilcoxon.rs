//! Wilcoxon signed-rank test for paired differences (or differences from a
//! reference value), with the Hodges–Lehmann pseudo-median, its
//! distribution-free interval and the matched-pairs rank-biserial
//! correlation.
//!
//! Wilcoxon (1945), "Individual comparisons by ranking methods",
//! Biometrics Bulletin 1, 80–83. Zero differences are dropped before
//! ranking (Wilcoxon's own rule) and the number dropped is reported.
//! One sort of the differences, O(n log n).

use super::hodges_lehmann::{hl_one_sample_sorted, kth_walsh_average_sorted};
use super::rank_exact::{signed_rank_conditional, wilcoxon_exact};
use super::rank_tests::{
    check_level, exact_p, fisher_interval, normal_critical_k, normal_log10_p, normal_p,
    order_interval, tail_alpha, RankOptions, RankTest, ZeroRule,
};
use super::ranks::{for_each_tie_group, tie_term};
use super::{ensure_finite, Alternative, RankPMethod, StatsError};

/// Doubled midranks of the non-zero |d| (ranked among the zeros too when
/// `rule` keeps them), with each one's sign (true = positive), the
/// number of zeros and the tie term Σ(t³ − t) of the ranked values.
pub(crate) fn signed_scores(d: &[f64], rule: ZeroRule) -> (Vec<(u64, bool)>, usize, f64) {
    let keep = rule == ZeroRule::KeepInRanking;
    let mut a: Vec<(f64, i8)> = d
        .iter()
        .filter(|&&v| keep || v != 0.0)
        .map(|&v| (v.abs(), (v > 0.0) as i8 - (v < 0.0) as i8))
        .collect();
    a.sort_unstable_by(|p, q| p.0.total_cmp(&q.0));
    let zeros = d.iter().filter(|&&v| v == 0.0).count();
    let mut out = Vec::with_capacity(a.len());
    let mut ties = 0.0;
    for_each_tie_group(a.iter().map(|p| p.0), |start, len| {
        let r2 = (2 * start + len + 1) as u64;
        out.extend(
            a[start..start + len]
                .iter()
                .filter(|p| p.1 != 0)
                .map(|p| (r2, p.1 > 0)),
        );
        ties += tie_term(len);
    });
    (out, zeros, ties)
}

/// Wilcoxon signed-rank test that the differences `d` are centred on 0,
/// with attest's default conventions ([`RankOptions::default`]).
pub fn wilcoxon_signed_rank(
    d: &[f64],
    alt: Alternative,
    level: f64,
) -> Result<RankTest, StatsError> {
    wilcoxon_signed_rank_with(d, alt, level, &RankOptions::default())
}

/// Wilcoxon signed-rank test that the differences `d` are centred on 0.
///
/// * Statistic: W+, the sum of the ranks of |d| over positive d (midranks
///   for ties). Zeros: dropped before ranking ([`ZeroRule::Drop`],
///   Wilcoxon's rule) or ranked and then left out of W+
///   ([`ZeroRule::KeepInRanking`], Pratt 1959).
/// * p, reported in [`RankTest::p_detail`]:
///   - dropped zeros, no ties, n ≤ 120 non-zero differences: all 2ⁿ sign
///     patterns ([`super::rank_exact::wilcoxon_exact`], `exact`);
///   - ties, or zeros kept in the ranking, within
///     `options.exact_max_cells`: the sign patterns of the observed
///     doubled midranks ([`super::rank_exact::signed_rank_conditional`],
///     `exact-with-ties`);
///   - otherwise the normal approximation with variance Σr²/4 over the
///     non-zero ranks r (for dropped zeros written n(n+1)(2n+1)/24 −
///     Σ(t³−t)/48) and, unless switched off, the continuity correction.
///     Note: when W+ is within ½ of its mean the two-sided p is 1 (the
///     correction stops at the mean).
///
///   Two-sided exact p is twice the smaller tail, capped at 1.
/// * Estimate: Hodges–Lehmann pseudo-median (median of the Walsh
///   averages) of **all** differences, zeros included, with the interval
///   `[A_(k), A_(M+1−k)]`, M = n(n+1)/2 over all n differences (Tukey's
///   construction; Hollander & Wolfe 1999, §3.2). `k` comes from the
///   exact distribution behind p when its support matches the M Walsh
///   averages (no zeros), from the untied exact distribution of all the
///   differences when p is exact but zeros are present, else from the
///   large-sample approximation (untied variance). Exact choices make the
///   interval exclude 0 exactly when the exact p < α.
/// * Matched-pairs rank-biserial r = (W+ − W−)/(W+ + W−) (King & Minium
///   2003; Kerby 2014) with the Fisher-z interval of [`fisher_interval`],
///   se = 2σ_W/(W+ + W−), tie-corrected σ_W.
///
/// Errors: empty input (`TooFew`), non-finite values (`NonFinite`), level
/// outside (0, 1) (`BadParameter`), every difference zero (`AllZero`).
pub fn wilcoxon_signed_rank_with(
    d: &[f64],
    alt: Alternative,
    level: f64,
    options: &RankOptions,
) -> Result<RankTest, StatsError> {
    check_level(level)?;
    if d.is_empty() {
        return Err(StatsError::TooFew { needed: 1, got: 0 });
    }
    ensure_finite(d)?;
    let (scores, zeros, ties) = signed_scores(d, options.zeros);
    let n = scores.len();
    if n == 0 {
        return Err(StatsError::AllZero);
    }
    let w2: u64 = scores.iter().filter(|p| p.1).map(|p| p.0).sum();
    let w_plus = w2 as f64 / 2.0;
    let kept = options.zeros == ZeroRule::KeepInRanking && zeros > 0;
    let nf = n as f64;
    let (total, sigma) = if kept {
        let sum2: u64 = scores.iter().map(|p| p.0).sum();
        let sq: f64 = scores.iter().map(|p| (p.0 as f64).powi(2)).sum();
        // Σr = Σ(2r)/2, Var = Σr²/4 = Σ(2r)²/16.
        (sum2 as f64 / 2.0, (sq / 16.0).sqrt())
    } else {
        let sigma = (nf * (nf + 1.0) * (2.0 * nf + 1.0) / 24.0 - ties / 48.0).sqrt();
        (nf * (nf + 1.0) / 2.0, sigma)
    };
    let mu = total / 2.0;
    let mut ds = d.to_vec();
    ds.sort_unstable_by(f64::total_cmp);
    let all = ds.len();
    let count = all * (all + 1) / 2;
    let tail = tail_alpha(level, alt);
    let untied = ties == 0.0 && !kept;
    let exact = if untied && (zeros == 0 || options.exact_max_cells > 0) {
        wilcoxon_exact(n).map(|d| (d, 1, RankPMethod::Exact))
    } else if options.exact_max_cells > 0 {
        let s2: Vec<u64> = scores.iter().map(|p| p.0).collect();
        signed_rank_conditional(&s2, options.exact_max_cells)
            .map(|d| (d, 2, RankPMethod::ExactWithTies))
    } else {
        None
    };
    let (p, log10_p, p_detail, z, k) = match &exact {
        Some((dist, step, how)) => {
            let obs = if *step == 2 { w2 } else { w2 / 2 } as i64;
            let (p, log10_p, k) = exact_p(dist, obs, *step, alt, level);
            let k = if zeros == 0 {
                k
            } else {
                // The Walsh averages include the zeros: take k from the
                // untied distribution of all `all` differences.
                wilcoxon_exact(all).map_or((0, 0), |full| exact_p(&full, 0, 1, alt, level).2)
            };
            (p, log10_p, *how, None, k)
        }
        None => {
            let (z, p) = normal_p(w_plus, mu, sigma, alt, options.continuity);
            let a = all as f64;
            let plain = (a * (a + 1.0) * (2.0 * a + 1.0) / 24.0).sqrt();
            let k = normal_critical_k(a * (a + 1.0) / 4.0, plain, tail);
            let k = (k, k);
            let log10_p = normal_log10_p(z, alt);
            (p, log10_p, RankPMethod::NormalApproximation, Some(z), k)
        }
    };
    let kth = |i: usize| kth_walsh_average_sorted(&ds, i);
    let (estimate, interval) = rayon::join(
        || hl_one_sample_sorted(&ds),
        || order_interval(k, count, alt, level, kth),
    );
    let r = (w_plus - (total - w_plus)) / total;
    let se = 2.0 * sigma / total;
    let bound = 1.0 - 1.0 / total;
    let (zeros_dropped, zeros_ranked) = match options.zeros {
        ZeroRule::Drop => (zeros, 0),
        ZeroRule::KeepInRanking => (0, zeros),
    };
    Ok(RankTest {
        statistic: w_plus,
        p,
        p_method: p_detail.coarse(),
        p_detail,
        log10_p,
        z,
        n_used: n + zeros_ranked,
        zeros_dropped,
        zeros_ranked,
        estimate: estimate?,
        interval,
        rank_biserial: r,
        rank_biserial_interval: fisher_interval(r, se, bound, alt, level),
        prob_superiority: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hand_worked_signed_ranks() {
        // |d| = 1, 2, 2, 4 → ranks 1, 2.5, 2.5, 4; positives 1, −2(no), 2, 4
        // → W+ = 1 + 2.5 + 4 = 7.5; one tie pair → 6; one zero dropped.
        let (scores, zeros, t) = signed_scores(&[1.0, -2.0, 0.0, 2.0, 4.0], ZeroRule::Drop);
        let w2: u64 = scores.iter().filter(|p| p.1).map(|p| p.0).sum();
        assert_eq!((w2, scores.len(), zeros, t), (15, 4, 1, 6.0));
        // Pratt: the zero takes rank 1, so |d| = 1, 2, 2, 4 rank 2, 3.5,
        // 3.5, 5 → 2·W+ = 4 + 7 + 10 = 21.
        let (scores, _, _) = signed_scores(&[1.0, -2.0, 0.0, 2.0, 4.0], ZeroRule::KeepInRanking);
        let w2: u64 = scores.iter().filter(|p| p.1).map(|p| p.0).sum();
        assert_eq!((w2, scores.len()), (21, 4));
    }

    #[test]
    fn all_positive_exact() {
        // n = 5, all positive: W+ = 15, P = 1/32 one-sided.
        let t =
            wilcoxon_signed_rank(&[1.0, 2.0, 3.0, 4.0, 5.0], Alternative::Greater, 0.95).unwrap();
        assert_eq!(
            (t.statistic, t.p, t.p_detail),
            (15.0, 1.0 / 32.0, RankPMethod::Exact)
        );
        assert_eq!(t.rank_biserial, 1.0);
        assert_eq!(t.estimate, 3.0);
        // P(W ≤ 0) = 1/32 ≤ 0.05 < P(W ≤ 1) = 2/32 → k = 1 → A_(1) = 1.
        assert_eq!(t.interval.low, Some(1.0));
    }

    #[test]
    fn constant_differences_are_exact_with_ties() {
        // Four equal positive differences: every |d| ties at midrank 2.5,
        // and W+ = 10 is the top of 2⁴ equally likely sign patterns, so the
        // one-sided p is 1/16 and the two-sided 1/8 (hand count).
        let d = [3.0; 4];
        let t = wilcoxon_signed_rank(&d, Alternative::TwoSided, 0.95).unwrap();
        assert_eq!((t.statistic, t.p), (10.0, 0.125));
        assert_eq!(t.p_detail, RankPMethod::ExactWithTies);
        let t = wilcoxon_signed_rank(&d, Alternative::Greater, 0.95).unwrap();
        assert_eq!(t.p, 0.0625);
    }

    #[test]
    fn zero_rules_differ_as_documented() {
        // d = 0, 1, 2, 3. Dropping the zero: ranks 1, 2, 3, W+ = 6 of 2³.
        // Keeping it: ranks 2, 3, 4 among four values, W+ = 9 of 2³; both
        // are the top pattern, p = 1/8 one-sided.
        let d = [0.0, 1.0, 2.0, 3.0];
        let drop = wilcoxon_signed_rank(&d, Alternative::Greater, 0.95).unwrap();
        assert_eq!(
            (drop.statistic, drop.p, drop.zeros_dropped),
            (6.0, 0.125, 1)
        );
        assert_eq!(drop.p_detail, RankPMethod::Exact);
        let pratt = RankOptions {
            zeros: ZeroRule::KeepInRanking,
            ..RankOptions::default()
        };
        let keep = wilcoxon_signed_rank_with(&d, Alternative::Greater, 0.95, &pratt).unwrap();
        assert_eq!((keep.statistic, keep.p, keep.zeros_ranked), (9.0, 0.125, 1));
        assert_eq!((keep.n_used, keep.zeros_dropped), (4, 0));
        // With a negative value the rules part: d = 0, −1, 2, 3.
        let d = [0.0, -1.0, 2.0, 3.0];
        let drop = wilcoxon_signed_rank(&d, Alternative::Greater, 0.95).unwrap();
        let keep = wilcoxon_signed_rank_with(&d, Alternative::Greater, 0.95, &pratt).unwrap();
        // Drop: W+ = 2 + 3 = 5, P(W+ ≥ 5) = 2/8. Keep: ranks 2, 3, 4 and
        // W+ = 3 + 4 = 7; sums ≥ 7 are {3,4}, {2,3,4}: 2/8 as well, while
        // ≥ 6 would add {2,4}.
        assert_eq!((drop.p, keep.p), (0.25, 0.25));
        assert_eq!(keep.statistic, 7.0);
    }

    #[test]
    fn all_zero_and_empty() {
        let two = Alternative::TwoSided;
        assert_eq!(
            wilcoxon_signed_rank(&[0.0, -0.0], two, 0.95),
            Err(StatsError::AllZero)
        );
        assert!(wilcoxon_signed_rank(&[], two, 0.95).is_err());
    }
}
