//! The measured overlapping Allan deviation of the instrument's noise with its 68.3 % intervals,
//! and the fitted model of white, flicker, random walk and drift, on log-log axes.

use crate::physics::power_law::NoiseModel;
use crate::scenario::MeasuredNoise;
use plotters::coord::Shift;
use plotters::prelude::*;

const POINTS: RGBColor = RGBColor(8, 81, 156);
const FIT: RGBColor = RGBColor(230, 85, 13);

/// Draw the chart; deviations in `unit` (`factor` N).
pub(crate) fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &MeasuredNoise,
    model: &NoiseModel,
    unit: &str,
    factor: f64,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let taus: Vec<f64> = m.points.iter().map(|p| p.0).collect();
    let (t0, t1) = (
        taus.iter().copied().fold(f64::INFINITY, f64::min) / 1.5,
        taus.iter().copied().fold(f64::NEG_INFINITY, f64::max) * 1.5,
    );
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for p in &m.points {
        let (a, b) = p.2.unwrap_or((p.1, p.1));
        lo = lo.min(a.min(p.1) / factor);
        hi = hi.max(b.max(p.1) / factor);
    }
    let (y0, y1) = (lo / 1.5, hi * 1.5);
    let mut chart = ChartBuilder::on(area)
        .caption(
            "Allan deviation of the instrument's noise",
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d((t0..t1).log_scale(), (y0..y1).log_scale())?;
    chart
        .configure_mesh()
        .x_desc("averaging time tau / s")
        .y_desc(super::axis_title("overlapping Allan deviation", unit))
        .label_style(("sans-serif", 12))
        .draw()?;
    chart
        .draw_series(m.points.iter().filter_map(|p| {
            p.2.map(|(a, b)| {
                PathElement::new(
                    vec![(p.0, a / factor), (p.0, b / factor)],
                    POINTS.stroke_width(1),
                )
            })
        }))?
        .label("68.3 % interval (chi-squared, NIST SP 1065)")
        .legend(|(x, y)| PathElement::new(vec![(x + 7, y - 6), (x + 7, y + 6)], POINTS));
    chart
        .draw_series(
            m.points
                .iter()
                .map(|p| Circle::new((p.0, p.1 / factor), 4, POINTS.filled())),
        )?
        .label(format!("measured: {}", m.source))
        .legend(|(x, y)| Circle::new((x + 7, y), 4, POINTS.filled()));
    let steps = 200;
    chart
        .draw_series(LineSeries::new(
            (0..=steps).map(|k| {
                let tau = t0 * (t1 / t0).powf(k as f64 / steps as f64);
                (tau, model.allan_deviation(tau) / factor)
            }),
            FIT.stroke_width(2),
        ))?
        .label("fitted: white, flicker, random walk and drift")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], FIT.stroke_width(2)));
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 12)
}
