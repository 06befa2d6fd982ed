//! `attest new`: a complete, commented analysis file to start from.
//!
//! The comments explain each key in terms of the study, not of the parser.
//! Each starter points at one of the invented demo data sets in
//! `analyses/data/`, so it passes `check`, `lock` and `run` as written; the
//! researcher then replaces the data path, columns and claim with their own.

use crate::error::{Failure, Result};
use crate::output::create_new;
use crate::plan::{Design, Method};
use std::path::{Path, PathBuf};

/// Writes `analyses/NAME.toml` under `root`; never overwrites.
pub(crate) fn write(
    root: &Path,
    name: &str,
    design: Design,
    method: Option<Method>,
) -> Result<PathBuf> {
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
    {
        return Err(
            Failure::input(format!("\"{name}\" is not a usable analysis name"))
                .help("use letters, digits, - and _ only, e.g. `attest new tea-tasting`"),
        );
    }
    let method = method.unwrap_or(match design {
        Design::Independent => Method::WelchT,
        Design::Paired => Method::PairedT,
        Design::OneSample => Method::OneSampleT,
    });
    if let Some(e) = method.misfit(design) {
        return Err(e);
    }
    let dir = root.join("analyses");
    std::fs::create_dir_all(&dir).map_err(|e| Failure::io("create", &dir, &e))?;
    let path = dir.join(format!("{name}.toml"));
    if path.exists() {
        return Err(Failure::input(format!(
            "{} already exists; attest new never overwrites",
            path.display()
        ))
        .help("choose another name, or edit the existing file"));
    }
    create_new(&path, text(name, design, method).as_bytes())?;
    Ok(path)
}

const HEAD: &str = r##"# A new analysis plan, written by `attest new`. Every line that starts with
# "#" is a comment for you; attest ignores it. Lines that start with "# " and
# hold `key = value` are optional keys: remove the "# " to use one.
#
# Work through it top to bottom, then:
#   attest check analyses/NAME.toml     (is the plan complete and consistent?)
#   attest rehearse analyses/NAME.toml  (once the data file exists: the whole
#                                        plan on blinded data, so slips in the
#                                        file show up before the lock, with
#                                        no result in sight)
#   attest lock analyses/NAME.toml      (seal it BEFORE you look at the data)
#   attest run analyses/NAME.toml       (then, with the data in)
#
# Every key is explained in docs/guide/reference/analysis-file.md.

# The version of this file format. Leave it at 1.
attest = 1

# What the study is about, in a few words. It heads the report.
title = "TITLE"

# Who is responsible for the plan (optional).
authors = ["Your Name"]

# A short description for the preregistration document (optional): the
# setting, who or what is measured, and how.
summary = "Describe the study here."

# The risk of a false alarm you accept for each hypothesis: the chance of
# declaring a difference when there is none. 0.05 is the usual choice.
alpha = 0.05

# How sure the intervals around your estimates should be. 0.95 gives the
# usual 95% intervals.
confidence = 0.95

# If you test several hypotheses, some will look "significant" by chance.
# This spreads the risk across them: holm (default), bonferroni, hochberg,
# fdr-bh, or none.
correction = "holm"

# Optional: the level of the assumption checks that `method = "checked"`
# uses to choose a test (default 0.05).
# check_alpha = 0.05

# Optional: the seed for anything resampled, so reruns give the same
# numbers (default 1).
# seed = 1

[data]
# Your data file, relative to this analysis file. This starter uses one of
# the invented demo files so that it runs as written; point it at your own.
"##;

/// How to read the data file: every `[data]` option, commented, with its
/// default.
const DATA_OPTIONS: &str = r##"
# How to read the file. The defaults suit most files; remove the "# " to
# change one.
# format = "csv"        # csv, tsv, txt or xlsx; taken from the file's ending when left out
# delimiter = ","       # the one character between cells; "\t" for tabs (default: "," for csv, a tab for tsv and txt)
# decimal = "."         # "." or ","; with "," the delimiter must be another character, e.g. ";"
# missing = ["", "NA", "N/A", "NaN", "."]   # cell texts that mean "no value"; a list you write REPLACES this one, so keep the ones you need
# sheet = "Sheet1"      # .xlsx only: the worksheet with the data (default: the first)
"##;

/// Optional hypothesis keys every design can use.
const COMMON_OPTIONS: &str = r##"
# Optional: how figures and tables name the outcome, and its unit.
label = "LABEL"
units = "UNITS"

