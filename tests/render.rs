//! Rendering tests: escaping, self-containment, template override,
//! determinism, and snapshots of the report for a hand-built result.
//!
//! The scenario is invented: a community garden compares tomato yield per
//! plant under drip lines and hand watering (independent groups), and the
//! same volunteers' weekly hours before and after a tool library opened
//! (paired). Every number below is hand-written for the test, not produced
//! by attest's statistics code; renderers only format them.

use attest::plan::{
    Comparison, DataFormat, DataSpec, Design, Deviation, ExcludeKind, ExcludeRule, Hypothesis,
    Method, Plan,
};
use attest::render::{render_plan, render_run};
use attest::results::*;
use attest::stats::multiplicity::Correction;
use attest::stats::rank_tests::ZeroRule;
use attest::stats::{Alternative, PMethod, RankPMethod};

fn summary(label: &str, n: usize, mean: f64, sd: f64, q: [f64; 5]) -> GroupSummary {
    GroupSummary {
        label: label.into(),
        describe: attest::stats::describe::Descriptives {
            n,
            mean,
            sd: Some(sd),
            se: Some(sd / (n as f64).sqrt()),
            median: q[2],
            q1: q[1],
            q3: q[3],
            min: q[0],
            max: q[4],
            skewness: Some(0.21),
            excess_kurtosis: Some(-0.4),
        },
        mean_ci: Some([mean - 0.5, mean + 0.5]),
    }
}

/// A figure set as the model holds it: sorted points, their normal
/// quantiles at (i + ½)/n and the line through the quartiles. The
/// quantiles come from statrs (an outside implementation), so nothing here
/// is attest's own statistics code.
fn plot(label: &str, points: &[f64]) -> PlotData {
    use statrs::distribution::{ContinuousCDF, Normal};
    let z = |p: f64| Normal::standard().inverse_cdf(p);
    let mut sorted = points.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    let quartile = |f: f64| {
        let pos = f * (n - 1) as f64;
        let (i, frac) = (pos.floor() as usize, pos.fract());
        sorted[i] + (sorted[(i + 1).min(n - 1)] - sorted[i]) * frac
    };
    let slope = (quartile(0.75) - quartile(0.25)) / (z(0.75) - z(0.25));
    PlotData {
        label: label.into(),
        qq: QqData {
            theoretical: (0..n).map(|i| z((i as f64 + 0.5) / n as f64)).collect(),
            line: Some(QqLine {
                intercept: quartile(0.25) - slope * z(0.25),
                slope,
            }),
        },
        points: sorted,
        sampled: false,
        bin_edges: vec![-2.0, -1.0, 0.0, 1.0, 2.0, 3.0],
        bin_counts: vec![1, 3, 4, 5, 2],
    }
}

fn plan() -> Plan {
    Plan {
        attest: 1,
        title: "Watering and yield in the Elm Street garden".into(),
        authors: vec!["R. Okonkwo".into(), "L. Marchetti".into()],
        summary: Some("Plots were assigned to drip lines or hand watering by lot in April.\n\nVolunteer hours come from the sign-in sheet.".into()),
        alpha: 0.05,
        confidence: 0.95,
        correction: Correction::Holm,
        seed: 20261101,
        check_alpha: 0.05,
        data: DataSpec {
            path: "garden.csv".into(),
            format: DataFormat::Delimited,
            delimiter: ',',
            decimal: '.',
            missing: vec!["".into(), "NA".into()],
            sheet: None,
            source: None,
            connect: None,
            query: None,
        },
        exclude: vec![ExcludeRule {
            reason: "plants lost to blight before fruiting".into(),
            column: "status".into(),
            rule: ExcludeKind::Values { values: vec!["blight".into()] },
        }],
        hypotheses: vec![
            Hypothesis {
                id: "H1".into(),
                claim: "Drip-watered plants yield more fruit than hand-watered plants".into(),
                design: Design::Independent,
                outcome: Some("yield_kg".into()),
                comparison: Comparison::Groups {
                    group: "watering".into(),
                    levels: ["drip".into(), "hand".into()],
                },
                alternative: Alternative::Greater,
                method: Method::Checked,
                equivalence: None,
                label: Some("fruit per plant".into()),
                units: Some("kg".into()),
                decimals: None,
                names: Default::default(),
                robustness: true,
                conventions: Default::default(),
                planning: None,
            },
            Hypothesis {
                id: "H2".into(),
                claim: "Volunteer hours changed after the tool library opened".into(),
                design: Design::Paired,
                outcome: None,
                comparison: Comparison::PairedColumns {
                    first: "hours_after".into(),
                    second: "hours_before".into(),
                },
                alternative: Alternative::TwoSided,
                method: Method::WilcoxonSignedRank,
                equivalence: None,
                label: Some("weekly hours".into()),
                units: Some("h".into()),
                decimals: None,
                names: Default::default(),
                robustness: false,
                conventions: Default::default(),
                planning: None,
            },
        ],
    }
}

