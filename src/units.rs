//! Quantities with units: parsing "2.5 mm", "45 deg", "3 mW", "9.80665 m/s^2" into SI numbers,
//! the dimension of each unit, and the SI symbol shown beside a number.
//!
//! Every value in a scenario is converted to SI once, at load; from then on the library works in
//! SI only. Unit symbols and prefixes follow the SI Brochure (BIPM, 9th edition, 2019), tables 2,
//! 4, 7 and 8 (non-SI units accepted for use with the SI: degree, minute, hour). The plane angle is
//! tracked as a dimension of its own (the radian), so that "5 mm" cannot be given for an angle of
//! incidence; a bare number stands for the coherent SI unit of whatever the quantity is.

use std::fmt;

/// Number of tracked base dimensions: m, kg, s, A, K, mol, cd and the plane angle (rad).
const BASES: usize = 8;

/// A dimension as integer exponents of m, kg, s, A, K, mol, cd and rad.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Dimension(pub [i8; BASES]);

impl Dimension {
    /// A pure number (reflectance, quality factor, bounces, ratios).
    pub(crate) const NONE: Dimension = Dimension([0; BASES]);
    /// Length, metre.
    pub(crate) const LENGTH: Dimension = Dimension([1, 0, 0, 0, 0, 0, 0, 0]);
    /// Mass, kilogram.
    pub(crate) const MASS: Dimension = Dimension([0, 1, 0, 0, 0, 0, 0, 0]);
    /// Time, second.
    pub(crate) const TIME: Dimension = Dimension([0, 0, 1, 0, 0, 0, 0, 0]);
    /// Thermodynamic temperature, kelvin.
    pub(crate) const TEMPERATURE: Dimension = Dimension([0, 0, 0, 0, 1, 0, 0, 0]);
    /// Plane angle, radian.
    pub(crate) const ANGLE: Dimension = Dimension([0, 0, 0, 0, 0, 0, 0, 1]);
    /// Frequency, hertz = 1/s.
    pub(crate) const FREQUENCY: Dimension = Dimension([0, 0, -1, 0, 0, 0, 0, 0]);
    /// Force, newton = kg m s^-2.
    pub(crate) const FORCE: Dimension = Dimension([1, 1, -2, 0, 0, 0, 0, 0]);
    /// Power, watt = kg m^2 s^-3.
    pub(crate) const POWER: Dimension = Dimension([2, 1, -3, 0, 0, 0, 0, 0]);
    /// Torque, newton metre = kg m^2 s^-2.
    pub(crate) const TORQUE: Dimension = Dimension([2, 1, -2, 0, 0, 0, 0, 0]);
    /// Torsion constant, newton metre per radian.
    pub(crate) const TORSION_CONSTANT: Dimension = Dimension([2, 1, -2, 0, 0, 0, 0, -1]);
    /// Moment of inertia, kg m^2.
    pub(crate) const MOMENT_OF_INERTIA: Dimension = Dimension([2, 1, 0, 0, 0, 0, 0, 0]);
    /// Acceleration, m s^-2.
    pub(crate) const ACCELERATION: Dimension = Dimension([1, 0, -2, 0, 0, 0, 0, 0]);
    /// Force per power, N/W = s/m (a heating force per watt absorbed).
    pub(crate) const FORCE_PER_POWER: Dimension = Dimension([-1, 0, 1, 0, 0, 0, 0, 0]);

    /// This dimension divided by another (force per time, ...).
    pub(crate) fn per(self, other: Dimension) -> Dimension {
        self.mul(other, -1)
    }

    /// This dimension times another.
    pub(crate) fn times(self, other: Dimension) -> Dimension {
        self.mul(other, 1)
    }

    fn mul(self, other: Dimension, power: i8) -> Dimension {
        let mut out = self.0;
        for (o, e) in out.iter_mut().zip(other.0) {
            *o += e * power;
        }
        Dimension(out)
    }

