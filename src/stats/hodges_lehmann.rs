//! Hodges–Lehmann shift estimates and the order statistics behind their
//! distribution-free intervals, without forming the n1·n2 differences.
//!
//! The pairwise differences `x_i − y_j` (x ascending, y descending) and
//! the Walsh averages `(d_i + d_j)/2`, i ≤ j (d ascending) are *sorted
//! matrices*: every row and every column is non-decreasing. The k-th
//! smallest entry is found by the sorted-matrix selection of Johnson &
//! Mizoguchi (1978), "Selecting the Kth element in X + Y and
//! X1 + X2 + … + Xm", SIAM J. Comput. 7(2), 147–153, in the row-bounds
//! form Monahan (1984) used for exactly this estimator ("Algorithm 616:
//! Fast computation of the Hodges–Lehmann location estimator", ACM TOMS
//! 10(3), 265–270). Each row keeps an active column range. A round first
//! tries a sampled bracket (Floyd & Rivest 1975, see [`select`]): two order
//! statistics of a systematic sample of the active entries, which usually
//! cut the candidates about 25-fold; when that fails to halve them, the
//! next round's pivot is the weighted median of the active rows' medians
//! (Johnson & Mizoguchi's deterministic choice, where Monahan draws a
//! random one), which always removes at least a quarter. Counting entries
//! below a pivot is a one-pointer walk, O(n1 + n2), because the per-row
//! counts are monotone. When at most n1 + n2 candidates remain they are
//! gathered and selected directly. Time O((n1 + n2)·log(n1·n2)) in the
//! worst case and about five sweeps in practice, memory four indices per
//! row (u32). Entries are computed with one rounding each (`x − y`,
//! `0.5·d_i + 0.5·d_j`), which is monotone, so the result is bit-identical
//! to sorting every difference. Inputs are assumed finite (the public
//! tests check with [`super::ensure_finite`]).

use super::{ensure_finite, StatsError};

/// A matrix whose rows and columns are non-decreasing; row `i` is defined
/// on columns `first_col(i) .. cols()`, but `value` must stay monotone on
/// all columns so that counting can sweep whole rows.
trait SortedMatrix {
    fn rows(&self) -> usize;
    fn cols(&self) -> usize;
    fn first_col(&self, i: usize) -> usize;
    fn value(&self, i: usize, j: usize) -> f64;
}

/// Pairwise differences `x_i − y_j` with x ascending and y read descending.
struct Differences<'a> {
    x: &'a [f64],
    y: &'a [f64],
}

impl SortedMatrix for Differences<'_> {
    fn rows(&self) -> usize {
        self.x.len()
    }
    fn cols(&self) -> usize {
        self.y.len()
    }
    fn first_col(&self, _: usize) -> usize {
        0
    }
    fn value(&self, i: usize, j: usize) -> f64 {
        self.x[i] - self.y[self.y.len() - 1 - j]
    }
}

/// Walsh averages `(d_i + d_j)/2` of an ascending sample, upper triangle.
struct Walsh<'a> {
    d: &'a [f64],
}

impl SortedMatrix for Walsh<'_> {
    fn rows(&self) -> usize {
        self.d.len()
    }
    fn cols(&self) -> usize {
        self.d.len()
    }
    fn first_col(&self, i: usize) -> usize {
        i
    }
    fn value(&self, i: usize, j: usize) -> f64 {
        walsh(self.d[i], self.d[j])
    }
}

fn walsh(a: f64, b: f64) -> f64 {
    0.5 * a + 0.5 * b
}

/// For each row, how many of its entries (over all columns) are below the
/// pivot (`lt`) and at most the pivot (`le`). Both counts fall with the
/// row index, so two pointers sweep the columns once.
fn count_rows(m: &impl SortedMatrix, pivot: f64, lt: &mut [usize], le: &mut [usize]) {
    let (mut a, mut b) = (m.cols(), m.cols());
    for i in 0..m.rows() {
        while b > 0 && m.value(i, b - 1) > pivot {
            b -= 1;
        }
        a = a.min(b);
        while a > 0 && m.value(i, a - 1) >= pivot {
            a -= 1;
        }
        lt[i] = a;
        le[i] = b;
    }
}

