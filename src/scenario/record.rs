//! A measured noise of the instrument: an Allan deviation table (`[noise.allan]`) or a recorded
//! zero-signal series in a CSV file (`[noise.record]`), and the fit of the four power-law terms
//! to it (physics::power_law). A record is refused when it is too short, unevenly sampled
//! beyond a tolerance, or holds a value that is not a finite number; the message names the file,
//! the row and the column.

use super::noise::MeasuredNoise;
use super::table::{Entry, Table};
use crate::error::{InputError, Location};
use crate::physics::power_law::{fit_allan, record_dof};
use crate::stats::allan::{
    AllanPoint, confidence_interval, equivalent_dof, overlapping_deviations,
};
use crate::units::{Dimension, parse_quantity, parse_unit};
use std::io::Read;
use std::path::Path;
use toml::de::DeValue;

/// Fewest values a record must hold: three octaves of tau with at least eight terms each.
pub const MIN_RECORD_VALUES: usize = 64;
/// Largest record file read (a guard against feeding in a wrong file).
pub const MAX_RECORD_BYTES: u64 = 64 * 1024 * 1024;
/// How far one sampling interval may differ from the mean interval (relative).
pub const SAMPLING_TOLERANCE: f64 = 1e-3;
/// Probability of the intervals drawn around measured Allan deviations (one sigma).
pub const ALLAN_INTERVAL: f64 = 0.682_689_492_137_086;
/// Degrees of freedom assumed for each point of an Allan deviation table (only their ratio
/// weighs the fit, so the value sets no level).
const TABLE_DOF: f64 = 10.0;

const ALLAN_EXAMPLE: &str =
    "[noise.allan]\ntau = [1, 10, 100]\ndeviation = [\"14 nN\", \"4.5 nN\", \"1.6 nN\"]";
const RECORD_EXAMPLE: &str =
    "[noise.record]\nfile = \"zero.csv\"\ntime = \"t\"\nvalue = \"reading\"\nunit = \"ug\"";

/// A force (or, through `g`, a mass) written as a number in N or a string with a unit.
fn force_value(
    item: &toml::Spanned<DeValue<'_>>,
    e: &Entry<'_, '_>,
    g: f64,
) -> Result<f64, InputError> {
    let v = match item.get_ref() {
        DeValue::String(s) => {
            let q = parse_quantity(s).map_err(|err| {
                e.error(
                    format!("cannot read {:?}: {err}", s.as_ref()),
                    ALLAN_EXAMPLE,
                )
            })?;
            match q.unit.map(|u| u.dimension) {
                Some(d) if d == Dimension::FORCE => q.si,
                Some(d) if d == Dimension::MASS => q.si * g,
                None => q.si,
                Some(d) => {
                    return Err(e.error(
                        format!("{:?} is {}, not a force or a mass", s.as_ref(), d.kind()),
                        ALLAN_EXAMPLE,
                    ));
                }
            }
        }
        DeValue::Integer(_) | DeValue::Float(_) => {
            super::table::number_value(item, &e.path, e.src, ALLAN_EXAMPLE)?
        }
        _ => return Err(e.error("expected a force such as \"4.5 nN\"", ALLAN_EXAMPLE)),
    };
    if !(v > 0.0 && v.is_finite()) {
        return Err(e.error(
            format!("an Allan deviation must be greater than 0 (got {v})"),
            ALLAN_EXAMPLE,
        ));
    }
    Ok(v)
}

fn time_value(item: &toml::Spanned<DeValue<'_>>, e: &Entry<'_, '_>) -> Result<f64, InputError> {
    let v = match item.get_ref() {
        DeValue::String(s) => {
            let q = parse_quantity(s).map_err(|err| {
                e.error(
                    format!("cannot read {:?}: {err}", s.as_ref()),
                    ALLAN_EXAMPLE,
                )
            })?;
            if let Some(u) = q.unit
                && u.dimension != Dimension::TIME
            {
                return Err(e.error(format!("{:?} is not a time", s.as_ref()), ALLAN_EXAMPLE));
            }
            q.si
        }
        _ => super::table::number_value(item, &e.path, e.src, ALLAN_EXAMPLE)?,
    };
    if !(v > 0.0 && v.is_finite()) {
        return Err(e.error(
            format!("an averaging time must be greater than 0 (got {v})"),
            ALLAN_EXAMPLE,
        ));
    }
    Ok(v)
}

