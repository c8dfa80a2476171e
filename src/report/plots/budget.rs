//! The uncertainty budget of one measurand as bars grouped by subsystem: each part of the
//! apparatus with its subtotal share of u^2, and its inputs under it (DESIGN "Budgets by
//! subsystem"). A proposal's "which part do I improve" figure.

use crate::analysis::{Findings, MeasurandFinding};
use crate::model::Subsystem;
use plotters::coord::Shift;
use plotters::prelude::*;

/// One colour per subsystem (the order of [`Subsystem::ALL`]).
fn colour(s: Subsystem) -> RGBColor {
    match s {
        Subsystem::Beam => RGBColor(214, 39, 40),
        Subsystem::Mirror => RGBColor(31, 119, 180),
        Subsystem::Balance => RGBColor(44, 160, 44),
        Subsystem::Readout => RGBColor(148, 103, 189),
        Subsystem::Environment => RGBColor(255, 127, 14),
        Subsystem::Noise => RGBColor(127, 127, 127),
        Subsystem::Other => RGBColor(140, 86, 75),
    }
}

/// The rows of the figure, top first: (label, share, subsystem, is the subtotal).
pub(crate) fn rows(f: &Findings, m: &MeasurandFinding) -> Vec<(String, f64, Subsystem, bool)> {
    let mut out = Vec::new();
    for part in &m.by_subsystem {
        out.push((
            part.subsystem.name().to_string(),
            part.share,
            part.subsystem,
            true,
        ));
        for r in m.budget.iter().filter(|r| r.subsystem == part.subsystem) {
            let q = &f.inputs[r.input];
            out.push((
                q.label.clone().unwrap_or_else(|| q.name.clone()),
                r.share,
                r.subsystem,
                false,
            ));
        }
    }
    out
}

/// Draw the chart.
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    f: &Findings,
    m: &MeasurandFinding,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let rows = rows(f, m);
    let n = rows.len().max(1) as f64;
    let top = rows.iter().map(|r| r.1).fold(0.0f64, f64::max).max(1e-9);
    // Room to the right of the longest bar for its words.
    let x_max = 100.0 * top * 1.7;
    let name = m.label.clone().unwrap_or_else(|| m.name.clone());
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Uncertainty budget of {name} by part of the apparatus"),
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(46)
        .y_label_area_size(8)
        .build_cartesian_2d(0.0..x_max, 0.0..n)?;
    chart
        .configure_mesh()
        .disable_y_mesh()
        .disable_y_axis()
        .x_desc("share of u\u{b2} (first order), %")
        .label_style(("sans-serif", 12))
        .light_line_style(TRANSPARENT)
        .draw()?;
    for (i, (label, share, part, subtotal)) in rows.iter().enumerate() {
        let y = n - i as f64;
        let (y0, y1) = if *subtotal {
            (y - 0.9, y - 0.1)
        } else {
            (y - 0.8, y - 0.2)
        };
        let c = colour(*part);
        let style = if *subtotal {
            c.filled()
        } else {
            c.mix(0.45).filled()
        };
        chart.draw_series(std::iter::once(Rectangle::new(
            [(0.0, y0), (100.0 * share, y1)],
            style,
        )))?;
        let percent = if *share < crate::analysis::budget::NO_EFFECT_SHARE {
            "nil (1st order)".to_string()
        } else if *share < 5e-4 {
            "< 0.05 %".to_string()
        } else {
            format!("{:.1} %", 100.0 * share)
        };
        let words = if *subtotal {
            format!("{label}: {percent}")
        } else {
            format!("   {label}: {percent}")
        };
        let size = if *subtotal { 14 } else { 12 };
        chart.draw_series(std::iter::once(Text::new(
            words,
            (100.0 * share + x_max * 0.01, y - 0.5),
            ("sans-serif", size).into_font().color(&BLACK).pos(
                plotters::style::text_anchor::Pos::new(
                    plotters::style::text_anchor::HPos::Left,
                    plotters::style::text_anchor::VPos::Center,
                ),
            ),
        )))?;
    }
    Ok(())
}