/// Smallest value whose cumulative weight reaches half the total
/// (quickselect on the values; expected linear time, deterministic).
fn weighted_median(items: &mut [(f64, usize)]) -> f64 {
    let total: usize = items.iter().map(|p| p.1).sum();
    let mut target = total.div_ceil(2);
    let mut part = items;
    loop {
        let m = part.len() / 2;
        part.select_nth_unstable_by(m, |a, b| a.0.total_cmp(&b.0));
        let left: usize = part[..m].iter().map(|p| p.1).sum();
        let here = part[m].1;
        if left >= target && m > 0 {
            part = &mut part[..m];
        } else if left + here < target && m + 1 < part.len() {
            target -= left + here;
            part = &mut part[m + 1..];
        } else {
            return part[m].0;
        }
    }
}

/// Largest and smallest sample of a bracketing round (see [`select`]). A
/// round samples one entry per 8 rows and columns (so the sample costs
/// less memory than the data), at most one active entry in 16, within
/// these bounds.
const SAMPLE_MAX: usize = 1 << 16;
const SAMPLE_MIN: usize = 1 << 12;
/// Active entries above which a round samples (stride at least 16).
const SAMPLED_ABOVE: usize = 16 * SAMPLE_MIN;

/// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
/// number generators", OOPSLA '14): a tiny generator with a fixed seed, so
/// every run draws the same pivots. The pivots only decide how fast the
/// selection narrows; the value it returns is exact either way.
pub(crate) struct SplitMix64(pub(crate) u64);

impl SplitMix64 {
    pub(crate) fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in `0..n` (n > 0), by Lemire's multiply-shift (the tiny
    /// bias is irrelevant to a pivot).
    pub(crate) fn below(&mut self, n: usize) -> usize {
        ((self.next() as u128 * n as u128) >> 64) as usize
    }
}

/// Two values expected to bracket the target: order statistics, a few
/// binomial standard deviations either side of the target's share, of a
/// systematic sample of the active entries (every `stride`-th in row-major
/// order from a random start; one sweep). The larger the sample, the
/// tighter the bracket: a round cuts the candidates by about √s/5.
fn bracket(
    m: &impl SortedMatrix,
    lo: &[u32],
    hi: &[u32],
    rank: usize,
    active: usize,
    rng: &mut SplitMix64,
) -> (f64, f64) {
    let size = ((m.rows() + m.cols()) / 8)
        .min(active / 16)
        .clamp(SAMPLE_MIN, SAMPLE_MAX);
    let stride = active / size;
    let mut sample = Vec::with_capacity(size + 1);
    let mut next = rng.below(stride);
    let mut seen = 0;
    for i in 0..lo.len() {
        let width = (hi[i] - lo[i]) as usize;
        while next < seen + width {
            sample.push(m.value(i, lo[i] as usize + (next - seen)));
            next += stride;
        }
        seen += width;
    }
    let s = sample.len() as f64;
    let centre = rank as f64 / active as f64 * s;
    // The count of sampled entries below the target is about binomial with
    // SD at most √s/2; ±2.5√s is five of those.
    let delta = 2.5 * s.sqrt();
    let a = (centre - delta).floor().max(0.0) as usize;
    let b = ((centre + delta).ceil() as usize).min(sample.len() - 1);
    // Two selections instead of a sort: the a-th, then the b-th above it.
    let (_, low, above) = sample.select_nth_unstable_by(a, f64::total_cmp);
    let low = *low;
    let high = if b > a {
        *above.select_nth_unstable_by(b - a - 1, f64::total_cmp).1
    } else {
        low
    };
    (low, high)
}

