//! Exact permutation null distributions of the rank-sum (Mann–Whitney U)
//! and signed-rank (Wilcoxon W+) statistics for untied data.
//!
//! Both are counted in exact integer arithmetic from their generating
//! functions, then turned into tail probabilities by one division each:
//!
//! * U: the Gaussian binomial coefficient ∏ᵢ₌₁ᵐ (1 − q^{n+i})/(1 − q^i)
//!   (Mann & Whitney 1947, "On a test of whether one of two random
//!   variables is stochastically larger than the other", Ann. Math.
//!   Statist. 18, 50–60, count U by the same recursion; the product form
//!   is Andrews 1976, *The Theory of Partitions*, ch. 3). Each factor is
//!   applied as one subtraction pass and one running-sum pass over i128,
//!   O(m²·n) operations; every intermediate is bounded by C(m+n, m).
//! * W+: the subset-sum polynomial ∏ᵢ₌₁ⁿ (1 + q^i) (Wilcoxon 1945,
//!   "Individual comparisons by ranking methods", Biometrics Bulletin 1,
//!   80–83), O(n³) additions over u128, counts bounded by 2ⁿ.
//!
//! Limits (chosen so the counts stay exact and the work stays small):
//! Mann–Whitney exact needs n1·n2 ≤ 250 000 (4 MB of counts) and
//! C(n1+n2, n1) < 2¹²⁰ (the counts fit i128 with margin); at the worst
//! case inside those limits (e.g. 2 × 125 000 or 60 × 60) the count takes
//! well under 10 ms on one core (see the `exact_limits_are_cheap` test).
//! Wilcoxon exact needs n ≤ 120 (2ⁿ fits u128), under 1 ms.
//!
//! With ties (and, for the signed-rank statistic, zeros kept in the
//! ranking by Pratt's rule) the null distribution is the one *conditional
//! on the observed tie pattern*: every assignment of the observed midranks
//! to the groups (or every sign pattern) is equally likely. Midranks are
//! multiples of ½, so doubled midranks are integers, and the distribution
//! of the doubled statistic is counted by the shift algorithm of
//! Streitberg & Röhmel (1986), "Exact distributions for permutation and
//! rank tests: an introduction to some recently published algorithms",
//! Statistical Software Newsletter 12(1), 10–17: a dynamic programme over
//! (number chosen, score) that adds one observation at a time, each pass
//! a shifted addition of the table onto itself. Counts stay exact integers
//! (u128, with the same 2¹²⁰ bound on the number of arrangements), so a
//! tail is one division. The cost is stated as DP cell updates,
//! observations × (smaller group + 1) × (score range + 1) for U and
//! observations × (score range + 1) for W+, and bounded by
//! [`TIES_EXACT_MAX_CELLS`]; beyond it the caller uses the tie- and
//! continuity-corrected normal approximation. At the bound the count takes
//! under a second on one core even in a debug build (0.9 s for tied
//! 50 × 50, 0.6 s for 10 × 400; `sh tests/bench/ties.sh`). A signed-rank
//! table never reaches the bound: n ≤ 120 gives at most 120·14 521 cells.

/// Largest n1·n2 for which the exact U distribution is used.
pub(crate) const MW_EXACT_MAX_CELLS: usize = 250_000;
/// Largest log2 C(n1+n2, n1) for which the exact U distribution is used.
pub(crate) const MW_EXACT_MAX_LOG2_ARRANGEMENTS: f64 = 120.0;
/// Largest number of non-zero differences for the exact W+ distribution.
pub(crate) const WILCOXON_EXACT_MAX_N: usize = 120;

/// Largest number of DP cell updates for an exact distribution conditional
/// on ties (see the module comment); 4·10⁷ u128 additions.
pub const TIES_EXACT_MAX_CELLS: u64 = 40_000_000;

/// An exact null distribution over the integers `0..=max` as counts.
pub struct ExactDistribution {
    /// Cumulative counts: `cum[v]` = number of arrangements with statistic ≤ v.
    cum: Vec<u128>,
}

impl ExactDistribution {
    fn from_counts(counts: impl Iterator<Item = u128>) -> Self {
        let mut acc = 0u128;
        let cum = counts
            .map(|c| {
                acc += c;
                acc
            })
            .collect();
        ExactDistribution { cum }
    }

    /// The number of equally likely arrangements.
    pub fn total(&self) -> u128 {
        self.cum.last().copied().unwrap_or(0)
    }

    /// Number of arrangements with statistic ≤ `v` (`v` an integer on the
    /// distribution's scale; 0 below the support, the total above it).
    pub fn count_le(&self, v: i64) -> u128 {
        if v < 0 {
            return 0;
        }
        self.cum[(v as usize).min(self.cum.len() - 1)]
    }

