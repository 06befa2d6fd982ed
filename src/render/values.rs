//! Named values for documents: every reported figure of every hypothesis
//! under a stable name, written as LaTeX macros (`values.tex`) and as JSON
//! (`values.json`), so a thesis chapter quotes results that regenerate with
//! the data.
//!
//! Naming scheme (documented in docs/values.md): the analysis file's stem,
//! the hypothesis id and the figure, each turned into letters only — digits
//! become their English words, every other character is dropped, and each
//! word starts with a capital: `loaves.toml`, `H1`, `t` → `\LoavesHOneT`.
//! Names depend only on the plan, never on the data; two figures that map
//! to the same name are an error, not a silent overwrite.
//!
//! Values are formatted once, by the report's APA rules, as Markdown inline
//! text (`*t*(97.31) = 2.71`); LaTeX is derived from that text by turning
//! emphasis into `\textit{}` and escaping everything else.

use crate::error::{Failure, Result};
use crate::render::view::{apa, sentence};
use crate::results::{HypothesisResult, Results};
use pulldown_cmark::{Event, Parser, Tag, TagEnd};
use std::collections::BTreeMap;

const DIGITS: [&str; 10] = [
    "Zero", "One", "Two", "Three", "Four", "Five", "Six", "Seven", "Eight", "Nine",
];

/// Turns any text into a run of ASCII letters: digits become words, other
/// ASCII characters separate words and are dropped, each word is
/// capitalised. A letter with an accent loses it (its canonical
/// decomposition without the combining marks: é → E, ü → U); any other
/// letter or digit outside ASCII becomes its own word, `U` and its code
/// point spelled in letters (男, U+7537 → `USevenFiveThreeSeven`), so
/// distinct characters never share a name and nothing depends on the
/// data or on the order of the file.
pub(crate) fn letters(text: &str) -> String {
    use unicode_normalization::char::{decompose_canonical, is_combining_mark};
    let mut out = String::new();
    let mut new_word = true;
    for ch in text.chars() {
        let mut base = Vec::new();
        decompose_canonical(ch, |c| {
            if !is_combining_mark(c) {
                base.push(c)
            }
        });
        for ch in base {
            if ch.is_ascii_alphabetic() {
                if new_word {
                    out.push(ch.to_ascii_uppercase());
                } else {
                    out.push(ch);
                }
                new_word = false;
            } else if let Some(d) = ch.to_digit(10) {
                out.push_str(DIGITS[d as usize]);
                new_word = true;
            } else if !ch.is_ascii() && ch.is_alphanumeric() {
                out.push('U');
                for h in format!("{:X}", ch as u32).chars() {
                    match h.to_digit(10) {
                        Some(d) => out.push_str(DIGITS[d as usize]),
                        None => out.push(h),
                    }
                }
                new_word = true;
            } else {
                new_word = true;
            }
        }
    }
    out
}

/// The names of parts that must stay apart (the hypothesis ids of a file,
/// the sets of one hypothesis): each part's [`letters`]; where two parts
/// give the same letters (`a1` and `a-1`), each of them gets its position
/// in the list appended (`AOneAtOne`, `AOneAtTwo`), so names depend only on
/// the plan.
pub(crate) fn distinct_names(parts: &[String]) -> Vec<String> {
    let base: Vec<String> = parts.iter().map(|p| letters(p)).collect();
    base.iter()
        .enumerate()
        .map(|(i, b)| {
            if base.iter().filter(|o| *o == b).count() > 1 {
                format!("{b}At{}", letters(&(i + 1).to_string()))
            } else {
                b.clone()
            }
        })
        .collect()
}

/// The macro name for one figure.
#[cfg(test)]
pub(crate) fn name(analysis: &str, id: &str, figure: &str) -> String {
    format!("{}{}{}", letters(analysis), letters(id), letters(figure))
}

