//! Figures, drawn with plotters into SVG text with a bundled font (DejaVu Sans, licence in
//! `assets/fonts/LICENSE-DejaVu.txt`), so that they come out the same on every machine.

mod comparison;
mod sensitivity;
mod sweep;

use crate::analysis::Findings;
use crate::analysis::planning::Comparison;
use plotters::style::FontStyle;
use std::sync::Once;

/// DejaVu Sans, registered as "sans-serif" for every figure.
static FONT: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
static REGISTER: Once = Once::new();

/// Register the bundled font (once per process).
pub fn ensure_font() {
    REGISTER.call_once(|| {
        // The bundled font is a valid TrueType file (checked by a test), so registration only
        // fails if the bytes were damaged at build time.
        let _ = plotters::style::register_font("sans-serif", FontStyle::Normal, FONT);
    });
}

/// A figure: its file name, a caption, and its SVG text.
#[derive(Clone, Debug)]
pub struct Figure {
    /// File name inside the figures folder.
    pub file: String,
    /// What it shows.
    pub caption: String,
    /// The SVG.
    pub svg: String,
}

/// A figure file name made from a quantity name.
pub fn file_name(prefix: &str, name: &str) -> String {
    let safe: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '_' || c == '-' {
                c
            } else {
                '_'
            }
        })
        .collect();
    format!("{prefix}-{safe}.svg")
}

/// The figures the findings call for, as (file name, caption), without drawing them.
pub fn figure_names(f: &Findings) -> Vec<(String, String)> {
    let mut out = Vec::new();
    if let Some(s) = &f.sensitivity {
        for m in 0..s.measurands.len() {
            let name = &f.measurands[m].name;
            out.push((
                file_name("sensitivity", name),
                format!("Sobol indices of {name}"),
            ));
        }
    }
    if let Some(sw) = &f.sweep {
        let input = &f.inputs[sw.input].name;
        out.push((
            file_name("sweep", input),
            format!(
                "Relative uncertainty of {} along {input}",
                f.measurands[sw.measurand].name
            ),
        ));
    }
    out
}

/// Every figure of a run's findings.
pub fn figures(f: &Findings) -> Result<Vec<Figure>, String> {
    ensure_font();
    let names = figure_names(f);
    let mut out = Vec::new();
    let mut next = names.into_iter();
    if let Some(s) = &f.sensitivity {
        for (m, rows) in s.measurands.iter().enumerate() {
            let (file, caption) = next.next().unwrap_or_default();
            out.push(Figure {
                file,
                caption,
                svg: sensitivity::chart(f, m, rows)?,
            });
        }
    }
    if let Some(sw) = &f.sweep {
        let (file, caption) = next.next().unwrap_or_default();
        out.push(Figure {
            file,
            caption,
            svg: sweep::chart(f, sw)?,
        });
    }
    Ok(out)
}

/// The figure of a comparison: every design's coverage interval relative to its estimate.
pub fn comparison_figures(c: &Comparison) -> Result<Vec<Figure>, String> {
    ensure_font();
    Ok(vec![Figure {
        file: "comparison.svg".into(),
        caption: "Coverage intervals of the designs, relative to each estimate".into(),
        svg: comparison::chart(c)?,
    }])
}

#[cfg(test)]
mod tests {
    #[test]
    fn the_bundled_font_parses() {
        assert!(
            plotters::style::register_font(
                "radforce-test",
                plotters::style::FontStyle::Normal,
                super::FONT
            )
            .is_ok()
        );
    }
}
