//! `tables.tex`: every numbered table of the report as a LaTeX `booktabs`
//! table with its caption and a label, beside `values.tex`, so a thesis
//! inputs the tables and refers to them by label.
//!
//! The cells, their order and the notes are the view's ([`TableView`]),
//! the same ones the Markdown, HTML and Word reports set; this renderer
//! supplies only LaTeX's table syntax. Cell text goes through
//! [`markdown_to_latex`], so italic symbols stay italic and everything else
//! is escaped. LaTeX numbers the tables itself, so a caption holds only the
//! title. Columns whose cells run long are `tabularx` `X` columns set
//! ragged right, so a table fits the text block; the others are left
//! aligned. The labels are `tab:<analysis>-<title>`, made of lowercase
//! ASCII letters, digits and dashes, unique within the file.

use super::values::markdown_to_latex;
use super::view::TableView;
use super::{Context, Output, Renderer};
use crate::error::Result;

/// The `tables.tex` renderer.
pub(crate) struct LatexTables;

impl Renderer for LatexTables {
    fn render(&self, cx: &Context, _done: &[Output]) -> Result<Vec<Output>> {
        let stem = cx
            .results
            .analysis_file
            .strip_suffix(".toml")
            .unwrap_or(&cx.results.analysis_file);
        Ok(vec![Output::new(
            "tables.tex",
            document(&cx.results.plan.title, stem, &cx.view.tables),
        )])
    }
}

/// A cell is set in a wrapping column when some cell of its column holds
/// more characters than this (plain text).
const WRAP_AFTER: usize = 24;

/// The whole file.
pub(crate) fn document(title: &str, stem: &str, tables: &[TableView]) -> String {
    let mut s =
        String::from("% Tables written by attest; regenerate with `attest run`, do not edit.\n");
    s.push_str(&format!(
        "% Analysis: {}\n",
        title.replace(['\n', '\r'], " ")
    ));
    s.push_str("% Needs \\usepackage{booktabs,tabularx,array} in the preamble. pdflatex sets\n% Latin-script text; for other scripts use XeLaTeX or LuaLaTeX.\n");
    let mut labels: Vec<String> = Vec::new();
    for t in tables {
        let mut label = format!("tab:{}-{}", slug(stem), slug(&t.title));
        if labels.contains(&label) {
            label = format!("{label}-{}", t.number);
        }
        labels.push(label.clone());
        s.push('\n');
        s.push_str(&table(t, &label));
    }
    s
}

/// Lowercase ASCII letters and digits, runs of anything else as one dash.
fn slug(text: &str) -> String {
    let mut out = String::new();
    for c in text.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('-') {
            out.push('-');
        }
    }
    let out = out.trim_matches('-').to_string();
    if out.is_empty() {
        "table".into()
    } else {
        out
    }
}

/// The plain text of a Markdown cell, for measuring it.
fn plain_len(cell: &str) -> usize {
    super::values::plain(cell).chars().count()
}

/// One cell: LaTeX text, guarded so that a leading `[` is never taken as
/// the optional argument of the `\\` before it.
fn cell(markdown: &str) -> String {
    let tex = markdown_to_latex(markdown);
    if tex.starts_with('[') {
        format!("{{}}{tex}")
    } else {
        tex
    }
}

