//! The documents a thesis writer takes away: `report.docx`, and every
//! figure as PNG and PDF beside its SVG.
//!
//! The plain tests read the files themselves (the DOCX package's parts, the
//! PNG header). The ignored ones hand them to real programs: LibreOffice
//! (Debian's `libreoffice-writer-nogui`) converts every demo's
//! `report.docx` to PDF, and poppler's `pdftotext`, `pdfimages` and
//! `pdfinfo` (Debian's `poppler-utils`) read what came out. `.ci/run`
//! installs both and runs these with `--ignored`, where a missing program
//! fails them.

mod common;

use common::{copy_dir, root, Case, DEMOS};
use pulldown_cmark::{Event, Parser, Tag, TagEnd};
use std::io::Read;
use std::process::Command;

/// Every demo run into a temporary folder.
fn demos() -> Case {
    let c = Case::new();
    copy_dir(&root().join("analyses"), &c.path().join("analyses"));
    for name in DEMOS {
        c.attest(&["run", "--quiet", &format!("analyses/{name}.toml")])
            .success();
    }
    c
}

/// What `report.md` promises a reader will find: the text of each "In one
/// sentence" quote, and each table's and figure's label and title
/// ("Table 2", "What the Data Look Like in H1"), as plain text.
struct Promised {
    sentences: Vec<String>,
    labels: Vec<String>,
    titles: Vec<String>,
    tables: usize,
    figures: usize,
}

fn promised(md: &str) -> Promised {
    let mut p = Promised {
        sentences: Vec::new(),
        labels: Vec::new(),
        titles: Vec::new(),
        tables: 0,
        figures: 0,
    };
    let mut quote = 0;
    let mut para = String::new();
    let mut previous_was_label = false;
    for ev in Parser::new_ext(md, pulldown_cmark::Options::ENABLE_TABLES) {
        match ev {
            Event::Start(Tag::BlockQuote(_)) => quote += 1,
            Event::End(TagEnd::BlockQuote(_)) => quote -= 1,
            Event::Start(Tag::Paragraph) => para.clear(),
            Event::Text(t) | Event::Code(t) => para.push_str(&t),
            Event::SoftBreak => para.push(' '),
            Event::Start(Tag::Table(_)) => p.tables += 1,
            Event::Start(Tag::Image { .. }) => p.figures += 1,
            Event::End(TagEnd::Paragraph) => {
                let is_label = (para.starts_with("Table ") || para.starts_with("Figure "))
                    && para
                        .split(' ')
                        .nth(1)
                        .is_some_and(|n| n.parse::<u32>().is_ok())
                    && para.split(' ').count() == 2;
                if quote > 0 {
                    p.sentences.push(para.clone());
                } else if is_label {
                    p.labels.push(para.clone());
                } else if previous_was_label {
                    p.titles.push(para.clone());
                }
                previous_was_label = is_label;
            }
            _ => {}
        }
    }
    p
}

/// Text compared without any white space: line breaks, justification and
/// the gap a subscript leaves differ between layouts, the characters do not.
fn squeeze(s: &str) -> String {
    s.replace('ﬁ', "fi")
        .replace('ﬂ', "fl")
        .replace('ﬀ', "ff")
        .chars()
        .filter(|c| !c.is_whitespace())
        .collect()
}

/// As [`squeeze`], and without hyphens: pdftotext joins a word broken at a
/// line end after its hyphen ("one-" / "sided" becomes "onesided"). The
/// minus sign (U+2212) is a different character and stays.
fn squeeze_pdf(s: &str) -> String {
    squeeze(s).replace(['-', '\u{2010}'], "")
}

fn parts(docx: &[u8]) -> std::collections::BTreeMap<String, Vec<u8>> {
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(docx)).expect("report.docx is a ZIP");
    let mut out = std::collections::BTreeMap::new();
    for i in 0..z.len() {
        let mut f = z.by_index(i).unwrap();
        let mut b = Vec::new();
        f.read_to_end(&mut b).unwrap();
        out.insert(f.name().unwrap().to_string(), b);
    }
    out
}

fn png_size(png: &[u8]) -> (u32, u32) {
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    (
        u32::from_be_bytes(png[16..20].try_into().unwrap()),
        u32::from_be_bytes(png[20..24].try_into().unwrap()),
    )
}

/// The SVG's viewBox width and height.
fn view_box(svg: &str) -> (f64, f64) {
    let v = svg
        .split("viewBox=\"")
        .nth(1)
        .unwrap()
        .split('"')
        .next()
        .unwrap();
    let n: Vec<f64> = v.split(' ').map(|x| x.parse().unwrap()).collect();
    (n[2], n[3])
}