fn h1() -> HypothesisResult {
    let estimate = Estimate {
        name: EstimateKind::MeanDifference,
        value: 0.62,
        ci_low: Some(0.19),
        ci_high: None,
        confidence: 0.95,
    };
    let effect = EffectSize {
        name: EffectKind::CohenD,
        value: 0.58,
        ci_low: Some(0.18),
        ci_high: None,
    };
    let test = TestResult {
        method: Method::WelchT,
        statistic_name: StatisticKind::T,
        statistic: Some(2.41),
        df: Some(41.37),
        z: None,
        p: 0.0103,
        p_method: None,
        estimate: estimate.clone(),
        effects: vec![
            effect.clone(),
            EffectSize {
                name: EffectKind::HedgesG,
                value: 0.57,
                ci_low: Some(0.17),
                ci_high: None,
            },
        ],
        zeros_dropped: None,
        zero_rule: None,
        zeros_ranked: None,
        p_detail: None,
        continuity_correction: None,
        log10_p: Some(0.0103f64.log10()),
        trim: None,
        permutations: None,
    };
    HypothesisResult {
        id: "H1".into(),
        claim: "Drip-watered plants yield more fruit than hand-watered plants".into(),
        design: Design::Independent,
        method_planned: Method::Checked,
        method: Method::WelchT,
        alternative: Alternative::Greater,
        outcome_label: "fruit per plant".into(),
        units: Some("kg".into()),
        recorded_decimals: Some(1),
        labels: ["drip".into(), "hand".into()],
        reference: None,
        groups: vec![
            summary("drip", 24, 4.87, 0.81, [3.2, 4.3, 4.9, 5.4, 6.6]),
            summary("hand", 23, 4.25, 1.12, [2.1, 3.5, 4.2, 5.0, 6.4]),
        ],
        statistic: Some(2.41),
        df: Some(41.37),
        p: 0.0103,
        p_adjusted: 0.0206,
        p_method: None,
        estimate,
        effect,
        decision: Decision::Reject,
        test,
        checks: Checks {
            check_alpha: 0.05,
            normality: vec![
                NormalityCheck {
                    label: "drip".into(),
                    n: 24,
                    w: Some(0.967),
                    p: Some(0.584),
                    rejected: Some(false),
                    not_run: None,
                },
                NormalityCheck {
                    label: "hand".into(),
                    n: 23,
                    w: Some(0.951),
                    p: Some(0.307),
                    rejected: Some(false),
                    not_run: None,
                },
            ],
            spread: vec![
                SpreadCheck {
                    method: SpreadMethod::BrownForsythe,
                    f: Some(4.62),
                    df1: Some(1.0),
                    df2: Some(45.0),
                    p: Some(0.037),
                    rejected: Some(true),
                    not_run: None,
                },
                SpreadCheck {
                    method: SpreadMethod::Levene,
                    f: Some(5.08),
                    df1: Some(1.0),
                    df2: Some(45.0),
                    p: Some(0.029),
                    rejected: Some(true),
                    not_run: None,
                },
            ],
            branch: Some(Branch::NormalUnequalSpread),
        },
        robustness: vec![TestResult {
            method: Method::MannWhitney,
            statistic_name: StatisticKind::U,
            statistic: Some(371.5),
            df: None,
            z: Some(2.08),
            p: 0.0188,
            p_method: Some(PMethod::NormalApproximation),
            estimate: Estimate {
                name: EstimateKind::HodgesLehmannShift,
                value: 0.6,
                ci_low: Some(0.1),
                ci_high: None,
                confidence: 0.95,
            },
            effects: vec![EffectSize {
                name: EffectKind::RankBiserial,
                value: 0.35,
                ci_low: Some(0.06),
                ci_high: None,
            }],
            zeros_dropped: None,
            zero_rule: None,
            zeros_ranked: None,
            p_detail: Some(RankPMethod::NormalApproximation),
            continuity_correction: Some(true),
            log10_p: Some(0.0188f64.log10()),
            trim: None,
            permutations: None,
        }],
        equivalence: None,
        rows: RowFlow {
            read: [26, 24],
            other_levels: 2,
            rules: vec![RuleStep {
                reason: "plants lost to blight before fruiting".into(),
                first: 2,
                second: 0,
                other: 0,
            }],
            missing: [0, 1],
            incomplete_pairs: 0,
            no_group: 0,
            unpaired: [0, 0],
            analysed: [24, 23],
        },
        plot: vec![
            plot(
                "drip",
                &[3.2, 4.1, 4.3, 4.6, 4.8, 4.9, 5.0, 5.2, 5.4, 5.9, 6.6],
            ),
            plot("hand", &[2.1, 3.0, 3.5, 3.9, 4.2, 4.4, 4.8, 5.0, 5.6, 6.4]),
        ],
        paired_plot: None,
        planning: None,
    }
}

