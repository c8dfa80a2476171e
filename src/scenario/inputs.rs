//! Reading one `[inputs.NAME]` table into an [`InputQuantity`]: a constant or a distribution,
//! every quantity converted to SI, every parameter validated.

use super::source::suggestion;
use super::table::{Entry, Table, number_value, type_name};
use crate::dist::{self, Distribution, ParamKind, ParamValues, ParameterError};
use crate::error::InputError;
use crate::model::{ChainInput, Domain, Subsystem};
use crate::units::{Dimension, DisplayUnit, parse_quantity};
use std::ops::Range;
use toml::de::DeValue;

/// How an input quantity is known.
#[derive(Clone, Debug, PartialEq)]
pub enum Law {
    /// Exactly known: the same value in every trial.
    Constant(f64),
    /// Known through a probability distribution.
    Distributed(Distribution),
}

/// One input quantity of a study, in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct InputQuantity {
    /// Its name in the scenario.
    pub name: String,
    /// Constant or distribution.
    pub(crate) law: Law,
    /// Degrees of freedom of its standard uncertainty for the law of propagation: those of a
    /// t or readings distribution, or a Type B value from the `dof` key; `None` means infinite.
    pub(crate) dof: Option<f64>,
    /// Its dimension, when known (chain inputs, or from the units written).
    pub(crate) dimension: Option<Dimension>,
    /// The unit the scenario wrote it in, used to show it.
    pub(crate) shown_unit: DisplayUnit,
    /// Free text from the `note` key.
    pub(crate) note: Option<String>,
    /// The smallest standard uncertainty the experiment can reach for it (`best`, SI), which a
    /// plan does not go below; `None` when the scenario sets no limit.
    pub(crate) best: Option<f64>,
    /// Where its table is in the file.
    pub(crate) span: Range<usize>,
    /// The part of the apparatus it belongs to (the chain's, or `subsystem = "..."`).
    pub(crate) subsystem: Subsystem,
    /// Words for it in prose, tables and figures (`label = "..."`), when given.
    pub(crate) label: Option<String>,
}

impl InputQuantity {
    /// The estimate: the constant, or the expectation of the distribution.
    pub fn estimate(&self) -> f64 {
        match &self.law {
            Law::Constant(v) => *v,
            Law::Distributed(d) => d.mean(),
        }
    }

    /// The standard deviation of its distribution (JCGM 101 view); 0 for a constant.
    pub(crate) fn standard_deviation(&self) -> f64 {
        match &self.law {
            Law::Constant(_) => 0.0,
            Law::Distributed(d) => d.standard_deviation(),
        }
    }

    /// The standard uncertainty the law of propagation uses (JCGM 100): the distribution's
    /// standard deviation, except for t and readings, where it is the scale s/sqrt(n) that goes
    /// with their degrees of freedom (JCGM 100 4.2.3 and G.3).
    pub(crate) fn gum_standard_uncertainty(&self) -> f64 {
        match &self.law {
            Law::Constant(_) => 0.0,
            Law::Distributed(Distribution::T(t)) => t.scale(),
            Law::Distributed(d) => d.standard_deviation(),
        }
    }

    /// Skewness and kurtosis for the law of propagation's higher-order terms: the
    /// distribution's own, except for t and readings inputs, whose u is the standard uncertainty
    /// of a mean with degrees of freedom (JCGM 100 4.2.3), taken as normal (0, 3) as JCGM 100
    /// does; (0, 3) for a constant (it has no terms).
    pub(crate) fn shape(&self) -> (f64, f64) {
        match &self.law {
            Law::Constant(_) | Law::Distributed(Distribution::T(_)) => (0.0, 3.0),
            Law::Distributed(d) => (d.skewness(), d.kurtosis()),
        }
    }

    /// The distribution family name, or "constant".
    pub fn family(&self) -> &'static str {
        match &self.law {
            Law::Constant(_) => "constant",
            Law::Distributed(d) => d.family_name(),
        }
    }

    /// Whether the quantity varies from trial to trial.
    pub(crate) fn is_constant(&self) -> bool {
        matches!(self.law, Law::Constant(_))
    }
}

/// The names of all families, for messages.
pub fn family_names() -> Vec<&'static str> {
    dist::families().map(|f| f.name).collect()
}

