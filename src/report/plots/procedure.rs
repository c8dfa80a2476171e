//! One simulated record of the planned on/off sequence: above, the force at the instrument's
//! output (the signal through the procedure plus noise drawn from the noise model) over the
//! noise-free signal; below, the noise alone (record minus signal) at its own scale; the kept
//! windows shaded in both, so a reader sees what the data will look like.

use crate::analysis::procedure::SimulatedRecord;
use plotters::coord::Shift;
use plotters::prelude::*;

const RECORD: RGBColor = RGBColor(8, 81, 156);
const SIGNAL: RGBColor = RGBColor(230, 85, 13);
const ON: RGBColor = RGBColor(253, 208, 162);
const OFF: RGBColor = RGBColor(198, 219, 239);

/// Draw the chart: time in s (min when longer than an hour), force in `unit` (`factor` N).
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    title: &str,
    r: &SimulatedRecord,
    unit: &str,
    factor: f64,
    noise_unit: &str,
    noise_factor: f64,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let area = area.titled(title, ("sans-serif", 18))?;
    let (upper, lower) = area.split_vertically(area.dim_in_pixel().1 * 3 / 5);
    let record: Vec<f64> = r.values.iter().map(|v| v / factor).collect();
    let signal: Vec<f64> = r.signal.iter().map(|v| v / factor).collect();
    panel(
        &upper,
        r,
        &[
            (&signal, SIGNAL, "radiation force (noise-free)"),
            (
                &record,
                RECORD,
                "simulated record (signal + noise from the model)",
            ),
        ],
        &super::axis_title("force", unit),
        true,
    )?;
    let noise: Vec<f64> = r
        .values
        .iter()
        .zip(&r.signal)
        .map(|(v, s)| (v - s) / noise_factor)
        .collect();
    panel(
        &lower,
        r,
        &[(&noise, RECORD, "noise alone (record minus signal)")],
        &super::axis_title("noise", noise_unit),
        false,
    )
}

/// One panel: the windows shaded, then the lines.
fn panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    r: &SimulatedRecord,
    lines: &[(&Vec<f64>, RGBColor, &str)],
    y_desc: &str,
    window_legend: bool,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    let total = r.dt * r.values.len() as f64;
    let (tf, tu) = if total > 3600.0 {
        (60.0, "min")
    } else {
        (1.0, "s")
    };
    let lo = lines
        .iter()
        .flat_map(|l| l.0.iter())
        .copied()
        .fold(f64::INFINITY, f64::min);
    let hi = lines
        .iter()
        .flat_map(|l| l.0.iter())
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let pad = 0.05 * (hi - lo).max(f64::MIN_POSITIVE);
    let (y0, y1) = (lo - pad, hi + pad);
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .x_label_area_size(40)
        .y_label_area_size(80)
        .build_cartesian_2d(0.0..total / tf, y0..y1)?;
    chart
        .configure_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc(format!("time / {tu}"))
        .y_desc(y_desc)
        .label_style(("sans-serif", 12))
        .draw()?;
    let mut first = [true, true];
    for &(a, b, on) in &r.windows {
        let colour = if on { ON } else { OFF };
        let s = chart.draw_series(std::iter::once(Rectangle::new(
            [(a / tf, y0), (b / tf, y1)],
            colour.mix(0.6).filled(),
        )))?;
        // One legend entry for each kind of window.
        if window_legend && std::mem::take(&mut first[usize::from(on)]) {
            s.label(if on {
                "kept window, laser on"
            } else {
                "kept window, laser off"
            })
            .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], colour.filled()));
        }
    }
    for (values, colour, label) in lines {
        let colour = *colour;
        chart
            .draw_series(LineSeries::new(
                values
                    .iter()
                    .enumerate()
                    .map(|(k, y)| (k as f64 * r.dt / tf, *y)),
                colour.stroke_width(1),
            ))?
            .label(*label)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 16, y)], colour.stroke_width(2))
            });
    }
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 11)
}