    /// The coherent SI unit symbol of this dimension ("W", "N m/rad", "kg m^-3", "" for a pure
    /// number).
    pub(crate) fn si_symbol(self) -> String {
        for (dim, symbol) in NAMED_DIMENSIONS {
            if *dim == self {
                return (*symbol).to_string();
            }
        }
        // Positive powers first, then negative ones, each in the SI Brochure's order of base
        // units with the kilogram first (BIPM 2019, 2.3.4: "kg m^-3", "m s^-2").
        let names = ["kg", "m", "s", "A", "K", "mol", "cd", "rad"];
        let e = self.0;
        let exponents = [e[1], e[0], e[2], e[3], e[4], e[5], e[6], e[7]];
        let mut parts = Vec::new();
        for positive in [true, false] {
            for (name, e) in names.iter().zip(exponents) {
                match e {
                    0 => {}
                    _ if (e > 0) != positive => {}
                    1 => parts.push((*name).to_string()),
                    _ => parts.push(format!("{name}^{e}")),
                }
            }
        }
        parts.join(" ")
    }

    /// A short name of the kind of quantity, for error messages ("length", "angle").
    pub(crate) fn kind(self) -> String {
        for (dim, kind, _) in KINDS {
            if *dim == self {
                return (*kind).to_string();
            }
        }
        format!("a quantity in {}", self.si_symbol())
    }

    /// An example value of this dimension, for error messages.
    pub(crate) fn example(self) -> &'static str {
        for (dim, _, example) in KINDS {
            if *dim == self {
                return example;
            }
        }
        "1.5"
    }
}

const NAMED_DIMENSIONS: &[(Dimension, &str)] = &[
    (Dimension::NONE, ""),
    (Dimension::LENGTH, "m"),
    (Dimension::MASS, "kg"),
    (Dimension::TIME, "s"),
    (Dimension::TEMPERATURE, "K"),
    (Dimension::ANGLE, "rad"),
    (Dimension::FREQUENCY, "Hz"),
    (Dimension::FORCE, "N"),
    (Dimension::POWER, "W"),
    (Dimension::TORQUE, "N m"),
    (Dimension::TORSION_CONSTANT, "N m/rad"),
    (Dimension::MOMENT_OF_INERTIA, "kg m^2"),
    (Dimension::ACCELERATION, "m/s^2"),
    (Dimension::FORCE_PER_POWER, "N/W"),
];

const KINDS: &[(Dimension, &str, &str)] = &[
    (Dimension::NONE, "a pure number", "0.9995 or \"99.95 %\""),
    (Dimension::LENGTH, "a length", "\"2.5 mm\""),
    (Dimension::MASS, "a mass", "\"12.3 ug\""),
    (Dimension::TIME, "a time", "\"120 s\""),
    (Dimension::TEMPERATURE, "a temperature", "\"295 K\""),
    (Dimension::ANGLE, "an angle", "\"45 deg\" or \"5 urad\""),
    (Dimension::FREQUENCY, "a frequency", "\"10 mHz\""),
    (Dimension::FORCE, "a force", "\"1.2 uN\""),
    (Dimension::POWER, "a power", "\"3 mW\""),
    (Dimension::TORQUE, "a torque", "\"2 nN m\""),
    (
        Dimension::TORSION_CONSTANT,
        "a torsion constant",
        "\"1e-8 N m/rad\"",
    ),
    (
        Dimension::MOMENT_OF_INERTIA,
        "a moment of inertia",
        "\"2.4e-5 kg m^2\"",
    ),
    (
        Dimension::ACCELERATION,
        "an acceleration",
        "\"9.80665 m/s^2\"",
    ),
    (
        Dimension::FORCE_PER_POWER,
        "a force per power",
        "\"3.3 nN/W\"",
    ),
];

/// One unit symbol: its factor to the coherent SI unit, its dimension, and whether SI prefixes
/// may be attached to it.
struct Symbol {
    symbol: &'static str,
    factor: f64,
    dimension: Dimension,
    prefixable: bool,
}

const fn sym(symbol: &'static str, factor: f64, dimension: Dimension, prefixable: bool) -> Symbol {
    Symbol {
        symbol,
        factor,
        dimension,
        prefixable,
    }
}