    /// Number of arrangements with statistic ≥ `v`.
    pub fn count_ge(&self, v: i64) -> u128 {
        self.total() - self.count_le(v - 1)
    }

    /// Number of leading integers `u = 0, 1, 2, …` whose lower-tail count
    /// `#(S ≤ step·u)` passes `reject`: the 1-based order statistic that
    /// bounds a distribution-free interval (0 when even the most extreme
    /// outcome does not reject). `step` is 2 on a doubled scale. Callers
    /// pass the test's own count-to-p conversion and [`super::Decision`],
    /// so the interval excludes the null exactly when p < α.
    pub fn critical_k_by(&self, step: usize, reject: impl Fn(u128, u128) -> bool) -> usize {
        let total = self.total();
        (0..)
            .map(|u: usize| u * step)
            .take_while(|&v| v < self.cum.len() && reject(self.cum[v], total))
            .count()
    }

    /// As [`Self::critical_k_by`] from the upper tail: leading `u` whose
    /// count `#(S ≥ top − step·u)` passes `reject`, `top` the largest
    /// value of the support. With ties the distribution need not be
    /// symmetric, so the two ends of an interval take one tail each.
    pub fn critical_k_upper_by(&self, step: usize, reject: impl Fn(u128, u128) -> bool) -> usize {
        let total = self.total();
        let top = self.cum.len() as i64 - 1;
        (0..)
            .map(|u: i64| top - u * step as i64)
            .take_while(|&v| v >= 0 && reject(self.count_ge(v), total))
            .count()
    }

    #[cfg(test)]
    /// `P(S ≤ s)`, for any real `s`.
    pub(crate) fn cdf(&self, s: f64) -> f64 {
        if s < 0.0 {
            return 0.0;
        }
        let v = (s.floor() as usize).min(self.cum.len() - 1);
        self.cum[v] as f64 / self.total() as f64
    }

    #[cfg(test)]
    /// `P(S ≥ s)`, counted directly from the upper tail, for any real `s`.
    pub(crate) fn sf(&self, s: f64) -> f64 {
        let v = s.ceil();
        if v <= 0.0 {
            return 1.0;
        }
        let v = v as usize;
        if v >= self.cum.len() {
            return 0.0;
        }
        (self.total() - self.cum[v - 1]) as f64 / self.total() as f64
    }

    #[cfg(test)]
    /// The largest `k` with `P(S ≤ k − 1) ≤ tail`: the 1-based order
    /// statistic that bounds a distribution-free interval (0 when even the
    /// most extreme value is more likely than `tail`).
    pub(crate) fn critical_k(&self, tail: f64) -> usize {
        let total = self.total() as f64;
        self.cum
            .iter()
            .take_while(|&&c| c as f64 / total <= tail)
            .count()
    }
}

/// Whether the exact U distribution is used for group sizes `m`, `n`.
pub(crate) fn mw_exact_feasible(m: usize, n: usize) -> bool {
    if m == 0 || n == 0 || m.saturating_mul(n) > MW_EXACT_MAX_CELLS {
        return false;
    }
    let (m, n) = (m.min(n), m.max(n));
    let log2c: f64 = (1..=m).map(|i| ((n + i) as f64 / i as f64).log2()).sum();
    log2c < MW_EXACT_MAX_LOG2_ARRANGEMENTS
}

/// Exact null distribution of U for group sizes `m`, `n` (no ties), or
/// `None` outside the limits of [`mw_exact_feasible`].
pub(crate) fn mann_whitney_exact(m: usize, n: usize) -> Option<ExactDistribution> {
    if !mw_exact_feasible(m, n) {
        return None;
    }
    let (m, n) = (m.min(n), m.max(n));
    let mut c: Vec<i128> = vec![0; m * n + m + 2];
    c[0] = 1;
    for i in 1..=m {
        let deg = (i - 1) * n; // degree before this factor
        let shift = n + i;
        for u in (shift..=deg + shift).rev() {
            c[u] -= c[u - shift];
        }
        for u in i..=deg + shift {
            c[u] += c[u - i];
        }
    }
    c.truncate(m * n + 1);
    Some(ExactDistribution::from_counts(
        c.into_iter().map(|v| v.max(0) as u128),
    ))
}

