//! `report.docx`: the report as a Word document, made from `report.md` the
//! way `report.html` is, so the three say exactly the same thing.
//!
//! What a thesis writer gets: the sentences as text with italic symbols and
//! subscripts as real character formatting; every Markdown table as a real
//! Word table in APA style (Publication Manual, 7th ed., §7.13: horizontal
//! rules above and below the column headings and at the bottom, no vertical
//! rules; the heading row repeats on a new page); every figure as its
//! 300-DPI PNG at the 16 cm it was designed for; a table's or figure's
//! number, title, body and note kept on one page; A4 with 2.5 cm margins, so
//! the text block is exactly the 16 cm the figures are drawn for.
//!
//! **Written by hand, not with a DOCX crate.** WordprocessingML (ECMA-376
//! Part 1) needs only a handful of parts for this, and the one maintained
//! writer crate numbers pictures and paragraphs from process-wide counters,
//! so the second report rendered in one process (a folder run, `verify`)
//! would get different bytes from the first, and parallel runs different
//! bytes again. Here every identifier comes from the document's own order,
//! every ZIP entry carries the same fixed date, and the package holds no
//! creation time, so the same report gives the same bytes.
//!
//! Text is XML-escaped, and characters XML 1.0 does not allow (controls
//! other than tab and newline) become U+FFFD, so no label from a plan or a
//! data file can break the document. Raw HTML that reaches the Markdown is
//! shown as text, as in the HTML report; images that are not our figures
//! become their alt text; links become their text, so the document refers
//! to nothing outside itself.

use super::{Context, Output, Renderer};
use crate::error::{Failure, Result};
use pulldown_cmark::{Event, HeadingLevel, Parser, Tag, TagEnd};
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::io::Write as _;

/// Twentieths of a point per centimetre.
const TWIPS_PER_CM: f64 = 1440.0 / 2.54;
/// English Metric Units per centimetre (DrawingML's unit).
const EMU_PER_CM: f64 = 360_000.0;
/// A4, in twips (21.0 × 29.7 cm).
const PAGE_W: u32 = 11_906;
const PAGE_H: u32 = 16_838;
/// Every margin: 2.5 cm.
const MARGIN_CM: f64 = 2.5;

/// Width of the text block in twips: A4 less two margins, 16 cm.
fn text_width() -> u32 {
    PAGE_W - 2 * (MARGIN_CM * TWIPS_PER_CM).round() as u32
}

/// The renderer: `report.docx` from `report.md` and the PNG figures.
pub(crate) struct Docx;

impl Renderer for Docx {
    fn render(&self, cx: &Context, done: &[Output]) -> Result<Vec<Output>> {
        let md = done
            .iter()
            .find(|o| o.name == "report.md")
            .ok_or_else(|| Failure::internal("report.docx is made after report.md"))?;
        let md = String::from_utf8_lossy(&md.bytes);
        // Our figures, by the name report.md uses (the SVG), as their PNG.
        let figures: BTreeMap<&str, &[u8]> = cx
            .view
            .figures
            .iter()
            .filter_map(|f| {
                let png = format!("{}.png", f.file.strip_suffix(".svg")?);
                let o = done.iter().find(|o| o.name == png)?;
                Some((f.file.as_str(), o.bytes.as_slice()))
            })
            .collect();
        let bytes = document(&md, &figures, &cx.results.plan.title)?;
        Ok(vec![Output {
            name: "report.docx".into(),
            bytes,
        }])
    }
}

/// The `.docx` package of a Markdown document. `figures` maps an image
/// destination in the Markdown to the PNG that stands for it.
pub(crate) fn document(md: &str, figures: &BTreeMap<&str, &[u8]>, title: &str) -> Result<Vec<u8>> {
    let body = Body::convert(md, figures);
    package(&body, title)
        .map_err(|e| Failure::internal(format!("report.docx could not be written: {e}")))
}

/// Paragraph formatting.
#[derive(Clone, Debug, Default, PartialEq)]
struct ParaProps {
    /// A style of `styles.xml`, e.g. `Heading1`, `Quote`.
    style: Option<&'static str>,
    /// List numbering: (numbering instance, level).
    list: Option<(usize, usize)>,
    /// Keep on the same page as the next paragraph.
    keep_next: bool,
}

/// One block of the body, rendered at the end (so that a kept group can
/// mark all its blocks but the last).
enum Block {
    Para { props: ParaProps, runs: String },
    Table(Table),
}

/// One table cell: its runs, the length of its text and of its longest
/// word, in characters.
type Cell = (String, usize, usize);

/// A table being built: its heading row and body rows.
#[derive(Default)]
struct Table {
    head: Vec<Cell>,
    rows: Vec<Vec<Cell>>,
    keep: bool,
}

/// Character formatting in effect.
#[derive(Default, Clone, Copy)]
struct Inline {
    italic: u32,
    bold: u32,
    sub: bool,
    sup: bool,
    code: bool,
}