# Optional: the other methods for this design are added to the report as
# robustness checks, marked as not preregistered (default true).
# robustness = true
"##;

/// The closing comment on deviations.
const DEVIATIONS: &str = r##"
# After the plan is locked, a change you make here still runs, but every
# output says "ran with deviations from the lock" and lists it. Declare each
# change and its reason in a block like this (it is not part of the sealed
# plan):
# [[deviation]]
# date = "2026-01-31"
# change = "alpha from 0.05 to 0.01"
# reason = "The ethics board asked for a stricter level."
"##;

fn text(name: &str, design: Design, method: Method) -> String {
    let m = method.as_str();
    // The equivalence example and the conventions each method can state.
    let equivalence = |bounds: &str, unit: &str| match method {
        Method::Checked => String::new(),
        Method::BrunnerMunzel => r##"
# Optional: to show that neither group tends to have the larger values (an
# equivalence test on the probability of superiority, two one-sided tests),
# give bounds around 1/2 and set `alternative = "two-sided"` (or leave it out):
# equivalence = [0.4, 0.6]
"##
        .to_string(),
        _ => format!(
            r##"
# Optional: to show that the difference is too small to matter (an
# equivalence test, two one-sided tests), give the smallest differences that
# matter, in {unit}, and set `alternative = "two-sided"` (or leave it out):
# equivalence = {bounds}
"##
        ),
    } + match (method, design) {
        (Method::TrimmedT, _) => r##"
# Optional: the share cut from each end before the means are taken.
# trim = 0.2
"##,
        (Method::BrunnerMunzel, _) => r##"
# Optional: p comes from splits of the pooled values when a group is small;
# how many splits at most (all of them when there are fewer).
# permutations = 10000
"##,
        (Method::Checked, Design::Independent) => r##"
# Optional: the rank test the checks fall back to: "mann-whitney" (default)
# or "brunner-munzel", which does not assume equal spreads.
# rank_fallback = "mann-whitney"
"##,
        _ => "",
    };
    let (data, label, units, hypothesis) = match design {
        Design::Independent => (
            "data/loaves.csv",
            "Loaf volume",
            "ml",
            format!(
                r##"
[[hypothesis]]
# A short label for the hypothesis; reports and named values use it.
id = "H1"

# The claim in your own words, as you would write it in the introduction.
claim = "Loaves proofed longer rise to a larger volume."

# Two independent groups: every unit (person, loaf, shop) is in one group.
design = "independent"

# The numeric column you compare.
outcome = "volume_ml"

# The column that says which group a row belongs to, and the two groups you
# compare, first and second. Differences are first minus second.
group = "proof"
levels = ["long", "standard"]

# The direction you expect, for first minus second: "greater", "less", or
# "two-sided" if either direction would count. Decide this now, not later.
alternative = "greater"

# How the groups are compared. welch-t does not assume equal spread and is a
# sound default; student-t assumes equal spread; mann-whitney compares
# ranks; brunner-munzel compares ranks without assuming equal spread;
# trimmed-t compares trimmed means (heavy tails, outliers); checked lets
# preregistered checks choose.
method = "{m}"
{eq}"##,
                eq = equivalence("[-20, 20]", "ml")
            ),
        ),
        Design::Paired => (
            "data/commute.csv",
            "Stress rating",
            "points",
            format!(
                r##"
[[hypothesis]]
# A short label for the hypothesis; reports and named values use it.
id = "H1"

# The claim in your own words.
claim = "Stress ratings fall after the change."

# Paired: every unit is measured twice (before and after, left and right).
design = "paired"

# Paired data come in one of two layouts; keep the one your file uses.
#
# Layout 1, wide (used here): one row per unit, the two measurements in two
# numeric columns. Differences are first minus second.
first = "stress_after"
second = "stress_before"
#
# Layout 2, long: one row per measurement, e.g.
#     commuter,occasion,stress
#     C01,before,6.8
#     C01,after,5.9
# To use it, delete `first` and `second` above and remove the "# " from
# these four lines. Units are paired by their label in `pair_by`.
# outcome = "stress"              # the numeric column
# pair_by = "commuter"            # the column naming the unit measured twice
# condition = "occasion"          # the column saying which measurement a row is
# levels = ["after", "before"]    # the two conditions, first and second: differences are first minus second

# The direction you expect for first minus second: "greater", "less" or
# "two-sided". Decide this now, not later.
alternative = "less"

# paired-t compares the mean difference; wilcoxon-signed-rank uses ranks;
# trimmed-t compares the trimmed mean of the differences; checked lets a
# preregistered normality check choose.
method = "{m}"
{eq}"##,
                eq = equivalence("[-0.5, 0.5]", "rating points")
            ),
        ),
        Design::OneSample => (
            "data/espresso.csv",
            "Shot weight",
            "g",
            format!(
                r##"
[[hypothesis]]
# A short label for the hypothesis; reports and named values use it.
id = "H1"

# The claim in your own words.
claim = "Shots weigh more or less than the 36 g target."

# One sample compared with a fixed value (a target, a norm, a published mean).
design = "one-sample"

# The numeric column, and the value you compare it with.
outcome = "grams"
reference = 36

# The direction you expect for outcome minus reference: "greater", "less"
# or "two-sided".
alternative = "two-sided"

# one-sample-t compares the mean; wilcoxon-signed-rank uses ranks;
# trimmed-t compares the trimmed mean; checked lets a preregistered
# normality check choose.
method = "{m}"
{eq}"##,
                eq = equivalence("[-0.5, 0.5]", "g")
            ),
        ),
    };
    let planning = match design {
        Design::Independent => {
            r##"
# Optional: how many units you need, and why (part of the sealed plan; the
# report compares it with the n you analysed). Give `effect`, or
# `difference` with `sd`.
# [hypothesis.planning]
# effect = 0.5          # smallest difference that matters, in SD units (Cohen's d)
# difference = 40       # ... or that difference in the outcome's units,
# sd = 60               #     with the SD you expect
# power = 0.9           # chance of detecting it if it is real
# ratio = 1             # size of the second group over the first
# sd_ratio = 1.5        # welch-t only: the SD of the second group over the first
"##
        }
        _ => {
            r##"
# Optional: how many units you need, and why (part of the sealed plan; the
# report compares it with the n you analysed). Give `effect`, or
# `difference` with `sd`.
# [hypothesis.planning]
# effect = 0.5          # smallest difference that matters, in SD units (Cohen's d; d_z for paired)
# difference = 0.5      # ... or that difference in the outcome's units,
# sd = 1                #     with the SD you expect (of the differences, for paired)
# power = 0.9           # chance of detecting it if it is real
"##
        }
    };
    let mut s = HEAD
        .replace("NAME", name)
        .replace("TITLE", &name.replace(['-', '_'], " "));
    s.push_str(&format!("path = \"{data}\"\n"));
    s.push_str(DATA_OPTIONS);
    s.push_str(
        r##"
# Exclusions you decide now, before seeing the data. Each removes rows for a
# reason you state; the report counts what each rule removed. For example:
# [[exclude]]
# reason = "Failed the attention check"
# column = "attention"
# values = ["fail"]            # rows whose cell is one of these texts
# Or by range, for a numeric column:
# below = 1000                 # remove values below this (and/or `above = …`)
# Or outliers by a rule fixed in advance:
# outlier = "median-distance"  # or "tukey-fences"
# limit = 3                    # in scaled MADs (median-distance) or IQRs (tukey-fences)
# by = "group"                 # optional: judge within each group of this column
"##,
    );
    s.push_str(&hypothesis);
    s.push_str(
        &COMMON_OPTIONS
            .replace("LABEL", label)
            .replace("UNITS", units),
    );
    s.push_str(planning);
    s.push_str(DEVIATIONS);
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_design_parses_as_written() {
        for design in [Design::Independent, Design::Paired, Design::OneSample] {
            let t = text(
                "trial",
                design,
                match design {
                    Design::Independent => Method::WelchT,
                    Design::Paired => Method::PairedT,
                    Design::OneSample => Method::OneSampleT,
                },
            );
            let f = crate::plan::validate::parse(Path::new("trial.toml"), &t).unwrap();
            assert_eq!(f.plan.hypotheses[0].design, design);
        }
    }

    /// Removes the "# " from the lines that start with one of `keys`.
    fn uncomment(text: &str, keys: &[&str]) -> String {
        text.lines()
            .map(|l| match l.strip_prefix("# ") {
                Some(rest) if keys.iter().any(|k| rest.starts_with(&format!("{k} ="))) => rest,
                _ => l,
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    #[test]
    fn the_paired_starter_shows_both_layouts_and_each_parses() {
        let wide = text("trial", Design::Paired, Method::PairedT);
        let f = crate::plan::validate::parse(Path::new("trial.toml"), &wide).unwrap();
        assert!(matches!(
            f.plan.hypotheses[0].comparison,
            crate::plan::Comparison::PairedColumns { .. }
        ));
        // The long layout, as the comments say: drop first/second, uncomment four lines.
        let long: String = uncomment(&wide, &["outcome", "pair_by", "condition", "levels"])
            .lines()
            .filter(|l| !l.starts_with("first =") && !l.starts_with("second ="))
            .collect::<Vec<_>>()
            .join("\n");
        let f = crate::plan::validate::parse(Path::new("trial.toml"), &long).unwrap();
        match &f.plan.hypotheses[0].comparison {
            crate::plan::Comparison::PairedRows {
                pair_by,
                condition,
                levels,
            } => {
                assert_eq!(pair_by, "commuter");
                assert_eq!(condition, "occasion");
                assert_eq!(levels, &["after".to_string(), "before".to_string()]);
            }
            other => panic!("expected the long layout, got {other:?}"),
        }
    }

    #[test]
    fn every_data_option_is_shown_and_parses_when_uncommented() {
        for design in [Design::Independent, Design::Paired, Design::OneSample] {
            let t = text("trial", design, Method::Checked);
            for key in [
                "format",
                "delimiter",
                "decimal",
                "missing",
                "sheet",
                "label",
                "units",
                "robustness",
                "check_alpha",
                "seed",
            ] {
                assert!(
                    t.lines()
                        .any(|l| l.trim_start_matches("# ").starts_with(&format!("{key} ="))),
                    "{design:?} starter lacks `{key}`"
                );
            }
            // Each [data] option and top-level option, uncommented on its own,
            // is a valid plan (sheet needs an .xlsx file, so format follows it).
            for key in [
                "delimiter",
                "decimal",
                "missing",
                "robustness",
                "check_alpha",
                "seed",
            ] {
                let one = uncomment(&t, &[key]);
                let f = crate::plan::validate::parse(Path::new("trial.toml"), &one);
                // "," as delimiter and decimal together is refused by design;
                // the decimal example is "." so this must pass.
                assert!(
                    f.is_ok(),
                    "{design:?} with `{key}` uncommented: {:?}",
                    f.err()
                );
            }
        }
    }

    #[test]
    fn every_starter_check_passes_with_every_method_that_fits() {
        for design in [Design::Independent, Design::Paired, Design::OneSample] {
            for method in crate::plan::Method::ALL {
                if method.misfit(design).is_some() {
                    continue;
                }
                let t = text("trial", design, method);
                let f = crate::plan::validate::parse(Path::new("trial.toml"), &t);
                assert!(f.is_ok(), "{design:?}/{method:?}: {:?}", f.err());
                // The equivalence example is offered for every fixed method,
                // and the conventions each method can state; uncommented
                // (with a two-sided alternative) they parse.
                assert_eq!(
                    t.contains("# equivalence ="),
                    method != crate::plan::Method::Checked,
                    "{design:?}/{method:?}"
                );
                let conventions = uncomment(&t, &["trim", "permutations", "rank_fallback"]);
                let f = crate::plan::validate::parse(Path::new("trial.toml"), &conventions);
                assert!(
                    f.is_ok(),
                    "{design:?}/{method:?} conventions: {:?}",
                    f.err()
                );
                if t.contains("# equivalence =") {
                    let eq = uncomment(&t, &["equivalence"])
                        .replace("alternative = \"greater\"", "alternative = \"two-sided\"")
                        .replace("alternative = \"less\"", "alternative = \"two-sided\"");
                    let f = crate::plan::validate::parse(Path::new("trial.toml"), &eq);
                    assert!(
                        f.is_ok(),
                        "{design:?}/{method:?} equivalence: {:?}",
                        f.err()
                    );
                }
            }
        }
    }

    #[test]
    fn never_overwrites() {
        let d = tempfile::tempdir().unwrap();
        write(d.path(), "a", Design::Paired, None).unwrap();
        let e = write(d.path(), "a", Design::Paired, None).unwrap_err();
        assert!(
            e.what
                .ends_with("already exists; attest new never overwrites"),
            "{}",
            e.what
        );
        assert!(write(d.path(), "../x", Design::Paired, None).is_err());
    }
}