fn h2() -> HypothesisResult {
    let estimate = Estimate {
        name: EstimateKind::HodgesLehmannShift,
        value: 0.75,
        ci_low: Some(-0.25),
        ci_high: Some(1.5),
        confidence: 0.95,
    };
    let effect = EffectSize {
        name: EffectKind::RankBiserial,
        value: 0.29,
        ci_low: Some(-0.12),
        ci_high: Some(0.61),
    };
    let test = TestResult {
        method: Method::WilcoxonSignedRank,
        statistic_name: StatisticKind::WPlus,
        statistic: Some(118.0),
        df: None,
        z: None,
        p: 0.214,
        p_method: Some(PMethod::Exact),
        estimate: estimate.clone(),
        effects: vec![effect.clone()],
        zeros_dropped: Some(2),
        zero_rule: Some(ZeroRule::Drop),
        zeros_ranked: Some(0),
        p_detail: Some(RankPMethod::Exact),
        continuity_correction: None,
        log10_p: Some(0.214f64.log10()),
        trim: None,
        permutations: None,
    };
    HypothesisResult {
        id: "H2".into(),
        claim: "Volunteer hours changed after the tool library opened".into(),
        design: Design::Paired,
        method_planned: Method::WilcoxonSignedRank,
        method: Method::WilcoxonSignedRank,
        alternative: Alternative::TwoSided,
        outcome_label: "weekly hours".into(),
        units: Some("h".into()),
        recorded_decimals: None,
        labels: ["hours_after".into(), "hours_before".into()],
        reference: None,
        groups: vec![
            summary("hours_after", 18, 4.9, 2.1, [1.0, 3.0, 5.0, 6.5, 9.0]),
            summary("hours_before", 18, 4.3, 1.9, [1.0, 3.0, 4.0, 5.5, 8.0]),
            summary("difference", 18, 0.6, 1.4, [-2.0, 0.0, 0.5, 1.5, 3.0]),
        ],
        statistic: Some(118.0),
        df: None,
        p: 0.214,
        p_adjusted: 0.214,
        p_method: Some(PMethod::Exact),
        estimate,
        effect,
        decision: Decision::Retain,
        test,
        checks: Checks {
            check_alpha: 0.05,
            normality: vec![NormalityCheck {
                label: "differences".into(),
                n: 18,
                w: Some(0.902),
                p: Some(0.061),
                rejected: Some(false),
                not_run: None,
            }],
            spread: vec![],
            branch: None,
        },
        robustness: vec![],
        equivalence: None,
        rows: RowFlow {
            read: [20, 20],
            other_levels: 0,
            rules: vec![],
            missing: [1, 1],
            incomplete_pairs: 1,
            no_group: 0,
            unpaired: [1, 1],
            analysed: [18, 18],
        },
        plot: vec![plot("difference", &[-2.0, -1.0, 0.0, 0.5, 1.0, 1.5, 3.0])],
        paired_plot: Some(PairedPlot {
            pairs: vec![
                [5.0, 4.0],
                [3.0, 3.0],
                [6.0, 4.5],
                [1.0, 2.0],
                [9.0, 8.0],
                [4.0, 5.5],
            ],
            sampled: false,
        }),
        planning: None,
    }
}

