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
//! The accumulator is a long fixed-point register covering every double
//! (2^-1074 to beyond 2^1024, with room for 2^64 terms), the "long
//! accumulator" of U. Kulisch & W. L. Miranker (1981, "Computer Arithmetic
//! in Theory and Practice", Academic Press), kept in carry-save form as in
//! R. M. Neal (2015, "Fast exact summation using small and large
//! superaccumulators", arXiv:1505.05571): each double's 53-bit significand
//! is added, without rounding, into 32-bit digits held in 64-bit words, and
//! carries are settled only when the total is read, which rounds it to
//! nearest (ties to even) once. Written here because the one crate that
//! offers exact sums (`xsum` 0.1.6) returns wrong totals: its large
//! accumulator shifts a signed word where the algorithm needs an unsigned
//! shift (5,000 copies of 50.0 sum to 118,928), and its small one is off
//! in the last bit for some mixed-sign sums; the tests below check this
//! register against exact rational arithmetic on both kinds of input.
//!
//! A run of `count` equal values is added as the exact product
//! `value × count`, split into two doubles by the fused multiply–add (the
//! "TwoProduct" of Ogita, Rump & Oishi 2005, "Accurate sum and dot
//! product", SIAM J. Sci. Comput. 26(6), 1955–1988), which is exact for
//! counts below 2⁵³.

/// 32-bit digits from 2^-1074 up: 1074 + 1024 bits of range and 64 bits of
/// headroom for the number of terms, rounded up to whole digits.
const DIGITS: usize = (1074 + 1024 + 64) / 32 + 1;
/// Terms added before the carries are settled: each adds less than 2^32
/// in magnitude to a digit, so 2^30 of them stay far inside 63 bits.
const SETTLE_EVERY: u32 = 1 << 30;

/// The exact sum of finite doubles, as an integer count of 2^-1074.
#[derive(Clone)]
struct Register {
    digits: [i64; DIGITS],
    since_settled: u32,
    /// Infinite or NaN terms: they decide the total (IEEE rules).
    pos_inf: bool,
    neg_inf: bool,
    nan: bool,
}

impl Register {
    fn new() -> Self {
        Register {
            digits: [0; DIGITS],
            since_settled: 0,
            pos_inf: false,
            neg_inf: false,
            nan: false,
        }
    }

    /// Adds one double exactly.
    fn add(&mut self, v: f64) {
        let bits = v.to_bits();
        let negative = bits >> 63 == 1;
        let field = ((bits >> 52) & 0x7ff) as u32;
        let fraction = bits & ((1u64 << 52) - 1);
        if field == 0x7ff {
            if fraction != 0 {
                self.nan = true;
            } else if negative {
                self.neg_inf = true;
            } else {
                self.pos_inf = true;
            }
            return;
        }
        if field == 0 && fraction == 0 {
            return;
        }
        // v = significand × 2^(max(field, 1) − 1075) = significand × 2^-1074 × 2^position.
        let significand = if field == 0 {
            fraction
        } else {
            fraction | (1u64 << 52)
        };
        let position = field.max(1) - 1;
        let (digit, offset) = ((position / 32) as usize, position % 32);
        let wide = u128::from(significand) << offset;
        let parts = [
            (wide & 0xffff_ffff) as i64,
            ((wide >> 32) & 0xffff_ffff) as i64,
            (wide >> 64) as i64,
        ];
        for (k, part) in parts.into_iter().enumerate() {
            if negative {
                self.digits[digit + k] -= part;
            } else {
                self.digits[digit + k] += part;
            }
        }
        self.since_settled += 1;
        if self.since_settled >= SETTLE_EVERY {
            self.settle();
        }
    }

    /// Carries: every digit but the top one into [0, 2^32); the top one
    /// keeps the sign.
    fn settle(&mut self) {
        for i in 0..DIGITS - 1 {
            let carry = self.digits[i] >> 32;
            self.digits[i] -= carry << 32;
            self.digits[i + 1] += carry;
        }
        self.since_settled = 0;
    }

