//! Every output format, one exporter per format behind [`Exporter`]. Exporters turn
//! [`Findings`] into bytes; they format and never compute.

pub mod cautions;
pub mod format;
pub mod json;
pub mod plots;
pub mod table;
pub mod text;

use crate::analysis::Findings;

/// An output format.
pub trait Exporter {
    /// The report as bytes.
    fn render(&self, findings: &Findings) -> Vec<u8>;
}

/// The formats of `--format`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Terminal tables.
    Text,
    /// The JSON contract.
    Json,
}

/// The exporter of a format.
pub fn exporter(format: Format) -> Box<dyn Exporter> {
    match format {
        Format::Text => Box::new(text::TextReport),
        Format::Json => Box::new(json::JsonReport),
    }
}