fn scenario() -> Results {
    Results {
        tool: "attest".into(),
        rehearsal: None,
        version: "0.1.0".into(),
        plan_sha256: "3f1c0d6e9b2a4c8d7e6f5a4b3c2d1e0f9a8b7c6d5e4f3a2b1c0d9e8f7a6b5c4d".into(),
        lock: LockState::AsLocked,
        lock_record: Some(LockRecord {
            sha256: "a9b8c7d6e5f4a3b2c1d0e9f8a7b6c5d4e3f2a1b0c9d8e7f6a5b4c3d2e1f0a9b8".into(),
            locked_at: "2026-04-02T08:30:00Z".into(),
            locked_with: "0.1.0".into(),
            plan_sha256: "3f1c0d6e9b2a4c8d7e6f5a4b3c2d1e0f9a8b7c6d5e4f3a2b1c0d9e8f7a6b5c4d".into(),
            data_existed: false,
            data_sha256: None,
            intact: true,
            witness: attest::witness::Witness::NoGit,
            evidence: vec![],
            rehearsals: vec![],
        }),
        changes: vec![],
        deviations: vec![],
        plan: plan(),
        data: DataRecord {
            path: "garden.csv".into(),
            source: None,
            sha256: "0d1e2f3a4b5c6d7e8f9a0b1c2d3e4f5a6b7c8d9e0f1a2b3c4d5e6f7a8b9c0d1e".into(),
            rows: 70,
            outside_plan_folder: false,
        },
        hypotheses: vec![h1(), h2()],
        not_computed: vec![],
        as_locked: None,
        correction_applied: Correction::Holm,
        command: "attest run garden.toml".into(),
        analysis_file: "garden.toml".into(),
    }
}

/// The report's files from one render, by kind.
#[derive(Debug, PartialEq)]
struct Rendered {
    report_md: String,
    report_html: String,
    figures: Vec<(String, String)>,
}

fn render_report(
    r: &Results,
    templates: Option<&std::path::Path>,
) -> attest::error::Result<Rendered> {
    let files = render_run(r, templates)?;
    let text = |name: &str| {
        files
            .iter()
            .find(|o| o.name == name)
            .map(|o| String::from_utf8(o.bytes.clone()).unwrap())
            .unwrap_or_default()
    };
    Ok(Rendered {
        report_md: text("report.md"),
        report_html: text("report.html"),
        figures: files
            .iter()
            .filter(|o| o.name.starts_with("figures/") && o.name.ends_with(".svg"))
            .map(|o| (o.name.clone(), String::from_utf8(o.bytes.clone()).unwrap()))
            .collect(),
    })
}

fn lock_of(r: &Results) -> attest::lock::LockFile {
    attest::lock::LockFile {
        lock_format: 1,
        tool: "attest".into(),
        version: "0.1.0".into(),
        locked_at: "2026-04-02T08:30:00Z".into(),
        analysis_file: "garden.toml".into(),
        plan_sha256: r.plan_sha256.clone(),
        plan: r.plan.clone(),
        data: attest::lock::LockedData {
            path: "garden.csv".into(),
            existed: false,
            sha256: None,
        },
        content_sha256: "a9b8c7d6e5f4a3b2c1d0e9f8a7b6c5d4e3f2a1b0c9d8e7f6a5b4c3d2e1f0a9b8".into(),
    }
}

