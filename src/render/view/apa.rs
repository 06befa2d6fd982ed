//! Numbers as APA style writes them: pure functions from numbers to text.
//!
//! Each rule follows the APA Publication Manual, 7th ed. (American
//! Psychological Association, 2020): §6.36 on decimals and the leading
//! zero, §§6.40–6.46 on statistics in text, §6.44 on symbols (italic
//! symbols, upright subscripts that only identify). Rules checked against
//! the APA Style blog ("A post about nothing", 2010, on leading zeros;
//! "Formatting statistics: using brackets", 2010, on intervals and their
//! stated level) and university summaries of the 7th edition; section
//! numbers as those summaries give them.
//!
//! **One-sided intervals** are written with the open side as infinity and
//! a round bracket, since infinity is never included, and always with the
//! level: `95% CI [15.87, ∞)` for "greater", `95% CI (−∞, −2.10]` for
//! "less". The same form appears in every output (tables, sentences,
//! figure notes, the terminal); the level is never left to a header.
//! Output is Markdown: statistical symbols are wrapped in `*…*` so they
//! render in italics. Negative numbers use the true minus sign (U+2212) in
//! every output, Markdown and HTML alike, so the two never disagree.

/// The true minus sign, U+2212.
pub(crate) const MINUS: char = '\u{2212}';

/// A number with `decimals` digits after the point, a true minus sign for
/// negatives, and no "−0.00" (a value that rounds to zero has no sign).
pub(crate) fn fixed(x: f64, decimals: usize) -> String {
    if x.is_nan() {
        return "not defined".into();
    }
    if x.is_infinite() {
        return if x > 0.0 {
            "∞".into()
        } else {
            format!("{MINUS}∞")
        };
    }
    let s = format!("{:.*}", decimals, x.abs());
    let rounds_to_zero = s.chars().all(|c| c == '0' || c == '.');
    if x < 0.0 && !rounds_to_zero {
        format!("{MINUS}{s}")
    } else {
        s
    }
}

/// Most figures: two decimals (means, SDs, test statistics, d).
pub(crate) fn two(x: f64) -> String {
    fixed(x, 2)
}

/// A value that cannot exceed 1 in magnitude (correlation, rank-biserial
/// r, probability): no zero before the decimal point.
pub(crate) fn bounded(x: f64, decimals: usize) -> String {
    let s = fixed(x, decimals);
    if let Some(rest) = s.strip_prefix("0.") {
        format!(".{rest}")
    } else if let Some(rest) = s.strip_prefix(&format!("{MINUS}0.")) {
        format!("{MINUS}.{rest}")
    } else {
        s
    }
}

/// Decimals of descriptives and differences: one more than the outcome
/// was recorded with (APA Publication Manual, 7th ed., §6.36: as many
/// decimals as the measurement's precision supports; the one extra is
/// common practice), two when the resolution is unknown, at most six.
pub(crate) fn measured(recorded: Option<u32>) -> usize {
    recorded.map_or(2, |d| (d as usize + 1).min(6))
}

/// Decimals of recorded values themselves (the range): as recorded, two
/// when unknown.
pub(crate) fn as_recorded(recorded: Option<u32>) -> usize {
    recorded.map_or(2, |d| d as usize)
}

/// A number the plan states (a reference value, a bound): as the plan
/// wrote it, shortest form, with the true minus sign ("15", not "15.00").
pub(crate) fn stated(x: f64) -> String {
    if !x.is_finite() {
        return fixed(x, 0);
    }
    let s = format!("{}", x.abs());
    if x < 0.0 {
        format!("{MINUS}{s}")
    } else {
        s
    }
}

/// Degrees of freedom: whole numbers for Student's, paired and one-sample
/// t-tests; two decimals for Welch's fractional df.
pub(crate) fn df(df: f64, fractional: bool) -> String {
    if fractional {
        two(df)
    } else {
        fixed(df.round(), 0)
    }
}

/// A p value without the "p =" part: exact to three decimals without a
/// leading zero, `< .001` below .001. Values that round to 1 are written
/// `> .999` (common practice; the manual only says p cannot exceed 1).
pub(crate) fn p_number(p: f64) -> String {
    if p < 0.001 {
        "< .001".into()
    } else if p >= 0.9995 {
        "> .999".into()
    } else {
        bounded(p, 3)
    }
}

/// The p clause as it reads in text: `*p* = .046` or `*p* < .001`.
pub(crate) fn p_clause(p: f64) -> String {
    let n = p_number(p);
    if n.starts_with('<') || n.starts_with('>') {
        format!("{} {n}", sym("p"))
    } else {
        format!("{} = {n}", sym("p"))
    }
}

/// The sentence for a p that underflows to 0 in double precision: it
/// is below the smallest positive double (about 4.9 × 10⁻³²⁴), and, where
/// the test computed it on the log scale, its base-10 logarithm to one
/// decimal. A p printed as 0 would claim certainty no test gives.
pub(crate) fn p_underflow(log10_p: Option<f64>) -> String {
    let p = sym("p");
    match log10_p.filter(|l| l.is_finite()) {
        Some(l) => format!(
            "{p} is smaller than the smallest number the computation can hold (about 10⁻³²⁴), so it is given on the log scale: log₁₀ {p} = {}.",
            fixed(l, 1)
        ),
        None => format!(
            "{p} is smaller than the smallest number the computation can hold (about 10⁻³²⁴); its size beyond that is not known."
        ),
    }
}

/// A statistical symbol in italics (Markdown emphasis).
pub(crate) fn sym(symbol: &str) -> String {
    format!("*{symbol}*")
}