/// One named value of a plan: which hypothesis, which figure and, for a
/// figure of one set (n, mean, SD), which set.
pub(crate) struct Slot {
    /// The value's name.
    pub name: String,
    /// Index of the hypothesis.
    pub hypothesis: usize,
    /// The figure's word (`Stat`, `P`, …, `N`, `Mean`, `SD`).
    pub figure: &'static str,
    /// Index of the set for per-set figures.
    pub set: Option<usize>,
}

/// What naming needs of one hypothesis: its id, the labels of its sets
/// (in report order) and whether it has an equivalence result.
pub(crate) struct Named<'a> {
    /// The hypothesis id.
    pub id: &'a str,
    /// The labels of its sets.
    pub sets: Vec<String>,
    /// Whether equivalence bounds are declared.
    pub equivalence: bool,
}

/// Every value name of an analysis, from the plan alone: `check` and
/// `lock` call it to refuse what cannot be named before any data are
/// read, and the renderer uses the same names.
pub(crate) fn slots(stem: &str, hyps: &[Named]) -> Result<Vec<Slot>> {
    let ids: Vec<String> = hyps.iter().map(|h| h.id.to_string()).collect();
    let id_names = distinct_names(&ids);
    let stem = letters(stem);
    let stem = if stem.is_empty() {
        "Analysis".to_string()
    } else {
        stem
    };
    let mut seen = Values::default();
    let mut out = Vec::new();
    for (i, h) in hyps.iter().enumerate() {
        let set_names = distinct_names(&h.sets);
        let mut push = |figure: &'static str, set: Option<usize>| -> Result<()> {
            let (label, origin) = match set {
                Some(k) => (
                    set_names[k].as_str(),
                    format!("{} {figure} {}", h.id, h.sets[k]),
                ),
                None => ("", format!("{} {figure}", h.id)),
            };
            let name = format!("{stem}{}{figure}{label}", id_names[i]);
            seen.add(name.clone(), origin, String::new())?;
            out.push(Slot {
                name,
                hypothesis: i,
                figure,
                set,
            });
            Ok(())
        };
        for f in ["Stat", "P", "Effect", "Diff", "Sentence"] {
            push(f, None)?;
        }
        if h.equivalence {
            push("Equivalence", None)?;
        }
        for k in 0..h.sets.len() {
            for f in ["N", "Mean", "SD"] {
                push(f, Some(k))?;
            }
        }
    }
    Ok(out)
}

/// The naming view of a plan's hypotheses: the sets each one reports.
pub(crate) fn plan_named(plan: &crate::plan::Plan) -> Vec<Named<'_>> {
    use crate::plan::Design;
    plan.hypotheses
        .iter()
        .map(|h| {
            let names = h.set_names();
            let sets = match h.design {
                Design::Independent => names.to_vec(),
                Design::Paired => vec![names[0].clone(), names[1].clone(), "difference".into()],
                Design::OneSample => vec![names[0].clone()],
            };
            Named {
                id: &h.id,
                sets,
                equivalence: h.equivalence.is_some(),
            }
        })
        .collect()
}

/// Refuses, before any data are read, a plan whose values cannot all be
/// given distinct names.
pub(crate) fn check_plan(plan: &crate::plan::Plan, analysis_file: &str) -> Result<()> {
    let stem = analysis_file.strip_suffix(".toml").unwrap_or(analysis_file);
    slots(stem, &plan_named(plan)).map(|_| ())
}

/// A set of named values that refuses collisions.
#[derive(Default)]
pub(crate) struct Values {
    map: BTreeMap<String, (String, String)>,
}

impl Values {
    /// Adds a value under `name`; `origin` says where it came from, for
    /// the collision message.
    pub(crate) fn add(&mut self, name: String, origin: String, markdown: String) -> Result<()> {
        if name.is_empty() || !name.chars().all(|c| c.is_ascii_alphabetic()) {
            return Err(Failure::input(format!(
                "{origin} gives the value name \"{name}\", which has no letters to use"
            ))
            .help("give the analysis file and the hypothesis ids names with letters, e.g. H1"));
        }
        if let Some((other, _)) = self.map.get(&name) {
            return Err(Failure::input(format!("two values would be named \\{name}: {other} and {origin}"))
                .help("rename one of the hypothesis ids (or group levels) so their letters differ; digits count as words, punctuation is dropped"));
        }
        self.map.insert(name, (origin, markdown));
        Ok(())
    }