/// Whether the HTML refers to anything outside itself: an address in an
/// attribute, or a tag or rule that loads one. (A DOI written out as text
/// in the references list is not a reference the page follows.)
fn external_references(html: &str) -> Vec<&'static str> {
    [
        "=\"http",
        "='http",
        "<a ",
        "<script",
        "<link",
        "<iframe",
        "<img",
        "@import",
        "url(",
        "src=",
        "href=\"//",
    ]
    .into_iter()
    .filter(|needle| html.to_ascii_lowercase().contains(needle))
    .collect()
}

#[test]
fn html_is_self_contained() {
    let out = render_report(&scenario(), None).unwrap();
    assert_eq!(external_references(&out.report_html), Vec::<&str>::new());
    assert!(
        out.report_html.matches("<svg").count() >= 5,
        "figures are inline"
    );
    let plan = render_plan(&lock_of(&scenario()), &[], None).unwrap();
    assert_eq!(external_references(&plan.plan_html), Vec::<&str>::new());
}

#[test]
fn script_labels_and_html_claims_show_as_text() {
    let mut r = scenario();
    let evil = "<script>alert(1)</script>";
    r.hypotheses[0].labels[0] = evil.into();
    r.hypotheses[0].groups[0].label = evil.into();
    r.hypotheses[0].plot[0].label = evil.into();
    r.hypotheses[0].claim =
        "Drip <b onmouseover=\"x()\">wins</b> *really* [link](javascript:x)".into();
    r.plan.title = "<img src=x onerror=alert(1)>".into();
    let out = render_report(&r, None).unwrap();
    let html = &out.report_html;
    assert!(!html.contains("<script"), "a label became markup");
    assert!(!html.contains("<b onmouseover"), "a claim became markup");
    assert!(!html.contains("<img"), "the title became markup");
    assert!(!html.contains("href=\"javascript"), "a claim became a link");
    assert!(
        html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"),
        "the label is shown"
    );
    assert!(
        html.contains("*really* [link](javascript:x)"),
        "the claim is shown as written"
    );
    for (_, svg) in &out.figures {
        assert!(
            !svg.contains("<script"),
            "an SVG carries the label as markup"
        );
    }
    let md = &out.report_md;
    assert!(
        md.contains("\\<script\\>alert(1)\\</script\\>"),
        "Markdown escapes the label"
    );
}

#[test]
fn a_user_template_overrides_and_the_rest_fall_back() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("report.md.j2"),
        "{% import \"macros.md.j2\" as m %}# Garden notes: {{ title }}\n{% for h in hypotheses %}{{ h.id }} {{ glance.rows[loop.index0][5] }}\n{% endfor %}",
    )
    .unwrap();
    let out = render_report(&scenario(), Some(dir.path())).unwrap();
    assert_eq!(
        out.report_md,
        "# Garden notes: Watering and yield in the Elm Street garden\nH1 supported\nH2 not supported\n"
    );
    // page.html.j2 was not overridden: the embedded one wraps the body.
    assert!(out.report_html.contains("<h1>Garden notes"));
    assert!(out.report_html.starts_with("<!DOCTYPE html>"));
}

#[test]
fn a_broken_user_template_is_a_readable_error() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("plan.md.j2"), "{% for %}").unwrap();
    let err = render_plan(&lock_of(&scenario()), &[], Some(dir.path())).unwrap_err();
    assert!(
        err.to_string()
            .starts_with("error: template plan.md.j2 failed"),
        "{err}"
    );
}

