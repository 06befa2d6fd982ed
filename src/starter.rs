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
# "#" is a comment for you; attest ignores it.
#
# Work through it top to bottom, then:
#   attest check analyses/NAME.toml   (is the plan complete and consistent?)
#   attest lock analyses/NAME.toml    (seal it BEFORE you look at the data)
#   attest run analyses/NAME.toml     (later, when the data are in)

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

[data]
# Your data file, relative to this analysis file. This starter uses one of
# the invented demo files so that it runs as written; point it at your own.
"##;

fn text(name: &str, design: Design, method: Method) -> String {
    let (data, hypothesis) = match design {
        Design::Independent => (
            "data/loaves.csv",
            format!(
                r#"
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
# ranks; checked lets preregistered checks choose.
method = "{method}"

# Optional: how many units you need, and why.
# [hypothesis.planning]
# effect = 0.5      # smallest difference that matters, in SD units (Cohen's d)
# power = 0.9       # chance of detecting it if it is real
"#,
                method = method.as_str()
            ),
        ),
        Design::Paired => (
            "data/commute.csv",
            format!(
                r#"
[[hypothesis]]
# A short label for the hypothesis; reports and named values use it.
id = "H1"

# The claim in your own words.
claim = "Stress ratings fall after the change."

# Paired: every unit is measured twice (before and after, left and right).
design = "paired"

# The two columns holding the two measurements of the same unit, on one row.
# Differences are first minus second.
first = "stress_after"
second = "stress_before"

# The direction you expect for first minus second: "greater", "less" or
# "two-sided". Decide this now, not later.
alternative = "less"

# paired-t compares the mean difference; wilcoxon-signed-rank uses ranks;
# checked lets a preregistered normality check choose.
method = "{method}"
"#,
                method = method.as_str()
            ),
        ),
        Design::OneSample => (
            "data/espresso.csv",
            format!(
                r#"
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

# The direction you expect for outcome minus reference.
alternative = "two-sided"

# one-sample-t compares the mean; wilcoxon-signed-rank uses ranks; checked
# lets a preregistered normality check choose.
method = "{method}"
"#,
                method = method.as_str()
            ),
        ),
    };
    let mut s = HEAD
        .replace("NAME", name)
        .replace("TITLE", &name.replace(['-', '_'], " "));
    s.push_str(&format!("path = \"{data}\"\n"));
    s.push_str(
        r#"
# Exclusions you decide now, before seeing the data. Each removes rows for a
# reason you state; the report counts what each rule removed. For example:
# [[exclude]]
# reason = "Failed the attention check"
# column = "attention"
# values = ["fail"]
"#,
    );
    s.push_str(&hypothesis);
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