/// Units known to the parser (SI Brochure 2019, tables 2, 4 and 8; "%" and "ppm" are
/// common practice for ratios).
const SYMBOLS: &[Symbol] = &[
    sym("m", 1.0, Dimension::LENGTH, true),
    // The kilogram is the SI base unit, but prefixes attach to the gram (SI Brochure 3).
    sym("g", 1e-3, Dimension::MASS, true),
    sym("s", 1.0, Dimension::TIME, true),
    sym("A", 1.0, Dimension([0, 0, 0, 1, 0, 0, 0, 0]), true),
    sym("K", 1.0, Dimension::TEMPERATURE, true),
    sym("mol", 1.0, Dimension([0, 0, 0, 0, 0, 1, 0, 0]), true),
    sym("cd", 1.0, Dimension([0, 0, 0, 0, 0, 0, 1, 0]), true),
    sym("rad", 1.0, Dimension::ANGLE, true),
    sym("Hz", 1.0, Dimension::FREQUENCY, true),
    sym("N", 1.0, Dimension::FORCE, true),
    sym("Pa", 1.0, Dimension([-1, 1, -2, 0, 0, 0, 0, 0]), true),
    sym("J", 1.0, Dimension::TORQUE, true),
    sym("W", 1.0, Dimension::POWER, true),
    sym("C", 1.0, Dimension([0, 0, 1, 1, 0, 0, 0, 0]), true),
    sym("V", 1.0, Dimension([2, 1, -3, -1, 0, 0, 0, 0]), true),
    sym("F", 1.0, Dimension([-2, -1, 4, 2, 0, 0, 0, 0]), true),
    sym("T", 1.0, Dimension([0, 1, -2, -1, 0, 0, 0, 0]), true),
    sym("deg", std::f64::consts::PI / 180.0, Dimension::ANGLE, false),
    sym("°", std::f64::consts::PI / 180.0, Dimension::ANGLE, false),
    sym(
        "arcmin",
        std::f64::consts::PI / 10800.0,
        Dimension::ANGLE,
        false,
    ),
    sym(
        "arcsec",
        std::f64::consts::PI / 648000.0,
        Dimension::ANGLE,
        false,
    ),
    sym("min", 60.0, Dimension::TIME, false),
    sym("h", 3600.0, Dimension::TIME, false),
    sym("%", 1e-2, Dimension::NONE, false),
    sym("ppm", 1e-6, Dimension::NONE, false),
];

/// SI prefixes (SI Brochure 2019, table 7), from quetta down to quecto.
const PREFIXES: &[(&str, f64)] = &[
    ("Q", 1e30),
    ("R", 1e27),
    ("Y", 1e24),
    ("Z", 1e21),
    ("E", 1e18),
    ("P", 1e15),
    ("T", 1e12),
    ("G", 1e9),
    ("M", 1e6),
    ("k", 1e3),
    ("h", 1e2),
    ("da", 1e1),
    ("d", 1e-1),
    ("c", 1e-2),
    ("m", 1e-3),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("n", 1e-9),
    ("p", 1e-12),
    ("f", 1e-15),
    ("a", 1e-18),
    ("z", 1e-21),
    ("y", 1e-24),
    ("r", 1e-27),
    ("q", 1e-30),
];

/// A parsed unit expression: the factor that converts a number in it to SI, and its dimension.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Unit {
    /// Multiply a number in this unit by `factor` to get the coherent SI value.
    pub(crate) factor: f64,
    /// The dimension of the unit.
    pub(crate) dimension: Dimension,
    /// The unit as the user wrote it (trimmed).
    pub(crate) text: String,
}

/// Why a quantity or unit could not be read.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum UnitError {
    /// The text does not start with a number.
    NoNumber,
    /// The number is NaN or infinite.
    NotFinite,
    /// A unit symbol that the parser does not know.
    UnknownSymbol(String),
    /// A malformed exponent such as "m^x".
    BadExponent(String),
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UnitError::NoNumber => write!(f, "expected a number, optionally followed by a unit"),
            UnitError::NotFinite => write!(f, "the number is not finite"),
            UnitError::UnknownSymbol(s) => write!(
                f,
                "unknown unit `{s}` (known: m g s A K mol cd rad Hz N Pa J W C V F T deg arcmin \
                 arcsec min h % ppm, with SI prefixes such as k m u n p)"
            ),
            UnitError::BadExponent(s) => write!(f, "bad exponent in `{s}` (write m^2 or s^-1)"),
        }
    }
}

impl std::error::Error for UnitError {}