#[test]
fn rendering_is_deterministic() {
    let a = render_report(&scenario(), None).unwrap();
    let b = render_report(&scenario(), None).unwrap();
    assert_eq!(a, b);
    let p = render_plan(&lock_of(&scenario()), &[], None).unwrap();
    let q = render_plan(&lock_of(&scenario()), &[], None).unwrap();
    assert_eq!(p, q);
}

#[test]
fn every_figure_is_labelled() {
    let out = render_report(&scenario(), None).unwrap();
    let names: Vec<&str> = out.figures.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(
        names,
        [
            "figures/h1-groups.svg",
            "figures/h1-qq.svg",
            "figures/h1-difference.svg",
            "figures/h1-methods.svg",
            "figures/h2-pairs.svg",
            "figures/h2-qq.svg",
            "figures/h2-differences.svg",
            "figures/h2-difference.svg"
        ]
    );
    for (name, svg) in &out.figures {
        assert!(svg.contains("<title") && svg.contains("<desc"), "{name}");
        assert!(
            out.report_md.contains(&format!("]({name})")),
            "{name} is referenced"
        );
    }
}

#[test]
fn status_lines_follow_the_lock_state() {
    let mut r = scenario();
    r.lock = LockState::Deviates;
    r.changes = vec![attest::plan::canonical::FieldChange {
        field: "alpha".into(),
        locked: "0.05".into(),
        current: "0.1".into(),
    }];
    r.deviations = vec![Deviation {
        date: "2026-05-01".into(),
        change: "alpha".into(),
        reason: "the funder asked".into(),
        field: None,
        planned: None,
        when: None,
        effect: None,
        severity: None,
    }];
    let md = render_report(&r, None).unwrap().report_md;
    assert!(md.contains("**Ran with deviations from the lock** (locked 2026-04-02)"));
    assert!(
        md.contains("| alpha | 0\\.05 | 0\\.1 |") || md.contains("| alpha | 0.05 | 0.1 |"),
        "{md}"
    );
    assert!(md.contains("the funder asked"));
    r.lock = LockState::Unlocked;
    r.lock_record = None;
    let md = render_report(&r, None).unwrap().report_md;
    assert!(md.contains("**Not preregistered**"));
}

/// The part of a report from `## title` to the next `## `.
fn section<'a>(md: &'a str, title: &str) -> &'a str {
    let start = md
        .find(title)
        .unwrap_or_else(|| panic!("no {title} in {md}"));
    let rest = &md[start..];
    let end = rest[3..].find("\n## ").map_or(rest.len(), |e| e + 4);
    &rest[..end]
}

#[test]
fn snapshot_changes_table_and_not_computed() {
    let mut r = scenario();
    r.lock = LockState::Deviates;
    r.changes = vec![
        attest::plan::canonical::FieldChange {
            field: "alpha".into(),
            locked: "0.05".into(),
            current: "0.01".into(),
        },
        attest::plan::canonical::FieldChange {
            field: "hypotheses[H1].method".into(),
            locked: "welch-t".into(),
            current: "student-t".into(),
        },
    ];
    r.deviations = vec![
        Deviation {
            date: "2026-05-01".into(),
            change: "a stricter level".into(),
            reason: "the funder asked".into(),
            field: Some("alpha".into()),
            planned: None,
            when: Some(attest::plan::Timing::BeforeAccess),
            effect: Some("fewer findings pass".into()),
            severity: Some(attest::plan::Severity::Stronger),
        },
        Deviation {
            date: "2026-05-02".into(),
            change: "recruited from two schools".into(),
            reason: "one school closed".into(),
            field: None,
            planned: Some("one school".into()),
            when: Some(attest::plan::Timing::BeforeCollection),
            effect: None,
            severity: None,
        },
    ];
    if let Some(l) = r.lock_record.as_mut() {
        l.data_existed = true;
    }
    let h2 = r.hypotheses.pop().unwrap();
    r.not_computed = vec![attest::results::NotComputed {
        id: h2.id.clone(),
        claim: h2.claim.clone(),
        reason: "welch-t cannot be computed: every value within each group is the same".into(),
        rows: h2.rows.clone(),
    }];
    let mut locked_h1 = r.hypotheses[0].clone();
    locked_h1.method = Method::WelchT;
    locked_h1.decision = match locked_h1.decision {
        Decision::Reject => Decision::Retain,
        Decision::Retain => Decision::Reject,
    };
    r.as_locked = Some(Box::new(LockedRun {
        plan_sha256: "0".repeat(64),
        hypotheses: vec![locked_h1, h2.clone()],
        not_computed: vec![],
        correction_applied: Correction::Holm,
        not_run: None,
    }));
    let md = render_report(&r, None).unwrap().report_md;
    insta::assert_snapshot!("changes_table", section(&md, "## Changes since the lock"));
    insta::assert_snapshot!(
        "as_locked_and_as_run",
        section(&md, "## As locked and as run")
    );
    insta::assert_snapshot!("not_computed", section(&md, "## Not computed"));
    // "before-collection" while the data existed at the lock is flagged.
    assert!(md.contains("CONTRADICTED by the record"), "{md}");
}