/// `[noise.allan]`: `tau` and `deviation`, as long as each other, at least three points, tau
/// increasing.
pub(crate) fn allan_table(t: &Table<'_, '_>, g: f64) -> Result<MeasuredNoise, InputError> {
    t.check_keys(&["tau", "deviation"], ALLAN_EXAMPLE)?;
    let te = t.require("tau", ALLAN_EXAMPLE)?;
    let de = t.require("deviation", ALLAN_EXAMPLE)?;
    let taus = te
        .array(ALLAN_EXAMPLE)?
        .iter()
        .map(|v| time_value(v, &te))
        .collect::<Result<Vec<_>, _>>()?;
    let devs = de
        .array(ALLAN_EXAMPLE)?
        .iter()
        .map(|v| force_value(v, &de, g))
        .collect::<Result<Vec<_>, _>>()?;
    if taus.len() != devs.len() {
        return Err(de.error(
            format!(
                "`tau` has {} values and `deviation` {}: give one deviation per tau",
                taus.len(),
                devs.len()
            ),
            ALLAN_EXAMPLE,
        ));
    }
    if taus.len() < 3 {
        return Err(te.error(
            "a fit of the noise terms needs at least 3 points",
            ALLAN_EXAMPLE,
        ));
    }
    if taus.windows(2).any(|w| w[1] <= w[0]) {
        return Err(te.error(
            "`tau` must increase from one point to the next",
            ALLAN_EXAMPLE,
        ));
    }
    let points: Vec<AllanPoint> = taus
        .iter()
        .zip(&devs)
        .map(|(tau, dev)| AllanPoint {
            tau: *tau,
            factor: 1,
            deviation: *dev,
            terms: 0,
        })
        .collect();
    let fit = fit_allan(&points, &|_, _| TABLE_DOF).ok_or_else(|| {
        t.error(
            "the four noise terms cannot be fitted to this table",
            ALLAN_EXAMPLE,
        )
    })?;
    Ok(MeasuredNoise {
        source: format!(
            "Allan deviation table of {} points ([noise.allan])",
            points.len()
        ),
        points: points.iter().map(|p| (p.tau, p.deviation, None)).collect(),
        fit,
    })
}

/// An error at a row of the record file, pointing at the line.
fn row_error(file: &str, line: u64, text: &str, column: &str, message: String) -> InputError {
    InputError {
        file: file.to_string(),
        location: Some(Box::new(Location {
            line: line as usize,
            column: 1,
            source_line: text.to_string(),
            width: text.chars().count().clamp(1, 80),
        })),
        key: Some(column.to_string()),
        message,
        example: Some(
            "t,reading\n0,0.12\n1,0.09\n2,0.11   (evenly spaced times, numbers only)".into(),
        ),
    }
}