fn lookup_symbol(token: &str) -> Option<(f64, Dimension)> {
    if let Some(s) = SYMBOLS.iter().find(|s| s.symbol == token) {
        return Some((s.factor, s.dimension));
    }
    for (prefix, factor) in PREFIXES {
        if let Some(rest) = token.strip_prefix(prefix)
            && let Some(s) = SYMBOLS.iter().find(|s| s.symbol == rest && s.prefixable)
        {
            return Some((factor * s.factor, s.dimension));
        }
    }
    None
}

fn parse_factor(token: &str) -> Result<(f64, Dimension), UnitError> {
    let (base, exponent) = if let Some((b, e)) = token.split_once('^') {
        let e: i8 = e
            .parse()
            .map_err(|_| UnitError::BadExponent(token.to_string()))?;
        (b, e)
    } else if let Some(b) = token.strip_suffix('²') {
        (b, 2)
    } else if let Some(b) = token.strip_suffix('³') {
        (b, 3)
    } else {
        (token, 1)
    };
    if base == "1" {
        return Ok((1.0, Dimension::NONE));
    }
    let (factor, dim) =
        lookup_symbol(base).ok_or_else(|| UnitError::UnknownSymbol(base.to_string()))?;
    Ok((
        factor.powi(i32::from(exponent)),
        Dimension::NONE.mul(dim, exponent),
    ))
}

/// Parse a unit expression such as "mW", "N m/rad", "m/s^2", "kg m^2", "W/m^2" or "" (a pure
/// number). Factors are separated by spaces, `*` or `·`; everything after a `/` is in the
/// denominator.
pub(crate) fn parse_unit(text: &str) -> Result<Unit, UnitError> {
    let trimmed = text.trim();
    let mut factor = 1.0;
    let mut dimension = Dimension::NONE;
    let (numerator, denominator) = match trimmed.split_once('/') {
        Some((n, d)) => (n, Some(d)),
        None => (trimmed, None),
    };
    let split = |s: &str| -> Vec<String> {
        s.split(|c: char| c.is_whitespace() || c == '*' || c == '·')
            .filter(|t| !t.is_empty())
            .map(str::to_string)
            .collect()
    };
    for token in split(numerator) {
        let (f, d) = parse_factor(&token)?;
        factor *= f;
        dimension = dimension.mul(d, 1);
    }
    if let Some(den) = denominator {
        for part in den.split('/') {
            for token in split(part) {
                let (f, d) = parse_factor(&token)?;
                factor /= f;
                dimension = dimension.mul(d, -1);
            }
        }
    }
    Ok(Unit {
        factor,
        dimension,
        text: trimmed.to_string(),
    })
}

/// A number read from text, converted to SI, with the unit it was written in.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Quantity {
    /// The value in coherent SI units.
    pub(crate) si: f64,
    /// The unit written after the number; `None` for a bare number.
    pub(crate) unit: Option<Unit>,
}

/// Split "2.5 mm" into the number and the rest; accepts signs, decimals, exponents and `_`
/// digit separators.
fn split_number(text: &str) -> Option<(f64, &str)> {
    let bytes = text.as_bytes();
    let mut i = 0;
    if i < bytes.len() && (bytes[i] == b'+' || bytes[i] == b'-') {
        i += 1;
    }
    let digits_start = i;
    while i < bytes.len() && (bytes[i].is_ascii_digit() || bytes[i] == b'_') {
        i += 1;
    }
    if i < bytes.len() && bytes[i] == b'.' {
        i += 1;
        while i < bytes.len() && (bytes[i].is_ascii_digit() || bytes[i] == b'_') {
            i += 1;
        }
    }
    if !text[digits_start..i].bytes().any(|b| b.is_ascii_digit()) {
        return None;
    }
    // An exponent only when "e" is followed by digits ("1e-3 m"), so that "1 eV" would not
    // be misread.
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        if j < bytes.len() && bytes[j].is_ascii_digit() {
            while j < bytes.len() && bytes[j].is_ascii_digit() {
                j += 1;
            }
            i = j;
        }
    }
    let number: String = text[..i].chars().filter(|c| *c != '_').collect();
    let value: f64 = number.parse().ok()?;
    Some((value, &text[i..]))
}

