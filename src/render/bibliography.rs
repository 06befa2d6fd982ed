//! `references.bib`: the works the methods paragraph cites, as BibTeX
//! entries, so a thesis cites them with its own bibliography style. The
//! entries come from the same structured records as the report's APA
//! references list ([`super::view::references`]), so the two never
//! disagree; the file is empty of entries when nothing is cited.

use super::{Context, Output, Renderer};
use crate::error::Result;

/// The `references.bib` renderer.
pub(crate) struct Bibliography;

impl Renderer for Bibliography {
    fn render(&self, cx: &Context, _done: &[Output]) -> Result<Vec<Output>> {
        let mut s = String::from(
            "% The works the methods of this analysis cite, written by attest;\n% regenerate with `attest run`, do not edit.\n",
        );
        for source in &cx.view.sources {
            s.push('\n');
            s.push_str(&source.bibtex());
        }
        Ok(vec![Output::new("references.bib", s)])
    }
}