/// The document body being built from Markdown events.
#[derive(Default)]
struct Body {
    blocks: Vec<Block>,
    /// The paragraph being written, if any.
    para: Option<(ParaProps, String)>,
    /// The table being written, and the cell within it.
    table: Option<Table>,
    cell: Option<Cell>,
    /// The words of the open cell so far, to find its longest.
    cell_text: String,
    in_head: bool,
    row: Vec<Cell>,
    inline: Inline,
    /// Open lists: numbering instance of each.
    lists: Vec<usize>,
    /// Numbering instances: `true` for a numbered list, `false` for bullets.
    numbering: Vec<bool>,
    quote: u32,
    heading: Option<&'static str>,
    /// Where the open kept group (`<div class="keep">`) starts in `blocks`.
    keep_from: Option<usize>,
    /// An image being read: its destination and alt text.
    image: Option<(String, String)>,
    /// Embedded pictures in order: (PNG bytes, width px, height px).
    media: Vec<(Vec<u8>, u32, u32)>,
    /// The formatting of the text run that ends the current paragraph or
    /// cell, so that text arriving in pieces becomes one run.
    last_rpr: Option<String>,
}

impl Body {
    fn convert(md: &str, figures: &BTreeMap<&str, &[u8]>) -> Body {
        let mut b = Body::default();
        for ev in Parser::new_ext(md, super::markdown::options()) {
            b.event(ev, figures);
        }
        b.close_para();
        b
    }

    fn event(&mut self, ev: Event, figures: &BTreeMap<&str, &[u8]>) {
        if let Some((_, alt)) = self.image.as_mut() {
            match ev {
                Event::End(TagEnd::Image) => {
                    if let Some((dest, alt)) = self.image.take() {
                        self.picture(&dest, &alt, figures);
                    }
                }
                Event::Text(t) | Event::Code(t) => alt.push_str(&t),
                _ => {}
            }
            return;
        }
        match ev {
            Event::Start(tag) => self.start(tag),
            Event::End(tag) => self.end(tag),
            Event::Text(t) => self.text(&t),
            Event::Code(t) => {
                self.inline.code = true;
                self.text(&t);
                self.inline.code = false;
            }
            Event::SoftBreak => self.text(" "),
            Event::HardBreak => self.raw_run("<w:br/>"),
            Event::Rule => {
                self.close_para();
                self.blocks.push(Block::Para {
                    props: ParaProps {
                        style: Some("Rule"),
                        ..ParaProps::default()
                    },
                    runs: String::new(),
                });
            }
            // The tags the view writes; anything else is shown as text.
            Event::InlineHtml(t) => match &*t {
                "<sub>" => self.inline.sub = true,
                "</sub>" => self.inline.sub = false,
                "<sup>" => self.inline.sup = true,
                "</sup>" => self.inline.sup = false,
                other => self.text(other),
            },
            Event::Html(t) => match t.trim_end() {
                "<div class=\"keep\">" => {
                    self.close_para();
                    self.keep_from = Some(self.blocks.len());
                }
                "</div>" if self.keep_from.is_some() => {
                    self.close_para();
                    self.end_keep();
                }
                other => {
                    for line in other.lines() {
                        self.text(line);
                        self.close_para();
                    }
                }
            },
            Event::FootnoteReference(t) => self.text(&t),
            Event::TaskListMarker(done) => self.text(if done { "[x] " } else { "[ ] " }),
            Event::InlineMath(t) | Event::DisplayMath(t) => self.text(&t),
        }
    }

    fn start(&mut self, tag: Tag) {
        match tag {
            Tag::Paragraph => {
                // A list item's first paragraph is already open.
                let open_empty_item =
                    matches!(&self.para, Some((p, r)) if p.list.is_some() && r.is_empty());
                if !open_empty_item {
                    self.close_para();
                    self.open_para();
                }
            }
            Tag::Heading { level, .. } => {
                self.close_para();
                self.heading = Some(match level {
                    HeadingLevel::H1 => "Title",
                    HeadingLevel::H2 => "Heading1",
                    HeadingLevel::H3 => "Heading2",
                    _ => "Heading3",
                });
                self.open_para();
            }
            Tag::BlockQuote(_) => {
                self.close_para();
                self.quote += 1;
            }
            Tag::List(first) => {
                self.close_para();
                self.numbering.push(first.is_some());
                self.lists.push(self.numbering.len());
            }
            Tag::Item => {
                self.close_para();
                self.open_para();
            }
            Tag::Table(_) => {
                self.close_para();
                self.table = Some(Table {
                    keep: self.keep_from.is_some(),
                    ..Table::default()
                });
            }
            Tag::TableHead => {
                self.in_head = true;
                self.row.clear();
            }
            Tag::TableRow => self.row.clear(),
            Tag::TableCell => {
                self.cell = Some((String::new(), 0, 0));
                self.cell_text.clear();
                self.last_rpr = None;
            }
            Tag::Emphasis => self.inline.italic += 1,
            Tag::Strong => self.inline.bold += 1,
            Tag::Image { dest_url, .. } => {
                self.image = Some((dest_url.to_string(), String::new()));
            }
            // Links keep their text only; code blocks become plain
            // paragraphs in the code face.
            Tag::CodeBlock(_) => {
                self.close_para();
                self.inline.code = true;
                self.open_para();
            }
            _ => {}
        }
    }