/// For each row, how many of its entries (over all columns) are below the
/// pivot (`STRICT`) or at most the pivot, clamped to the row's active
/// range `lo[i] ..= hi[i]`; returns the sum of `out[i] − lo[i]`. The count
/// falls with the row index, so one pointer sweeps the columns once.
fn count_clamped<const STRICT: bool>(
    m: &impl SortedMatrix,
    pivot: f64,
    lo: &[u32],
    hi: &[u32],
    out: &mut [u32],
) -> usize {
    let mut c = m.cols();
    let mut sum = 0;
    for i in 0..m.rows() {
        while c > 0 && {
            let v = m.value(i, c - 1);
            if STRICT {
                v >= pivot
            } else {
                v > pivot
            }
        } {
            c -= 1;
        }
        // c ≤ cols, which `select` checked fits in u32.
        out[i] = (c as u32).clamp(lo[i], hi[i]);
        sum += (out[i] - lo[i]) as usize;
    }
    sum
}

/// [`count_clamped`] for two pivots in one sweep: per row, the entries
/// below `low` into `below` and those at most `high` into `upto`, clamped
/// to the active range; returns both sums. One pass over the rows instead
/// of two, which is most of a bracketing round's cost.
fn count_band(
    m: &impl SortedMatrix,
    (low, high): (f64, f64),
    lo: &[u32],
    hi: &[u32],
    below: &mut [u32],
    upto: &mut [u32],
) -> (usize, usize) {
    let (mut ca, mut cb) = (m.cols(), m.cols());
    let (mut sa, mut sb) = (0, 0);
    for i in 0..m.rows() {
        while ca > 0 && m.value(i, ca - 1) >= low {
            ca -= 1;
        }
        while cb > 0 && m.value(i, cb - 1) > high {
            cb -= 1;
        }
        // Both ≤ cols, which `select` checked fits in u32.
        below[i] = (ca as u32).clamp(lo[i], hi[i]);
        upto[i] = (cb as u32).clamp(lo[i], hi[i]);
        sa += (below[i] - lo[i]) as usize;
        sb += (upto[i] - lo[i]) as usize;
    }
    (sa, sb)
}

/// The k-th smallest (0-based) entry of a sorted matrix's defined part.
///
/// While many candidates remain, each round first tries a sampled bracket
/// in the manner of Floyd & Rivest (1975), "Expected time bounds for
/// selection", Commun. ACM 18(3), 165–172: two order statistics of a random
/// sample of the active entries, counted in one sweep, usually cut the
/// candidates by a factor of about 25. When a bracket fails to halve them
/// the next round takes Johnson & Mizoguchi's weighted-median pivot, which
/// always removes a quarter, so the worst case stays
/// O((n1 + n2)·log(n1·n2)).
fn select(m: &impl SortedMatrix, k: usize) -> Option<f64> {
    let rows = m.rows();
    // Column bounds are kept as u32 (half the memory); data files are
    // capped far below 2³² rows (`data::read::MAX_ROWS`).
    let cols = u32::try_from(m.cols()).ok()?;
    let mut lo: Vec<u32> = (0..rows).map(|i| m.first_col(i) as u32).collect();
    let mut hi = vec![cols; rows];
    let total: usize = (0..rows).map(|i| (hi[i] - lo[i]) as usize).sum();
    if k >= total {
        return None;
    }
    let mut rank = k; // rank of the target among the active entries
    let mut a = vec![0u32; rows];
    let mut b = vec![0u32; rows];
    let mut meds = Vec::new();
    let mut rng = SplitMix64(0x5EED_0FA7_7E57);
    let mut sampled_ok = true;
    // Gather once few enough remain that one selection beats two sweeps.
    // Gathering k values costs about what one sweep costs when k is the
    // size of the matrix's rows and columns together.
    let gather = (rows + m.cols()).min(1 << 22);
    let mut active = total;
    loop {
        if active <= gather {
            let mut left = Vec::with_capacity(active);
            for i in 0..rows {
                left.extend((lo[i] as usize..hi[i] as usize).map(|j| m.value(i, j)));
            }
            let (_, v, _) = left.select_nth_unstable_by(rank, f64::total_cmp);
            return Some(*v);
        }
        let before = active;
        if sampled_ok && active > SAMPLED_ABOVE {
            let (low, high) = bracket(m, &lo, &hi, rank, active, &mut rng);
            let (below, upto) = count_band(m, (low, high), &lo, &hi, &mut a, &mut b);
            if rank < below {
                std::mem::swap(&mut hi, &mut a);
                active = below;
            } else if rank < upto {
                if low == high {
                    // Every candidate left equals the bracket (ties).
                    return Some(low);
                }
                rank -= below;
                std::mem::swap(&mut lo, &mut a);
                std::mem::swap(&mut hi, &mut b);
                active = upto - below;
            } else {
                rank -= upto;
                std::mem::swap(&mut lo, &mut b);
                active -= upto;
            }
            sampled_ok = active <= before / 2;
            continue;
        }
        sampled_ok = true;
        meds.clear();
        meds.extend((0..rows).filter(|&i| hi[i] > lo[i]).map(|i| {
            let mid = lo[i] + (hi[i] - lo[i] - 1) / 2;
            (m.value(i, mid as usize), (hi[i] - lo[i]) as usize)
        }));
        let pivot = weighted_median(&mut meds);
        let n_lt = count_clamped::<true>(m, pivot, &lo, &hi, &mut a);
        let n_le = count_clamped::<false>(m, pivot, &lo, &hi, &mut b);
        if rank < n_lt {
            hi.copy_from_slice(&a);
            active = n_lt;
        } else if rank < n_le {
            return Some(pivot);
        } else {
            rank -= n_le;
            lo.copy_from_slice(&b);
            active -= n_le;
        }
    }
}

