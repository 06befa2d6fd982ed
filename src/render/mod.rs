//! Rendering: the report and the preregistration document, in Markdown and
//! self-contained HTML, plus the figures.
//!
//! Renderers read only the results model (or the lock) and never compute a
//! statistic. The layout lives in minijinja templates embedded in the
//! binary; `--templates DIR` overrides any of them by file name, through a
//! loader that looks in the user's folder first and falls back to the
//! embedded copy. In Markdown templates every value from the context is
//! escaped as Markdown text unless the renderer marked it as already-safe
//! Markdown; HTML is produced from the Markdown (see [`markdown`]), so both
//! outputs say the same thing.

mod axis;
mod bibliography;
mod docx;
mod latex_tables;
pub(crate) mod markdown;
mod markdown_report;
mod plan_doc;
mod raster;
mod results_json;
mod svg;
pub(crate) mod values;
pub(crate) mod view;

use crate::error::{Failure, Result};
use crate::results::Results;
use minijinja::{AutoEscape, Environment, Value};
use std::path::{Component, Path, PathBuf};

/// One file of a run's output set: its name relative to the output folder
/// (figures carry their folder, `figures/…`) and its bytes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Output {
    /// Relative file name, e.g. `report.md`, `figures/h1-qq.svg`.
    pub name: String,
    /// The file's bytes.
    pub bytes: Vec<u8>,
}

impl Output {
    pub(crate) fn new(name: impl Into<String>, text: impl Into<String>) -> Self {
        Output {
            name: name.into(),
            bytes: text.into().into_bytes(),
        }
    }
}

/// What every renderer is handed: the typed model, the words the view made
/// of it, and the template environment (the user's folder first).
pub(crate) struct Context<'a> {
    /// The results model, for renderers that draw its numbers (figures) or
    /// hand it to templates.
    pub results: &'a Results,
    /// The words and numbers a reader sees.
    pub view: &'a view::ReportView,
    /// Templates, for the formats written through them.
    pub env: &'a Environment<'static>,
}

/// One output format. A renderer reads the context (and the files the
/// renderers before it produced, e.g. HTML inlines the SVGs) and returns
/// its files; it computes nothing and never writes to disk.
pub(crate) trait Renderer: Sync {
    /// The files of this format.
    fn render(&self, cx: &Context, done: &[Output]) -> Result<Vec<Output>>;
}

/// Every output format of a run, in the order its files are written
/// (`results.json` last, so its presence means the run completed). A new
/// format is one new module and one line here.
const RENDERERS: &[&dyn Renderer] = &[
    &svg::Svg,
    &raster::Raster,
    &values::NamedValues,
    &latex_tables::LatexTables,
    &bibliography::Bibliography,
    &markdown_report::Markdown,
    &markdown_report::Html,
    &docx::Docx,
    &results_json::ResultsJson,
];

/// Renders every output of a run. `templates` is a folder whose files
/// override the embedded templates of the same name.
pub fn render_run(results: &Results, templates: Option<&Path>) -> Result<Vec<Output>> {
    let env = environment(templates);
    let view = view::report(results);
    let cx = Context {
        results,
        view: &view,
        env: &env,
    };
    let mut done = Vec::new();
    for r in RENDERERS {
        let files = r.render(&cx, &done)?;
        done.extend(files);
    }
    Ok(done)
}

/// The rendered preregistration document.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PlanDoc {
    /// `plan.md`.
    pub plan_md: String,
    /// `plan.html`, self-contained.
    pub plan_html: String,
}

/// Renders the preregistration document from a lock.
///
/// `planned` holds, for each hypothesis in plan order, the sample size its
/// `[hypothesis.planning]` implies (computed by the caller).
pub fn render_plan(
    lock: &crate::lock::LockFile,
    planned: &[Option<crate::analysis::planning::Planned>],
    templates: Option<&Path>,
) -> Result<PlanDoc> {
    plan_doc::render(lock, planned, &environment(templates))
}