#[test]
fn snapshot_report() {
    let out = render_report(&scenario(), None).unwrap();
    insta::assert_snapshot!("report_md", out.report_md);
    insta::assert_snapshot!("report_html", out.report_html);
}

#[test]
fn snapshot_plan() {
    let out = render_plan(&lock_of(&scenario()), &[], None).unwrap();
    insta::assert_snapshot!("plan_md", out.plan_md);
    insta::assert_snapshot!("plan_html", out.plan_html);
}

/// The APA 7 rules the reports follow, each checked where it shows. Sources:
/// APA Publication Manual, 7th ed. (2020); rules checked through the APA
/// Style blog ("A post about nothing", 2010, leading zeros; "Formatting
/// statistics: using brackets", 2010, intervals with their level) and
/// university summaries of the 7th edition (table number bold, title
/// italic in title case; statistical symbols italic).
#[test]
fn apa_style_holds_in_the_report() {
    let mut r = scenario();
    // H2 reports d_z here, to show its subscript.
    r.hypotheses[1].effect.name = EffectKind::DZ;
    let md = render_report(&r, None).unwrap().report_md;
    // §7.11–7.12: "Table N" in bold, the title in italics on the next line.
    assert!(md.contains("**Table 1**\n\n*At a Glance*"), "{md}");
    assert!(
        md.contains("**Table 2**\n\n*What the Data Look Like in H1*"),
        "{md}"
    );
    // §6.44: symbols italic, table headers included.
    assert!(md.contains("|  | *n* | *M* | *SD* | *Mdn* |"), "{md}");
    assert!(md.contains("| *p* (Holm-adjusted) | Verdict |"), "{md}");
    // §6.44: the statistic in a test's name is a symbol, italic ("t test").
    assert!(md.contains("Welch's *t* test"), "{md}");
    assert!(!md.contains("t-test") && !md.contains("U test |"), "{md}");
    // §6.44: d with an upright subscript z.
    assert!(md.contains("*d*<sub>z</sub>"), "{md}");
    assert!(!md.contains("*d*z") && !md.contains("d_z"), "{md}");
    // §6.43: every interval states its level, in tables too.
    for line in md.lines() {
        for (i, _) in line.match_indices(" [") {
            let before = &line[..i];
            assert!(
                before.ends_with("CI") || before.ends_with("CIs") || !line[i..].contains(", "),
                "an interval without its level: {line}"
            );
        }
    }
    // §6.36: no leading zero where a value cannot exceed 1 (p, W); one where it can.
    assert!(!md.contains("= 0.0") || md.contains("*d* = 0."), "{md}");
    assert!(!md.contains("*p* = 0."), "{md}");
}

#[test]
fn decimals_follow_the_recorded_resolution() {
    // H1's fixture was recorded to one decimal: descriptives to two, the
    // range as recorded (APA Publication Manual, 7th ed., §6.36).
    let md = render_report(&scenario(), None).unwrap().report_md;
    let row = md
        .lines()
        .find(|l| l.starts_with("| drip |"))
        .expect("drip row");
    let range = row.trim_end_matches(" |").rsplit(" | ").next().unwrap();
    assert!(
        range
            .split(" to ")
            .all(|v| v.split('.').nth(1).map(str::len) == Some(1)),
        "range as recorded: {row}"
    );
}