/// The k-th and (k+1)-th smallest (0-based) entries: one selection, then
/// one counting sweep for the successor (the smallest entry above the
/// k-th, unless ties make the k-th repeat).
fn select_pair(m: &impl SortedMatrix, k: usize) -> Option<(f64, f64)> {
    let v = select(m, k)?;
    let rows = m.rows();
    let (mut lt, mut le) = (vec![0; rows], vec![0; rows]);
    count_rows(m, v, &mut lt, &mut le);
    let at_most: usize = (0..rows)
        .map(|i| le[i].max(m.first_col(i)) - m.first_col(i))
        .sum();
    if k + 1 < at_most {
        return Some((v, v));
    }
    let next = (0..rows)
        .map(|i| le[i].max(m.first_col(i)))
        .enumerate()
        .filter(|&(_, j)| j < m.cols())
        .map(|(i, j)| m.value(i, j))
        .min_by(f64::total_cmp)?;
    Some((v, next))
}

/// The same matrices over runs of equal values, for large samples with
/// few distinct values (measurements at a fixed resolution): each cell of
/// two runs stands for count × count entries (a Walsh run with itself for
/// c(c+1)/2). The k-th entry is found by bisection on its value over the
/// total order of the doubles: the smallest `t` with more than k entries
/// at most `t` is an entry, because that count only steps at entries. At
/// most 64 counts, each a two-pointer walk over the runs, O(r1 + r2), and
/// since entries are the same roundings as above the result has the same
/// bits (a common-practice bisection on a monotone count; the run form is
/// the value-count form of `super::runs`).
trait RunMatrix {
    /// How many entries are at most `t`.
    fn count_le(&self, t: f64) -> u64;
    /// The number of entries.
    fn total(&self) -> u64;
    /// The smallest and the largest entry.
    fn ends(&self) -> (f64, f64);
}

/// `x_i − y_j` over the runs of ascending x and ascending y.
struct RunDifferences {
    x: Vec<(f64, u64)>,
    y: Vec<(f64, u64)>,
    /// `y_from[b]`: how many y values lie in runs `b..`.
    y_from: Vec<u64>,
}

impl RunDifferences {
    #[cfg(test)]
    fn new(x: &[f64], y: &[f64]) -> Self {
        Self::of_runs(runs_of(x), runs_of(y))
    }

    fn of_runs(x: Vec<(f64, u64)>, y: Vec<(f64, u64)>) -> Self {
        let mut y_from = vec![0u64; y.len() + 1];
        for b in (0..y.len()).rev() {
            y_from[b] = y_from[b + 1] + y[b].1;
        }
        RunDifferences { x, y, y_from }
    }
}