    fn end(&mut self, tag: TagEnd) {
        match tag {
            TagEnd::Paragraph | TagEnd::Item => self.close_para(),
            TagEnd::Heading(_) => {
                self.close_para();
                self.heading = None;
            }
            TagEnd::BlockQuote(_) => {
                self.close_para();
                self.quote = self.quote.saturating_sub(1);
            }
            TagEnd::List(_) => {
                self.close_para();
                self.lists.pop();
            }
            TagEnd::TableCell => {
                if let Some((runs, len, _)) = self.cell.take() {
                    let longest = self
                        .cell_text
                        .split_whitespace()
                        .map(|w| w.chars().count())
                        .max()
                        .unwrap_or(0);
                    self.row.push((runs, len, longest));
                }
            }
            TagEnd::TableHead => {
                self.in_head = false;
                if let Some(t) = self.table.as_mut() {
                    t.head = std::mem::take(&mut self.row);
                }
            }
            TagEnd::TableRow => {
                if let Some(t) = self.table.as_mut() {
                    t.rows.push(std::mem::take(&mut self.row));
                }
            }
            TagEnd::Table => {
                if let Some(t) = self.table.take() {
                    self.blocks.push(Block::Table(t));
                }
            }
            TagEnd::Emphasis => self.inline.italic = self.inline.italic.saturating_sub(1),
            TagEnd::Strong => self.inline.bold = self.inline.bold.saturating_sub(1),
            TagEnd::CodeBlock => {
                self.close_para();
                self.inline.code = false;
            }
            _ => {}
        }
    }

    /// Opens a paragraph formatted for where it stands.
    fn open_para(&mut self) {
        let props = ParaProps {
            style: self
                .heading
                .or(if self.quote > 0 { Some("Quote") } else { None }),
            list: self.lists.last().map(|&n| (n, self.lists.len() - 1)),
            keep_next: self.heading.is_some(),
        };
        self.para = Some((props, String::new()));
        self.last_rpr = None;
    }

    fn close_para(&mut self) {
        if let Some((props, runs)) = self.para.take() {
            self.blocks.push(Block::Para { props, runs });
        }
    }

    /// Ends a kept group: each of its blocks but the last keeps with the
    /// next, so Word and LibreOffice move the group to a new page whole.
    fn end_keep(&mut self) {
        let Some(from) = self.keep_from.take() else {
            return;
        };
        let last = self.blocks.len().saturating_sub(1);
        for (i, b) in self.blocks.iter_mut().enumerate().skip(from) {
            match b {
                Block::Para { props, .. } => props.keep_next |= i < last,
                Block::Table(t) => t.keep = i < last,
            }
        }
    }

    /// Appends text in the current character formatting.
    fn text(&mut self, text: &str) {
        let mut rpr = String::new();
        let i = self.inline;
        if i.code {
            rpr.push_str("<w:rStyle w:val=\"Code\"/>");
        }
        if i.bold > 0 {
            rpr.push_str("<w:b/>");
        }
        if i.italic > 0 {
            rpr.push_str("<w:i/>");
        }
        if i.sub {
            rpr.push_str("<w:vertAlign w:val=\"subscript\"/>");
        } else if i.sup {
            rpr.push_str("<w:vertAlign w:val=\"superscript\"/>");
        }
        let len = text.chars().count();
        const CLOSE: &str = "</w:t></w:r>";
        if self.last_rpr.as_deref() == Some(rpr.as_str()) {
            let target = match (self.cell.as_mut(), self.para.as_mut()) {
                (Some((runs, n, _)), _) => {
                    *n += len;
                    self.cell_text.push_str(text);
                    Some(runs)
                }
                (None, Some((_, runs))) if self.table.is_none() => Some(runs),
                _ => None,
            };
            if let Some(runs) = target.filter(|r| r.ends_with(CLOSE)) {
                runs.truncate(runs.len() - CLOSE.len());
                runs.push_str(&xml(text));
                runs.push_str(CLOSE);
                return;
            }
        }
        let mut run = String::from("<w:r>");
        if !rpr.is_empty() {
            let _ = write!(run, "<w:rPr>{rpr}</w:rPr>");
        }
        let _ = write!(run, "<w:t xml:space=\"preserve\">{}{CLOSE}", xml(text));
        if self.cell.is_some() {
            self.cell_text.push_str(text);
        }
        self.push_run(&run, len);
        self.last_rpr = Some(rpr);
    }

    fn raw_run(&mut self, inner: &str) {
        self.push_run(&format!("<w:r>{inner}</w:r>"), 0);
    }

    /// Appends a run to the open cell or paragraph (opening one if need be).
    fn push_run(&mut self, run: &str, len: usize) {
        self.last_rpr = None;
        if let Some((runs, n, _)) = self.cell.as_mut() {
            runs.push_str(run);
            *n += len;
            return;
        }
        if self.table.is_some() {
            return; // between cells: nothing to show
        }
        if self.para.is_none() {
            self.open_para();
        }
        if let Some((_, runs)) = self.para.as_mut() {
            runs.push_str(run);
        }
    }