    /// Names and Markdown values, sorted by name.
    pub(crate) fn iter(&self) -> impl Iterator<Item = (&str, &str)> {
        self.map.iter().map(|(k, (_, v))| (k.as_str(), v.as_str()))
    }

    /// `values.tex`: one `\newcommand` per value.
    pub(crate) fn to_tex(&self, title: &str) -> String {
        let mut s = String::from(
            "% Named values written by attest; regenerate with `attest run`, do not edit.\n",
        );
        s.push_str(&format!(
            "% Analysis: {}\n",
            title.replace(['\n', '\r'], " ")
        ));
        for (k, v) in self.iter() {
            s.push_str(&format!(
                "\\newcommand{{\\{k}}}{{{}}}\n",
                markdown_to_latex(v)
            ));
        }
        s
    }

    /// `values.json`: names mapped to the Markdown strings.
    pub(crate) fn to_json(&self) -> String {
        let m: BTreeMap<&str, &str> = self.iter().collect();
        let mut s = serde_json::to_string_pretty(&m).expect("strings always serialise");
        s.push('\n');
        s
    }
}

/// Escapes text for LaTeX's text mode.
pub(crate) fn latex_escape(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '\\' => s.push_str("\\textbackslash{}"),
            '{' | '}' | '$' | '&' | '#' | '_' | '%' => {
                s.push('\\');
                s.push(ch);
            }
            '~' => s.push_str("\\textasciitilde{}"),
            '^' => s.push_str("\\textasciicircum{}"),
            '−' => s.push_str("\\ensuremath{-}"),
            '∞' => s.push_str("\\ensuremath{\\infty}"),
            '≥' => s.push_str("\\ensuremath{\\geq}"),
            '≤' => s.push_str("\\ensuremath{\\leq}"),
            '–' => s.push_str("--"),
            '—' => s.push_str("---"),
            '×' => s.push_str("\\ensuremath{\\times}"),
            '<' => s.push_str("\\ensuremath{<}"),
            '>' => s.push_str("\\ensuremath{>}"),
            '±' => s.push_str("\\ensuremath{\\pm}"),
            'α' => s.push_str("\\ensuremath{\\alpha}"),
            'μ' => s.push_str("\\ensuremath{\\mu}"),
            '\u{a0}' => s.push('~'),
            _ => s.push(ch),
        }
    }
    s
}

/// Converts Markdown inline text (emphasis and plain text) to LaTeX.
pub(crate) fn markdown_to_latex(md: &str) -> String {
    let mut s = String::new();
    for ev in Parser::new(md) {
        match ev {
            Event::Start(Tag::Emphasis) => s.push_str("\\textit{"),
            Event::Start(Tag::Strong) => s.push_str("\\textbf{"),
            Event::End(TagEnd::Emphasis) | Event::End(TagEnd::Strong) => s.push('}'),
            Event::Text(t) | Event::Code(t) => s.push_str(&latex_escape(&t)),
            Event::SoftBreak | Event::HardBreak => s.push(' '),
            // The one piece of HTML the view writes: a subscript.
            Event::InlineHtml(t) if &*t == "<sub>" => s.push_str("\\textsubscript{"),
            Event::InlineHtml(t) if &*t == "</sub>" => s.push('}'),
            Event::Html(t) | Event::InlineHtml(t) => s.push_str(&latex_escape(&t)),
            _ => {}
        }
    }
    s
}

/// The named-values renderer: `values.tex` and `values.json`.
pub(crate) struct NamedValues;

impl super::Renderer for NamedValues {
    fn render(&self, cx: &super::Context, _done: &[super::Output]) -> Result<Vec<super::Output>> {
        let v = from_results(cx.results)?;
        Ok(vec![
            super::Output::new("values.tex", v.to_tex(&cx.results.plan.title)),
            super::Output::new("values.json", v.to_json()),
        ])
    }
}

