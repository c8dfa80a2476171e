//! The coverage intervals of several designs side by side, each relative to its own estimate.

use super::super::format::percent;
use crate::analysis::planning::Comparison;
use plotters::coord::Shift;
use plotters::prelude::*;

const BAR: RGBColor = RGBColor(31, 119, 180);

/// Draw the chart.
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    c: &Comparison,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    let n = c.rows.len();
    area.fill(&WHITE)?;
    let rel = |r: &crate::analysis::planning::ComparisonRow| {
        let y = r.summary.estimate;
        (
            100.0 * (r.summary.symmetric_interval.0 / y - 1.0),
            100.0 * (r.summary.symmetric_interval.1 / y - 1.0),
        )
    };
    let span = c
        .rows
        .iter()
        .map(|r| {
            let (a, b) = rel(r);
            a.abs().max(b.abs())
        })
        .fold(0.0f64, f64::max)
        * 1.15;
    let span = if span > 0.0 { span } else { 1.0 };
    // Designs are numbered D1, D2, ... on the axis; the key under the chart gives their titles
    // (long titles would overprint each other on the axis).
    let names: Vec<String> = c
        .rows
        .iter()
        .enumerate()
        .map(|(i, r)| format!("D{} (rank {})", i + 1, r.rank))
        .collect();
    let key_height = key_height(c.rows.len());
    let (_, height) = area.dim_in_pixel();
    let (area, key) = area.split_vertically(height.saturating_sub(key_height));
    for (i, r) in c.rows.iter().enumerate() {
        let title: String = if r.name.chars().count() > 110 {
            r.name
                .chars()
                .take(109)
                .chain(std::iter::once('\u{2026}'))
                .collect()
        } else {
            r.name.clone()
        };
        key.draw(&Text::new(
            format!("D{}  {title}", i + 1),
            (24, 6 + KEY_LINE as i32 * i as i32),
            ("sans-serif", 13).into_font().color(&BLACK),
        ))?;
    }
    let area = &area;
    let segments = n.max(2);
    let first = &c.rows[0];
    let m = &first.findings.measurands[first.measurand];
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "{} coverage intervals of {}, relative to each design's estimate",
                percent(c.coverage),
                super::called(&m.name, m.label.as_deref())
            ),
            ("sans-serif", 16),
        )
        .margin(12)
        .x_label_area_size(60)
        .y_label_area_size(70)
        .build_cartesian_2d((0..segments as i32 - 1).into_segmented(), -span..span)?
        .set_secondary_coord(0.0..segments as f64, -span..span);
    chart
        .configure_mesh()
        .disable_x_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc("design")
        .y_desc(format!(
            "deviation from the estimate of {} / %",
            super::called(&m.name, m.label.as_deref())
        ))
        .x_labels(segments)
        .x_label_formatter(&|v| match v {
            SegmentValue::CenterOf(i) => names.get(*i as usize).cloned().unwrap_or_default(),
            _ => String::new(),
        })
        .label_style(("sans-serif", 12))
        .draw()?;
    chart.draw_secondary_series(c.rows.iter().enumerate().map(|(i, r)| {
        let (a, b) = rel(r);
        Rectangle::new(
            [(i as f64 + 0.3, a), (i as f64 + 0.7, b)],
            BAR.mix(0.6).filled(),
        )
    }))?;
    chart.draw_secondary_series(c.rows.iter().enumerate().map(|(i, _)| {
        PathElement::new(
            vec![(i as f64 + 0.25, 0.0), (i as f64 + 0.75, 0.0)],
            BLACK.stroke_width(2),
        )
    }))?;
    Ok(())
}

/// Height of one line of the key, pixels.
const KEY_LINE: u32 = 20;

/// Height of the key under the chart for `n` designs, pixels.
pub(crate) fn key_height(n: usize) -> u32 {
    12 + KEY_LINE * n as u32
}