/// The example line of a family, for messages and the starter file.
pub fn family_example(name: &str) -> &'static str {
    dist::families()
        .find(|f| f.name == name)
        .map_or("", |f| f.example)
}

/// What is known of the input's dimension while its parameters are read.
struct UnitTracker<'e> {
    expected: Option<Dimension>,
    seen: Option<(Dimension, String)>,
    shown: Option<DisplayUnit>,
    example: &'e str,
}

impl UnitTracker<'_> {
    /// Read a quantity value: a number (SI) or a string with a unit of the right dimension.
    fn quantity(
        &mut self,
        v: &toml::Spanned<DeValue<'_>>,
        path: &str,
        src: &super::source::Source<'_>,
    ) -> Result<f64, InputError> {
        match v.get_ref() {
            DeValue::String(s) => {
                let q = parse_quantity(s).map_err(|e| {
                    src.error(
                        &v.span(),
                        path,
                        format!("cannot read {:?}: {e}", s.as_ref()),
                        self.example,
                    )
                })?;
                if let Some(unit) = &q.unit {
                    let dim = unit.dimension;
                    if let Some(expected) = self.expected
                        && dim != expected
                    {
                        return Err(src.error(
                            &v.span(),
                            path,
                            format!(
                                "{:?} is {}, but this input is {} (SI unit {:?})",
                                s.as_ref(),
                                dim.kind(),
                                expected.kind(),
                                expected.si_symbol()
                            ),
                            format!(
                                "{} = {}",
                                path.rsplit('.').next().unwrap_or(path),
                                expected.example()
                            ),
                        ));
                    }
                    if let Some((seen, text)) = &self.seen
                        && *seen != dim
                    {
                        return Err(src.error(
                            &v.span(),
                            path,
                            format!(
                                "{:?} is {}, but another parameter of this input was given as {} ({text:?}); all parameters of one input share a dimension",
                                s.as_ref(),
                                dim.kind(),
                                seen.kind()
                            ),
                            self.example,
                        ));
                    }
                    self.seen.get_or_insert((dim, s.to_string()));
                    self.shown.get_or_insert(DisplayUnit {
                        symbol: unit.text.clone(),
                        factor: unit.factor,
                    });
                }
                Ok(q.si)
            }
            DeValue::Integer(_) | DeValue::Float(_) => number_value(v, path, src, self.example),
            other => Err(src.error(
                &v.span(),
                path,
                format!(
                    "expected a number or a quantity string such as \"2 mm\", found {}",
                    type_name(other)
                ),
                self.example,
            )),
        }
    }
}

fn param_error(table: &Table<'_, '_>, e: ParameterError, example: &str) -> InputError {
    match table.get(e.parameter) {
        Some(entry) => entry.error(e.reason, example),
        None => table.error(e.reason, example),
    }
}