/// Builds the named values of a run from its results.
pub(crate) fn from_results(r: &Results) -> Result<Values> {
    let stem = r
        .analysis_file
        .strip_suffix(".toml")
        .unwrap_or(&r.analysis_file);
    let correction = r.correction_applied;
    let conf = r.plan.confidence;
    // Names come from the whole plan, so a hypothesis that could not be
    // computed leaves every other name as it would be.
    let named = plan_named(&r.plan);
    let mut v = Values::default();
    for slot in slots(stem, &named)? {
        let id = &r.plan.hypotheses[slot.hypothesis].id;
        let Some(h) = r.hypotheses.iter().find(|h| &h.id == id) else {
            continue;
        };
        if slot.set.is_some_and(|k| k >= h.groups.len()) {
            continue;
        }
        let g = slot.set.map(|k| &h.groups[k]);
        let digits = apa::measured(h.recorded_decimals);
        let text = match (slot.figure, g) {
            ("Stat", _) => Some(bare_statistic(h)),
            ("P", _) => Some(sentence::p_of(h, correction)),
            ("Effect", _) => Some(sentence::effect(&h.effect, conf)),
            ("Diff", _) => Some(sentence::estimate(&h.estimate, h.units.as_deref(), digits)),
            // Macro names keep the data's spelling; the words use the
            // plan's display names, as the report does.
            ("Sentence", _) => Some(sentence::one_sentence(
                &super::view::displayed(r, h),
                correction,
            )),
            ("Equivalence", _) => h
                .equivalence
                .as_ref()
                .map(|eq| format!("{} = {}", apa::sym("p"), apa::p_number(eq.p))),
            ("N", Some(g)) => Some(format!("{} = {}", apa::sym("n"), g.describe.n)),
            ("Mean", Some(g)) => Some(format!(
                "{} = {}",
                apa::sym("M"),
                apa::fixed(g.describe.mean, digits)
            )),
            ("SD", Some(g)) => g
                .describe
                .sd
                .map(|sd| format!("{} = {}", apa::sym("SD"), apa::fixed(sd, digits))),
            _ => None,
        };
        if let Some(text) = text {
            let origin = match g {
                Some(g) => format!("{} {} {}", h.id, slot.figure, g.label),
                None => format!("{} {}", h.id, slot.figure),
            };
            v.add(slot.name, origin, text)?;
        }
    }
    Ok(v)
}

/// The test statistic without the method's name: `*t*(97.31) = 2.71`,
/// `*U* = 312`, `*W*+ = 123`; for equivalence, the deciding one of the
/// two one-sided tests (the larger p), or its p when it has no t.
fn bare_statistic(h: &HypothesisResult) -> String {
    if let Some(eq) = &h.equivalence {
        let deciding = if eq.p_lower >= eq.p_upper {
            eq.t_lower
        } else {
            eq.t_upper
        };
        if let (Some(t), Some(df)) = (deciding, eq.df) {
            let fractional = df.fract() != 0.0;
            return format!(
                "{}({}) = {}",
                apa::sym("t"),
                apa::df(df, fractional),
                apa::two(t)
            );
        }
        return apa::p_clause(eq.p);
    }
    sentence::bare_statistic(&h.test)
}

