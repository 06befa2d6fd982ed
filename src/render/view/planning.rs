//! Sample-size plans in words: the sentence the preregistration document,
//! the report and `attest power` print for a planned size.

use super::apa;
use crate::analysis::planning::{Answer, Planned, Solved};
use crate::plan::Design;
use crate::stats::Alternative;

fn sided(alt: Alternative) -> &'static str {
    match alt {
        Alternative::TwoSided => "two-sided",
        _ => "one-sided",
    }
}

fn per_group(n: &[usize], design: Design) -> String {
    match (n, design) {
        ([a, b], _) if a == b => format!("{a} per group"),
        ([a, b], _) => format!("{a} in the first group and {b} in the second"),
        ([a], Design::Paired) => format!("{a} pairs"),
        ([a], _) => format!("{a} observations"),
        _ => String::new(),
    }
}

/// The standardised effect a sample-size plan is stated in.
pub(crate) fn effect_symbol(design: Design) -> &'static str {
    match design {
        Design::Paired => "*d*<sub>z</sub>",
        Design::Independent | Design::OneSample => "*d*",
    }
}

fn pct(p: f64) -> String {
    apa::level(p)
}

/// "To detect *d* = 0.40 with 90% power at α = .05, one-sided, 108 per
/// group are needed (exact power .902)."
pub(crate) fn planned_sentence(
    p: &Planned,
    design: Design,
    alpha: f64,
    alt: Alternative,
) -> String {
    let mut s = format!(
        "To detect {} = {} with {} power at α = {}, {}, {} are needed (exact power {} for the *t* test)",
        effect_symbol(design),
        apa::two(p.effect.abs()),
        pct(p.power_target),
        apa::bounded(alpha, 3).trim_end_matches('0'),
        sided(alt),
        per_group(&p.n, design),
        apa::bounded(p.power, 3)
    );
    if p.rank_adjusted {
        s.push_str("; the sizes are raised for the rank test by its lowest asymptotic relative efficiency, 0.864 (Hodges & Lehmann 1956), so they hold for any continuous shape");
    }
    s.push('.');
    s
}

/// The answer of `attest power` in one or more plain lines.
pub(crate) fn answer_lines(a: &Answer) -> Vec<String> {
    let sym = match a.design {
        Design::Paired => "d_z",
        Design::Independent | Design::OneSample => "d",
    };
    let alpha = apa::bounded(a.alpha, 3);
    let alpha = alpha.trim_end_matches('0');
    let mut lines = vec![match a.solved {
        Solved::N => format!(
            "to detect {sym} = {} with {} power at α = {alpha}, {}, {} are needed (exact power {})",
            apa::two(a.effect.abs()),
            pct(a.target_power.unwrap_or(a.power)),
            sided(a.alternative),
            per_group(&a.n, a.design),
            apa::bounded(a.power, 3)
        ),
        Solved::Power => format!(
            "with {} at α = {alpha}, {}, the power to detect {sym} = {} is {}",
            per_group(&a.n, a.design),
            sided(a.alternative),
            apa::two(a.effect.abs()),
            apa::bounded(a.power, 3)
        ),
        Solved::Effect => format!(
            "with {} at α = {alpha}, {}, the smallest effect detectable with {} power is {sym} = {}",
            per_group(&a.n, a.design),
            sided(a.alternative),
            pct(a.target_power.unwrap_or(a.power)),
            apa::two(a.effect.abs())
        ),
    }];
    if let Some(k) = a.sd_ratio {
        lines.push(format!(
            "Welch's df at a planned SD ratio of {k} (second/first)"
        ));
    }
    if let Some(r) = &a.rank {
        lines.push(format!(
            "for a rank test: {} if the data are normal (ARE 3/π), {} for any continuous shape (ARE 0.864)",
            per_group(&r.normal_data, a.design),
            per_group(&r.any_shape, a.design)
        ));
    }
    if let Some(s) = &a.simulated {
        lines.push(format!(
            "simulated ({} studies, seed {}): *t* test power {}, rank test power {} at the sizes for any shape",
            s.reps,
            s.seed,
            apa::bounded(s.t_power, 3),
            apa::bounded(s.rank_power, 3)
        ));
    }
    lines
}