/// Read `[inputs.NAME]`. `chain_input` is the chain's description of this input, when the
/// chain takes it (then its dimension and physical domain are enforced).
pub(crate) fn read_input(
    table: &Table<'_, '_>,
    name: &str,
    chain_input: Option<&ChainInput>,
) -> Result<InputQuantity, InputError> {
    let src = table.src;
    let expected = chain_input.map(|c| c.dimension);
    let generic_example = "[inputs.lever_arm] dist = \"normal\", mean = \"50 mm\", sd = \"0.02 mm\"   or   value = \"50 mm\"";
    let note = match table.get("note") {
        Some(e) => Some(
            e.string("note = \"from the vendor's data sheet\"")?
                .to_string(),
        ),
        None => None,
    };
    let label = read_label(table, "label = \"stray force from residual gas\"")?;
    let subsystem = match table.get("subsystem") {
        Some(e) => {
            let example = "subsystem = \"balance\"";
            let written = e.string(example)?;
            Subsystem::from_name(written).ok_or_else(|| {
                e.error(
                    format!(
                        "unknown subsystem {written:?}; known: {}",
                        Subsystem::ALL.map(Subsystem::name).join(", ")
                    ),
                    example,
                )
            })?
        }
        None => chain_input.map_or(Subsystem::Other, |c| c.subsystem),
    };
    let value = table.get("value");
    let dist = table.get("dist");
    let mut units = UnitTracker {
        expected,
        seen: None,
        shown: None,
        example: generic_example,
    };

    let (law, dof) = match (value, dist) {
        (Some(v), None) => {
            table.check_keys(
                &["value", "note", "label", "subsystem"],
                "value = \"50 mm\"",
            )?;
            let x = units.quantity(v.value, &v.path, src)?;
            (Law::Constant(x), None)
        }
        (Some(v), Some(_)) => {
            return Err(v.error(
                "an input has either `value` (a constant) or `dist` (a distribution), not both",
                generic_example,
            ));
        }
        (None, None) => {
            return Err(table.error(
                format!("input `{name}` needs `dist` (a distribution) or `value` (a constant)"),
                generic_example,
            ));
        }
        (None, Some(d)) => {
            let written = d.string("dist = \"normal\"")?;
            let Some(spec) = dist::family_by_name(written) else {
                let mut names = family_names();
                names.extend(dist::families().flat_map(|f| f.aliases.iter().copied()));
                return Err(d.error(
                    format!(
                        "unknown distribution {written:?}{}; known: {}",
                        suggestion(written, names.iter().copied()),
                        family_names().join(", ")
                    ),
                    "dist = \"rectangular\"",
                ));
            };
            let (family, params, example) = (spec.name, spec.params, spec.example);
            units.example = example;
            let mut allowed: Vec<&str> = vec!["dist", "note", "best", "label", "subsystem"];
            allowed.extend(params.iter().map(|p| p.0));
            if spec.type_b_dof {
                allowed.push("dof");
            }
            table.check_keys(&allowed, example)?;
            let mut q: Vec<f64> = Vec::new();
            let mut readings: Vec<f64> = Vec::new();
            for (pname, kind) in params.iter() {
                let entry = table.get(pname).ok_or_else(|| {
                    table.error(
                        format!(
                            "distribution {family:?} needs `{pname}` (its parameters: {})",
                            params.iter().map(|p| p.0).collect::<Vec<_>>().join(", ")
                        ),
                        example,
                    )
                })?;
                match kind {
                    ParamKind::Quantity => q.push(units.quantity(entry.value, &entry.path, src)?),
                    ParamKind::Pure => q.push(entry.number(example)?),
                    ParamKind::Quantities => {
                        let items = entry.array(example)?;
                        for item in items {
                            readings.push(units.quantity(item, &entry.path, src)?);
                        }
                    }
                }
            }
            let built = (spec.build)(&ParamValues {
                numbers: &q,
                list: &readings,
            });
            let dist = built.map_err(|e| param_error(table, e, example))?;
            // A spread below the resolution of a double at the value (about 1e-16 of it, or a
            // subnormal spread) gives trials that are all equal: u would come out 0 for a
            // quantity stated to vary. Refused, with the way out.
            let (mean, sd) = (dist.mean(), dist.standard_deviation());
            if sd < 4.0 * f64::EPSILON * mean.abs() || sd < f64::MIN_POSITIVE {
                let spread = if sd > 0.0 {
                    format!("standard deviation {sd:e}")
                } else {
                    "its variance underflows to 0".to_string()
                };
                return Err(table.error(
                    format!(
                        "the spread of `{name}` ({spread}) is below what double precision resolves at its value ({mean:e}): every trial would draw the same number and u would be 0; give it as a constant `value`, or make the input its deviation from a reference value (the formula adding the reference back)"
                    ),
                    example,
                ));
            }
            let dof = match (dist.degrees_of_freedom(), table.get("dof")) {
                (Some(nu), _) => Some(nu),
                (None, Some(e)) => Some(type_b_degrees_of_freedom(&e)?),
                (None, None) => None,
            };
            (Law::Distributed(dist), dof)
        }
    };

    let dimension = expected.or(units.seen.as_ref().map(|s| s.0));
    let shown_unit = match (&units.shown, dimension) {
        (Some(u), _) if !u.symbol.is_empty() => u.clone(),
        (_, Some(d)) => DisplayUnit::si(d),
        _ => DisplayUnit::si(Dimension::NONE),
    };
    let quantity = InputQuantity {
        name: name.to_string(),
        law,
        dof,
        dimension,
        shown_unit,
        note,
        best: None,
        span: table.span.clone(),
        subsystem,
        label,
    };
    let quantity = match table.get("best") {
        Some(e) => {
            let example = "best = \"0.01 mm\"   (the smallest standard uncertainty reachable)";
            let b = units.quantity(e.value, &e.path, src)?;
            if !(b > 0.0 && b.is_finite()) {
                return Err(e.error(
                    format!("`best` is the smallest standard uncertainty reachable and must be greater than 0 (got {b})"),
                    example,
                ));
            }
            InputQuantity {
                best: Some(b),
                ..quantity
            }
        }
        None => quantity,
    };
    if let Some(ci) = chain_input {
        check_domain(table, &quantity, ci)?;
    }
    Ok(quantity)
}