/// Exact null distribution of the doubled statistic 2·U1, conditional on
/// the tie pattern: `scores2` holds the doubled midranks (2·rank, integers)
/// of the pooled sample and the first `m` observations' group is the one
/// whose U is counted — any `m` of the `scores2.len()` scores are equally
/// likely to be that group. The support is `0..=2·m·n`. `None` when either
/// group is empty, C(N, m) ≥ 2¹²⁰ or the work exceeds `max_cells`.
pub fn rank_sum_conditional(
    scores2: &[u64],
    m: usize,
    max_cells: u64,
) -> Option<ExactDistribution> {
    let big_n = scores2.len();
    if m == 0 || m >= big_n || !mw_exact_feasible(m, big_n - m) {
        return None;
    }
    let n = big_n - m;
    // Count the smaller group's score sum; the other follows from the total.
    let k = m.min(n);
    let mut sorted = scores2.to_vec();
    sorted.sort_unstable();
    let smax: u64 = sorted.iter().rev().take(k).sum();
    let width = smax as usize + 1;
    let work = (big_n as u64)
        .saturating_mul(k as u64 + 1)
        .saturating_mul(width as u64);
    if work > max_cells {
        return None;
    }
    // table[j·width + s]: ways to choose j of the scores seen so far with sum s.
    let mut table = vec![0u128; (k + 1) * width];
    table[0] = 1;
    for (i, &a) in sorted.iter().enumerate() {
        let a = a as usize;
        for j in (1..=k.min(i + 1)).rev() {
            let (lower, upper) = table.split_at_mut(j * width);
            let from = &lower[(j - 1) * width..];
            let to = &mut upper[..width];
            for s in (a..width).rev() {
                to[s] += from[s - a];
            }
        }
    }
    let total2: u64 = sorted.iter().sum();
    let offset = (m * (m + 1)) as u64; // 2·R1 − m(m+1) = 2·U1
    let top = 2 * m * n;
    let mut counts = vec![0u128; top + 1];
    for (score, &c) in table[k * width..].iter().enumerate() {
        if c == 0 {
            continue;
        }
        let score = score as u64;
        let s1 = if k == m { score } else { total2 - score };
        let u2 = (s1 - offset) as usize;
        counts[u2] += c;
    }
    Some(ExactDistribution::from_counts(counts.into_iter()))
}

/// Exact null distribution of the doubled statistic 2·W+, conditional on
/// the tie pattern: `scores2` holds the doubled midranks of the non-zero
/// differences' absolute values (ranked among the zeros too under Pratt's
/// rule), and each of the 2ⁿ sign patterns is equally likely. The support
/// is `0..=Σ scores2`. `None` when there are no scores, more than
/// [`WILCOXON_EXACT_MAX_N`] of them, or the work exceeds `max_cells`.
pub fn signed_rank_conditional(scores2: &[u64], max_cells: u64) -> Option<ExactDistribution> {
    let n = scores2.len();
    if n == 0 || n > WILCOXON_EXACT_MAX_N {
        return None;
    }
    let top: u64 = scores2.iter().sum();
    let width = top as usize + 1;
    if (n as u64).saturating_mul(width as u64) > max_cells {
        return None;
    }
    let mut c = vec![0u128; width];
    c[0] = 1;
    let mut reach = 0usize;
    for &a in scores2 {
        let a = a as usize;
        reach += a;
        for s in (a..=reach).rev() {
            c[s] += c[s - a];
        }
    }
    Some(ExactDistribution::from_counts(c.into_iter()))
}