/// `[noise.record]`: `file` (relative to the scenario), the `time` and `value` columns by name,
/// the `unit` of the values (a force, or a mass read through `g`), optionally `time_unit`
/// (default s). The overlapping Allan deviation at every octave, with 68.3 % chi-squared
/// intervals (NIST SP 1065 5.3), and the fit.
pub(crate) fn recorded_series(
    scenario: &str,
    t: &Table<'_, '_>,
    g: f64,
) -> Result<MeasuredNoise, InputError> {
    t.check_keys(
        &["file", "time", "value", "unit", "time_unit"],
        RECORD_EXAMPLE,
    )?;
    let fe = t.require("file", RECORD_EXAMPLE)?;
    let name = fe.string(RECORD_EXAMPLE)?;
    let time_col = t.require("time", RECORD_EXAMPLE)?.string(RECORD_EXAMPLE)?;
    let value_col = t.require("value", RECORD_EXAMPLE)?.string(RECORD_EXAMPLE)?;
    let ue = t.require("unit", RECORD_EXAMPLE)?;
    let unit_text = ue.string("unit = \"ug\"   or   \"nN\"")?;
    let unit = parse_unit(unit_text).map_err(|err| {
        ue.error(
            format!("cannot read unit {unit_text:?}: {err}"),
            "unit = \"ug\"",
        )
    })?;
    let value_factor = match unit.dimension {
        d if d == Dimension::FORCE => unit.factor,
        d if d == Dimension::MASS => unit.factor * g,
        d => {
            return Err(ue.error(
                format!(
                    "the record's values must be a force or a mass, not {}",
                    d.kind()
                ),
                "unit = \"ug\"   or   \"nN\"",
            ));
        }
    };
    let time_factor = match t.get("time_unit") {
        None => 1.0,
        Some(e) => {
            let text = e.string("time_unit = \"s\"")?;
            match parse_unit(text) {
                Ok(u) if u.dimension == Dimension::TIME => u.factor,
                _ => {
                    return Err(e.error(
                        format!("{text:?} is not a unit of time"),
                        "time_unit = \"s\"",
                    ));
                }
            }
        }
    };
    let base = Path::new(scenario).parent().unwrap_or(Path::new(""));
    let path = base.join(name);
    let shown = path.display().to_string();
    let file = std::fs::File::open(&path).map_err(|err| {
        fe.error(
            format!("cannot read the record {shown}: {err}"),
            RECORD_EXAMPLE,
        )
    })?;
    let mut bytes = Vec::new();
    file.take(MAX_RECORD_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|err| {
            fe.error(
                format!("cannot read the record {shown}: {err}"),
                RECORD_EXAMPLE,
            )
        })?;
    if bytes.len() as u64 > MAX_RECORD_BYTES {
        return Err(fe.error(
            format!("the record {shown} is larger than {MAX_RECORD_BYTES} bytes; thin it or give its Allan deviation in [noise.allan]"),
            RECORD_EXAMPLE,
        ));
    }
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(bytes.as_slice());
    let headers = reader
        .headers()
        .map_err(|err| InputError::file(&shown, format!("cannot read the header line: {err}")))?
        .clone();
    let find = |col: &str, key: &str| {
        headers.iter().position(|h| h == col).ok_or_else(|| {
            t.get(key).map_or_else(
                || t.error("", ""),
                |e| {
                    e.error(
                        format!(
                            "{shown} has no column `{col}` (its columns: {})",
                            headers.iter().collect::<Vec<_>>().join(", ")
                        ),
                        RECORD_EXAMPLE,
                    )
                },
            )
        })
    };
    let (ti, vi) = (find(time_col, "time")?, find(value_col, "value")?);
    let text_lines: Vec<&str> = std::str::from_utf8(&bytes).unwrap_or("").lines().collect();
    let line_text = |line: u64| text_lines.get(line as usize - 1).copied().unwrap_or("");
    let mut times = Vec::new();
    let mut values = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|err| InputError::file(&shown, format!("{err}")))?;
        let line = record.position().map_or(0, |p| p.line());
        let cell = |i: usize, col: &str, factor: f64| -> Result<f64, InputError> {
            let text = record.get(i).unwrap_or("");
            match text.parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(x * factor),
                Ok(x) => Err(row_error(
                    &shown,
                    line,
                    line_text(line),
                    col,
                    format!("row {line}: `{col}` is {x}, not a finite number"),
                )),
                Err(_) => Err(row_error(
                    &shown,
                    line,
                    line_text(line),
                    col,
                    format!("row {line}: `{col}` is {text:?}, not a number"),
                )),
            }
        };
        times.push((cell(ti, time_col, time_factor)?, line));
        values.push(cell(vi, value_col, value_factor)?);
    }
    if values.len() < MIN_RECORD_VALUES {
        return Err(fe.error(
            format!("the record {shown} has {} values; an Allan deviation over three octaves needs at least {MIN_RECORD_VALUES}", values.len()),
            RECORD_EXAMPLE,
        ));
    }
    // The nominal step is the median step, so that one gap stands out against it.
    let mut steps: Vec<f64> = times.windows(2).map(|w| w[1].0 - w[0].0).collect();
    steps.sort_by(f64::total_cmp);
    let dt = steps[steps.len() / 2];
    for w in times.windows(2) {
        let step = w[1].0 - w[0].0;
        if step <= 0.0 {
            return Err(row_error(
                &shown,
                w[1].1,
                line_text(w[1].1),
                time_col,
                format!(
                    "row {}: the time does not increase ({} after {})",
                    w[1].1, w[1].0, w[0].0
                ),
            ));
        }
        if (step - dt).abs() > SAMPLING_TOLERANCE * dt {
            return Err(row_error(
                &shown,
                w[1].1,
                line_text(w[1].1),
                time_col,
                format!(
                    "row {}: a step of {step} s where the record's usual step is {dt} s (a gap, or uneven sampling beyond {} %); the Allan deviation needs evenly spaced values",
                    w[1].1,
                    100.0 * SAMPLING_TOLERANCE
                ),
            ));
        }
    }
    let points = overlapping_deviations(&values, dt);
    let dof = record_dof(values.len());
    let fit = fit_allan(&points, &dof).ok_or_else(|| {
        fe.error(
            format!(
                "the four noise terms cannot be fitted to the record {shown} (is it constant?)"
            ),
            RECORD_EXAMPLE,
        )
    })?;
    let with_intervals = points
        .iter()
        .map(|p| {
            let edf = equivalent_dof(fit.model.dominant(p.tau), values.len() + 1, p.factor);
            (
                p.tau,
                p.deviation,
                Some(confidence_interval(p.deviation, edf, ALLAN_INTERVAL)),
            )
        })
        .collect();
    Ok(MeasuredNoise {
        source: format!("record {shown}: {} values every {} s", values.len(), dt),
        points: with_intervals,
        fit,
    })
}