/// The embedded templates, by name.
const EMBEDDED: &[(&str, &str)] = &[
    ("report.md.j2", include_str!("../../templates/report.md.j2")),
    (
        "report.html.j2",
        include_str!("../../templates/report.html.j2"),
    ),
    ("plan.md.j2", include_str!("../../templates/plan.md.j2")),
    ("plan.html.j2", include_str!("../../templates/plan.html.j2")),
    ("macros.md.j2", include_str!("../../templates/macros.md.j2")),
    ("page.html.j2", include_str!("../../templates/page.html.j2")),
];

/// The auto-escape mode of Markdown templates.
const MARKDOWN: AutoEscape = AutoEscape::Custom("markdown");

/// The template environment: user folder first, embedded copy second.
fn environment(user: Option<&Path>) -> Environment<'static> {
    let mut env = Environment::new();
    env.set_keep_trailing_newline(true);
    env.set_trim_blocks(true);
    env.set_lstrip_blocks(true);
    let user: Option<PathBuf> = user.map(Path::to_path_buf);
    env.set_loader(move |name| load(user.as_deref(), name));
    env.set_auto_escape_callback(|name| {
        if name.ends_with(".md.j2") {
            MARKDOWN
        } else if name.ends_with(".html.j2") {
            AutoEscape::Html
        } else {
            AutoEscape::None
        }
    });
    env.set_formatter(|out, state, value| {
        if state.auto_escape() == MARKDOWN {
            if value.is_safe() || value.is_none() || value.is_undefined() {
                if !(value.is_none() || value.is_undefined()) {
                    write!(out, "{value}").map_err(minijinja::Error::from)?;
                }
            } else {
                let text = value.to_string();
                out.write_str(&markdown::escape(&text))
                    .map_err(minijinja::Error::from)?;
            }
            Ok(())
        } else {
            minijinja::escape_formatter(out, state, value)
        }
    });
    env
}

/// Finds a template: in the user's folder if it is there, else embedded.
fn load(user: Option<&Path>, name: &str) -> std::result::Result<Option<String>, minijinja::Error> {
    if let Some(dir) = user {
        let rel = Path::new(name);
        let plain = rel.components().all(|c| matches!(c, Component::Normal(_)));
        if plain {
            let path = dir.join(rel);
            match std::fs::read_to_string(&path) {
                Ok(text) => return Ok(Some(text)),
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
                Err(e) => {
                    return Err(minijinja::Error::new(
                        minijinja::ErrorKind::InvalidOperation,
                        format!("cannot read template {}", path.display()),
                    )
                    .with_source(e))
                }
            }
        }
    }
    Ok(EMBEDDED
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, text)| (*text).to_string()))
}

/// Renders one template with a context, mapping template errors to a
/// user-facing failure that names the template.
fn render_template(env: &Environment<'static>, name: &str, ctx: Value) -> Result<String> {
    let tmpl = env
        .get_template(name)
        .map_err(|e| template_failure(name, &e))?;
    tmpl.render(ctx).map_err(|e| template_failure(name, &e))
}

fn template_failure(name: &str, e: &minijinja::Error) -> Failure {
    let mut what = format!("template {name} failed: {e}");
    let mut src = std::error::Error::source(e);
    while let Some(s) = src {
        what.push_str(&format!(": {s}"));
        src = s.source();
    }
    Failure::input(what)
        .help("check the template in the --templates folder, or remove it to use the built-in one")
}

use view::md;

/// Wraps a Markdown body in the HTML page template.
fn page(
    env: &Environment<'static>,
    name: &str,
    title: &str,
    body_md: &str,
    figures: &std::collections::BTreeMap<String, String>,
    meta: &[(&str, String)],
) -> Result<String> {
    let body = markdown::to_html(body_md, figures);
    render_template(
        env,
        name,
        minijinja::context! { title => title, body => Value::from_safe_string(body), meta => meta },
    )
}
