//! Figures, drawn with plotters into SVG (default) or PNG with a bundled font (DejaVu Sans,
//! licence in `assets/fonts/LICENSE-DejaVu.txt`), so that they come out the same on every
//! machine, with or without system fonts. Every chart is written once, generic over the plotters
//! backend.

mod allan;
mod budget;
mod comparison;
mod distributions;
mod procedure;
mod sensitivity;
mod sweep;

use crate::analysis::Findings;
use crate::analysis::planning::Comparison;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::FontStyle;
use std::sync::Once;

/// DejaVu Sans, registered as "sans-serif" for every figure.
static FONT: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
static REGISTER: Once = Once::new();

/// The legend every chart draws: a framed, nearly opaque box at `position`.
fn legend<'a, DB: DrawingBackend + 'a, CT: plotters::coord::CoordTranslate>(
    chart: &mut ChartContext<'a, DB, CT>,
    position: SeriesLabelPosition,
    font_size: u32,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(("sans-serif", font_size))
        .draw()?;
    Ok(())
}

/// The label of a probability density axis: per unit of the quantity (µ, ° and superscripts
/// as a reader writes them).
fn density_label(unit: &str) -> String {
    if unit.is_empty() {
        "probability density".to_string()
    } else {
        format!("probability density / (1/{})", pretty(unit))
    }
}

/// Tick labels for an axis from `lo` to `hi` with as many digits as the tick spacing (about a
/// tenth of the span) needs: fixed notation for magnitudes from 1e-3 to 1e5, else scientific,
/// so that neighbouring ticks never read the same.
fn ticks(lo: f64, hi: f64) -> impl Fn(&f64) -> String {
    let step = ((hi - lo).abs() / 10.0).max(f64::MIN_POSITIVE);
    let size = lo.abs().max(hi.abs());
    let scientific = size >= 1e5 || (size > 0.0 && size < 1e-3);
    let digits = if scientific {
        ((size / step).log10().ceil().max(0.0) as usize).min(12)
    } else {
        ((-step.log10()).ceil().max(0.0) as usize).min(12)
    };
    move |v: &f64| {
        let v = if *v == 0.0 { 0.0 } else { *v };
        if scientific && v != 0.0 {
            format!("{v:.digits$e}")
        } else if scientific {
            "0".to_string()
        } else {
            format!("{v:.digits$}")
        }
    }
}

/// What a figure calls a quantity: the scenario's `label` when given, else its name.
fn called<'a>(name: &'a str, label: Option<&'a str>) -> &'a str {
    label.unwrap_or(name)
}

/// A unit symbol as a figure prints it (`uN` as µN, `deg` as °, `m^2` as m²).
fn pretty(unit: &str) -> String {
    crate::report::format::pretty_unit(unit)
}

/// An axis title: the quantity and its unit, `quantity / unit` (ISO 80000-1 7.1), or the
/// quantity alone when it has no unit.
fn axis_title(quantity: &str, unit: &str) -> String {
    if unit.is_empty() {
        quantity.to_string()
    } else {
        format!("{quantity} / {}", pretty(unit))
    }
}

/// Register the bundled font (once per process).
pub(crate) fn ensure_font() {
    REGISTER.call_once(|| {
        // The bundled font is a valid TrueType file (checked by a test), so registration only
        // fails if the bytes were damaged at build time.
        let _ = plotters::style::register_font("sans-serif", FontStyle::Normal, FONT);
    });
}

/// Image formats of the figures.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, clap::ValueEnum)]
pub(crate) enum PlotFormat {
    /// Scalable vector graphics.
    #[default]
    Svg,
    /// Portable network graphics.
    Png,
}

impl PlotFormat {
    /// The file extension.
    pub(crate) fn extension(self) -> &'static str {
        match self {
            PlotFormat::Svg => "svg",
            PlotFormat::Png => "png",
        }
    }
}

/// A figure: its file name, a caption, and its bytes.
#[derive(Clone, Debug)]
pub struct Figure {
    /// File name inside the figures folder.
    pub file: String,
    /// What it shows.
    pub caption: String,
    /// The SVG text or PNG bytes.
    pub bytes: Vec<u8>,
}

/// The error type of a chart drawing.
type DrawResult = Result<(), Box<dyn std::error::Error>>;