    /// One of our figures as an embedded picture, else the alt text.
    fn picture(&mut self, dest: &str, alt: &str, figures: &BTreeMap<&str, &[u8]>) {
        let Some((png, w, h)) = figures
            .get(dest)
            .and_then(|png| png_size(png).map(|(w, h)| (png.to_vec(), w, h)))
        else {
            self.text(alt);
            return;
        };
        self.media.push((png, w, h));
        let n = self.media.len();
        let cx = (super::svg::PRINT_WIDTH_CM * EMU_PER_CM).round() as u64;
        let cy = (cx as f64 * f64::from(h) / f64::from(w)).round() as u64;
        let alt = xml(alt);
        let run = format!(
            "<w:r><w:drawing><wp:inline distT=\"0\" distB=\"0\" distL=\"0\" distR=\"0\">\
             <wp:extent cx=\"{cx}\" cy=\"{cy}\"/><wp:docPr id=\"{n}\" name=\"Figure {n}\" descr=\"{alt}\"/>\
             <wp:cNvGraphicFramePr><a:graphicFrameLocks noChangeAspect=\"1\"/></wp:cNvGraphicFramePr>\
             <a:graphic><a:graphicData uri=\"http://schemas.openxmlformats.org/drawingml/2006/picture\">\
             <pic:pic><pic:nvPicPr><pic:cNvPr id=\"{n}\" name=\"figure{n}.png\" descr=\"{alt}\"/><pic:cNvPicPr/></pic:nvPicPr>\
             <pic:blipFill><a:blip r:embed=\"rIdFigure{n}\"/><a:stretch><a:fillRect/></a:stretch></pic:blipFill>\
             <pic:spPr><a:xfrm><a:off x=\"0\" y=\"0\"/><a:ext cx=\"{cx}\" cy=\"{cy}\"/></a:xfrm>\
             <a:prstGeom prst=\"rect\"><a:avLst/></a:prstGeom></pic:spPr></pic:pic>\
             </a:graphicData></a:graphic></wp:inline></w:drawing></w:r>"
        );
        self.push_run(&run, 0);
    }
}

/// Column widths in twips that fill the text block. When every cell fits
/// on one line, columns are as wide as their longest cell, scaled to the
/// block. Otherwise each column gets at least its longest word (a word is
/// never broken) and the rest of the width goes to the columns whose cells
/// are longer than that, in proportion to how much longer. Lengths are in
/// characters: at the tables' 10 pt an average character is about 0.19 cm,
/// so the block holds about 84, and a cell's margins take about 2.
fn column_widths(t: &Table, cols: usize) -> Vec<usize> {
    const CHARS_PER_BLOCK: f64 = 84.0;
    const PAD: f64 = 2.5;
    let mut word = vec![1usize; cols];
    let mut full = vec![1usize; cols];
    for row in std::iter::once(&t.head).chain(&t.rows) {
        for (i, (_, len, longest)) in row.iter().enumerate() {
            full[i] = full[i].max(*len);
            word[i] = word[i].max(*longest);
        }
    }
    let one_line: Vec<f64> = full.iter().map(|&f| f as f64 + PAD).collect();
    let chars: Vec<f64> = if one_line.iter().sum::<f64>() <= CHARS_PER_BLOCK {
        one_line
    } else {
        let min: Vec<f64> = word.iter().map(|&w| w as f64 + PAD).collect();
        let extra: Vec<f64> = full
            .iter()
            .zip(&word)
            .map(|(&f, &w)| f.saturating_sub(w) as f64)
            .collect();
        let spare = (CHARS_PER_BLOCK - min.iter().sum::<f64>()).max(0.0);
        let extra_sum: f64 = extra.iter().sum();
        min.iter()
            .zip(&extra)
            .map(|(m, e)| {
                m + if extra_sum > 0.0 {
                    spare * e / extra_sum
                } else {
                    0.0
                }
            })
            .collect()
    };
    let total: f64 = chars.iter().sum();
    let tw = f64::from(text_width());
    chars
        .iter()
        .map(|c| (tw * c / total).floor() as usize)
        .collect()
}

/// Width and height of a PNG from its header.
fn png_size(png: &[u8]) -> Option<(u32, u32)> {
    if png.len() < 24 || &png[..8] != b"\x89PNG\r\n\x1a\n" || &png[12..16] != b"IHDR" {
        return None;
    }
    let w = u32::from_be_bytes(png[16..20].try_into().ok()?);
    let h = u32::from_be_bytes(png[20..24].try_into().ok()?);
    (w > 0 && h > 0).then_some((w, h))
}

/// Text made safe for XML content and attribute values.
fn xml(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\t' | '\n' => out.push(' '),
            // XML 1.0 §2.2: no other C0 control, no U+FFFE or U+FFFF.
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

/// `word/document.xml`.
fn document_xml(body: &Body) -> String {
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <w:document xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\" \
         xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships\" \
         xmlns:wp=\"http://schemas.openxmlformats.org/drawingml/2006/wordprocessingDrawing\" \
         xmlns:a=\"http://schemas.openxmlformats.org/drawingml/2006/main\" \
         xmlns:pic=\"http://schemas.openxmlformats.org/drawingml/2006/picture\"><w:body>",
    );
    for b in &body.blocks {
        match b {
            Block::Para { props, runs } => paragraph(&mut out, props, runs),
            Block::Table(t) => table(&mut out, t),
        }
    }
    let margin = (MARGIN_CM * TWIPS_PER_CM).round() as u32;
    let _ = write!(
        out,
        "<w:sectPr><w:pgSz w:w=\"{PAGE_W}\" w:h=\"{PAGE_H}\"/>\
         <w:pgMar w:top=\"{margin}\" w:right=\"{margin}\" w:bottom=\"{margin}\" w:left=\"{margin}\" \
         w:header=\"708\" w:footer=\"708\" w:gutter=\"0\"/></w:sectPr></w:body></w:document>"
    );
    out
}