    /// The total, rounded to nearest, ties to even.
    fn value(&self) -> f64 {
        if self.nan || (self.pos_inf && self.neg_inf) {
            return f64::NAN;
        }
        if self.pos_inf {
            return f64::INFINITY;
        }
        if self.neg_inf {
            return f64::NEG_INFINITY;
        }
        let mut r = self.clone();
        r.settle();
        let negative = r.digits[DIGITS - 1] < 0;
        if negative {
            for d in &mut r.digits {
                *d = -*d;
            }
            r.settle();
        }
        // The magnitude is now Σ digits[i] · 2^(32i) units of 2^-1074,
        // every digit in [0, 2^32).
        let Some(top) = r.digits.iter().rposition(|&d| d != 0) else {
            return 0.0;
        };
        let bit_len = 32 * top as u32 + (64 - (r.digits[top] as u64).leading_zeros());
        // Keep 53 bits (fewer is exact: the smallest unit is 2^-1074, the
        // spacing of the subnormals), rounding the rest off.
        let drop = bit_len.saturating_sub(53);
        let bit = |i: u32| (r.digits[(i / 32) as usize] as u64 >> (i % 32)) & 1;
        let mut m: u64 = 0;
        for i in (drop..bit_len).rev() {
            m = (m << 1) | bit(i);
        }
        if drop > 0 {
            let half = bit(drop - 1) == 1;
            let below = drop - 1;
            let sticky = (0..below / 32).any(|d| r.digits[d as usize] != 0)
                || (r.digits[(below / 32) as usize] as u64) & ((1u64 << (below % 32)) - 1) != 0;
            if half && (sticky || m & 1 == 1) {
                m += 1;
            }
        }
        // m · 2^(drop − 1074): exact when representable, infinite beyond.
        let magnitude = libm::ldexp(m as f64, drop as i32 - 1074);
        if negative {
            -magnitude
        } else {
            magnitude
        }
    }
}

/// An exact, order-independent sum of doubles.
///
/// Equal terms in a row are gathered into one run and added as one exact
/// product (a sorted sample with ties, the usual case, gives long runs, and
/// every term of a function of its values repeats with them): the sum is
/// the same exact sum, so the bits are those of adding term by term.
pub(crate) struct ExactSum {
    acc: Box<Register>,
    /// The pending run: `count` copies of `run` not yet in `acc`.
    run: f64,
    count: u64,
}

impl ExactSum {
    /// An empty sum.
    pub(crate) fn new() -> Self {
        ExactSum {
            acc: Box::new(Register::new()),
            run: 0.0,
            count: 0,
        }
    }

    /// Adds one term.
    pub(crate) fn add(&mut self, v: f64) {
        self.add_times(v, 1);
    }

    /// Adds `count` copies of `v`, exactly.
    pub(crate) fn add_times(&mut self, v: f64, count: u64) {
        if self.count != 0 && v.to_bits() == self.run.to_bits() {
            self.count += count;
        } else {
            self.flush();
            self.run = v;
            self.count = count;
        }
    }

    /// Moves the pending run into the accumulator.
    fn flush(&mut self) {
        let (v, count) = (self.run, self.count);
        self.count = 0;
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
                        self.run = v;
                        self.count = k;
                        self.flush();
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
        self.flush();
        // An exact zero is +0.0, so it prints as 0.
        self.acc.value() + 0.0
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

    /// A xorshift stream: the same pseudo-random terms on every machine.
    fn stream(mut state: u64) -> impl FnMut() -> u64 {
        move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        }
    }

    /// Whether `got` is `x` rounded to the nearest double, ties to even:
    /// no neighbour of `got` is nearer, and at a tie `got` is the even one.
    /// Checked in exact rational arithmetic (every double is a rational).
    fn is_rounded_sum(got: f64, terms: &[f64]) -> bool {
        use num_rational::BigRational;
        let q = |v: f64| BigRational::from_float(v).unwrap();
        let x: BigRational = terms.iter().map(|&v| q(v)).sum();
        let dist = |v: f64| {
            let d = q(v) - &x;
            if d < BigRational::from_integer(0.into()) {
                -d
            } else {
                d
            }
        };
        let here = dist(got);
        [got.next_up(), got.next_down()]
            .into_iter()
            .filter(|n| n.is_finite())
            .all(|n| {
                let there = dist(n);
                here < there || (here == there && got.to_bits() & 1 == 0)
            })
    }

