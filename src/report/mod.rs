//! Every output format, one file each behind [`Exporter`], listed once in [`formats!`]. An
//! exporter turns a [`Report`] (a run, a comparison or a plan) into bytes; it formats and never
//! computes (it rounds and scales units, nothing more). Figures are in `plots`, the notebook
//! bundle in `bundle`.
//!
//! To add a format: write `src/report/<name>.rs` with a struct and `impl Exporter` (see
//! `csv.rs`), and add one line to the list below; `--format <name>` then offers it.

pub(crate) mod bundle;
pub(crate) mod cautions;
mod decisions_text;
pub(crate) mod format;
pub mod plots;
pub(crate) mod table;

use crate::analysis::Findings;
use crate::analysis::planning::{Comparison, PlanFinding};
pub(crate) use plots::PlotFormat;

/// What a command reports.
#[derive(Clone, Copy, Debug)]
pub enum Report<'a> {
    /// A run (`run`, `rank`, `merge`).
    Run(&'a Findings),
    /// Designs side by side (`compare`).
    Compare(&'a Comparison),
    /// A plan and its checking run (`plan`).
    Plan(&'a PlanFinding),
}

/// What an exporter may need besides the report: where the figures were written, for links.
#[derive(Clone, Debug, Default)]
pub(crate) struct Context {
    /// The folder of `--plots`, as given.
    pub(crate) figures: Option<String>,
    /// The format of the figures.
    pub(crate) plot_format: PlotFormat,
    /// The width plain-text tables are wrapped to: the terminal's when the report goes to one,
    /// else [`TEXT_WIDTH`].
    pub(crate) text_width: usize,
}

/// The width of a plain-text report written to a file or a pipe (the classic terminal).
pub(crate) const TEXT_WIDTH: usize = 80;

/// An output format.
pub(crate) trait Exporter {
    /// The exporter for a context.
    fn new(context: &Context) -> Self
    where
        Self: Sized;
    /// The report as bytes; an error when a number the format must show is not finite.
    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String>;
}

/// The one list of output formats: each line is `Variant(module::Type)` with the help text of
/// `--format`. It declares the modules and makes [`Format`] and [`exporter`].
macro_rules! formats {
    ($($(#[$doc:meta])* $variant:ident($module:ident::$ty:ident),)*) => {
        $(pub mod $module;)*

        /// The formats of `--format`.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
        pub(crate) enum Format {
            $($(#[$doc])* $variant,)*
        }

        /// The exporter of a format.
        pub(crate) fn exporter(format: Format, context: &Context) -> Box<dyn Exporter> {
            match format {
                $(Format::$variant => Box::new(<$module::$ty as Exporter>::new(context)),)*
            }
        }
    };
}

formats! {
    /// Tables for the terminal.
    Text(text::TextReport),
    /// The JSON report (a stable contract).
    Json(json::JsonReport),
    /// A proposal-ready report: plain-words summary, tables, figures, method, cautions.
    Markdown(markdown::MarkdownReport),
    /// The summary and the budget as CSV tables (one after the other).
    Csv(csv::CsvReport),
    /// One self-contained HTML page (the Markdown report's words, figures inline as SVG, no script), printable on A4.
    Html(html::HtmlReport),
}
