//! Markdown in, HTML out, with text from plans and data kept as text.
//!
//! Two halves of one promise: [`escape`] turns a label, claim or reason into
//! Markdown that shows exactly those characters (no emphasis, links, tables
//! or HTML can start inside it), and [`to_html`] converts the report with
//! one fixed set of options, turns any raw HTML that still reaches it into
//! visible text, and replaces our own figure references with inline SVG.
//! Images that are not our figures become their alt text, so the HTML never
//! loads anything from anywhere.

use pulldown_cmark::{html, CowStr, Event, Options, Parser, Tag, TagEnd};
use std::collections::BTreeMap;

/// The Markdown options every document is rendered with: tables, nothing else.
pub(crate) fn options() -> Options {
    Options::ENABLE_TABLES
}

/// Escapes text for inline Markdown: every character that could start
/// markup is backslash-escaped, and line breaks become spaces.
pub(crate) fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    let mut at_start = true;
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        let c = if c == '\n' || c == '\r' || c == '\t' {
            ' '
        } else {
            c
        };
        match c {
            '\\' | '`' | '*' | '_' | '[' | ']' | '<' | '>' | '&' | '|' | '~' | '!' | '$' => {
                out.push('\\');
                out.push(c);
            }
            '#' | '+' | '-' | '=' if at_start && opens_block(c, chars.peek().copied()) => {
                out.push('\\');
                out.push(c);
            }
            '0'..='9' if at_start => {
                // "1." or "1)" at the start of a line would begin a list.
                out.push(c);
                while let Some(&d) = chars.peek() {
                    if d.is_ascii_digit() {
                        out.push(d);
                        chars.next();
                    } else {
                        break;
                    }
                }
                let mut ahead = chars.clone();
                if let Some(d) = ahead.next().filter(|d| *d == '.' || *d == ')') {
                    if ahead.next().is_none_or(char::is_whitespace) {
                        out.push('\\');
                        out.push(d);
                        chars.next();
                    }
                }
            }
            _ => out.push(c),
        }
        at_start = false;
    }
    out
}

/// Whether `c` at the start of a line, followed by `next`, could open a
/// heading, list, thematic break or setext underline.
fn opens_block(c: char, next: Option<char>) -> bool {
    c == '=' || next.is_none_or(|n| n.is_whitespace() || n == c)
}

/// Escapes multi-paragraph text: paragraphs (separated by blank lines) are
/// kept, each escaped as inline text.
pub(crate) fn escape_paragraphs(text: &str) -> String {
    text.split("\n\n")
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .map(escape)
        .collect::<Vec<_>>()
        .join("\n\n")
}

/// Converts Markdown to an HTML fragment. Raw HTML is shown as text; an
/// image whose destination is a key of `figures` becomes that inline SVG
/// inside a `<figure>`; any other image becomes its alt text.
/// Inline tags the view writes: a subscript (`*d*<sub>z</sub>`).
const ALLOWED_INLINE: [&str; 2] = ["<sub>", "</sub>"];
/// Block tags the templates write around a numbered table or figure and its
/// title and note, so that print keeps them on one page.
const ALLOWED_BLOCK: [&str; 2] = ["<div class=\"keep\">", "</div>"];

pub(crate) fn to_html(markdown: &str, figures: &BTreeMap<String, String>) -> String {
    let mut events: Vec<Event> = Vec::new();
    let mut image: Option<(String, String)> = None;
    for ev in Parser::new_ext(markdown, options()) {
        if let Some((_, alt)) = image.as_mut() {
            match ev {
                Event::End(TagEnd::Image) => {
                    if let Some((dest, alt)) = image.take() {
                        events.push(figure_event(&dest, &alt, figures));
                    }
                }
                Event::Text(t) | Event::Code(t) => alt.push_str(&t),
                _ => {}
            }
            continue;
        }
        match ev {
            Event::Start(Tag::Image { dest_url, .. }) => {
                image = Some((dest_url.to_string(), String::new()));
            }
            // The view writes exactly these tags; user text cannot (its
            // `<` is escaped). Every other tag is shown as text.
            Event::InlineHtml(t) if ALLOWED_INLINE.contains(&&*t) => {
                events.push(Event::InlineHtml(t))
            }
            Event::Html(t) if ALLOWED_BLOCK.contains(&t.trim_end()) => events.push(Event::Html(t)),
            Event::Html(t) | Event::InlineHtml(t) => events.push(Event::Text(t)),
            other => events.push(other),
        }
    }
    let mut out = String::new();
    html::push_html(&mut out, events.into_iter());
    out
}

