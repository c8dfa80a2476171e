//! Bar chart of the Sobol indices of one measurand, with their bootstrap intervals.

use crate::analysis::{Findings, SensitivityRow};
use plotters::coord::Shift;
use plotters::prelude::*;

const FIRST: RGBColor = RGBColor(31, 119, 180);
const TOTAL: RGBColor = RGBColor(255, 127, 14);

/// Each factor by its inputs' labels (names where none is given), shortened past `longest`
/// characters.
fn axis_names(f: &Findings, rows: &[SensitivityRow], longest: usize) -> Vec<String> {
    rows.iter()
        .map(|r| {
            let words = r
                .name
                .split('+')
                .map(|n| match f.inputs.iter().find(|q| q.name == n) {
                    Some(q) => super::called(&q.name, q.label.as_deref()),
                    None => n,
                })
                .collect::<Vec<_>>()
                .join(" + ");
            if words.chars().count() > longest {
                words
                    .chars()
                    .take(longest - 1)
                    .chain(std::iter::once('\u{2026}'))
                    .collect()
            } else {
                words
            }
        })
        .collect()
}

/// Whether the names fit under their bars (about 7 px a character of 12 px DejaVu Sans);
/// when one does not, the axis numbers the factors and a key under the chart names them.
fn names_fit(names: &[String], width: u32, segments: usize) -> bool {
    let longest = names.iter().map(|n| n.chars().count()).max().unwrap_or(0) as u32;
    7 * longest <= width.saturating_sub(72) / segments.max(1) as u32
}

/// Height of one line of the key, pixels.
const KEY_LINE: u32 = 18;
/// Factors per line of the key.
const KEY_COLUMNS: usize = 2;

/// Characters of a name that fit a column of the key (about 7.5 px a character at 13 px).
fn key_characters(width: u32) -> usize {
    ((width / KEY_COLUMNS as u32).saturating_sub(50) * 2 / 15).max(12) as usize
}

/// Height of the key for these names (0 when they fit under the bars), pixels.
fn key_height(names: &[String], width: u32, segments: usize) -> u32 {
    if names_fit(names, width, segments) {
        0
    } else {
        12 + KEY_LINE * names.len().div_ceil(KEY_COLUMNS) as u32
    }
}

/// The size of the figure: wide enough for the bars, tall enough for the key.
pub(crate) fn size(f: &Findings, rows: &[SensitivityRow]) -> (u32, u32) {
    let width = (160 + 70 * rows.len() as u32).clamp(640, 1600);
    let names = axis_names(f, rows, key_characters(width));
    (width, 480 + key_height(&names, width, rows.len().max(2)))
}

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
    let (width, height) = area.dim_in_pixel();
    let names = axis_names(f, rows, key_characters(width));
    let key = key_height(&names, width, segments);
    let (area, key_area) = area.split_vertically(height.saturating_sub(key));
    let axis: Vec<String> = if key == 0 {
        names.clone()
    } else {
        let column = width / KEY_COLUMNS as u32;
        for (i, name) in names.iter().enumerate() {
            let (row, col) = (i / KEY_COLUMNS, i % KEY_COLUMNS);
            key_area.draw(&Text::new(
                format!("{}  {name}", i + 1),
                (
                    24 + (col as u32 * column) as i32,
                    4 + (KEY_LINE * row as u32) as i32,
                ),
                ("sans-serif", 13).into_font().color(&BLACK),
            ))?;
        }
        (1..=names.len()).map(|i| i.to_string()).collect()
    };
    let area = &area;
    let meas = &f.measurands[m];
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "Sobol indices of {} ({})",
                super::called(&meas.name, meas.label.as_deref()),
                f.title
            ),
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
        .x_desc(if key == 0 {
            "input quantity (ranked by total index)"
        } else {
            "input quantity (ranked by total index; key below)"
        })
        .y_desc("Sobol index (fraction of the variance)")
        .x_labels(segments)
        .x_label_formatter(&|v| match v {
            SegmentValue::CenterOf(i) => axis.get(*i as usize).cloned().unwrap_or_default(),
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
