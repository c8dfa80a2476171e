//! The distribution of a measurand (histogram, density shape, estimate, both coverage intervals
//! and the LPU interval), its distribution function, and an input's sampled values against its
//! stated density.

use super::super::format::measurand_unit;
use super::super::format::percent;
use crate::analysis::{Findings, InputFinding, MeasurandFinding, Shape};
use plotters::coord::Shift;
use plotters::prelude::*;

const BARS: RGBColor = RGBColor(158, 202, 225);
const CURVE: RGBColor = RGBColor(8, 81, 156);
const SYMMETRIC: RGBColor = RGBColor(230, 85, 13);
const SHORTEST: RGBColor = RGBColor(49, 163, 84);
const LPU: RGBColor = RGBColor(117, 107, 177);

fn vline<DB: DrawingBackend>(
    chart: &mut ChartContext<
        '_,
        DB,
        Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
    >,
    xs: &[f64],
    top: f64,
    style: ShapeStyle,
    label: &str,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    chart
        .draw_series(
            xs.iter()
                .map(|x| PathElement::new(vec![(*x, 0.0), (*x, top)], style)),
        )?
        .label(label)
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], style));
    Ok(())
}

/// The histogram of a measurand's trials as a density, its kernel density, the estimate, both
/// coverage intervals and the LPU interval.
pub(crate) fn measurand<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    f: &Findings,
    m: &MeasurandFinding,
    shape: &Shape,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let unit = measurand_unit(m);
    let k = unit.factor;
    let h = &shape.histogram;
    let dens = h.density();
    let peak = dens
        .iter()
        .map(|d| d.1)
        .chain(shape.density.iter().map(|d| d.1))
        .fold(0.0f64, f64::max)
        * k;
    let top = peak * 1.15;
    let s = &m.monte_carlo;
    let p = percent(f.coverage);
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "Distribution of {} ({} trials)",
                super::called(&m.name, m.label.as_deref()),
                f.trials
            ),
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(h.lo / k..h.hi / k, 0.0..top)?;
    chart
        .configure_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc(super::axis_title(
            super::called(&m.name, m.label.as_deref()),
            &unit.symbol,
        ))
        .y_desc(super::density_label(&unit.symbol))
        .label_style(("sans-serif", 12))
        .x_label_formatter(&super::ticks(h.lo / k, h.hi / k))
        .y_label_formatter(&super::ticks(0.0, top))
        .draw()?;
    let w = h.width() / k;
    chart
        .draw_series(dens.iter().map(|(x, d)| {
            Rectangle::new(
                [(x / k - 0.5 * w, 0.0), (x / k + 0.5 * w, d * k)],
                BARS.filled(),
            )
        }))?
        .label("histogram of the trials")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 12, y + 5)], BARS.filled()));
    chart
        .draw_series(LineSeries::new(
            shape.density.iter().map(|(x, d)| (x / k, d * k)),
            CURVE.stroke_width(2),
        ))?
        .label("kernel density")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], CURVE.stroke_width(2)));
    vline(
        &mut chart,
        &[s.estimate / k],
        top,
        BLACK.stroke_width(2),
        "estimate (mean)",
    )?;
    vline(
        &mut chart,
        &[s.symmetric_interval.0 / k, s.symmetric_interval.1 / k],
        top,
        SYMMETRIC.stroke_width(2),
        &format!("{p} probabilistically symmetric"),
    )?;
    vline(
        &mut chart,
        &[s.shortest_interval.0 / k, s.shortest_interval.1 / k],
        top * 0.8,
        SHORTEST.stroke_width(2),
        &format!("{p} shortest"),
    )?;
    if let Some(l) = &m.lpu {
        vline(
            &mut chart,
            &[l.interval.0 / k, l.interval.1 / k],
            top * 0.6,
            LPU.stroke_width(2),
            &format!("{p} law of propagation"),
        )?;
    }
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 11)
}

