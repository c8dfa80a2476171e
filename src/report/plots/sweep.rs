//! The relative uncertainty of a measurand along a sweep of one input.

use super::super::format::percent;
use crate::analysis::Findings;
use crate::analysis::planning::SweepFinding;
use plotters::coord::Shift;
use plotters::prelude::*;

const LINE: RGBColor = RGBColor(31, 119, 180);
const LINE2: RGBColor = RGBColor(255, 127, 14);

/// Draw the chart.
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    f: &Findings,
    sw: &SweepFinding,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let q = &f.inputs[sw.input];
    let m = &f.measurands[sw.measurand];
    let k = q.shown_unit.factor;
    let xs: Vec<f64> = sw.points.iter().map(|p| p.value / k).collect();
    let rel_u: Vec<f64> = sw
        .points
        .iter()
        .map(|p| {
            100.0
                * p.summary
                    .relative_standard_uncertainty()
                    .unwrap_or(f64::NAN)
        })
        .collect();
    let rel_big: Vec<f64> = sw
        .points
        .iter()
        .map(|p| {
            100.0
                * p.summary
                    .relative_expanded_uncertainty()
                    .unwrap_or(f64::NAN)
        })
        .collect();
    let (lo, hi) = (
        xs.iter().copied().fold(f64::INFINITY, f64::min),
        xs.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    );
    // A margin of 5 % of the span on each side, so that the first and last points and their
    // ticks are drawn whole.
    let pad = if hi > lo {
        0.05 * (hi - lo)
    } else {
        0.05 * lo.abs().max(1.0)
    };
    let (x0, x1) = (lo - pad, hi + pad);
    let ymax = rel_big.iter().copied().fold(0.0f64, f64::max) * 1.1;
    let ymax = if ymax > 0.0 && ymax.is_finite() {
        ymax
    } else {
        1.0
    };
    let (q_called, m_called) = (
        super::called(&q.name, q.label.as_deref()),
        super::called(&m.name, m.label.as_deref()),
    );
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Relative uncertainty of {m_called} along {q_called}"),
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(x0..x1, 0.0..ymax)?;
    chart
        .configure_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc(super::axis_title(q_called, &q.shown_unit.symbol))
        .y_desc(format!("relative uncertainty of {m_called} / %"))
        .label_style(("sans-serif", 12))
        .draw()?;
    chart
        .draw_series(
            LineSeries::new(
                xs.iter().copied().zip(rel_big.iter().copied()),
                LINE.stroke_width(2),
            )
            .point_size(3),
        )?
        .label(format!("expanded ({})", percent(f.coverage)))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], LINE.stroke_width(2)));
    chart
        .draw_series(
            LineSeries::new(
                xs.iter().copied().zip(rel_u.iter().copied()),
                LINE2.stroke_width(2),
            )
            .point_size(3),
        )?
        .label("standard")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], LINE2.stroke_width(2)));
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 12)
}