/// A Type B `dof` key: a positive number, or "inf".
fn type_b_degrees_of_freedom(e: &Entry<'_, '_>) -> Result<f64, InputError> {
    let example = "dof = 12   (Type B: nu ~ (1/2)(Delta u / u)^-2, JCGM 100 G.4.2)";
    if let DeValue::String(s) = e.value.get_ref()
        && matches!(s.as_ref(), "inf" | "infinite" | "infinity")
    {
        return Ok(f64::INFINITY);
    }
    let v = match e.value.get_ref() {
        DeValue::Float(f) if f.as_str().contains("inf") => f64::INFINITY,
        _ => e.number(example)?,
    };
    if v > 0.0 {
        Ok(v)
    } else {
        Err(e.error(
            format!("degrees of freedom must be positive (got {v})"),
            example,
        ))
    }
}

/// Probability that a distribution puts outside a physical range and still be accepted: far
/// below what any run of up to 10^9 trials could draw (common practice: refuse rather than
/// clamp).
pub const OUTSIDE_TOLERANCE: f64 = 1e-12;

pub(crate) fn check_domain(
    table: &Table<'_, '_>,
    q: &InputQuantity,
    ci: &ChainInput,
) -> Result<(), InputError> {
    let name = ci.name;
    let (lo, hi, what, example): (f64, f64, &str, &str) = match ci.domain {
        Domain::Any => return Ok(()),
        Domain::Positive => (0.0, f64::INFINITY, "greater than 0", ""),
        Domain::NonNegative => (0.0, f64::INFINITY, "0 or more", ""),
        Domain::UnitInterval => (
            0.0,
            1.0,
            "a fraction in [0, 1]",
            "dist = \"truncated-normal\", mean = 0.9995, sd = 0.0002, min = 0, max = 1",
        ),
        Domain::Incidence => (
            -std::f64::consts::FRAC_PI_2,
            std::f64::consts::FRAC_PI_2,
            "an angle of incidence strictly between -90 deg and 90 deg",
            "dist = \"normal\", mean = \"10 deg\", sd = \"0.2 deg\"",
        ),
        Domain::RefractiveIndex => (
            1.0,
            f64::INFINITY,
            "a refractive index of 1 or more (1 is vacuum)",
            "value = 1.00027   # air at 1064 nm",
        ),
        Domain::QualityFactor => (
            0.5,
            f64::INFINITY,
            "above 1/2 (an oscillation that rings)",
            "value = 2000",
        ),
        Domain::Count => {
            return match q.law {
                Law::Constant(v) if v.fract() == 0.0 && (1.0..=10_000.0).contains(&v) => Ok(()),
                _ => Err(table.error(
                    format!("`{name}` must be a constant whole number from 1 to 10000"),
                    format!("[inputs.{name}] value = 14"),
                )),
            };
        }
    };
    let example = if example.is_empty() {
        format!("[inputs.{name}] value = {}", ci.dimension.example())
    } else {
        format!("[inputs.{name}] {example}")
    };
    let strict_lo = matches!(
        ci.domain,
        Domain::Positive | Domain::Incidence | Domain::QualityFactor
    );
    let strict_hi = matches!(ci.domain, Domain::Incidence);
    // What a value outside the domain most likely meant: a percentage for a fraction, degrees
    // for an angle written as a bare number (which is read in radians).
    let intent = |v: f64| -> String {
        match ci.domain {
            Domain::UnitInterval if v > 1.0 && v <= 100.0 => "; the values look like a \
                percentage: write the fraction (99.96 % is 0.9996) or give the unit (\"99.96 %\")"
                .to_string(),
            Domain::Incidence if v.abs() >= std::f64::consts::FRAC_PI_2 && v.abs() <= 360.0 => {
                format!("; a bare number is read in radians: for degrees write \"{v} deg\"")
            }
            _ => String::new(),
        }
    };
    match &q.law {
        Law::Constant(v) => {
            let below = if strict_lo { *v <= lo } else { *v < lo };
            let above = if strict_hi { *v >= hi } else { *v > hi };
            if below || above {
                return Err(table.error(
                    format!(
                        "`{name}` must be {what} (got {v} in SI units){}",
                        intent(*v)
                    ),
                    example,
                ));
            }
        }
        Law::Distributed(d) => {
            let below = if lo.is_finite() { d.cdf(lo) } else { 0.0 };
            let above = if hi.is_finite() { 1.0 - d.cdf(hi) } else { 0.0 };
            if below > OUTSIDE_TOLERANCE || above > OUTSIDE_TOLERANCE {
                let (side, p) = if below > OUTSIDE_TOLERANCE {
                    ("below", below)
                } else {
                    ("above", above)
                };
                let limit = if below > OUTSIDE_TOLERANCE { lo } else { hi };
                return Err(table.error(
                    format!(
                        "`{name}` must be {what}, but this {} distribution puts probability {p:.2e} {side} {limit} (SI); \
                         physically impossible values are refused, not clamped: use a bounded distribution or narrow it{}",
                        d.family_name(),
                        intent(d.mean())
                    ),
                    example,
                ));
            }
        }
    }
    Ok(())
}