/// The distribution function of a measurand at the histogram's edges, with the coverage
/// probabilities and interval ends marked.
pub(crate) fn cdf<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    f: &Findings,
    m: &MeasurandFinding,
    shape: &Shape,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let unit = measurand_unit(m);
    let k = unit.factor;
    let h = &shape.histogram;
    let g = h.distribution();
    let s = &m.monte_carlo;
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "Distribution function of {}",
                super::called(&m.name, m.label.as_deref())
            ),
            ("sans-serif", 18),
        )
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(60)
        .build_cartesian_2d(h.lo / k..h.hi / k, 0.0..1.0)?;
    chart
        .configure_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc(super::axis_title(
            super::called(&m.name, m.label.as_deref()),
            &unit.symbol,
        ))
        .y_desc("probability")
        .label_style(("sans-serif", 12))
        .x_label_formatter(&super::ticks(h.lo / k, h.hi / k))
        .draw()?;
    chart
        .draw_series(LineSeries::new(
            g.iter().map(|(x, p)| (x / k, *p)),
            CURVE.stroke_width(2),
        ))?
        .label("distribution function of the trials")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], CURVE.stroke_width(2)));
    let (lo_p, hi_p) = (0.5 * (1.0 - f.coverage), 0.5 * (1.0 + f.coverage));
    let style = SYMMETRIC.stroke_width(1);
    chart
        .draw_series(
            [lo_p, hi_p]
                .iter()
                .map(|p| PathElement::new(vec![(h.lo / k, *p), (h.hi / k, *p)], style)),
        )?
        .label(format!("probabilities {lo_p:.3} and {hi_p:.3}"))
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], style));
    chart
        .draw_series(
            [s.symmetric_interval.0, s.symmetric_interval.1]
                .iter()
                .map(|x| {
                    PathElement::new(vec![(x / k, 0.0), (x / k, 1.0)], SYMMETRIC.stroke_width(2))
                }),
        )?
        .label(format!("{} symmetric interval", percent(f.coverage)))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], SYMMETRIC.stroke_width(2)));
    super::legend(&mut chart, SeriesLabelPosition::UpperLeft, 11)
}

/// An input's sampled histogram against the density it was given.
pub(crate) fn input<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    q: &InputFinding,
    shape: &Shape,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    area.fill(&WHITE)?;
    let k = q.shown_unit.factor;
    let unit = &q.shown_unit.symbol;
    let h = &shape.histogram;
    let dens = h.density();
    let finite: Vec<(f64, f64)> = shape
        .density
        .iter()
        .copied()
        .filter(|(_, d)| d.is_finite())
        .collect();
    let peak = dens
        .iter()
        .map(|d| d.1)
        .chain(finite.iter().map(|d| d.1))
        .fold(0.0f64, f64::max)
        * k;
    let top = if peak > 0.0 { peak * 1.15 } else { 1.0 };
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "{} ({}): sampled against stated",
                super::called(&q.name, q.label.as_deref()),
                q.distribution
            ),
            ("sans-serif", 17),
        )
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(h.lo / k..h.hi / k, 0.0..top)?;
    chart
        .configure_mesh()
        .light_line_style(TRANSPARENT)
        .x_desc(super::axis_title(
            super::called(&q.name, q.label.as_deref()),
            unit,
        ))
        .y_desc(super::density_label(unit))
        .label_style(("sans-serif", 12))
        .x_label_formatter(&super::ticks(h.lo / k, h.hi / k))
        .y_label_formatter(&super::ticks(0.0, top))
        .draw()?;
    let w = h.width() / k;
    chart
        .draw_series(dens.iter().map(|(x, d)| {
            Rectangle::new(
                [(x / k - 0.5 * w, 0.0), (x / k + 0.5 * w, d * k)],
                BARS.filled(),
            )
        }))?
        .label("sampled")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 12, y + 5)], BARS.filled()));
    chart
        .draw_series(LineSeries::new(
            finite.iter().map(|(x, d)| (x / k, (d * k).min(top))),
            CURVE.stroke_width(2),
        ))?
        .label("stated density")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], CURVE.stroke_width(2)));
    super::legend(&mut chart, SeriesLabelPosition::UpperRight, 11)
}