/// Exact null distribution of W+ for `n` untied non-zero differences, or
/// `None` when `n` is 0 or above [`WILCOXON_EXACT_MAX_N`].
pub(crate) fn wilcoxon_exact(n: usize) -> Option<ExactDistribution> {
    if n == 0 || n > WILCOXON_EXACT_MAX_N {
        return None;
    }
    let top = n * (n + 1) / 2;
    let mut c = vec![0u128; top + 1];
    c[0] = 1;
    for i in 1..=n {
        let deg = i * (i - 1) / 2;
        for s in (i..=deg + i).rev() {
            c[s] += c[s - i];
        }
    }
    Some(ExactDistribution::from_counts(c.into_iter()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_u_distribution_by_hand() {
        // m = 2, n = 2: the C(4,2) = 6 arrangements give U = 0,1,2,2,3,4.
        let d = mann_whitney_exact(2, 2).unwrap();
        assert_eq!(d.cum, vec![1, 2, 4, 5, 6]);
        assert_eq!(d.sf(3.0), 2.0 / 6.0);
        assert_eq!(d.cdf(0.0), 1.0 / 6.0);
    }

    #[test]
    fn small_w_distribution_by_hand() {
        // n = 3: subsets of {1,2,3} have sums 0,1,2,3,3,4,5,6.
        let d = wilcoxon_exact(3).unwrap();
        assert_eq!(d.cum, vec![1, 2, 3, 5, 6, 7, 8]);
        assert_eq!(d.critical_k(1.0 / 8.0), 1);
        assert_eq!(d.critical_k(0.1), 0);
    }

    #[test]
    fn totals_are_binomials() {
        // C(30, 12) = 86 493 225 and 2^40 (hand-derivable identities).
        assert_eq!(mann_whitney_exact(12, 18).unwrap().total(), 86_493_225);
        assert_eq!(wilcoxon_exact(40).unwrap().total(), 1u128 << 40);
    }

    #[test]
    fn tied_u_distribution_by_hand() {
        // Pooled 1, 2, 2, 3 → midranks 1, 2.5, 2.5, 4 → doubled 2, 5, 5, 8;
        // m = 2. The six pairs have doubled rank sums 7, 7, 10, 10, 13, 13,
        // so 2·U1 = sum − 6 takes 1, 1, 4, 4, 7, 7 (by hand).
        let d = rank_sum_conditional(&[2, 5, 5, 8], 2, u64::MAX).unwrap();
        assert_eq!(d.total(), 6);
        assert_eq!((d.count_le(0), d.count_le(1), d.count_le(4)), (0, 2, 4));
        assert_eq!(d.count_ge(7), 2);
        // The larger group counted instead: m = 3 of the same scores.
        let e = rank_sum_conditional(&[2, 5, 5, 8], 1, u64::MAX).unwrap();
        // Singletons: 2·U1 = score − 2 ∈ {0, 3, 3, 6}.
        assert_eq!((e.count_le(0), e.count_le(3), e.total()), (1, 3, 4));
    }

    #[test]
    fn untied_scores_reproduce_the_untied_counts() {
        let scores: Vec<u64> = (1..=13).map(|r| 2 * r).collect();
        let d = rank_sum_conditional(&scores, 6, u64::MAX).unwrap();
        let plain = mann_whitney_exact(6, 7).unwrap();
        for u in 0..=42 {
            assert_eq!(d.count_le(2 * u), plain.cum[u as usize], "u = {u}");
        }
        let w = signed_rank_conditional(&scores, u64::MAX).unwrap();
        let plain = wilcoxon_exact(13).unwrap();
        for v in 0..=91 {
            assert_eq!(w.count_le(2 * v), plain.cum[v as usize], "v = {v}");
        }
    }

    #[test]
    fn tied_signed_ranks_by_hand() {
        // Four equal |d|: midrank 2.5, doubled 5 each; 2·W+ = 5·(positives),
        // binomial counts 1, 4, 6, 4, 1 at 0, 5, 10, 15, 20.
        let d = signed_rank_conditional(&[5, 5, 5, 5], u64::MAX).unwrap();
        assert_eq!(d.total(), 16);
        assert_eq!(d.count_ge(20), 1);
        assert_eq!(d.count_le(10), 11);
    }

    #[test]
    fn cost_bound_is_enforced() {
        let scores: Vec<u64> = (1..=40).map(|r| 2 * r).collect();
        assert!(rank_sum_conditional(&scores, 20, 1000).is_none());
        assert!(signed_rank_conditional(&scores, 1000).is_none());
        assert!(rank_sum_conditional(&scores, 0, u64::MAX).is_none());
    }

    #[test]
    fn critical_k_counts_rejecting_outcomes() {
        // n = 3 untied, doubled: P(W+ ≤ 0) = 1/8, P(W+ ≤ 1) = 2/8.
        let d = signed_rank_conditional(&[2, 4, 6], u64::MAX).unwrap();
        assert_eq!(d.critical_k_by(2, |c, t| (c as f64 / t as f64) < 0.2), 1);
        assert_eq!(d.critical_k_by(2, |c, t| (c as f64 / t as f64) < 0.125), 0);
        assert_eq!(
            d.critical_k_upper_by(2, |c, t| (c as f64 / t as f64) < 0.2),
            1
        );
        // Asymmetric with ties: 2·U1 ∈ {0, 3, 3, 6} is symmetric, but
        // {1, 1, 4, 4, 7, 7} on 0..=8 is not: the upper tail at 8 is empty.
        let e = rank_sum_conditional(&[2, 5, 5, 8], 2, u64::MAX).unwrap();
        assert_eq!(e.critical_k_upper_by(2, |c, _| c == 0), 1);
        assert_eq!(e.critical_k_by(2, |c, _| c == 0), 1);
    }

    #[test]
    fn exact_limits_are_cheap() {
        assert!(mann_whitney_exact(60, 60).is_some());
        assert!(mann_whitney_exact(2, 125_000).is_some());
        assert!(mann_whitney_exact(70, 70).is_none());
        assert!(wilcoxon_exact(WILCOXON_EXACT_MAX_N).is_some());
        let d = wilcoxon_exact(WILCOXON_EXACT_MAX_N).unwrap();
        assert_eq!(d.total(), 1u128 << 120);
    }
}
