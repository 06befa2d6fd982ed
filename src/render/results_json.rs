//! `results.json`: the results model itself, at full precision (shortest
//! round-trip numbers), for machines and for `verify`.

use super::{Context, Output, Renderer};
use crate::error::{Failure, Result};

/// `results.json`.
pub(crate) struct ResultsJson;

impl Renderer for ResultsJson {
    fn render(&self, cx: &Context, _done: &[Output]) -> Result<Vec<Output>> {
        let mut json = serde_json::to_string_pretty(cx.results)
            .map_err(|e| Failure::internal(format!("cannot serialise results: {e}")))?;
        json.push('\n');
        Ok(vec![Output::new("results.json", json)])
    }
}