fn paragraph(out: &mut String, props: &ParaProps, runs: &str) {
    out.push_str("<w:p>");
    let mut ppr = String::new();
    if let Some(s) = props.style {
        let _ = write!(ppr, "<w:pStyle w:val=\"{s}\"/>");
    } else if props.list.is_some() {
        ppr.push_str("<w:pStyle w:val=\"ListParagraph\"/>");
    }
    if props.keep_next {
        ppr.push_str("<w:keepNext/>");
    }
    if let Some((num, level)) = props.list {
        let _ = write!(
            ppr,
            "<w:numPr><w:ilvl w:val=\"{}\"/><w:numId w:val=\"{num}\"/></w:numPr>",
            level.min(8)
        );
    }
    if !ppr.is_empty() {
        let _ = write!(out, "<w:pPr>{ppr}</w:pPr>");
    }
    out.push_str(runs);
    out.push_str("</w:p>");
}

/// A table in APA style: a rule above and below the heading row and one at
/// the bottom, no vertical rules. Column widths follow the longest cell of
/// each column, within the text block.
fn table(out: &mut String, t: &Table) {
    let cols = t
        .head
        .len()
        .max(t.rows.iter().map(Vec::len).max().unwrap_or(0));
    if cols == 0 {
        return;
    }
    let widths = column_widths(t, cols);
    let tw = text_width() as usize;
    let rule = "w:val=\"single\" w:sz=\"8\" w:space=\"0\" w:color=\"000000\"";
    let _ = write!(
        out,
        "<w:tbl><w:tblPr><w:tblStyle w:val=\"ApaTable\"/><w:tblW w:w=\"{tw}\" w:type=\"dxa\"/>\
         <w:tblBorders><w:top {rule}/><w:left w:val=\"nil\"/><w:bottom {rule}/><w:right w:val=\"nil\"/>\
         <w:insideH w:val=\"nil\"/><w:insideV w:val=\"nil\"/></w:tblBorders>\
         <w:tblLayout w:type=\"fixed\"/>\
         <w:tblCellMar><w:left w:w=\"85\" w:type=\"dxa\"/><w:right w:w=\"85\" w:type=\"dxa\"/></w:tblCellMar>\
         <w:tblLook w:val=\"0020\" w:firstRow=\"1\" w:lastRow=\"0\" w:firstColumn=\"0\" w:lastColumn=\"0\" w:noHBand=\"1\" w:noVBand=\"1\"/>\
         </w:tblPr><w:tblGrid>"
    );
    for w in &widths {
        let _ = write!(out, "<w:gridCol w:w=\"{w}\"/>");
    }
    out.push_str("</w:tblGrid>");
    // A kept table keeps every row with the next, its last row with the
    // note that follows.
    let keep = if t.keep { "<w:keepNext/>" } else { "" };
    let row = |out: &mut String, cells: &[Cell], head: bool| {
        out.push_str("<w:tr><w:trPr><w:cantSplit/>");
        if head {
            out.push_str("<w:tblHeader/>");
        }
        out.push_str("</w:trPr>");
        for (i, w) in widths.iter().enumerate() {
            let runs = cells.get(i).map(|c| c.0.as_str()).unwrap_or("");
            let _ = write!(out, "<w:tc><w:tcPr><w:tcW w:w=\"{w}\" w:type=\"dxa\"/>");
            if head {
                let _ = write!(out, "<w:tcBorders><w:bottom {rule}/></w:tcBorders>");
            }
            let _ = write!(
                out,
                "</w:tcPr><w:p><w:pPr><w:pStyle w:val=\"TableText\"/>{keep}</w:pPr>{runs}</w:p></w:tc>"
            );
        }
        out.push_str("</w:tr>");
    };
    if !t.head.is_empty() {
        row(out, &t.head, true);
    }
    for r in &t.rows {
        row(out, r, false);
    }
    out.push_str("</w:tbl>");
}

