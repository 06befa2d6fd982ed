//! The report as Markdown (`report.md`, through `report.md.j2`) and as one
//! self-contained HTML page (`report.html`: that Markdown converted, with
//! the figures inline), so both say exactly the same thing.
//!
//! The template receives the view's words and, as `results`, the raw
//! model, so a user's `--templates` can reach any number.

use super::{page, render_template, Context, Output, Renderer};
use crate::error::{Failure, Result};
use minijinja::Value;
use std::collections::BTreeMap;

/// `report.md`.
pub(crate) struct Markdown;

impl Renderer for Markdown {
    fn render(&self, cx: &Context, _done: &[Output]) -> Result<Vec<Output>> {
        let ctx = minijinja::context! {
            data => Value::from_serialize(&cx.results.data),
            results => Value::from_serialize(cx.results),
            ..Value::from_serialize(cx.view)
        };
        let text = render_template(cx.env, "report.md.j2", ctx)?;
        Ok(vec![Output::new("report.md", text)])
    }
}

/// `report.html`: the Markdown report as a page, every figure inline.
pub(crate) struct Html;

impl Renderer for Html {
    fn render(&self, cx: &Context, done: &[Output]) -> Result<Vec<Output>> {
        let text = |name: &str| {
            done.iter()
                .find(|o| o.name == name)
                .map(|o| String::from_utf8_lossy(&o.bytes).into_owned())
        };
        let report_md = text("report.md").ok_or_else(|| {
            Failure::internal("the HTML report is rendered after the Markdown report")
        })?;
        let svgs: BTreeMap<String, String> = cx
            .view
            .figures
            .iter()
            .filter_map(|f| text(&f.file).map(|svg| (f.file.clone(), svg)))
            .collect();
        let html = page(
            cx.env,
            "report.html.j2",
            &cx.results.plan.title,
            &report_md,
            &svgs,
            &cx.view.meta,
        )?;
        Ok(vec![Output::new("report.html", html)])
    }
}