fn figure_event<'a>(dest: &str, alt: &str, figures: &BTreeMap<String, String>) -> Event<'a> {
    match figures.get(dest) {
        Some(svg) => Event::Html(CowStr::from(format!(
            "<span class=\"figure\">{}</span>",
            inline_svg(svg)
        ))),
        None => Event::Text(CowStr::from(alt.to_string())),
    }
}

/// An SVG document made fit for inlining: the XML namespace attribute is
/// dropped (HTML parsers supply it) so no URL appears in the page.
pub(crate) fn inline_svg(svg: &str) -> String {
    svg.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn html(md: &str) -> String {
        to_html(md, &BTreeMap::new())
    }

    #[test]
    fn escaped_text_renders_as_itself() {
        let raw = "*bold* _it_ [a](b) <b>x</b> | a & b # 1. ok";
        let out = html(&escape(raw));
        assert_eq!(
            out,
            "<p>*bold* _it_ [a](b) &lt;b&gt;x&lt;/b&gt; | a &amp; b # 1. ok</p>\n"
        );
    }

    #[test]
    fn line_starts_cannot_open_blocks() {
        for raw in [
            "# head", "- item", "1. item", "> quote", "+ item", "---", "2)",
        ] {
            let out = html(&escape(raw));
            assert!(out.starts_with("<p>"), "{raw} gave {out}");
        }
    }

    #[test]
    fn versions_and_words_stay_readable() {
        assert_eq!(escape("0.1.0"), "0.1.0");
        assert_eq!(escape("-5 degrees"), "-5 degrees");
        assert_eq!(escape("snake_case"), "snake\\_case");
    }

    #[test]
    fn only_the_views_own_tags_pass() {
        let out = html("*d*<sub>z</sub> = 0.4\n\n<div class=\"keep\">\n\n**Table 1**\n\n</div>\n");
        assert!(out.contains("<em>d</em><sub>z</sub>"), "{out}");
        assert!(
            out.contains("<div class=\"keep\">") && out.contains("</div>"),
            "{out}"
        );
        let out = html("<sub onclick=\"x\">z</sub> <div class=\"other\">\n");
        assert!(!out.contains("<sub onclick"), "{out}");
        assert!(!out.contains("<div class=\"other\">"), "{out}");
    }

    #[test]
    fn raw_html_becomes_text() {
        let out = html("a <script>alert(1)</script>\n\n<div>x</div>\n");
        assert!(!out.contains("<script>") && !out.contains("<div>"), "{out}");
        assert!(out.contains("&lt;script&gt;"));
    }

    #[test]
    fn foreign_images_become_alt_text() {
        let out = html("![a picture](https://example.org/x.png)");
        assert_eq!(out, "<p>a picture</p>\n");
    }

    #[test]
    fn own_figures_are_inlined() {
        let mut f = BTreeMap::new();
        f.insert(
            "h1-a.svg".to_string(),
            "<svg width=\"2\" xmlns=\"http://www.w3.org/2000/svg\"></svg>".to_string(),
        );
        let out = to_html("![alt](h1-a.svg)", &f);
        assert!(out.contains("<svg width=\"2\"></svg>"), "{out}");
        assert!(!out.contains("http"));
    }
}