/// `word/styles.xml`: Times New Roman 12 pt (one of the faces APA 7 §2.19
/// lists), single-spaced with 6 pt after each paragraph; headings in bold,
/// the section headings centred as APA's first level (§2.27).
const STYLES: &str = r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<w:styles xmlns:w="http://schemas.openxmlformats.org/wordprocessingml/2006/main"><w:docDefaults><w:rPrDefault><w:rPr><w:rFonts w:ascii="Times New Roman" w:hAnsi="Times New Roman" w:eastAsia="Times New Roman" w:cs="Times New Roman"/><w:sz w:val="24"/><w:szCs w:val="24"/><w:lang w:val="en-US"/></w:rPr></w:rPrDefault><w:pPrDefault><w:pPr><w:spacing w:after="120" w:line="240" w:lineRule="auto"/></w:pPr></w:pPrDefault></w:docDefaults><w:style w:type="paragraph" w:default="1" w:styleId="Normal"><w:name w:val="Normal"/><w:qFormat/></w:style><w:style w:type="paragraph" w:styleId="Title"><w:name w:val="Title"/><w:basedOn w:val="Normal"/><w:next w:val="Normal"/><w:qFormat/><w:pPr><w:keepNext/><w:spacing w:before="240" w:after="240"/><w:jc w:val="center"/><w:outlineLvl w:val="0"/></w:pPr><w:rPr><w:b/><w:sz w:val="28"/><w:szCs w:val="28"/></w:rPr></w:style><w:style w:type="paragraph" w:styleId="Heading1"><w:name w:val="heading 1"/><w:basedOn w:val="Normal"/><w:next w:val="Normal"/><w:qFormat/><w:pPr><w:keepNext/><w:spacing w:before="360" w:after="120"/><w:jc w:val="center"/><w:outlineLvl w:val="1"/></w:pPr><w:rPr><w:b/></w:rPr></w:style><w:style w:type="paragraph" w:styleId="Heading2"><w:name w:val="heading 2"/><w:basedOn w:val="Normal"/><w:next w:val="Normal"/><w:qFormat/><w:pPr><w:keepNext/><w:spacing w:before="240" w:after="120"/><w:outlineLvl w:val="2"/></w:pPr><w:rPr><w:b/></w:rPr></w:style><w:style w:type="paragraph" w:styleId="Heading3"><w:name w:val="heading 3"/><w:basedOn w:val="Normal"/><w:next w:val="Normal"/><w:qFormat/><w:pPr><w:keepNext/><w:spacing w:before="240" w:after="120"/><w:outlineLvl w:val="3"/></w:pPr><w:rPr><w:b/><w:i/></w:rPr></w:style><w:style w:type="paragraph" w:styleId="Quote"><w:name w:val="Quote"/><w:basedOn w:val="Normal"/><w:qFormat/><w:pPr><w:ind w:left="567" w:right="567"/></w:pPr></w:style><w:style w:type="paragraph" w:styleId="ListParagraph"><w:name w:val="List Paragraph"/><w:basedOn w:val="Normal"/><w:qFormat/><w:pPr><w:spacing w:after="60"/></w:pPr></w:style><w:style w:type="paragraph" w:styleId="TableText"><w:name w:val="Table Text"/><w:basedOn w:val="Normal"/><w:qFormat/><w:pPr><w:spacing w:before="40" w:after="40"/></w:pPr><w:rPr><w:sz w:val="20"/><w:szCs w:val="20"/></w:rPr></w:style><w:style w:type="paragraph" w:styleId="Rule"><w:name w:val="Rule"/><w:basedOn w:val="Normal"/><w:pPr><w:pBdr><w:bottom w:val="single" w:sz="6" w:space="1" w:color="000000"/></w:pBdr></w:pPr></w:style><w:style w:type="character" w:styleId="Code"><w:name w:val="Code"/><w:rPr><w:rFonts w:ascii="Courier New" w:hAnsi="Courier New" w:cs="Courier New"/><w:sz w:val="20"/><w:szCs w:val="20"/></w:rPr></w:style><w:style w:type="table" w:styleId="ApaTable"><w:name w:val="APA Table"/><w:tblPr><w:tblCellMar><w:left w:w="85" w:type="dxa"/><w:right w:w="85" w:type="dxa"/></w:tblCellMar></w:tblPr></w:style></w:styles>"#;

/// `word/numbering.xml`: one instance per list of the document, bulleted
/// or numbered, each numbered list starting at 1.
fn numbering_xml(numbering: &[bool]) -> String {
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <w:numbering xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\">",
    );
    for (abs, numbered) in [(0, false), (1, true)] {
        let _ = write!(
            out,
            "<w:abstractNum w:abstractNumId=\"{abs}\"><w:multiLevelType w:val=\"multilevel\"/>"
        );
        for lvl in 0..9 {
            let (fmt, text) = if numbered {
                ("decimal", format!("%{}.", lvl + 1))
            } else {
                ("bullet", ["•", "–", "◦"][lvl % 3].to_string())
            };
            let left = 425 * (lvl + 1);
            let _ = write!(
                out,
                "<w:lvl w:ilvl=\"{lvl}\"><w:start w:val=\"1\"/><w:numFmt w:val=\"{fmt}\"/>\
                 <w:lvlText w:val=\"{text}\"/><w:lvlJc w:val=\"left\"/>\
                 <w:pPr><w:ind w:left=\"{left}\" w:hanging=\"283\"/></w:pPr></w:lvl>"
            );
        }
        out.push_str("</w:abstractNum>");
    }
    for (i, numbered) in numbering.iter().enumerate() {
        let _ = write!(
            out,
            "<w:num w:numId=\"{}\"><w:abstractNumId w:val=\"{}\"/>",
            i + 1,
            u8::from(*numbered)
        );
        if *numbered {
            out.push_str(
                "<w:lvlOverride w:ilvl=\"0\"><w:startOverride w:val=\"1\"/></w:lvlOverride>",
            );
        }
        out.push_str("</w:num>");
    }
    out.push_str("</w:numbering>");
    out
}