impl RunMatrix for RunDifferences {
    fn count_le(&self, t: f64) -> u64 {
        // For each x run the entries at most t are the y runs from p on;
        // p only moves right as x grows.
        let mut p = 0;
        let mut n = 0;
        for &(xv, xc) in &self.x {
            while p < self.y.len() && xv - self.y[p].0 > t {
                p += 1;
            }
            n += xc * self.y_from[p];
        }
        n
    }
    fn total(&self) -> u64 {
        self.x.iter().map(|r| r.1).sum::<u64>() * self.y_from[0]
    }
    fn ends(&self) -> (f64, f64) {
        let (x0, x1) = (self.x[0].0, self.x[self.x.len() - 1].0);
        let (y0, y1) = (self.y[0].0, self.y[self.y.len() - 1].0);
        (x0 - y1, x1 - y0)
    }
}

/// Walsh averages over the runs of an ascending sample.
struct RunWalsh {
    d: Vec<(f64, u64)>,
    /// `before[b]`: how many values lie in runs `..b`.
    before: Vec<u64>,
}

impl RunWalsh {
    #[cfg(test)]
    fn new(d: &[f64]) -> Self {
        Self::of_runs(runs_of(d))
    }

    fn of_runs(d: Vec<(f64, u64)>) -> Self {
        let mut before = vec![0u64; d.len() + 1];
        for b in 0..d.len() {
            before[b + 1] = before[b] + d[b].1;
        }
        RunWalsh { d, before }
    }
}

impl RunMatrix for RunWalsh {
    fn count_le(&self, t: f64) -> u64 {
        // For run a the entries at most t are runs a..q (q falls as a
        // grows); the run with itself counts c(c+1)/2 pairs i ≤ j.
        let mut q = self.d.len();
        let mut n = 0;
        for (a, &(v, c)) in self.d.iter().enumerate() {
            while q > 0 && walsh(v, self.d[q - 1].0) > t {
                q -= 1;
            }
            if q <= a {
                break;
            }
            n += c * (c + 1) / 2 + c * (self.before[q] - self.before[a + 1]);
        }
        n
    }
    fn total(&self) -> u64 {
        let n = self.before[self.d.len()];
        n * (n + 1) / 2
    }
    fn ends(&self) -> (f64, f64) {
        let (lo, hi) = (self.d[0].0, self.d[self.d.len() - 1].0);
        (walsh(lo, lo), walsh(hi, hi))
    }
}

#[cfg(test)]
fn runs_of(sorted: &[f64]) -> Vec<(f64, u64)> {
    super::runs::of_sorted(sorted).collect()
}

/// The runs of a sorted sample, built once, when the run form pays for
/// it (`None` as soon as it does not): at most one distinct value in 16
/// (64 short walks then cost less than the general selection's few long
/// sweeps), and no value that could make an entry
/// −0.0 (−0.0 itself, or a negative value so small that halving it
/// rounds to −0.0), so that the zero the bisection lands on is +0.0, as
/// the entries' zero is.
fn few_runs(sorted: &[f64]) -> Option<Vec<(f64, u64)>> {
    let tiny_negative = |v: &f64| v.is_sign_negative() && *v > -1e-300;
    if sorted.len() < 64 || sorted.iter().any(tiny_negative) {
        return None;
    }
    let most = sorted.len() / 16;
    let mut runs = Vec::new();
    for r in super::runs::of_sorted(sorted) {
        if runs.len() == most {
            return None;
        }
        runs.push(r);
    }
    Some(runs)
}

/// Maps doubles to integers in their total order, and back.
fn order_key(v: f64) -> u64 {
    let b = v.to_bits();
    if b >> 63 == 1 {
        !b
    } else {
        b | 1 << 63
    }
}

fn from_key(k: u64) -> f64 {
    f64::from_bits(if k >> 63 == 1 { k & !(1 << 63) } else { !k })
}