/// Parse a quantity written as text: "2.5 mm", "45 deg", "-0.1", "99.9 %", "1e-8 N m/rad".
///
/// The number is multiplied by the unit's factor: the result is the SI value
/// ("2.5 mm" -> 0.0025, "45 deg" -> pi/4).
pub(crate) fn parse_quantity(text: &str) -> Result<Quantity, UnitError> {
    let trimmed = text.trim();
    let lower = trimmed.to_ascii_lowercase();
    if lower.contains("nan") || lower.starts_with("inf") || lower.starts_with("+inf") {
        return Err(UnitError::NotFinite);
    }
    let (value, rest) = split_number(trimmed).ok_or(UnitError::NoNumber)?;
    if !value.is_finite() {
        return Err(UnitError::NotFinite);
    }
    let rest = rest.trim();
    if rest.is_empty() {
        return Ok(Quantity {
            si: value,
            unit: None,
        });
    }
    let unit = parse_unit(rest)?;
    let si = value * unit.factor;
    if !si.is_finite() {
        return Err(UnitError::NotFinite);
    }
    Ok(Quantity {
        si,
        unit: Some(unit),
    })
}

/// A unit to show numbers in: its symbol and the factor from SI (`shown = si / factor`).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct DisplayUnit {
    /// The symbol printed beside the number ("mW", "mg", "N m/rad").
    pub(crate) symbol: String,
    /// SI value divided by this factor gives the shown number.
    pub(crate) factor: f64,
}

impl DisplayUnit {
    /// The coherent SI unit of a dimension, unscaled.
    pub(crate) fn si(dimension: Dimension) -> DisplayUnit {
        DisplayUnit {
            symbol: dimension.si_symbol(),
            factor: 1.0,
        }
    }
}

/// The symbols that an SI prefix may be put in front of when a report picks a readable prefix,
/// with the factor of the unprefixed symbol (the gram for a mass).
fn prefix_base(symbol: &str) -> Option<(&'static str, f64)> {
    match symbol {
        "m" => Some(("m", 1.0)),
        "kg" => Some(("g", 1e-3)),
        "s" => Some(("s", 1.0)),
        "rad" => Some(("rad", 1.0)),
        "N" => Some(("N", 1.0)),
        "W" => Some(("W", 1.0)),
        "J" => Some(("J", 1.0)),
        "Pa" => Some(("Pa", 1.0)),
        "Hz" => Some(("Hz", 1.0)),
        "K" => Some(("K", 1.0)),
        "N m" => Some(("N m", 1.0)),
        "N m/rad" => Some(("N m/rad", 1.0)),
        "N/W" => Some(("N/W", 1.0)),
        _ => None,
    }
}