/// Every figure also comes as a PNG at 300 DPI for its 16 cm print width
/// (16 / 2.54 × 300 = 1889.8, so 1890 pixels; PNG specification, ISO/IEC
/// 15948 §11.3.5.3, for the pHYs chunk that records it) with the SVG's
/// proportions, and as a PDF.
#[test]
fn every_figure_comes_as_a_300_dpi_png_and_a_pdf() {
    let c = demos();
    let mut seen = 0;
    for name in DEMOS {
        let dir = c.path().join(format!("out/{name}/figures"));
        for e in std::fs::read_dir(&dir).unwrap() {
            let p = e.unwrap().path();
            if p.extension().is_none_or(|x| x != "svg") {
                continue;
            }
            seen += 1;
            let svg = std::fs::read_to_string(&p).unwrap();
            let png = std::fs::read(p.with_extension("png")).expect("a PNG beside the SVG");
            let (w, h) = png_size(&png);
            assert_eq!(w, 1890, "{}", p.display());
            let (vw, vh) = view_box(&svg);
            // The SVG states its height to 0.01 cm (at most 0.6 pixels off
            // the view box's proportion), and the PNG rounds to a pixel.
            assert!(
                (f64::from(h) - 1890.0 * vh / vw).abs() <= 1.2,
                "{}: {w}×{h} for a {vw}×{vh} view box",
                p.display()
            );
            assert_eq!(&png[37..41], b"pHYs", "{}", p.display());
            assert_eq!(u32::from_be_bytes(png[41..45].try_into().unwrap()), 11811);
            let pdf = std::fs::read(p.with_extension("pdf")).expect("a PDF beside the SVG");
            assert!(pdf.starts_with(b"%PDF-") && pdf.trim_ascii_end().ends_with(b"%%EOF"));
        }
    }
    assert!(seen >= 6 * 3, "too few figures: {seen}");
}

/// `report.docx` holds the report: one Word table per Markdown table, one
/// embedded PNG per figure, and the promised sentences and titles as text.
#[test]
fn report_docx_holds_every_table_figure_and_sentence() {
    let c = demos();
    for name in DEMOS {
        let md = c.read(&format!("out/{name}/report.md"));
        let want = promised(&md);
        let docx = std::fs::read(c.path().join(format!("out/{name}/report.docx"))).unwrap();
        let p = parts(&docx);
        let doc = String::from_utf8(p["word/document.xml"].clone()).unwrap();
        assert_eq!(doc.matches("<w:tbl>").count(), want.tables, "{name}");
        let media: Vec<&String> = p.keys().filter(|k| k.starts_with("word/media/")).collect();
        assert_eq!(media.len(), want.figures, "{name}: {media:?}");
        assert!(want.tables >= 2 && want.figures >= 3, "{name}");
        // The document's text, without markup, holds every promise.
        let text: String = doc
            .split("<w:t xml:space=\"preserve\">")
            .skip(1)
            .map(|s| s.split("</w:t>").next().unwrap())
            .collect::<Vec<_>>()
            .join("")
            .replace("&amp;", "&")
            .replace("&lt;", "<")
            .replace("&gt;", ">")
            .replace("&quot;", "\"");
        let text = squeeze(&text);
        for s in want
            .sentences
            .iter()
            .chain(&want.labels)
            .chain(&want.titles)
        {
            assert!(text.contains(&squeeze(s)), "{name}: missing {s:?}");
        }
        assert!(!want.sentences.is_empty(), "{name}");
        // Every figure and table is numbered and titled.
        assert_eq!(want.labels.len(), want.titles.len(), "{name}");
        assert_eq!(want.labels.len(), want.tables + want.figures, "{name}");
        // A4 with 2.5 cm margins.
        assert!(
            doc.contains("<w:pgSz w:w=\"11906\" w:h=\"16838\"/>"),
            "{name}"
        );
        assert!(doc.contains("w:left=\"1417\""), "{name}");
    }
}

fn tool(name: &str, package: &str) -> Command {
    let found = Command::new("sh")
        .args(["-c", &format!("command -v {name}")])
        .output()
        .is_ok_and(|o| o.status.success());
    assert!(found, "this test needs {name}: apt-get install {package}");
    Command::new(name)
}

