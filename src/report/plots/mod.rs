//! Figures, drawn with plotters into SVG text with a bundled font (DejaVu Sans, licence in
//! `assets/fonts/LICENSE-DejaVu.txt`), so that they come out the same on every machine.

mod sensitivity;

use crate::analysis::Findings;
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

/// Every figure the findings call for, as (file name, SVG bytes).
pub fn figures(f: &Findings) -> Result<Vec<(String, Vec<u8>)>, String> {
    ensure_font();
    let mut out = Vec::new();
    if let Some(s) = &f.sensitivity {
        for (m, rows) in s.measurands.iter().enumerate() {
            let svg = sensitivity::chart(f, m, rows)?;
            out.push((
                file_name("sensitivity", &f.measurands[m].name),
                svg.into_bytes(),
            ));
        }
    }
    Ok(out)
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
