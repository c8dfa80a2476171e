//! Number formatting for reports: the GUM rounding rule and readable units.
//!
//! JCGM 100:2008 7.2.6: quote the standard uncertainty to at most two significant digits and
//! round the estimate to the same decimal place. Reports apply it in text; JSON keeps full
//! precision.

use crate::analysis::MeasurandFinding;
use crate::units::{DisplayUnit, readable_unit};

/// Decimal exponent of the last digit kept when `u` is shown to `digits` significant digits
/// (after rounding, so 0.0996 to two digits keeps 0.10, exponent -2).
pub(crate) fn last_digit_exponent(u: f64, digits: i32) -> i32 {
    if !(u.is_finite() && u > 0.0) {
        return -6;
    }
    let mut e = u.log10().floor() as i32 - (digits - 1);
    let rounded = (u / 10f64.powi(e)).round();
    if rounded >= 10f64.powi(digits) {
        e += 1;
    }
    e
}

/// Format `x` rounded at decimal exponent `e` (e = -3 gives three decimals).
pub(crate) fn fixed(x: f64, e: i32) -> String {
    let s = if e < 0 {
        format!("{:.*}", (-e) as usize, x)
    } else {
        let step = 10f64.powi(e);
        format!("{:.0}", (x / step).round() * step)
    };
    // "-0.000" reads as a sign that is not there.
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// A value and its uncertainty by the GUM rule, in the same unit: ("25.013", "0.052", e). A
/// value with no uncertainty (a constant) keeps six significant digits.
pub(crate) fn value_and_uncertainty(x: f64, u: f64) -> (String, String, i32) {
    let e = if u == 0.0 && x != 0.0 && x.is_finite() {
        last_digit_exponent(x.abs(), 6)
    } else {
        last_digit_exponent(u, 2)
    };
    (fixed(x, e), fixed(u, e), e)
}

/// A relative uncertainty (u / |y|) as a percentage with two significant digits ("0.21 %"), or
/// "-" when there is none (the estimate is zero) or it reaches 100 % (a relative uncertainty
/// above 100 % says nothing useful about a quantity that is compatible with zero).
pub(crate) fn relative_percent(relative: Option<f64>) -> String {
    let Some(rel) = relative.filter(|r| *r < 1.0) else {
        return "-".to_string();
    };
    let r = 100.0 * rel;
    if r == 0.0 {
        return "0 %".to_string();
    }
    format!("{} %", fixed(r, last_digit_exponent(r, 2)))
}

/// The unit a measurand is shown in: the declared one, or a readable SI prefix for its size.
pub(crate) fn measurand_unit(m: &MeasurandFinding) -> DisplayUnit {
    if m.unit_declared {
        return m.unit.clone();
    }
    match m.dimension {
        Some(d) => {
            let s = &m.monte_carlo;
            let size = if s.estimate != 0.0 {
                s.estimate.abs()
            } else {
                s.standard_uncertainty
            };
            readable_unit(d, size)
        }
        None => m.unit.clone(),
    }
}

/// Whether numbers of this size read badly in fixed notation.
fn awkward(x: f64) -> bool {
    x != 0.0 && !(1e-3..1e6).contains(&x.abs())
}

/// Scientific notation with `decimals` digits after the point ("1.2000e-4").
pub(crate) fn scientific(x: f64, decimals: usize) -> String {
    format!("{x:.decimals$e}")
}

/// An input's estimate and uncertainty with the unit to show them in: the unit the scenario
/// wrote, a readable SI prefix when the numbers would read badly in it, or scientific notation
/// for units that take no prefix. `u = None` marks a constant (shown exactly).
pub(crate) fn input_pair(
    x: f64,
    u: Option<f64>,
    shown: &DisplayUnit,
    dimension: Option<crate::units::Dimension>,
) -> (String, String, String) {
    let size = if x != 0.0 { x.abs() } else { u.unwrap_or(0.0) };
    let mut unit = shown.clone();
    if awkward(size / unit.factor)
        && let Some(d) = dimension
    {
        let r = readable_unit(d, size);
        if !awkward(size / r.factor) {
            unit = r;
        }
    }
    let k = unit.factor;
    match u {
        None => (exact(x / k), "exact".into(), unit.symbol),
        Some(u) if awkward(size / k) || (x == 0.0 && awkward(u / k)) => {
            let e = last_digit_exponent(u / k, 2);
            let lead = if x != 0.0 {
                (x / k).abs().log10().floor() as i32
            } else {
                (u / k).log10().floor() as i32
            };
            let decimals = (lead - e).max(1) as usize;
            let ue = (u / k).log10().floor() as i32;
            (
                scientific(x / k, decimals),
                scientific(u / k, ((ue - e).max(1)) as usize),
                unit.symbol,
            )
        }
        Some(u) => {
            let (a, b, _) = value_and_uncertainty(x / k, u / k);
            (a, b, unit.symbol)
        }
    }
}

/// `x` to `n` significant digits: fixed notation for moderate sizes, scientific otherwise.
pub(crate) fn significant(x: f64, n: usize) -> String {
    if x == 0.0 {
        return "0".into();
    }
    if !x.is_finite() {
        return format!("{x}");
    }
    let lead = x.abs().log10().floor() as i32;
    if (-3..5).contains(&lead) {
        let decimals = (n as i32 - 1 - lead).max(0) as usize;
        format!("{x:.decimals$}")
    } else {
        format!("{x:.prec$e}", prec = n.saturating_sub(1))
    }
}

/// A number in its shortest exact form, for constants.
pub(crate) fn exact(x: f64) -> String {
    format!("{x}")
}

/// A probability as a percentage ("95 %").
pub(crate) fn percent(p: f64) -> String {
    let s = format!("{:.4}", 100.0 * p);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    format!("{s} %")
}

/// Group digits of a count: 1000000 -> "1 000 000" (SI Brochure 5.4.4).
pub(crate) fn grouped(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(' ');
        }
        out.push(c);
    }
    out
}

