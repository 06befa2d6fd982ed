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
/// characters separate words and are dropped, each word is capitalised.
pub(crate) fn letters(text: &str) -> String {
    let mut out = String::new();
    let mut new_word = true;
    for ch in text.chars() {
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
        } else {
            new_word = true;
        }
    }
    out
}

/// The macro name for one figure.
pub(crate) fn name(analysis: &str, id: &str, figure: &str) -> String {
    format!("{}{}{}", letters(analysis), letters(id), letters(figure))
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
    let mut v = Values::default();
    for h in &r.hypotheses {
        let mut add = |figure: &str, text: String| -> Result<()> {
            v.add(
                name(stem, &h.id, figure),
                format!("{} {figure}", h.id),
                text,
            )
        };
        add("Stat", bare_statistic(h))?;
        add("P", sentence::p_of(h, correction))?;
        add("Effect", sentence::effect(&h.effect, conf))?;
        add(
            "Diff",
            sentence::estimate(
                &h.estimate,
                h.units.as_deref(),
                super::view::apa::measured(h.recorded_decimals),
            ),
        )?;
        // Macro names keep the data's spelling; the words use the plan's
        // display names, as the report does.
        add(
            "Sentence",
            sentence::one_sentence(&super::view::displayed(r, h), correction),
        )?;
        if let Some(eq) = &h.equivalence {
            add(
                "Equivalence",
                format!("{} = {}", apa::sym("p"), apa::p_number(eq.p)),
            )?;
        }
        let digits = apa::measured(h.recorded_decimals);
        for g in &h.groups {
            add(
                &format!("N {}", g.label),
                format!("{} = {}", apa::sym("n"), g.describe.n),
            )?;
            add(
                &format!("Mean {}", g.label),
                format!(
                    "{} = {}",
                    apa::sym("M"),
                    apa::fixed(g.describe.mean, digits)
                ),
            )?;
            if let Some(sd) = g.describe.sd {
                add(
                    &format!("SD {}", g.label),
                    format!("{} = {}", apa::sym("SD"), apa::fixed(sd, digits)),
                )?;
            }
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