/// Plain text for the terminal: Markdown emphasis removed.
pub(crate) fn plain(markdown: &str) -> String {
    let mut s = String::new();
    for ev in Parser::new(markdown) {
        match ev {
            // A subscript in plain text is written after an underscore: d_z.
            Event::InlineHtml(t) if &*t == "<sub>" => s.push('_'),
            Event::InlineHtml(t) if &*t == "</sub>" => {}
            Event::Text(t) | Event::Code(t) | Event::Html(t) | Event::InlineHtml(t) => {
                s.push_str(&t)
            }
            Event::SoftBreak | Event::HardBreak => s.push(' '),
            _ => {}
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_letters_only() {
        assert_eq!(name("loaves", "H1", "t"), "LoavesHOneT");
        assert_eq!(
            name("tutoring-2026", "H10", "p"),
            "TutoringTwoZeroTwoSixHOneZeroP"
        );
        assert_eq!(name("my_study", "h-1", "mean long"), "MyStudyHOneMeanLong");
    }

    #[test]
    fn accents_go_and_other_scripts_keep_their_code_points() {
        assert_eq!(letters("é"), "E");
        assert_eq!(letters("ü"), "U");
        assert_eq!(letters("Müller"), "Muller");
        // 男 is U+7537 and 女 is U+5973 (The Unicode Standard's code charts).
        assert_eq!(letters("男"), "USevenFiveThreeSeven");
        assert_eq!(letters("女"), "UFiveNineSevenThree");
        assert_ne!(letters("男"), letters("女"));
    }

    #[test]
    fn parts_that_share_letters_get_their_positions() {
        let parts = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert_eq!(
            distinct_names(&parts(&["a1", "a-1"])),
            ["AOneAtOne", "AOneAtTwo"]
        );
        assert_eq!(
            distinct_names(&parts(&["H1", "H2", "H-1"])),
            ["HOneAtOne", "HTwo", "HOneAtThree"]
        );
        assert_eq!(distinct_names(&parts(&["new", "old"])), ["New", "Old"]);
    }

    #[test]
    fn a_plan_with_colliding_parts_is_named() {
        let h = |id, sets: &[&str]| Named {
            id,
            sets: sets.iter().map(|s| s.to_string()).collect(),
            equivalence: false,
        };
        let s = slots("study", &[h("H1", &["a1", "a-1"]), h("H-1", &["男", "女"])]).unwrap();
        let names: Vec<&str> = s.iter().map(|s| s.name.as_str()).collect();
        assert!(names.contains(&"StudyHOneAtOneNAOneAtOne"));
        assert!(names.contains(&"StudyHOneAtOneNAOneAtTwo"));
        assert!(names.contains(&"StudyHOneAtTwoMeanUSevenFiveThreeSeven"));
        // A collision the positions cannot settle (an id that spells another
        // id's figure) is still refused, never silently overwritten.
        let e = slots("s", &[h("H1", &["P", "Q"]), h("H1Mean", &["x", "y"])])
            .err()
            .unwrap();
        assert!(
            e.what.contains("two values would be named \\SHOneMeanP"),
            "{}",
            e.what
        );
    }

    #[test]
    fn collisions_are_errors() {
        let mut v = Values::default();
        v.add(name("a", "H1", "t"), "H1 t".into(), "x".into())
            .unwrap();
        let e = v
            .add(name("a", "H-1", "t"), "H-1 t".into(), "y".into())
            .unwrap_err();
        assert_eq!(e.what, "two values would be named \\AHOneT: H1 t and H-1 t");
    }

    #[test]
    fn subscripts_become_latex_and_plain_text() {
        // APA Publication Manual, 7th ed., §6.44: d with the subscript z, the
        // subscript upright (an identifier, not a statistic).
        assert_eq!(
            markdown_to_latex("*d*<sub>z</sub> = 0.41"),
            "\\textit{d}\\textsubscript{z} = 0.41"
        );
        assert_eq!(plain("*d*<sub>z</sub> = 0.41"), "d_z = 0.41");
    }

    #[test]
    fn markdown_becomes_latex() {
        // LaTeX's ten special characters (common practice: The TeXbook, ch. 7).
        assert_eq!(
            latex_escape("50% & $5 #1 a_b {x} ~ ^"),
            "50\\% \\& \\$5 \\#1 a\\_b \\{x\\} \\textasciitilde{} \\textasciicircum{}"
        );
        assert_eq!(
            markdown_to_latex("*t*(97.31) = −2.71"),
            "\\textit{t}(97.31) = \\ensuremath{-}2.71"
        );
    }
}