/// A duration in readable units.
pub(crate) fn duration(t: f64) -> String {
    if t < 120.0 {
        format!("{} s", significant(t, 3))
    } else if t < 7200.0 {
        format!("{} min", significant(t / 60.0, 3))
    } else if t < 2.0 * 86400.0 {
        format!("{} h", significant(t / 3600.0, 3))
    } else {
        format!("{} days", significant(t / 86400.0, 3))
    }
}

/// A force in a readable unit.
pub(crate) fn force_text(x: f64) -> String {
    let u = crate::units::readable_unit(crate::units::Dimension::FORCE, x);
    format!("{} {}", significant(x / u.factor, 3), u.symbol)
}

/// A count of cycles in words ("1 cycle", "12 cycles").
pub(crate) fn cycles_text(n: u64) -> String {
    if n == 1 {
        "1 cycle".into()
    } else {
        format!("{} cycles", grouped(n))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // JCGM 100 7.2.6: two significant digits for u, estimate to the same place.
    #[test]
    fn gum_rounding() {
        assert_eq!(
            value_and_uncertainty(25.01349, 0.05172),
            ("25.013".into(), "0.052".into(), -3)
        );
        assert_eq!(
            value_and_uncertainty(1.23412, 0.07548),
            ("1.234".into(), "0.075".into(), -3)
        );
        assert_eq!(
            value_and_uncertainty(100.02, 0.0996),
            ("100.02".into(), "0.10".into(), -2)
        );
        assert_eq!(
            value_and_uncertainty(12345.6, 320.0),
            ("12350".into(), "320".into(), 1)
        );
        assert_eq!(
            value_and_uncertainty(-0.0001, 2.0),
            ("0.0".into(), "2.0".into(), -1)
        );
        assert_eq!(relative_percent(Some(0.052 / 25.0)), "0.21 %");
        assert_eq!(relative_percent(None), "-");
        assert_eq!(relative_percent(Some(2.0 / 0.0015)), "-");
        assert_eq!(significant(1.0, 4), "1.000");
        assert_eq!(significant(-3.4695e-19, 3), "-3.47e-19");
        assert_eq!(significant(0.012345, 2), "0.012");
        assert_eq!(significant(123456.0, 3), "1.23e5");
    }
}

/// A unit symbol as print writes it, for Markdown, HTML and figures: the micro prefix as µ,
/// degrees, minutes and seconds of arc as ° ′ ″, and powers as superscripts ("uN m/rad" ->
/// "µN m/rad", "kg m^2" -> "kg m²", "deg" -> "°"). The terminal keeps the ASCII symbol.
pub(crate) fn pretty_unit(symbol: &str) -> String {
    let mut out = String::with_capacity(symbol.len() + 4);
    let mut token = String::new();
    let flush = |token: &mut String, out: &mut String| {
        if token.is_empty() {
            return;
        }
        let (base, power) = match token.split_once('^') {
            Some((b, p)) => (b.to_string(), Some(p.to_string())),
            None => (token.clone(), None),
        };
        let base = match base.as_str() {
            "deg" => "\u{b0}".to_string(),
            "arcmin" => "\u{2032}".to_string(),
            "arcsec" => "\u{2033}".to_string(),
            b if b.len() > 1
                && b.starts_with('u')
                && crate::units::parse_unit(&b[1..]).is_ok()
                && crate::units::parse_unit(b).is_ok() =>
            {
                format!("\u{b5}{}", &b[1..])
            }
            b => b.to_string(),
        };
        out.push_str(&base);
        if let Some(p) = power {
            for c in p.chars() {
                out.push(match c {
                    '-' => '\u{207b}',
                    '0' => '\u{2070}',
                    '1' => '\u{b9}',
                    '2' => '\u{b2}',
                    '3' => '\u{b3}',
                    '4'..='9' => char::from_u32(0x2074 + (c as u32 - '4' as u32)).unwrap_or(c),
                    c => c,
                });
            }
        }
        token.clear();
    };
    for c in symbol.chars() {
        if c == ' ' || c == '/' || c == '*' || c == '(' || c == ')' {
            flush(&mut token, &mut out);
            out.push(c);
        } else {
            token.push(c);
        }
    }
    flush(&mut token, &mut out);
    out
}

#[cfg(test)]
mod pretty_tests {
    use super::pretty_unit;

    #[test]
    fn units_for_print() {
        assert_eq!(pretty_unit("uN m/rad"), "\u{b5}N m/rad");
        assert_eq!(pretty_unit("kg m^2"), "kg m\u{b2}");
        assert_eq!(pretty_unit("deg"), "\u{b0}");
        assert_eq!(pretty_unit("m s^-2"), "m s\u{207b}\u{b2}");
        assert_eq!(pretty_unit("ug"), "\u{b5}g");
        assert_eq!(pretty_unit("W"), "W");
        assert_eq!(pretty_unit(""), "");
    }
}

/// Why the law of propagation was not validated against the Monte Carlo result, in words: which
/// end of the interval differs by how much against delta (JCGM 101 8.2), what that usually
/// means here, and that the Monte Carlo result is the one to quote; `None` when validated.
pub(crate) fn validation_words(
    f: &crate::analysis::Findings,
    m: &crate::analysis::MeasurandFinding,
) -> Option<String> {
    let v = m.validation.as_ref()?;
    if v.first_order.validated {
        return None;
    }
    let unit = measurand_unit(m);
    let k = unit.factor;
    let v1 = &v.first_order;
    let ends: Vec<String> = [("lower", v1.d_low), ("upper", v1.d_high)]
        .iter()
        .filter(|(_, d)| *d > v1.delta)
        .map(|(end, d)| {
            format!(
                "the {end} end differs by {} {} ({:.1} delta)",
                significant(d / k, 2),
                unit.symbol,
                d / v1.delta
            )
        })
        .collect();
    let t_input = m
        .budget
        .iter()
        .any(|r| r.share > 0.01 && f.inputs[r.input].dof.is_some());
    // Standard error of a 95 % interval end of a normal output from M trials:
    // sqrt(p (1 - p)) / phi(z_p) u / sqrt(M) = 2.67 u / sqrt(M) (the asymptotic variance of a
    // sample quantile; common practice).
    let end_noise = 2.67 * m.monte_carlo.standard_uncertainty / (f.trials as f64).sqrt();
    let worst = v1.d_low.max(v1.d_high);
    let why = if worst < 3.0 * end_noise {
        "the difference is within the Monte Carlo scatter of the interval ends at this number of trials (about {noise} each): run more trials, or an adaptive run, before reading anything into it"
    } else if v.higher_order.is_some_and(|h| h.validated) {
        "the model is non-linear over the inputs' spread, and its higher-order terms, which are validated, account for it"
    } else if t_input {
        "an input with few degrees of freedom (t or readings) gives the output heavier tails than a normal"
    } else {
        "the output is not Gaussian (skewed, flat or heavy-tailed: see its distribution) or the model is non-linear over the inputs' spread"
    };
    Some(format!(
        "{}: the law of propagation is not validated (JCGM 101 8.2, delta = {} {}): {}. Likely cause: {}. Quote the Monte Carlo result.",
        m.name,
        significant(v1.delta / k, 2),
        unit.symbol,
        ends.join(" and "),
        why.replace(
            "{noise}",
            &format!("{} {}", significant(end_noise / k, 2), unit.symbol)
        )
    ))
}
