//! Exact sums: every sum of data values in the statistics is the exact
//! sum of its terms, rounded once, so it does not depend on the order of
//! the terms.
//!
//! That one property is what lets a sample arrive in any form and still
//! give the same bits: rows in file order, rows read by several threads,
//! or a table of `(value, count)` runs that a database returned. A naive
//! running sum rounds after every addition, and its last digits follow
//! the order of the rows.
//!
//! The accumulator is Neal's small superaccumulator (R. M. Neal 2015,
//! "Fast exact summation using small and large superaccumulators",
//! arXiv:1505.05571), from the `xsum` crate: every double is added into
//! fixed-point chunks without rounding, and the total is rounded to
//! nearest (ties to even) once at the end. A run of `count` equal values is
//! added as the exact product `value × count`, split into two doubles by
//! the fused multiply–add (the "TwoProduct" of Ogita, Rump & Oishi 2005,
//! "Accurate sum and dot product", SIAM J. Sci. Comput. 26(6), 1955–1988),
//! which is exact for counts below 2⁵³.

use xsum::{Xsum, XsumAuto};

/// An exact, order-independent sum of doubles.
pub(crate) struct ExactSum {
    acc: XsumAuto,
}

impl ExactSum {
    /// An empty sum.
    pub(crate) fn new() -> Self {
        ExactSum {
            acc: XsumAuto::new(),
        }
    }

    /// Adds one term.
    pub(crate) fn add(&mut self, v: f64) {
        self.acc.add(v);
    }

    /// Adds `count` copies of `v`, exactly.
    pub(crate) fn add_times(&mut self, v: f64, count: u64) {
        match count {
            0 => {}
            1 => self.acc.add(v),
            _ => {
                // Counts are row counts, far below 2^53, so `c` is exact and
                // so is the split `v·c = p + e`.
                let c = count as f64;
                let p = v * c;
                if p.is_finite() {
                    let e = v.mul_add(c, -p);
                    self.acc.add(p);
                    self.acc.add(e);
                } else if v.is_finite() {
                    // Values within a factor `count` of the largest double:
                    // add the run in the largest pieces whose products stay
                    // finite (at most `count` pieces, for values that every
                    // statistic refuses later anyway).
                    let piece = ((f64::MAX / v.abs()).floor() as u64).clamp(1, count);
                    let mut left = count;
                    while left > 0 {
                        let k = piece.min(left);
                        self.add_times(v, k);
                        left -= k;
                    }
                } else {
                    self.acc.add(v);
                }
            }
        }
    }

    /// The sum, rounded once to the nearest double. An empty or exactly
    /// zero sum is `+0.0`; a sum beyond the doubles is infinite.
    pub(crate) fn value(&mut self) -> f64 {
        // The superaccumulator gives −0.0 for an empty sum; adding +0.0
        // turns any zero into +0.0 so an exact zero prints as 0.
        self.acc.sum() + 0.0
    }
}

/// The mean `S / n` of the exact sum `S` in `sum`, to within about half
/// a unit in the last place, in one pass: `S` is taken as the double-double
/// `hi + lo` (the rounded sum, then the exact sum of what rounding left),
/// and the division's remainder `hi − q·n` is exact by the fused
/// multiply–add, so `q + (remainder + lo)/n` corrects the quotient
/// (the classical error-free transformations; Ogita, Rump & Oishi 2005,
/// cited above). Infinite or NaN when the sum is.
pub(crate) fn mean_of(sum: &mut ExactSum, n: f64) -> f64 {
    let hi = sum.value();
    if !hi.is_finite() {
        return hi;
    }
    sum.add(-hi);
    let lo = sum.value();
    let q = hi / n;
    let rem = (-q).mul_add(n, hi);
    q + (rem + lo) / n
}

/// The mean of `terms` (there are `n` of them), as [`mean_of`].
pub(crate) fn mean(terms: impl IntoIterator<Item = f64>, n: usize) -> f64 {
    let mut s = ExactSum::new();
    for v in terms {
        s.add(v);
    }
    mean_of(&mut s, n as f64)
}

