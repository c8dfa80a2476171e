//! Every output format, one exporter per format behind [`Exporter`]. Exporters turn
//! [`Findings`] into bytes; they format and never compute.

pub mod bundle;
pub mod cautions;
pub mod csv;
pub mod decisions_text;
pub mod format;
pub mod json;
pub mod markdown;
pub mod plots;
pub mod table;
pub mod text;

use crate::analysis::Findings;
use crate::analysis::planning::{Comparison, PlanFinding};

/// An output format.
pub trait Exporter {
    /// The report of a run as bytes.
    fn render(&self, findings: &Findings) -> Vec<u8>;
    /// The report of a comparison.
    fn comparison(&self, c: &Comparison) -> Vec<u8>;
    /// The report of a plan.
    fn plan(&self, p: &PlanFinding) -> Vec<u8>;
}

/// The formats of `--format`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Terminal tables.
    Text,
    /// The JSON contract.
    Json,
    /// The proposal-ready report.
    Markdown,
    /// The summary and the budget as CSV tables.
    Csv,
}

/// The exporter of a format; `figures` is the folder of `--plots` and the figures' format, for
/// the Markdown links.
pub fn exporter(
    format: Format,
    figures: Option<String>,
    plot_format: plots::PlotFormat,
) -> Box<dyn Exporter> {
    match format {
        Format::Text => Box::new(text::TextReport),
        Format::Json => Box::new(json::JsonReport),
        Format::Markdown => Box::new(markdown::MarkdownReport {
            figures,
            plot_format,
        }),
        Format::Csv => Box::new(csv::CsvReport),
    }
}

impl Exporter for markdown::MarkdownReport {
    fn render(&self, f: &Findings) -> Vec<u8> {
        self.report(f).into_bytes()
    }
    fn comparison(&self, c: &Comparison) -> Vec<u8> {
        markdown::MarkdownReport::comparison(self, c).into_bytes()
    }
    fn plan(&self, p: &PlanFinding) -> Vec<u8> {
        markdown::MarkdownReport::plan(self, p).into_bytes()
    }
}