/// Figures are drawn for the 16 cm text block of a single-column A4 page:
/// text at least 8 pt there, tick labels with the true minus sign and no
/// negative zero (APA Publication Manual, 7th ed., §6.44 for the sign).
#[test]
fn figures_print_at_the_designed_width() {
    let out = render_report(&scenario(), None).unwrap();
    let methods = &out
        .figures
        .iter()
        .find(|(n, _)| n.ends_with("h1-methods.svg"))
        .unwrap()
        .1;
    // Test names inside a figure keep their italic symbol (§6.44).
    assert!(
        methods.contains("<tspan font-style=\"italic\">t</tspan> test"),
        "{methods}"
    );
    for (name, svg) in &out.figures {
        assert!(svg.contains("width=\"16cm\""), "{name}");
        let view_width: f64 = svg
            .split("viewBox=\"0 0 ")
            .nth(1)
            .and_then(|s| s.split(' ').next())
            .and_then(|w| w.parse().ok())
            .expect("a view box");
        let pt_per_unit = 16.0 / 2.54 * 72.0 / view_width;
        for part in svg.split("font-size=\"").skip(1) {
            let size: f64 = part.split('"').next().unwrap().parse().unwrap();
            assert!(size * pt_per_unit >= 8.0, "{name}: text of {size} units");
        }
        for text in svg.split("<text").skip(1) {
            let words = text
                .split('>')
                .nth(1)
                .unwrap_or("")
                .split('<')
                .next()
                .unwrap_or("");
            if words.trim().parse::<f64>().is_ok() || words.starts_with('\u{2212}') {
                assert!(!words.contains('-'), "{name}: hyphen-minus in {words}");
                let digits = words.trim_start_matches('\u{2212}');
                let negative_zero =
                    words.starts_with('\u{2212}') && digits.chars().all(|c| c == '0' || c == '.');
                assert!(!negative_zero, "{name}: negative zero {words}");
            }
        }
    }
}

#[test]
fn the_plans_names_replace_the_datas_spelling() {
    let mut r = scenario();
    r.plan.hypotheses[0]
        .names
        .insert("drip".into(), "drip-watered plants".into());
    let out = render_report(&r, None).unwrap();
    let sentence = out
        .report_md
        .lines()
        .find(|l| l.starts_with("> Fruit per plant"))
        .expect("H1's sentence");
    assert!(sentence.contains("for drip-watered plants ("), "{sentence}");
    assert!(!sentence.contains("for drip ("), "{sentence}");
    assert!(
        out.report_md.contains("| drip-watered plants | "),
        "descriptives row"
    );
}

#[test]
fn an_estimate_against_the_preregistered_direction_is_named() {
    let mut r = scenario();
    let h = &mut r.hypotheses[0];
    h.estimate.value = -0.31;
    h.estimate.ci_low = Some(-0.7);
    h.decision = Decision::Retain;
    let md = render_report(&r, None).unwrap().report_md;
    let sentence = md
        .lines()
        .find(|l| l.starts_with("> Fruit per plant"))
        .expect("H1's sentence");
    assert!(
        sentence.contains("was lower for drip (")
            && sentence.contains("the opposite of the preregistered direction (higher)"),
        "{sentence}"
    );
    assert!(!sentence.contains("not shown to be higher"), "{sentence}");
}

#[test]
fn outcome_names_are_in_sentence_case_inside_a_sentence() {
    let mut r = scenario();
    let h = &mut r.hypotheses[0];
    h.outcome_label = "Fruit per plant".into();
    h.alternative = Alternative::TwoSided;
    h.decision = Decision::Retain;
    let md = render_report(&r, None).unwrap().report_md;
    assert!(
        md.contains("> The data did not show a difference in fruit per plant between"),
        "{md}"
    );
}