/// The exact sum of `terms`, rounded once.
pub(crate) fn sum(terms: impl IntoIterator<Item = f64>) -> f64 {
    let mut s = ExactSum::new();
    for v in terms {
        s.add(v);
    }
    s.value()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The exact sum of `value × count` over runs.
    fn sum_runs(runs: impl IntoIterator<Item = (f64, u64)>) -> f64 {
        let mut s = ExactSum::new();
        for (v, c) in runs {
            s.add_times(v, c);
        }
        s.value()
    }

    #[test]
    fn order_does_not_change_the_sum() {
        // A naive running sum of these gives 0 or 2 depending on order;
        // the exact sum is 2 either way.
        let a = [1e16, 1.0, -1e16, 1.0];
        let b = [1e16, -1e16, 1.0, 1.0];
        assert_eq!(sum(a), 2.0);
        assert_eq!(sum(b), 2.0);
        assert_ne!(a.iter().sum::<f64>(), b.iter().sum::<f64>());
    }

    #[test]
    fn tenths_sum_to_the_rounded_exact_value() {
        // Ten copies of the double nearest 0.1 sum exactly to
        // 1.000000000000000055511151231257827…, which rounds to 1.0; the
        // naive running sum gives 0.9999999999999999 (common practice
        // example of accumulated rounding).
        assert_eq!(sum([0.1; 10]), 1.0);
        assert_eq!([0.1f64; 10].iter().sum::<f64>(), 0.999_999_999_999_999_9);
        assert_eq!(sum_runs([(0.1, 10)]), 1.0);
    }

    #[test]
    fn runs_equal_the_values_written_out() {
        let runs = [
            (0.1, 7u64),
            (-3.3, 12),
            (1e-3, 1),
            (12345.678, 40),
            (0.7, 0),
        ];
        let expanded: Vec<f64> = runs
            .iter()
            .flat_map(|&(v, c)| std::iter::repeat_n(v, c as usize))
            .collect();
        assert_eq!(sum_runs(runs).to_bits(), sum(expanded).to_bits());
    }

    #[test]
    fn the_mean_is_the_exact_mean_to_half_an_ulp() {
        use num_rational::BigRational;
        // Exact arithmetic on the doubles themselves (every double is a
        // rational number): the reference a mean is checked against.
        let exact_mean = |x: &[f64]| {
            let s: BigRational = x.iter().map(|v| BigRational::from_float(*v).unwrap()).sum();
            s / BigRational::from_integer((x.len() as i64).into())
        };
        let cases: [&[f64]; 4] = [
            &[0.415, 0.383, 0.442, 0.548, 0.013, -0.2],
            &[1e16, 1.0, -3.0, 0.5],
            &[100000000.2, 100000000.1, 100000000.3, 100000000.1],
            &[0.1; 7],
        ];
        for x in cases {
            let m = mean(x.iter().copied(), x.len());
            let truth = exact_mean(x);
            let err = BigRational::from_float(m).unwrap() - &truth;
            let half_ulp = BigRational::from_float(f64::EPSILON * m.abs()).unwrap();
            assert!(err <= half_ulp && -err <= half_ulp, "{x:?}: {m}");
        }
        // The remainder of the rounded sum is taken exactly.
        let mut s = ExactSum::new();
        s.add(1e16);
        s.add(1.0);
        let hi = s.value();
        s.add(-hi);
        // 1e16 + 1 is halfway between two doubles and rounds to 1e16; the
        // 1 that rounding dropped is what is left.
        assert_eq!(hi, 1e16);
        assert_eq!(s.value(), 1.0);
    }

    #[test]
    fn zero_is_positive_and_overflow_is_not_finite() {
        assert!(sum(std::iter::empty()).is_sign_positive());
        assert!(sum([1.5, -1.5]).is_sign_positive());
        assert!(!sum([1.7e308, 1.7e308]).is_finite());
        // A run whose product overflows is still added exactly.
        assert_eq!(sum_runs([(1.7e308, 3), (-1.7e308, 3), (2.0, 5)]), 10.0);
    }
}