/// Writes the package: every part with the same fixed date (the ZIP
/// format's earliest, 1980-01-01), XML deflated, pictures stored.
fn package(body: &Body, title: &str) -> std::result::Result<Vec<u8>, Box<dyn std::error::Error>> {
    use zip::write::SimpleFileOptions;
    let date = zip::DateTime::default();
    let deflated = SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated)
        .last_modified_time(date)
        .unix_permissions(0o644);
    let stored = deflated.compression_method(zip::CompressionMethod::Stored);

    let mut types = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\">\
         <Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/>\
         <Default Extension=\"xml\" ContentType=\"application/xml\"/>\
         <Default Extension=\"png\" ContentType=\"image/png\"/>\
         <Override PartName=\"/word/document.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.wordprocessingml.document.main+xml\"/>\
         <Override PartName=\"/word/styles.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.wordprocessingml.styles+xml\"/>\
         <Override PartName=\"/word/numbering.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.wordprocessingml.numbering+xml\"/>\
         <Override PartName=\"/docProps/core.xml\" ContentType=\"application/vnd.openxmlformats-package.core-properties+xml\"/>",
    );
    types.push_str("</Types>");
    let rels = "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\">\
         <Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument\" Target=\"word/document.xml\"/>\
         <Relationship Id=\"rId2\" Type=\"http://schemas.openxmlformats.org/package/2006/relationships/metadata/core-properties\" Target=\"docProps/core.xml\"/>\
         </Relationships>";
    // The title only: no author, no dates, so nothing varies between runs.
    let core = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <cp:coreProperties xmlns:cp=\"http://schemas.openxmlformats.org/package/2006/metadata/core-properties\" \
         xmlns:dc=\"http://purl.org/dc/elements/1.1/\"><dc:title>{}</dc:title></cp:coreProperties>",
        xml(title)
    );
    let mut doc_rels = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n\
         <Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\">\
         <Relationship Id=\"rIdStyles\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/styles\" Target=\"styles.xml\"/>\
         <Relationship Id=\"rIdNumbering\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/numbering\" Target=\"numbering.xml\"/>",
    );
    for n in 1..=body.media.len() {
        let _ = write!(
            doc_rels,
            "<Relationship Id=\"rIdFigure{n}\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/image\" Target=\"media/figure{n}.png\"/>"
        );
    }
    doc_rels.push_str("</Relationships>");

    let mut zip = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let parts: [(&str, String); 6] = [
        ("[Content_Types].xml", types),
        ("_rels/.rels", rels.to_string()),
        ("docProps/core.xml", core),
        ("word/document.xml", document_xml(body)),
        ("word/styles.xml", STYLES.to_string()),
        ("word/numbering.xml", numbering_xml(&body.numbering)),
    ];
    for (name, text) in &parts {
        zip.start_file(*name, deflated)?;
        zip.write_all(text.as_bytes())?;
    }
    zip.start_file("word/_rels/document.xml.rels", deflated)?;
    zip.write_all(doc_rels.as_bytes())?;
    for (n, (png, _, _)) in body.media.iter().enumerate() {
        zip.start_file(format!("word/media/figure{}.png", n + 1), stored)?;
        zip.write_all(png)?;
    }
    Ok(zip.finish()?.into_inner())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Read;

    fn parts(docx: &[u8]) -> BTreeMap<String, Vec<u8>> {
        let mut z = zip::ZipArchive::new(std::io::Cursor::new(docx)).unwrap();
        let mut out = BTreeMap::new();
        for i in 0..z.len() {
            let mut f = z.by_index(i).unwrap();
            let mut b = Vec::new();
            f.read_to_end(&mut b).unwrap();
            out.insert(f.name().unwrap().to_string(), b);
        }
        out
    }

    fn body_of(md: &str) -> String {
        let docx = document(md, &BTreeMap::new(), "T").unwrap();
        String::from_utf8(parts(&docx)["word/document.xml"].clone()).unwrap()
    }

    #[test]
    fn the_same_report_gives_the_same_bytes_and_a_fixed_date() {
        let md = "# T\n\nSome *p* = .04.\n\n![alt](figures/a.svg)\n";
        let png = super::super::raster::png(
            br#"<svg width="520" height="130" xmlns="http://www.w3.org/2000/svg"><rect width="10" height="10"/></svg>"#,
            "a",
        )
        .unwrap();
        let figs: BTreeMap<&str, &[u8]> = [("figures/a.svg", png.as_slice())].into();
        let a = document(md, &figs, "T").unwrap();
        // A second document in between must not change the next one's bytes
        // (no process-wide counters).
        let _ = document("![x](figures/a.svg)\n![y](figures/a.svg)", &figs, "U").unwrap();
        assert_eq!(a, document(md, &figs, "T").unwrap());
        let mut z = zip::ZipArchive::new(std::io::Cursor::new(a.as_slice())).unwrap();
        for i in 0..z.len() {
            let f = z.by_index(i).unwrap();
            let d = f.last_modified().unwrap();
            assert_eq!(
                (d.year(), d.month(), d.day()),
                (1980, 1, 1),
                "{:?}",
                f.name()
            );
        }
        let p = parts(&a);
        assert_eq!(p["word/media/figure1.png"], png);
        let doc = String::from_utf8(p["word/document.xml"].clone()).unwrap();
        assert!(doc.contains("r:embed=\"rIdFigure1\""));
        // 16 cm wide: 16 × 360000 EMU.
        assert!(doc.contains("cx=\"5760000\""));
        assert!(doc.contains("descr=\"alt\""));
    }

    #[test]
    fn symbols_are_italic_and_subscripts_are_subscripts() {
        let doc = body_of("*d*<sub>z</sub> = 0.50 and **not supported**\n");
        assert!(doc.contains("<w:rPr><w:i/></w:rPr><w:t xml:space=\"preserve\">d</w:t>"));
        assert!(doc.contains(
            "<w:rPr><w:vertAlign w:val=\"subscript\"/></w:rPr><w:t xml:space=\"preserve\">z</w:t>"
        ));
        assert!(doc.contains("<w:b/></w:rPr><w:t xml:space=\"preserve\">not supported</w:t>"));
        // The tags themselves are not text.
        assert!(!doc.contains("&lt;sub&gt;"));
    }

    #[test]
    fn user_text_cannot_break_the_xml_and_raw_html_stays_text() {
        let doc = body_of("a &amp; b \\<script\\> \u{1}c\n\n<b>bold?</b>\n");
        assert!(doc.contains("a &amp; b &lt;script&gt; \u{FFFD}c"));
        assert!(doc.contains("&lt;b&gt;bold?&lt;/b&gt;"));
        assert!(!doc.contains('\u{1}'));
    }

    #[test]
    fn a_table_has_apa_rules_a_repeating_heading_row_and_no_vertical_lines() {
        let doc = body_of("| | *n* |\n|---|---|\n| a | 3 |\n| b | 4 |\n");
        assert!(doc.contains("<w:tbl>"));
        assert!(doc.contains("<w:insideV w:val=\"nil\"/>"));
        assert!(doc.contains("<w:left w:val=\"nil\"/>"));
        assert_eq!(doc.matches("<w:tblHeader/>").count(), 1);
        assert_eq!(doc.matches("<w:tr>").count(), 3);
        // The heading row's cells carry the rule beneath the headings.
        assert_eq!(doc.matches("<w:tcBorders><w:bottom").count(), 2);
        assert!(doc.contains("<w:i/></w:rPr><w:t xml:space=\"preserve\">n</w:t>"));
        // Grid columns fill the 16 cm text block.
        let widths: usize = doc
            .split("<w:gridCol w:w=\"")
            .skip(1)
            .map(|s| s.split('"').next().unwrap().parse::<usize>().unwrap())
            .sum();
        assert!(widths <= text_width() as usize && widths + 2 >= text_width() as usize);
    }

    #[test]
    fn columns_never_break_a_word_and_fill_the_block() {
        let cell = |s: &str| {
            let longest = s
                .split_whitespace()
                .map(|w| w.chars().count())
                .max()
                .unwrap_or(0);
            (String::new(), s.chars().count(), longest)
        };
        let long = "a claim long enough to need several lines in a table cell of its own";
        let t = Table {
            head: vec![cell("Claim"), cell("n"), cell("Verdict")],
            rows: vec![vec![cell(long), cell("42"), cell("not supported")]],
            keep: false,
        };
        let w = column_widths(&t, 3);
        let per_char = f64::from(text_width()) / 84.0;
        // "supported" (9 characters) and "42" keep a line each.
        assert!(w[2] as f64 >= 9.0 * per_char, "{w:?}");
        assert!(w[1] as f64 >= 2.0 * per_char, "{w:?}");
        assert!(w[0] > w[2], "{w:?}");
        let sum: usize = w.iter().sum();
        assert!(sum <= text_width() as usize && sum + 3 >= text_width() as usize);
    }

    #[test]
    fn a_kept_group_keeps_all_but_its_last_block_with_the_next() {
        let md = "<div class=\"keep\">\n\n**Table 1**\n\n*Title*\n\n| a |\n|---|\n| 1 |\n\n*Note.* n\n\n</div>\n\nAfter.\n";
        let doc = body_of(md);
        let paras: Vec<&str> = doc.split("<w:p>").skip(1).collect();
        let keeps = |s: &str| s.contains("<w:keepNext/>");
        assert!(keeps(paras[0]), "Table 1 keeps with its title");
        assert!(keeps(paras[1]), "the title keeps with the table");
        assert!(
            keeps(paras[2]) && keeps(paras[3]),
            "the rows keep with the note"
        );
        assert!(!keeps(paras[4]), "the note is the group's end");
        assert!(!keeps(paras[5]));
        assert!(!doc.contains("div"));
    }

    #[test]
    fn lists_are_numbered_per_list_and_headings_use_styles() {
        let docx = document("## H\n\n- a\n- b\n\n1. x\n2. y\n", &BTreeMap::new(), "T").unwrap();
        let p = parts(&docx);
        let doc = String::from_utf8(p["word/document.xml"].clone()).unwrap();
        assert!(doc.contains("<w:pStyle w:val=\"Heading1\"/><w:keepNext/>"));
        assert_eq!(doc.matches("<w:numId w:val=\"1\"/>").count(), 2);
        assert_eq!(doc.matches("<w:numId w:val=\"2\"/>").count(), 2);
        let num = String::from_utf8(p["word/numbering.xml"].clone()).unwrap();
        assert!(num.contains("<w:num w:numId=\"2\"><w:abstractNumId w:val=\"1\"/>"));
        // An image that is not one of our figures becomes its alt text.
        assert!(body_of("![the alt](https://example.org/x.png)").contains(">the alt<"));
        assert!(!body_of("![the alt](https://example.org/x.png)").contains("example"));
    }

    #[test]
    fn the_page_is_a4_with_a_16_cm_text_block() {
        assert_eq!(text_width(), 11_906 - 2 * 1417);
        // 9072 twips = 16.0 cm, the figures' designed width.
        assert!((f64::from(text_width()) / TWIPS_PER_CM - 16.0).abs() < 0.01);
    }
}