fn run(mut cmd: Command, what: &str) -> String {
    let out = cmd.output().unwrap_or_else(|e| panic!("{what}: {e}"));
    assert!(
        out.status.success(),
        "{what} failed:\n{}\n{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Every demo's `report.docx` opens in LibreOffice (headless) and converts
/// to PDF; the PDF is A4 and its text holds each "In one sentence" quote
/// and every table's and figure's label and title, with one embedded image
/// per figure, at 300 pixels per inch as placed.
#[test]
#[ignore = "needs LibreOffice and poppler (apt-get install libreoffice-writer-nogui poppler-utils); .ci/run runs it with --ignored"]
fn every_report_docx_converts_to_pdf_in_libreoffice() {
    let c = demos();
    let docs = c.path().join("docs");
    std::fs::create_dir(&docs).unwrap();
    for name in DEMOS {
        std::fs::copy(
            c.path().join(format!("out/{name}/report.docx")),
            docs.join(format!("{name}.docx")),
        )
        .unwrap();
    }
    // Its own profile folder, so no user setting and no other instance
    // takes part.
    let profile = c.path().join("lo-profile");
    let mut soffice = tool("soffice", "libreoffice-writer-nogui");
    soffice
        .arg(format!(
            "-env:UserInstallation=file://{}",
            profile.display()
        ))
        .args(["--headless", "--convert-to", "pdf", "--outdir"])
        .arg(c.path().join("pdf"))
        .args(DEMOS.iter().map(|n| docs.join(format!("{n}.docx"))));
    run(soffice, "soffice --convert-to pdf");
    for name in DEMOS {
        let pdf = c.path().join(format!("pdf/{name}.pdf"));
        assert!(pdf.exists(), "LibreOffice wrote no PDF for {name}");
        let info = run(
            {
                let mut t = tool("pdfinfo", "poppler-utils");
                t.arg(&pdf);
                t
            },
            "pdfinfo",
        );
        assert!(info.contains("(A4)"), "{name}: {info}");
        let text = run(
            {
                let mut t = tool("pdftotext", "poppler-utils");
                t.arg(&pdf).arg("-");
                t
            },
            "pdftotext",
        );
        let text = squeeze_pdf(&text);
        let want = promised(&c.read(&format!("out/{name}/report.md")));
        for s in want
            .sentences
            .iter()
            .chain(&want.labels)
            .chain(&want.titles)
        {
            assert!(
                text.contains(&squeeze_pdf(s)),
                "{name}: the PDF lacks {s:?}"
            );
        }
        let images = run(
            {
                let mut t = tool("pdfimages", "poppler-utils");
                t.arg("-list").arg(&pdf);
                t
            },
            "pdfimages",
        );
        // One "image" row per figure (its alpha mask is an "smask" row),
        // each at 300 ppi: 1890 pixels over 16 cm.
        let rows: Vec<Vec<&str>> = images
            .lines()
            .skip(2)
            .map(|l| l.split_whitespace().collect::<Vec<_>>())
            .filter(|f| f.get(2) == Some(&"image"))
            .collect();
        assert_eq!(rows.len(), want.figures, "{name}:\n{images}");
        for r in &rows {
            assert_eq!(r[3], "1890", "{name}: {r:?}");
            assert_eq!((r[12], r[13]), ("300", "300"), "{name}: {r:?}");
        }
    }
}

/// Every figure's PDF is one page of exactly the figure's print size: 16 cm
/// (453.54 pt) wide, as tall as the SVG's proportions give.
#[test]
#[ignore = "needs poppler (apt-get install poppler-utils); .ci/run runs it with --ignored"]
fn every_figure_pdf_is_one_page_of_the_figures_size() {
    let c = demos();
    let mut seen = 0;
    for name in DEMOS {
        let dir = c.path().join(format!("out/{name}/figures"));
        let mut pdfs: Vec<_> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| p.extension().is_some_and(|x| x == "pdf"))
            .collect();
        pdfs.sort();
        for pdf in pdfs {
            seen += 1;
            let info = run(
                {
                    let mut t = tool("pdfinfo", "poppler-utils");
                    t.arg(&pdf);
                    t
                },
                "pdfinfo",
            );
            assert!(info.contains("Pages:           1"), "{}", pdf.display());
            let size = info
                .lines()
                .find(|l| l.starts_with("Page size:"))
                .unwrap_or_else(|| panic!("{}: {info}", pdf.display()));
            let n: Vec<f64> = size
                .split_whitespace()
                .filter_map(|w| w.parse().ok())
                .collect();
            let svg = std::fs::read_to_string(pdf.with_extension("svg")).unwrap();
            let (vw, vh) = view_box(&svg);
            let width_pt = 16.0 / 2.54 * 72.0;
            assert!((n[0] - width_pt).abs() < 0.1, "{}: {size}", pdf.display());
            assert!(
                (n[1] - width_pt * vh / vw).abs() < 1.0,
                "{}: {size}",
                pdf.display()
            );
        }
    }
    assert!(seen >= 18, "too few figure PDFs: {seen}");
}