/// Pick an SI prefix (steps of 10^3, from pico to giga) so that `magnitude` (in SI) shows as a
/// number from 1 to 1000 in the unit of `dimension`. Units that take no prefix are returned
/// unscaled. This is common practice for readable tables.
pub(crate) fn readable_unit(dimension: Dimension, magnitude: f64) -> DisplayUnit {
    let si = dimension.si_symbol();
    let Some((base, base_factor)) = prefix_base(&si) else {
        return DisplayUnit::si(dimension);
    };
    const STEPS: &[(&str, f64)] = &[
        ("G", 1e9),
        ("M", 1e6),
        ("k", 1e3),
        ("", 1.0),
        ("m", 1e-3),
        ("u", 1e-6),
        ("n", 1e-9),
        ("p", 1e-12),
        ("f", 1e-15),
    ];
    let m = magnitude.abs() / base_factor;
    if m == 0.0 || !m.is_finite() {
        return DisplayUnit::si(dimension);
    }
    let mut chosen = STEPS[STEPS.len() - 1];
    for step in STEPS {
        if m >= step.1 * 0.9995 {
            chosen = *step;
            break;
        }
    }
    // Angles shown in rad up to 2 pi; kilo-radians make no sense.
    if base == "rad" && chosen.1 > 1.0 {
        chosen = ("", 1.0);
    }
    DisplayUnit {
        symbol: format!("{}{}", chosen.0, base),
        factor: chosen.1 * base_factor,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // Unit factors from the SI Brochure (BIPM 2019), tables 7 and 8.
    #[test]
    fn parses_common_quantities() {
        assert_relative_eq!(parse_quantity("2.5 mm").unwrap().si, 2.5e-3);
        assert_relative_eq!(
            parse_quantity("45 deg").unwrap().si,
            std::f64::consts::FRAC_PI_4
        );
        assert_relative_eq!(parse_quantity("3 mW").unwrap().si, 3e-3);
        assert_relative_eq!(parse_quantity("1.2 uN").unwrap().si, 1.2e-6);
        assert_relative_eq!(parse_quantity("5 urad").unwrap().si, 5e-6);
        assert_relative_eq!(parse_quantity("12.3 ug").unwrap().si, 12.3e-9);
        assert_relative_eq!(parse_quantity("1 kW").unwrap().si, 1e3);
        assert_relative_eq!(parse_quantity("100000 mg").unwrap().si, 0.1);
        assert_relative_eq!(parse_quantity("99.9 %").unwrap().si, 0.999);
        assert_relative_eq!(parse_quantity("1e-8 N m/rad").unwrap().si, 1e-8);
        assert_relative_eq!(parse_quantity("9.80665 m/s^2").unwrap().si, 9.80665);
        assert_relative_eq!(parse_quantity("1_000 W").unwrap().si, 1000.0);
        assert_relative_eq!(parse_quantity("-0.1").unwrap().si, -0.1);
        assert_relative_eq!(parse_quantity("2 min").unwrap().si, 120.0);
        assert_relative_eq!(parse_quantity("10 mHz").unwrap().si, 1e-2);
        assert_relative_eq!(parse_quantity("1064 nm").unwrap().si, 1.064e-6);
        assert_relative_eq!(
            parse_quantity("30 arcsec").unwrap().si,
            30.0 / 206_264.806_247
        );
        assert_relative_eq!(parse_quantity("2.4e-5 kg m^2").unwrap().si, 2.4e-5);
        assert_relative_eq!(parse_quantity("2 µm").unwrap().si, 2e-6);
    }

    #[test]
    fn dimensions_are_tracked() {
        let q = parse_quantity("1e-8 N m/rad").unwrap();
        assert_eq!(q.unit.unwrap().dimension, Dimension::TORSION_CONSTANT);
        let q = parse_quantity("3 mW").unwrap();
        assert_eq!(q.unit.unwrap().dimension, Dimension::POWER);
        let q = parse_quantity("1.2 kg/m^3").unwrap();
        // Written as the SI Brochure writes a density (BIPM 2019, 2.3.4).
        assert_eq!(q.unit.unwrap().dimension.si_symbol(), "kg m^-3");
        let q = parse_quantity("1 W/kg").unwrap();
        assert_eq!(q.unit.unwrap().dimension.si_symbol(), "m^2 s^-3");
        assert_eq!(
            parse_quantity("5 kg").unwrap().unit.unwrap().dimension,
            Dimension::MASS
        );
        assert!(parse_quantity("5").unwrap().unit.is_none());
    }

    #[test]
    fn refuses_what_is_not_a_quantity() {
        assert_eq!(parse_quantity("many"), Err(UnitError::NoNumber));
        assert_eq!(parse_quantity("nan"), Err(UnitError::NotFinite));
        assert_eq!(parse_quantity("inf W"), Err(UnitError::NotFinite));
        assert_eq!(parse_quantity("1e999"), Err(UnitError::NotFinite));
        assert!(matches!(
            parse_quantity("3 mQ"),
            Err(UnitError::UnknownSymbol(_))
        ));
        assert!(matches!(
            parse_quantity("3 m^x"),
            Err(UnitError::BadExponent(_))
        ));
    }

    #[test]
    fn readable_prefixes() {
        let u = readable_unit(Dimension::POWER, 3.2e-3);
        assert_eq!(u.symbol, "mW");
        assert_relative_eq!(u.factor, 1e-3);
        let u = readable_unit(Dimension::MASS, 6.8e-7);
        assert_eq!(u.symbol, "ug");
        assert_relative_eq!(u.factor, 1e-9);
        let u = readable_unit(Dimension::FORCE, 6.671e-6);
        assert_eq!(u.symbol, "uN");
        let u = readable_unit(Dimension::POWER, 1000.0);
        assert_eq!(u.symbol, "kW");
        let u = readable_unit(Dimension::NONE, 0.5);
        assert_eq!(u.symbol, "");
        assert_eq!(u.factor, 1.0);
    }
}