/// The JSON Schema of one input table: a constant, or one object per distribution family (its
/// name or alias in `dist`, its parameters required).
pub(crate) fn input_schema() -> serde_json::Value {
    use serde_json::json;
    let quantity = json!({"$ref": "#/$defs/quantity"});
    let subsystems = Subsystem::ALL.map(Subsystem::name);
    let mut variants = vec![json!({
        "type": "object",
        "description": "a constant",
        "required": ["value"],
        "properties": {"value": quantity, "note": {"type": "string"}, "label": {"type": "string"}, "subsystem": {"enum": subsystems}},
        "additionalProperties": false,
    })];
    for spec in dist::families() {
        let (family, params, example) = (spec.name, spec.params, spec.example);
        let mut names: Vec<&str> = vec![family];
        names.extend(spec.aliases.iter().copied());
        let mut props = serde_json::Map::new();
        props.insert("dist".into(), json!({"enum": names}));
        props.insert("note".into(), json!({"type": "string"}));
        props.insert("label".into(), json!({"type": "string"}));
        props.insert("subsystem".into(), json!({ "enum": subsystems }));
        props.insert("best".into(), quantity.clone());
        let mut required = vec!["dist".to_string()];
        for (p, kind) in params.iter() {
            required.push((*p).to_string());
            props.insert(
                (*p).to_string(),
                match kind {
                    ParamKind::Quantity => quantity.clone(),
                    ParamKind::Pure => json!({"type": "number"}),
                    ParamKind::Quantities => {
                        json!({"type": "array", "items": quantity, "minItems": 2})
                    }
                },
            );
        }
        if spec.type_b_dof {
            props.insert("dof".into(), json!({"anyOf": [{"type": "number", "exclusiveMinimum": 0}, {"enum": ["inf", "infinite", "infinity"]}]}));
        }
        variants.push(json!({
            "type": "object",
            "description": example,
            "required": required,
            "properties": props,
            "additionalProperties": false,
        }));
    }
    json!({"oneOf": variants})
}

/// The `label` key of a table: words for an input or a measurand in prose, tables and figures
/// (one line, at most 120 characters).
pub(crate) fn read_label(
    table: &Table<'_, '_>,
    example: &str,
) -> Result<Option<String>, InputError> {
    let Some(e) = table.get("label") else {
        return Ok(None);
    };
    let text = e.string(example)?.trim();
    if text.is_empty() || text.chars().count() > 120 || text.chars().any(char::is_control) {
        return Err(e.error(
            "a label is one line of 1 to 120 characters, without control characters",
            example,
        ));
    }
    Ok(Some(text.to_string()))
}
