//! Fuzz target: the statistics entry points on arbitrary f64 vectors,
//! non-finite values included. Each must either refuse with a typed error
//! or return a finite p value in [0, 1] (and finite statistics).
//!
//! Input layout: byte 0 picks the alternative (mod 3), byte 1 the
//! confidence level (mod 4 of 0.8, 0.9, 0.95, 0.99), byte 2 where the
//! values split into the two groups; the rest is read as little-endian f64
//! (8 bytes each) when byte 3 is odd, else as small integers (one byte each,
//! −128…127, which makes ties and zeros common, the hard cases for the rank
//! tests).
#![no_main]

use attest::stats::describe::describe;
use attest::stats::mann_whitney::mann_whitney;
use attest::stats::normality::shapiro_wilk;
use attest::stats::spread::{brown_forsythe, levene};
use attest::stats::ttest::{one_sample_t, paired_t, student_t, welch_t, TTest};
use attest::stats::wilcoxon::wilcoxon_signed_rank;
use attest::stats::Alternative;
use libfuzzer_sys::fuzz_target;

fn p_ok(p: f64, what: &str) {
    assert!(p.is_finite() && (0.0..=1.0).contains(&p), "{what}: p = {p}");
}

fn t_ok(r: Result<TTest, attest::stats::StatsError>, what: &str) {
    if let Ok(t) = r {
        p_ok(t.p, what);
        assert!(t.t.is_finite() && t.df > 0.0, "{what}: {t:?}");
        assert!(t.estimate.is_finite() && t.se.is_finite(), "{what}: {t:?}");
    }
}

fuzz_target!(|bytes: &[u8]| {
    if bytes.len() < 4 {
        return;
    }
    let alt = [
        Alternative::TwoSided,
        Alternative::Greater,
        Alternative::Less,
    ][usize::from(bytes[0]) % 3];
    let level = [0.8, 0.9, 0.95, 0.99][usize::from(bytes[1]) % 4];
    let values: Vec<f64> = if bytes[3] % 2 == 1 {
        bytes[4..]
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
            .collect()
    } else {
        bytes[4..].iter().map(|&b| f64::from(b as i8)).collect()
    };
    let cut = usize::from(bytes[2]).min(values.len());
    let (x, y) = values.split_at(cut);

    t_ok(one_sample_t(&values, 0.0, alt, level), "one_sample_t");
    t_ok(student_t(x, y, alt, level), "student_t");
    t_ok(welch_t(x, y, alt, level), "welch_t");
    let m = x.len().min(y.len());
    t_ok(paired_t(&x[..m], &y[..m], alt, level), "paired_t");
    if let Ok(r) = mann_whitney(x, y, alt, level) {
        p_ok(r.p, "mann_whitney");
        assert!(r.statistic.is_finite(), "mann_whitney: {r:?}");
    }
    if let Ok(r) = wilcoxon_signed_rank(&values, alt, level) {
        p_ok(r.p, "wilcoxon_signed_rank");
        assert!(r.statistic.is_finite(), "wilcoxon: {r:?}");
    }
    if let Ok(r) = shapiro_wilk(&values) {
        p_ok(r.p, "shapiro_wilk");
        assert!(r.w.is_finite() && r.w > 0.0 && r.w <= 1.0 + 1e-12, "{r:?}");
    }
    for (name, r) in [
        ("brown_forsythe", brown_forsythe(x, y)),
        ("levene", levene(x, y)),
    ] {
        if let Ok(s) = r {
            p_ok(s.p, name);
            assert!(s.f.is_finite() && s.f >= 0.0, "{name}: {s:?}");
        }
    }
    if let Ok(d) = describe(&values) {
        assert!(d.mean.is_finite() && d.min <= d.max, "describe: {d:?}");
        if let Some(sd) = d.sd {
            assert!(sd.is_finite() && sd >= 0.0, "describe: {d:?}");
        }
    }
});