/// Draw a chart of `size` into the format's bytes.
fn render(
    format: PlotFormat,
    size: (u32, u32),
    draw: &dyn Fn(&DrawingArea<SVGBackend<'_>, Shift>) -> DrawResult,
    draw_png: &dyn Fn(&DrawingArea<BitMapBackend<'_>, Shift>) -> DrawResult,
) -> Result<Vec<u8>, String> {
    ensure_font();
    match format {
        PlotFormat::Svg => {
            let mut svg = String::new();
            {
                let area = SVGBackend::with_string(&mut svg, size).into_drawing_area();
                draw(&area).map_err(|e| format!("cannot draw a figure: {e}"))?;
                area.present()
                    .map_err(|e| format!("cannot draw a figure: {e}"))?;
            }
            Ok(svg.into_bytes())
        }
        PlotFormat::Png => {
            let mut rgb = vec![0u8; size.0 as usize * size.1 as usize * 3];
            {
                let area = BitMapBackend::with_buffer(&mut rgb, size).into_drawing_area();
                draw_png(&area).map_err(|e| format!("cannot draw a figure: {e}"))?;
                area.present()
                    .map_err(|e| format!("cannot draw a figure: {e}"))?;
            }
            let img = image::RgbImage::from_raw(size.0, size.1, rgb)
                .ok_or("cannot make the PNG image")?;
            let mut out = std::io::Cursor::new(Vec::new());
            img.write_to(&mut out, image::ImageOutputFormat::Png)
                .map_err(|e| format!("cannot encode the PNG image: {e}"))?;
            Ok(out.into_inner())
        }
    }
}

/// Render one chart function (generic over the backend) in a format.
macro_rules! chart {
    ($format:expr, $size:expr, |$area:ident| $body:expr) => {
        render(
            $format,
            $size,
            &|$area: &DrawingArea<SVGBackend<'_>, Shift>| $body,
            &|$area: &DrawingArea<BitMapBackend<'_>, Shift>| $body,
        )
    };
}

/// A figure file name made from a quantity name.
pub(crate) fn file_name(prefix: &str, name: &str, format: PlotFormat) -> String {
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
    format!("{prefix}-{safe}.{}", format.extension())
}

/// The figures the findings call for, as (file name, caption), without drawing them.
pub(crate) fn figure_names(f: &Findings, format: PlotFormat) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for m in f.measurands.iter().filter(|m| !m.budget.is_empty()) {
        out.push((
            file_name("budget", &m.name, format),
            format!(
                "Uncertainty budget of {} by part of the apparatus",
                m.label.as_deref().unwrap_or(&m.name)
            ),
        ));
    }
    for m in &f.measurands {
        if m.shape.is_some() {
            out.push((
                file_name("distribution", &m.name, format),
                format!(
                    "Distribution of {} from the trials",
                    called(&m.name, m.label.as_deref())
                ),
            ));
            out.push((
                file_name("cdf", &m.name, format),
                format!(
                    "Distribution function of {}",
                    called(&m.name, m.label.as_deref())
                ),
            ));
        }
    }
    for q in &f.inputs {
        if q.shape.is_some() {
            out.push((
                file_name("input", &q.name, format),
                format!(
                    "Sampled values of {} against its stated density",
                    called(&q.name, q.label.as_deref())
                ),
            ));
        }
    }
    if let Some(s) = &f.sensitivity {
        for m in 0..s.measurands.len() {
            let meas = &f.measurands[m];
            out.push((
                file_name("sensitivity", &meas.name, format),
                format!(
                    "Sobol indices of {}",
                    called(&meas.name, meas.label.as_deref())
                ),
            ));
        }
    }
    if let Some(sw) = &f.sweep {
        let q = &f.inputs[sw.input];
        let meas = &f.measurands[sw.measurand];
        out.push((
            file_name("sweep", &q.name, format),
            format!(
                "Relative uncertainty of {} along {}",
                called(&meas.name, meas.label.as_deref()),
                called(&q.name, q.label.as_deref())
            ),
        ));
    }
    if f.noise.as_ref().is_some_and(|n| n.measured.is_some()) {
        out.push((
            format!("allan-deviation.{}", format.extension()),
            "Allan deviation of the instrument's noise: measured, with the fitted model".into(),
        ));
    }
    if f.procedure.as_ref().is_some_and(|p| p.record.is_some()) {
        out.push((
            file_name("procedure", f.chain.unwrap_or("model"), format),
            "One simulated record of the planned on/off sequence".into(),
        ));
    }
    out
}

/// The unit figures show a force in: a readable prefix for `size` newtons.
fn force_unit(size: f64) -> crate::units::DisplayUnit {
    crate::units::readable_unit(crate::units::Dimension::FORCE, size)
}

/// Every figure of a run's findings.
pub(crate) fn figures(f: &Findings, format: PlotFormat) -> Result<Vec<Figure>, String> {
    let mut names = figure_names(f, format).into_iter();
    let mut out = Vec::new();
    let mut push = |bytes: Vec<u8>| {
        let (file, caption) = names.next().unwrap_or_default();
        out.push(Figure {
            file,
            caption,
            bytes,
        });
    };
    for m in f.measurands.iter().filter(|m| !m.budget.is_empty()) {
        let height = (90 + 24 * budget::rows(f, m).len() as u32).clamp(260, 1400);
        push(chart!(format, (820, height), |a| budget::draw(a, f, m))?);
    }
    for m in &f.measurands {
        if let Some(shape) = &m.shape {
            push(chart!(format, (800, 500), |a| distributions::measurand(
                a, f, m, shape
            ))?);
            push(chart!(format, (800, 500), |a| distributions::cdf(
                a, f, m, shape
            ))?);
        }
    }
    for q in &f.inputs {
        if let Some(shape) = &q.shape {
            push(chart!(format, (720, 450), |a| distributions::input(
                a, q, shape
            ))?);
        }
    }
    if let Some(s) = &f.sensitivity {
        for (m, rows) in s.measurands.iter().enumerate() {
            push(chart!(format, sensitivity::size(f, rows), |a| {
                sensitivity::draw(a, f, m, rows)
            })?);
        }
    }
    if let Some(sw) = &f.sweep {
        push(chart!(format, (720, 480), |a| sweep::draw(a, f, sw))?);
    }
    if let Some(n) = &f.noise
        && let Some(meas) = &n.measured
    {
        let u = force_unit(meas.points.iter().map(|p| p.1).fold(0.0, f64::max));
        push(chart!(format, (760, 500), |a| allan::draw(
            a, meas, &n.model, &u.symbol, u.factor
        ))?);
    }
    if let Some(p) = &f.procedure
        && let Some(r) = &p.record
    {
        let size = r.values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let u = force_unit(size);
        let noise_size = r
            .values
            .iter()
            .zip(&r.signal)
            .fold(0.0f64, |m, (v, s)| m.max((v - s).abs()));
        let nu = force_unit(noise_size);
        let title = format!(
            "{} pattern, {} cycles: one simulated record",
            p.procedure.pattern.name(),
            p.procedure.cycles
        );
        push(chart!(format, (900, 640), |a| procedure::draw(
            a, &title, r, &u.symbol, u.factor, &nu.symbol, nu.factor
        ))?);
    }
    Ok(out)
}

/// Every figure of a report: those of a run, of a comparison, or of a plan's checking run.
pub(crate) fn report_figures(
    report: &super::Report<'_>,
    format: PlotFormat,
) -> Result<Vec<Figure>, String> {
    match report {
        super::Report::Run(f) => figures(f, format),
        super::Report::Compare(c) => comparison_figures(c, format),
        super::Report::Plan(p) => figures(&p.verification, format),
    }
}

/// The figure of a comparison: every design's coverage interval relative to its estimate.
pub(crate) fn comparison_figures(
    c: &Comparison,
    format: PlotFormat,
) -> Result<Vec<Figure>, String> {
    let width = (200 + 120 * c.rows.len() as u32).clamp(760, 1600);
    let height = 480 + comparison::key_height(c.rows.len());
    Ok(vec![Figure {
        file: format!("comparison.{}", format.extension()),
        caption: "Coverage intervals of the designs, relative to each estimate".into(),
        bytes: chart!(format, (width, height), |a| comparison::draw(a, c))?,
    }])
}

#[cfg(test)]
mod tick_tests {
    use super::ticks;

    #[test]
    fn neighbouring_ticks_read_differently() {
        // An input of 3.000e-4 kg m^2 with sd 0.009e-4 (the torsion demo), a density near 5e5,
        // and a force of a few nN.
        for (lo, hi) in [(2.97e-4, 3.03e-4), (0.0, 5.2e5), (1.0, 1.8), (-2.0, 2.0)] {
            let t = ticks(lo, hi);
            let step = (hi - lo) / 10.0;
            let labels: Vec<String> = (0..=10).map(|i| t(&(lo + step * i as f64))).collect();
            for w in labels.windows(2) {
                assert_ne!(w[0], w[1], "{lo}..{hi}: {labels:?}");
            }
        }
        assert_eq!(ticks(2.97e-4, 3.03e-4)(&3.0e-4), "3.000e-4");
        assert_eq!(ticks(0.0, 5.2e5)(&5.0e5), "5.0e5");
        assert_eq!(ticks(1.0, 1.8)(&1.2), "1.20");
    }
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
