//! Bar chart of the Sobol indices of one measurand, with their bootstrap intervals.

use crate::analysis::{Findings, SensitivityRow};
use plotters::coord::Shift;
use plotters::prelude::*;

const FIRST: RGBColor = RGBColor(31, 119, 180);
const TOTAL: RGBColor = RGBColor(255, 127, 14);

/// Draw the chart.
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    f: &Findings,
    m: usize,
    rows: &[SensitivityRow],
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let segments = rows.len().max(2);
    let lo = rows
        .iter()
        .map(|r| {
            r.indices
                .first_order_interval
                .0
                .min(r.indices.total_interval.0)
        })
        .fold(0.0f64, f64::min)
        .min(0.0);
    let hi = rows
        .iter()
        .map(|r| {
            r.indices
                .first_order_interval
                .1
                .max(r.indices.total_interval.1)
        })
        .fold(1.0f64, f64::max);
    let names: Vec<String> = rows.iter().map(|r| r.name.clone()).collect();
    let meas = &f.measurands[m];
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Sobol indices of {} ({})", meas.name, f.title),
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(70)
        .y_label_area_size(60)
        // A segmented axis of `segments` integers carries the names at the segment centres; a
        // secondary f64 axis over the same width places the bars (a single factor gets a
        // second, empty segment, since a one-point integer range has no width).
        .build_cartesian_2d((0..segments as i32 - 1).into_segmented(), lo..hi)?
        .set_secondary_coord(0.0..segments as f64, lo..hi);
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_desc("input quantity (ranked by total index)")
        .y_desc("Sobol index (fraction of the variance)")
        .x_labels(segments)
        .x_label_formatter(&|v| match v {
            SegmentValue::CenterOf(i) => names.get(*i as usize).cloned().unwrap_or_default(),
            _ => String::new(),
        })
        .light_line_style(TRANSPARENT)
        .label_style(("sans-serif", 12))
        .draw()?;
    let bar =
        |x0: f64, x1: f64, y: f64, c: RGBColor| Rectangle::new([(x0, 0.0), (x1, y)], c.filled());
    chart
        .draw_secondary_series(rows.iter().enumerate().map(|(i, r)| {
            bar(
                i as f64 + 0.1,
                i as f64 + 0.48,
                r.indices.first_order,
                FIRST,
            )
        }))?
        .label("first order S_i")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 12, y + 5)], FIRST.filled()));
    chart
        .draw_secondary_series(
            rows.iter()
                .enumerate()
                .map(|(i, r)| bar(i as f64 + 0.52, i as f64 + 0.9, r.indices.total, TOTAL)),
        )?
        .label("total ST_i")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 12, y + 5)], TOTAL.filled()));
    let whisker = |x: f64, (a, b): (f64, f64)| {
        vec![
            PathElement::new(vec![(x, a), (x, b)], BLACK.stroke_width(1)),
            PathElement::new(vec![(x - 0.06, a), (x + 0.06, a)], BLACK.stroke_width(1)),
            PathElement::new(vec![(x - 0.06, b), (x + 0.06, b)], BLACK.stroke_width(1)),
        ]
    };
    chart.draw_secondary_series(rows.iter().enumerate().flat_map(|(i, r)| {
        let mut w = whisker(i as f64 + 0.29, r.indices.first_order_interval);
        w.extend(whisker(i as f64 + 0.71, r.indices.total_interval));
        w
    }))?;
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 12)
}