fn table(t: &TableView, label: &str) -> String {
    let columns = t.header.len();
    let wide: Vec<bool> = (0..columns)
        .map(|i| {
            std::iter::once(&t.header[i])
                .chain(t.rows.iter().filter_map(|r| r.get(i)))
                .any(|c| plain_len(&c.to_string()) > WRAP_AFTER)
        })
        .collect();
    let spec: String = wide
        .iter()
        .map(|w| {
            if *w {
                ">{\\raggedright\\arraybackslash}X"
            } else {
                "l"
            }
        })
        .collect();
    let (begin, end) = if wide.iter().any(|w| *w) {
        (
            format!("\\begin{{tabularx}}{{\\linewidth}}{{@{{}}{spec}@{{}}}}"),
            "\\end{tabularx}",
        )
    } else {
        (
            format!("\\begin{{tabular}}{{@{{}}{spec}@{{}}}}"),
            "\\end{tabular}",
        )
    };
    let row = |cells: &[minijinja::Value]| -> String {
        let mut r: Vec<String> = cells.iter().map(|c| cell(&c.to_string())).collect();
        r.resize(columns, String::new());
        format!("{} \\\\\n", r.join(" & "))
    };
    let mut s = format!(
        "% Table {}: {}\n\\begin{{table}}[htbp]\n\\centering\n\\caption{{{}}}\n\\label{{{label}}}\n\\small\n{begin}\n\\toprule\n",
        t.number,
        t.title.replace(['\n', '\r'], " "),
        super::values::latex_escape(&t.title)
    );
    s.push_str(&row(&t.header));
    s.push_str("\\midrule\n");
    for r in &t.rows {
        s.push_str(&row(r));
    }
    s.push_str("\\bottomrule\n");
    s.push_str(end);
    s.push('\n');
    if let Some(note) = &t.note {
        s.push_str(&format!(
            "\\par\\smallskip\n\\parbox{{\\linewidth}}{{\\footnotesize\\textit{{Note.}} {}}}\n",
            markdown_to_latex(&note.to_string())
        ));
    }
    s.push_str("\\end{table}\n");
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::render::view::md;

    fn sample(title: &str, first: &str) -> TableView {
        TableView {
            number: 2,
            title: title.into(),
            header: vec![md("Group"), md("*n*"), md("*M*")],
            rows: vec![
                vec![md(first), md("12"), md("3.40")],
                vec![md("[1.2, ∞)"), md("9"), md("−0.50")],
            ],
            note: Some(md("*d*<sub>z</sub> is in units of the SD.")),
        }
    }

    #[test]
    fn a_table_is_a_booktabs_float_with_caption_and_label() {
        let tex = document(
            "Bread & 100% rye",
            "loaves",
            &[sample("At a Glance", "Rye\\_sourdough & co")],
        );
        assert!(
            tex.contains("\\caption{At a Glance}\n\\label{tab:loaves-at-a-glance}"),
            "{tex}"
        );
        assert!(
            tex.contains("\\toprule\nGroup & \\textit{n} & \\textit{M} \\\\\n\\midrule\n"),
            "{tex}"
        );
        // Markdown escapes come back as LaTeX escapes; ∞ and − become math.
        assert!(
            tex.contains("Rye\\_sourdough \\& co & 12 & 3.40 \\\\"),
            "{tex}"
        );
        assert!(
            tex.contains("{}[1.2, \\ensuremath{\\infty}) & 9 & \\ensuremath{-}0.50 \\\\"),
            "{tex}"
        );
        assert!(
            tex.contains("\\textit{Note.} \\textit{d}\\textsubscript{z} is in units"),
            "{tex}"
        );
        assert!(tex.contains("\\bottomrule\n\\end{tabular}\n"), "{tex}");
        // Short cells: no wrapping column.
        assert!(!tex.contains("tabularx}{"), "{tex}");
    }

    #[test]
    fn long_cells_wrap_and_labels_stay_unique() {
        let long = "Tutored pupils score higher on the end-of-term quiz";
        let tex = document(
            "T",
            "tutoring",
            &[sample("Rows", long), sample("Rows", "x")],
        );
        assert!(
            tex.contains(
                "\\begin{tabularx}{\\linewidth}{@{}>{\\raggedright\\arraybackslash}Xll@{}}"
            ),
            "{tex}"
        );
        assert!(tex.contains("\\label{tab:tutoring-rows}"), "{tex}");
        assert!(tex.contains("\\label{tab:tutoring-rows-2}"), "{tex}");
    }

    #[test]
    fn slugs_are_plain_ascii() {
        assert_eq!(slug("Rows In, Rows Out: H1"), "rows-in-rows-out-h1");
        assert_eq!(slug("Café—über"), "caf-ber");
        assert_eq!(slug("***"), "table");
    }
}
