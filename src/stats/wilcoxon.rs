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
use super::rank_exact::wilcoxon_exact;
use super::rank_tests::{
    check_level, fisher_interval, normal_critical_k, normal_p, order_interval, tail_alpha, RankTest,
};
use super::ranks::{for_each_tie_group, midrank, tie_term};
use super::{ensure_finite, Alternative, PMethod, StatsError};

/// W+ (sum of the midranks of |d| over positive d), the number of
/// non-zero differences and the tie term Σ(t³ − t) of their |d|.
pub(crate) fn signed_rank_sum(d: &[f64]) -> (f64, usize, f64) {
    let mut a: Vec<(f64, bool)> = d
        .iter()
        .filter(|&&v| v != 0.0)
        .map(|&v| (v.abs(), v > 0.0))
        .collect();
    a.sort_unstable_by(|p, q| p.0.total_cmp(&q.0));
    let (mut w_plus, mut ties) = (0.0, 0.0);
    for_each_tie_group(a.iter().map(|p| p.0), |start, len| {
        let pos = a[start..start + len].iter().filter(|p| p.1).count();
        w_plus += pos as f64 * midrank(start, len);
        ties += tie_term(len);
    });
    (w_plus, a.len(), ties)
}

/// Wilcoxon signed-rank test that the differences `d` are centred on 0.
///
/// * Statistic: W+, the sum of the ranks of |d| over positive d, after
///   dropping zeros (midranks for ties).
/// * p: exact (all 2ⁿ sign patterns, [`super::rank_exact::wilcoxon_exact`])
///   when there are no zeros, no ties and n ≤ 120; otherwise the normal
///   approximation with variance n(n+1)(2n+1)/24 − Σ(t³−t)/48 and
///   continuity correction. Note: when W+ is within ½ of its mean the
///   two-sided p is 1 (the correction stops at the mean).
/// * Estimate: Hodges–Lehmann pseudo-median (median of the Walsh
///   averages) of **all** differences, zeros included, with the interval
///   `[A_(k), A_(M+1−k)]`, M = n(n+1)/2 over all n differences (Tukey's
///   construction; Hollander & Wolfe 1999, §3.2): `k` from the exact W+
///   distribution when p is exact, else from the large-sample
///   approximation (untied variance).
/// * Matched-pairs rank-biserial r = (W+ − W−)/(W+ + W−) (King & Minium
///   2003; Kerby 2014) with the Fisher-z interval of [`fisher_interval`],
///   se = 2σ_W/(n(n+1)/2), tie-corrected σ_W.
///
/// Errors: empty input (`TooFew`), non-finite values (`NonFinite`), level
/// outside (0, 1) (`BadParameter`), every difference zero (`AllZero`).
pub fn wilcoxon_signed_rank(
    d: &[f64],
    alt: Alternative,
    level: f64,
) -> Result<RankTest, StatsError> {
    check_level(level)?;
    if d.is_empty() {
        return Err(StatsError::TooFew { needed: 1, got: 0 });
    }
    ensure_finite(d)?;
    let (w_plus, n, ties) = signed_rank_sum(d);
    if n == 0 {
        return Err(StatsError::AllZero);
    }
    let zeros = d.len() - n;
    let nf = n as f64;
    let total = nf * (nf + 1.0) / 2.0;
    let mu = total / 2.0;
    let sigma = (nf * (nf + 1.0) * (2.0 * nf + 1.0) / 24.0 - ties / 48.0).sqrt();
    let mut ds = d.to_vec();
    ds.sort_unstable_by(f64::total_cmp);
    let all = ds.len();
    let count = all * (all + 1) / 2;
    let tail = tail_alpha(level, alt);
    let exact = if zeros == 0 && ties == 0.0 {
        wilcoxon_exact(n)
    } else {
        None
    };
    let (p, p_method, z, k) = match &exact {
        Some(dist) => {
            let p = match alt {
                Alternative::Greater => dist.sf(w_plus),
                Alternative::Less => dist.cdf(w_plus),
                Alternative::TwoSided => (2.0 * dist.sf(w_plus).min(dist.cdf(w_plus))).min(1.0),
            };
            (p, PMethod::Exact, None, dist.critical_k(tail))
        }
        None => {
            let (z, p) = normal_p(w_plus, mu, sigma, alt);
            let a = all as f64;
            let plain = (a * (a + 1.0) * (2.0 * a + 1.0) / 24.0).sqrt();
            let k = normal_critical_k(a * (a + 1.0) / 4.0, plain, tail);
            (p, PMethod::NormalApproximation, Some(z), k)
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
    Ok(RankTest {
        statistic: w_plus,
        p,
        p_method,
        z,
        n_used: n,
        zeros_dropped: zeros,
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
        let (w, n, t) = signed_rank_sum(&[1.0, -2.0, 0.0, 2.0, 4.0]);
        assert_eq!((w, n, t), (7.5, 4, 6.0));
    }

    #[test]
    fn all_positive_exact() {
        // n = 5, all positive: W+ = 15, P = 1/32 one-sided.
        let t =
            wilcoxon_signed_rank(&[1.0, 2.0, 3.0, 4.0, 5.0], Alternative::Greater, 0.95).unwrap();
        assert_eq!(
            (t.statistic, t.p, t.p_method),
            (15.0, 1.0 / 32.0, PMethod::Exact)
        );
        assert_eq!(t.rank_biserial, 1.0);
        assert_eq!(t.estimate, 3.0);
        // P(W ≤ 0) = 1/32 ≤ 0.05 < P(W ≤ 1) = 2/32 → k = 1 → A_(1) = 1.
        assert_eq!(t.interval.low, Some(1.0));
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