/// The k-th smallest (0-based) entry of a run matrix; `None` when
/// `k ≥ total`.
fn select_runs(m: &impl RunMatrix, k: u64) -> Option<f64> {
    if k >= m.total() {
        return None;
    }
    let (low, high) = m.ends();
    let (mut lo, mut hi) = (order_key(low), order_key(high));
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if m.count_le(from_key(mid)) > k {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    // −0.0 and +0.0 count alike; the entries' zero is +0.0 (see
    // [`few_runs`]).
    Some(from_key(lo) + 0.0)
}

/// Median of a run matrix's entries (the mean of the two middle ones for
/// an even count), as [`median_of`].
fn median_runs(m: &impl RunMatrix) -> Option<f64> {
    let count = m.total();
    if count == 0 {
        return None;
    }
    if count % 2 == 1 {
        return select_runs(m, count / 2);
    }
    Some(walsh(
        select_runs(m, count / 2 - 1)?,
        select_runs(m, count / 2)?,
    ))
}

use super::sorted;

/// The k-th smallest (0-based: `k = 0` is the minimum) of the n1·n2
/// differences `x_i − y_j`. `None` when `k ≥ n1·n2`. Inputs need not be
/// sorted and must be finite.
pub fn kth_pairwise_difference(x: &[f64], y: &[f64], k: usize) -> Option<f64> {
    kth_pairwise_difference_sorted(&sorted(x), &sorted(y), k)
}

/// As [`kth_pairwise_difference`], for inputs already sorted ascending.
pub(crate) fn kth_pairwise_difference_sorted(x: &[f64], y: &[f64], k: usize) -> Option<f64> {
    if let (Some(rx), Some(ry)) = (few_runs(x), few_runs(y)) {
        return select_runs(&RunDifferences::of_runs(rx, ry), k as u64);
    }
    select(&Differences { x, y }, k)
}

/// The k-th smallest (0-based) of the n(n+1)/2 Walsh averages
/// `(d_i + d_j)/2`, i ≤ j. `None` when `k ≥ n(n+1)/2`. Input need not be
/// sorted and must be finite.
pub fn kth_walsh_average(d: &[f64], k: usize) -> Option<f64> {
    kth_walsh_average_sorted(&sorted(d), k)
}

/// As [`kth_walsh_average`], for input already sorted ascending.
pub(crate) fn kth_walsh_average_sorted(d: &[f64], k: usize) -> Option<f64> {
    if let Some(rd) = few_runs(d) {
        return select_runs(&RunWalsh::of_runs(rd), k as u64);
    }
    select(&Walsh { d }, k)
}

/// Median of the defined entries of a sorted matrix (the mean of the two
/// middle ones for an even count).
fn median_of(m: &impl SortedMatrix, count: usize) -> Option<f64> {
    if count == 0 {
        return None;
    }
    if count % 2 == 1 {
        return select(m, count / 2);
    }
    let (a, b) = select_pair(m, count / 2 - 1)?;
    Some(walsh(a, b))
}

/// Hodges–Lehmann two-sample shift: the median of all `x_i − y_j`
/// (Hodges & Lehmann 1963, "Estimates of location based on rank tests",
/// Ann. Math. Statist. 34, 598–611). Positive when `x` tends to be larger.
pub fn hl_shift(x: &[f64], y: &[f64]) -> Result<f64, StatsError> {
    check(x)?;
    check(y)?;
    hl_shift_sorted(&sorted(x), &sorted(y))
}

/// As [`hl_shift`], for finite inputs already sorted ascending.
pub(crate) fn hl_shift_sorted(x: &[f64], y: &[f64]) -> Result<f64, StatsError> {
    let count = x.len().saturating_mul(y.len());
    let m = if let (Some(rx), Some(ry)) = (few_runs(x), few_runs(y)) {
        median_runs(&RunDifferences::of_runs(rx, ry))
    } else {
        median_of(&Differences { x, y }, count)
    };
    m.ok_or(StatsError::TooFew { needed: 1, got: 0 })
}

/// Hodges–Lehmann one-sample location (pseudo-median): the median of the
/// Walsh averages (Hodges & Lehmann 1963, as above).
pub fn hl_one_sample(d: &[f64]) -> Result<f64, StatsError> {
    check(d)?;
    hl_one_sample_sorted(&sorted(d))
}

/// As [`hl_one_sample`], for finite input already sorted ascending.
pub(crate) fn hl_one_sample_sorted(d: &[f64]) -> Result<f64, StatsError> {
    let n = d.len();
    let m = if let Some(rd) = few_runs(d) {
        median_runs(&RunWalsh::of_runs(rd))
    } else {
        median_of(&Walsh { d }, n * (n + 1) / 2)
    };
    m.ok_or(StatsError::TooFew { needed: 1, got: 0 })
}

fn check(x: &[f64]) -> Result<(), StatsError> {
    if x.is_empty() {
        return Err(StatsError::TooFew { needed: 1, got: 0 });
    }
    ensure_finite(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn brute_diffs(x: &[f64], y: &[f64]) -> Vec<f64> {
        let mut v: Vec<f64> = x
            .iter()
            .flat_map(|a| y.iter().map(move |b| a - b))
            .collect();
        v.sort_unstable_by(f64::total_cmp);
        v
    }

    /// Every Walsh average of `d`, sorted: the definition, by brute force.
    fn brute_walsh(d: &[f64]) -> Vec<f64> {
        let s = sorted(d);
        let mut w = Vec::new();
        for i in 0..s.len() {
            for j in i..s.len() {
                w.push(walsh(s[i], s[j]));
            }
        }
        w.sort_unstable_by(f64::total_cmp);
        w
    }

    /// `n` values on a grid of `levels` steps of `step` from `offset`, sorted.
    fn tied_sample(
        rng: &mut SplitMix64,
        n: usize,
        levels: u64,
        step: f64,
        offset: f64,
    ) -> Vec<f64> {
        let mut v: Vec<f64> = (0..n)
            .map(|_| (rng.next() % levels) as f64 * step + offset)
            .collect();
        v.sort_by(f64::total_cmp);
        v
    }

    #[test]
    fn the_run_form_selects_what_sorting_every_entry_gives() {
        // Random samples with heavy ties, few ties and none, negative,
        // zero and positive values, of unequal sizes: every order
        // statistic the run form selects (each k for small samples) must
        // be the brute-force sorted entry, bit for bit.
        let mut rng = SplitMix64(0x005e_ed0f_0123);
        let mut sample = |n, levels, offset| tied_sample(&mut rng, n, levels, 0.1, offset);
        for (n1, n2, levels, off) in [
            (1, 1, 1, 0.0),
            (5, 3, 2, 0.0),
            (17, 23, 4, -0.3),
            (40, 31, 9, -1.0),
            (60, 60, 1000, 5.0),
            (33, 2, 3, -0.2),
        ] {
            let (x, y) = (sample(n1, levels, off), sample(n2, levels, 0.0));
            let want = brute_diffs(&x, &y);
            let m = RunDifferences::new(&x, &y);
            assert_eq!(m.total(), want.len() as u64);
            for (k, w) in want.iter().enumerate() {
                let got = select_runs(&m, k as u64).unwrap();
                assert_eq!(got.to_bits(), w.to_bits(), "{n1}×{n2}, k = {k}");
            }
            assert_eq!(select_runs(&m, want.len() as u64), None);
            let want = brute_walsh(&x);
            let m = RunWalsh::new(&x);
            assert_eq!(m.total(), want.len() as u64);
            for (k, w) in want.iter().enumerate() {
                let got = select_runs(&m, k as u64).unwrap();
                assert_eq!(got.to_bits(), w.to_bits(), "Walsh {n1}, k = {k}");
            }
        }
    }

    #[test]
    fn large_tied_samples_take_the_run_form_with_the_same_results() {
        // Above the threshold the estimates and interval ends come from the
        // run form; the general selection is the reference.
        let mut rng = SplitMix64(77);
        let mut sample = |n, levels, offset| tied_sample(&mut rng, n, levels, 0.5, offset);
        let (x, y) = (sample(3000, 40, -3.0), sample(2500, 50, 0.0));
        assert!(few_runs(&x).is_some() && few_runs(&y).is_some());
        let general = median_of(&Differences { x: &x, y: &y }, x.len() * y.len()).unwrap();
        assert_eq!(
            hl_shift_sorted(&x, &y).unwrap().to_bits(),
            general.to_bits()
        );
        let general = median_of(&Walsh { d: &x }, x.len() * (x.len() + 1) / 2).unwrap();
        assert_eq!(
            hl_one_sample_sorted(&x).unwrap().to_bits(),
            general.to_bits()
        );
        for k in [0, 1, 999, 3_750_000, 7_499_999] {
            assert_eq!(
                kth_pairwise_difference_sorted(&x, &y, k),
                select(&Differences { x: &x, y: &y }, k),
                "k = {k}"
            );
            assert_eq!(
                kth_walsh_average_sorted(&x, k),
                select(&Walsh { d: &x }, k),
                "Walsh k = {k}"
            );
        }
        // A sample holding −0.0 stays on the general path.
        let mut z = x.clone();
        z[0] = -0.0;
        z.sort_by(f64::total_cmp);
        assert!(few_runs(&z).is_none());
    }

    #[test]
    fn hand_worked_shift() {
        // Differences of {1, 2, 3} − {0, 1}: 1,0,2,1,3,2 → sorted 0,1,1,2,2,3;
        // median (1 + 2)/2 = 1.5.
        assert_eq!(hl_shift(&[3.0, 1.0, 2.0], &[1.0, 0.0]).unwrap(), 1.5);
        // Walsh averages of {0, 2, 10}: 0, 1, 5, 2, 6, 10 → median 3.5.
        assert_eq!(hl_one_sample(&[10.0, 0.0, 2.0]).unwrap(), 3.5);
    }

    #[test]
    fn large_selection_matches_sorting() {
        // Big enough that the pivot loop runs many times before gathering.
        let x: Vec<f64> = (0..300).map(|i| ((i * 37) % 101) as f64 * 0.5).collect();
        let y: Vec<f64> = (0..211).map(|i| ((i * 53) % 89) as f64 * 0.25).collect();
        let all = brute_diffs(&x, &y);
        for k in [0, 1, 999, all.len() / 2, all.len() - 2, all.len() - 1] {
            assert_eq!(kth_pairwise_difference(&x, &y, k), Some(all[k]), "k = {k}");
        }
        assert_eq!(kth_pairwise_difference(&x, &y, all.len()), None);
        let w = brute_walsh(&x);
        for k in [0, 17, w.len() / 2, w.len() - 1] {
            assert_eq!(kth_walsh_average(&x, k), Some(w[k]), "k = {k}");
        }
    }

    #[test]
    fn sampled_brackets_match_sorting() {
        // Several times SAMPLED_ABOVE, so sampled rounds run; heavy ties
        // (values on a 0.25 grid) and a skewed second sample.
        let x: Vec<f64> = (0..700).map(|i| ((i * 7919) % 613) as f64 * 0.25).collect();
        let y: Vec<f64> = (0..600)
            .map(|i| (((i * 104_729) % 401) as f64).powi(2) / 640.0)
            .collect();
        let all = brute_diffs(&x, &y);
        assert!(all.len() > 4 * SAMPLED_ABOVE);
        for k in [
            0,
            5,
            1234,
            all.len() / 40,
            all.len() / 2,
            all.len() - 977,
            all.len() - 1,
        ] {
            assert_eq!(kth_pairwise_difference(&x, &y, k), Some(all[k]), "k = {k}");
        }
        let d: Vec<f64> = (0..900).map(|i| ((i * 31) % 257) as f64 - 100.0).collect();
        let w = brute_walsh(&d);
        assert!(w.len() > 4 * SAMPLED_ABOVE);
        for k in [0, 99, w.len() / 3, w.len() / 2, w.len() - 1] {
            assert_eq!(kth_walsh_average(&d, k), Some(w[k]), "k = {k}");
        }
    }

    #[test]
    fn empty_and_nonfinite_are_errors() {
        assert!(hl_shift(&[], &[1.0]).is_err());
        assert_eq!(hl_one_sample(&[f64::NAN]), Err(StatsError::NonFinite));
        assert_eq!(kth_walsh_average(&[], 0), None);
    }
}