    #[test]
    fn sums_are_the_exact_sum_rounded_once() {
        // Reference: exact rational arithmetic. The cases are the ones
        // where the `xsum` crate's accumulators fail (thousands of values
        // in one binade with high significands; mixed signs with a long
        // carry), and subnormals, cancellation and ties.
        let mut next = stream(0x2545_f491_4f6c_dd1d);
        let mut cases: Vec<Vec<f64>> = vec![
            vec![50.0; 5000],
            vec![0.1; 100_000],
            vec![1e16, 1.0, -1e16, 1.0],
            vec![f64::from_bits(1), f64::from_bits(3), -f64::from_bits(2)],
            vec![f64::MIN_POSITIVE, -f64::from_bits(1)],
            // 2^53 + 1 is a tie between 2^53 and 2^53 + 2: rounds to even.
            vec![9_007_199_254_740_992.0, 1.0],
            vec![9_007_199_254_740_994.0, 1.0],
            vec![9_007_199_254_740_992.0, 1.0, f64::from_bits(1)],
            vec![1e308, -1e308, 1e-308, 3.0],
        ];
        for trial in 0..24u64 {
            let n = 1 + (next() % 20_000) as usize;
            let signed = trial % 2 == 0;
            let scale = [1.0, 1e-3, 1e12, 1e-310, 1e290][(trial % 5) as usize];
            cases.push(
                (0..n)
                    .map(|_| {
                        let k = (next() % (1 << 40)) as f64;
                        let v = (k + (next() % 1000) as f64 / 1000.0) * scale;
                        if signed && next() % 2 == 0 {
                            -v
                        } else {
                            v
                        }
                    })
                    .collect(),
            );
        }
        for terms in &cases {
            let mut s = ExactSum::new();
            for &v in terms {
                s.add(v);
            }
            let got = s.value();
            assert!(
                is_rounded_sum(got, terms),
                "{} terms from {:e}: {got:e}",
                terms.len(),
                terms[0]
            );
        }
        // The `xsum` large accumulator gave 118,928 here.
        assert_eq!(sum([50.0; 5000]), 250_000.0);
    }

    #[test]
    fn gathered_runs_give_the_bits_of_adding_term_by_term() {
        // The reference is the register fed one term at a time, with no
        // runs gathered. Samples: sorted with many ties, unsorted, mixed
        // magnitudes and signs, signed zeros, and values whose runs
        // overflow as products.
        let mut next = stream(0x9e37_79b9_7f4a_7c15);
        let pools: [&[f64]; 4] = [
            &[0.1, 0.2, 0.30000000000000004, 12.5, -7.25, 1e-300],
            &[1e16, 1.0, -1e16, 3.0, -0.0, 0.0],
            &[1.7e308, -1.7e308, 2.0, 5e307],
            &[812.5, 812.6, 812.7, 812.8],
        ];
        for pool in pools {
            for len in [0usize, 1, 2, 17, 500, 4000] {
                let mut x: Vec<f64> = (0..len)
                    .map(|_| pool[(next() % pool.len() as u64) as usize])
                    .collect();
                for sorted in [false, true] {
                    if sorted {
                        x.sort_by(f64::total_cmp);
                    }
                    let mut term_by_term = Register::new();
                    let mut gathered = ExactSum::new();
                    for &v in &x {
                        term_by_term.add(v);
                        gathered.add(v);
                    }
                    let want = term_by_term.value() + 0.0;
                    let got = gathered.value();
                    assert!(
                        want.to_bits() == got.to_bits() || (want.is_nan() && got.is_nan()),
                        "{pool:?}, {len} terms, sorted {sorted}: {want} vs {got}"
                    );
                }
            }
        }
    }

    #[test]
    fn infinities_and_nan_follow_ieee() {
        assert_eq!(sum([1.0, f64::INFINITY]), f64::INFINITY);
        assert_eq!(sum([f64::NEG_INFINITY, 1e308]), f64::NEG_INFINITY);
        assert!(sum([f64::INFINITY, f64::NEG_INFINITY]).is_nan());
        assert!(sum([f64::NAN, 1.0]).is_nan());
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