/// A statistical symbol with a subscript that is not itself a statistic,
/// set upright below the line: `*d*<sub>z</sub>`. The `<sub>` tags are the
/// one piece of HTML the reports write in Markdown (user text cannot carry
/// them: its `<` is escaped), and the HTML conversion lets exactly these
/// through.
pub(crate) fn sym_sub(symbol: &str, sub: &str) -> String {
    format!("*{symbol}*<sub>{sub}</sub>")
}

/// A confidence level as a percentage: 0.95 → "95%", 0.975 → "97.5%".
pub(crate) fn level(confidence: f64) -> String {
    let pct = confidence * 100.0;
    let one = format!("{pct:.1}");
    match one.strip_suffix(".0") {
        Some(whole) => format!("{whole}%"),
        None => format!("{one}%"),
    }
}

/// An interval's bounds: `[1.23, 4.56]`; an open side is written as
/// `−∞`/`∞` with a round bracket, since infinity is never included.
pub(crate) fn bounds(low: Option<f64>, high: Option<f64>, fmt: impl Fn(f64) -> String) -> String {
    let l = match low {
        Some(v) => format!("[{}", fmt(v)),
        None => format!("({MINUS}∞"),
    };
    let h = match high {
        Some(v) => format!("{}]", fmt(v)),
        None => "∞)".into(),
    };
    format!("{l}, {h}")
}

/// An interval with its level: `95% CI [1.23, 4.56]`.
pub(crate) fn ci(
    confidence: f64,
    low: Option<f64>,
    high: Option<f64>,
    fmt: impl Fn(f64) -> String,
) -> String {
    format!("{} CI {}", level(confidence), bounds(low, high, fmt))
}

/// The sidedness note: "one-sided" for a directional test, nothing for a
/// two-sided one (two-sided is what readers assume).
pub(crate) fn sidedness(one_sided: bool) -> Option<&'static str> {
    one_sided.then_some("one-sided")
}

/// A rank statistic (U, W+): a whole number when it is one, otherwise one
/// decimal (ties give halves; common practice).
pub(crate) fn rank_statistic(x: f64) -> String {
    if (x - x.round()).abs() < 1e-9 {
        fixed(x.round(), 0)
    } else {
        fixed(x, 1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Source for every test here: APA Publication Manual, 7th ed. (2020),
    // the section named beside each; the rules were checked against the APA
    // Style blog ("A post about nothing", 2010; "Formatting statistics:
    // using brackets", 2010) and university summaries of the 7th edition,
    // which give the section numbers.

    #[test]
    fn most_figures_take_two_decimals() {
        // APA Publication Manual, 7th ed., 6.36: two decimals for most statistics.
        assert_eq!(two(812.4), "812.40");
        assert_eq!(two(2.7149), "2.71");
    }

    #[test]
    fn negatives_use_the_true_minus_sign() {
        // APA Publication Manual, 7th ed., 6.44 (minus sign, not a hyphen).
        assert_eq!(two(-1.5), "\u{2212}1.50");
        assert!(!two(-1.5).contains('-'));
    }

    #[test]
    fn a_value_rounding_to_zero_has_no_sign() {
        // APA Publication Manual, 7th ed., 6.36: a rounded value is reported as rounded.
        assert_eq!(two(-0.001), "0.00");
    }

    #[test]
    fn student_df_are_integers() {
        // APA Publication Manual, 7th ed., 6.43: t(48) for a pooled test.
        assert_eq!(df(48.0, false), "48");
    }

    #[test]
    fn welch_df_take_two_decimals() {
        // APA Publication Manual, 7th ed., 6.36: fractional df to two decimals.
        assert_eq!(df(97.3149, true), "97.31");
    }

    #[test]
    fn p_is_exact_to_three_decimals_without_leading_zero() {
        // APA Publication Manual, 7th ed., 6.36: exact p to two or three decimals, no leading zero.
        assert_eq!(p_number(0.0456), ".046");
        assert_eq!(p_clause(0.0456), "*p* = .046");
    }

    #[test]
    fn p_below_one_thousandth_is_written_as_less_than() {
        // APA Publication Manual, 7th ed., 6.36: p < .001.
        assert_eq!(p_number(0.0004), "< .001");
        assert_eq!(p_clause(0.0004), "*p* < .001");
    }

    #[test]
    fn values_bounded_by_one_have_no_leading_zero() {
        // APA Publication Manual, 7th ed., 6.36: no zero before the decimal for values that cannot exceed 1.
        assert_eq!(bounded(0.34, 2), ".34");
        assert_eq!(bounded(-0.34, 2), "\u{2212}.34");
    }

    #[test]
    fn statistical_symbols_are_italic() {
        // APA Publication Manual, 7th ed., 6.45: statistical symbols in italics.
        assert_eq!(sym("t"), "*t*");
        assert_eq!(sym("SD"), "*SD*");
    }

    #[test]
    fn intervals_in_square_brackets_with_level() {
        // APA Publication Manual, 7th ed., 6.43: 95% CI [LL, UL].
        assert_eq!(
            ci(0.95, Some(1.234), Some(4.561), two),
            "95% CI [1.23, 4.56]"
        );
        assert_eq!(level(0.9), "90%");
    }

    #[test]
    fn open_sides_are_infinite() {
        // APA Publication Manual, 7th ed., 6.43 gives the bracket form; an open
        // side is written as infinity (common practice for one-sided intervals).
        assert_eq!(ci(0.95, Some(0.21), None, two), "95% CI [0.21, ∞)");
        assert_eq!(bounds(None, Some(-0.5), two), "(\u{2212}∞, \u{2212}0.50]");
    }

    #[test]
    fn one_sided_tests_say_so() {
        // APA Publication Manual, 7th ed., 6.46: state a one-tailed test.
        assert_eq!(sidedness(true), Some("one-sided"));
        assert_eq!(sidedness(false), None);
    }
}
