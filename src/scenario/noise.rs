//! The `[noise]` table: the instrument's force noise as power-law terms (white, flicker, random
//! walk, drift; given as coefficients, or fitted to a measured Allan deviation in
//! `[noise.allan]` or to a recorded zero-signal series in `[noise.record]`), the chain's own
//! white terms (thermal and readout noise of a pendulum) and photon shot noise. Seen through the
//! measurement `[procedure]` (or, white noise only, averaged for `averaging_time`), it becomes
//! the input quantity `noise_force` ~ N(0, u) that the chain adds to its force, so it shows in
//! the budget, the ranking and the plan.
//!
//! Densities are one-sided (physics::noise); the terms and the estimator's exact variance are
//! defined in physics::power_law and physics::procedure. A drift the pattern does not cancel
//! enters as a bound: u^2 = (random part)^2 + bias^2 / 3.

use super::inputs::{InputQuantity, Law};
use super::load::Loader;
use super::record;
use super::study::Measurand;
use super::table::{Entry, Table};
use crate::dist::{Distribution, Normal};
use crate::error::InputError;
use crate::model::{ChainKind, InputValues, Model};
use crate::physics::constants::STANDARD_GRAVITY;
use crate::physics::noise::{
    Damping, NoiseSettings, Target, resolution_after, shot_force_psd, time_for_resolution,
};
use crate::physics::power_law::{AllanFit, NoiseModel};
use crate::physics::procedure::{EstimatorTerms, Procedure};
use crate::units::{Dimension, DisplayUnit, parse_quantity};
use toml::de::DeValue;

/// A measured Allan deviation point: tau (s), deviation (N), and its 68.3 % interval (N) when a
/// record gave it.
pub type MeasuredPoint = (f64, f64, Option<(f64, f64)>);

/// A measured Allan deviation the noise terms were fitted to.
#[derive(Clone, Debug, PartialEq)]
pub struct MeasuredNoise {
    /// Where it came from, in words (`[noise.allan]`, or the record file and its sampling).
    pub(crate) source: String,
    /// The points: tau (s), deviation (N), and its 68.3 % interval (N) when a record gave it.
    pub(crate) points: Vec<MeasuredPoint>,
    /// The fit of the four terms, with its residuals.
    pub(crate) fit: AllanFit,
}

/// The noise floor at the input estimates.
#[derive(Clone, Debug, PartialEq)]
pub struct NoiseFloor {
    /// Each white contribution as (name, force noise density in N/sqrt(Hz)).
    pub components: Vec<(&'static str, f64)>,
    /// Total white force noise density, N/sqrt(Hz).
    pub density: f64,
    /// The whole force noise: the white total with flicker, random walk and drift.
    pub model: NoiseModel,
    /// The measured Allan deviation it was fitted to, if any.
    pub measured: Option<MeasuredNoise>,
    /// Averaging time t, s (white noise without a procedure).
    pub averaging_time: Option<f64>,
    /// The standard deviation of `noise_force`, N.
    pub resolution: f64,
    /// The radiation force at the estimates, N.
    pub force: f64,
    /// The target force resolution, N.
    pub target_resolution: f64,
    /// The averaging time that reaches it, s (white noise without a procedure).
    pub time_for_target: Option<f64>,
    /// The procedure's estimator: its standard deviation by term and the drift bias, when
    /// there is a procedure.
    pub estimator: Option<EstimatorTerms>,
    /// What `[noise]` asked for (kept to compute the floor again at a sweep point).
    pub settings: NoiseSettings,
}

const EXAMPLE: &str = "[noise]\nforce_noise = \"20 nN/sqrt(Hz)\"\nflicker = \"2 nN\"\nrandom_walk = \"0.05 nN/sqrt(s)\"\ndrift = \"0.5 nN/min\"";

/// A suffix that makes a density per root hertz (or a coefficient per root second).
const PER_ROOT_HZ: &[&str] = &["/sqrt(Hz)", "/Hz^0.5", "/Hz^(1/2)", "/√Hz", "/rtHz"];
const PER_ROOT_S: &[&str] = &["/sqrt(s)", "/s^0.5", "/s^(1/2)", "/√s"];

/// How a noise quantity may be written.
struct NoiseKey<'k> {
    /// The dimension of the quantity itself (after any root suffix): a force, an angle.
    dimension: Dimension,
    /// Suffixes that may (or must, when `required`) follow the unit.
    roots: &'k [&'k str],
    required: bool,
    /// Whether a mass (or mass per time) may stand for a force, read through gravity.
    mass: bool,
    /// What it is, for messages.
    what: &'k str,
    /// A valid way to write it.
    example: &'k str,
}

/// Read a noise quantity: a positive number in SI, or a string with a unit of the key's
/// dimension after stripping a root suffix; a mass-equivalent reading (`"2 ug/sqrt(Hz)"`) is
/// turned into a force with the local gravity `g`.
fn noise_quantity(e: &Entry<'_, '_>, key: &NoiseKey<'_>, g: f64) -> Result<f64, InputError> {
    let v = match e.value.get_ref() {
        DeValue::String(s) => {
            let text = s.trim();
            let stripped = key
                .roots
                .iter()
                .find_map(|r| text.strip_suffix(r).map(str::trim_end));
            if key.required && stripped.is_none() {
                return Err(e.error(
                    format!(
                        "{} needs its unit per {}",
                        key.what,
                        key.roots[0].trim_start_matches('/')
                    ),
                    key.example,
                ));
            }
            let body = stripped.unwrap_or(text);
            let q = parse_quantity(body)
                .map_err(|err| e.error(format!("cannot read {text:?}: {err}"), key.example))?;
            match &q.unit {
                Some(u) if u.dimension == key.dimension => q.si,
                Some(u) if key.mass && mass_for(key.dimension) == Some(u.dimension) => q.si * g,
                Some(u) => {
                    return Err(e.error(
                        format!(
                            "{} is {}{}, not {}",
                            key.what,
                            key.dimension.kind(),
                            if key.mass {
                                " (or its mass equivalent)"
                            } else {
                                ""
                            },
                            u.dimension.kind()
                        ),
                        key.example,
                    ));
                }
                None => q.si,
            }
        }
        _ => e.number(key.example)?,
    };
    if v.is_nan() || v <= 0.0 || v.is_infinite() {
        return Err(e.error(
            format!("{} must be greater than 0 (got {v})", key.what),
            key.example,
        ));
    }
    Ok(v)
}

/// The mass dimension that stands for a force dimension (force x time^k -> mass x time^k).
fn mass_for(force_like: Dimension) -> Option<Dimension> {
    let f = Dimension::FORCE;
    // force^1 * rest: replace the force by a mass (divide by an acceleration).
    let rest = force_like.per(f);
    (rest.times(f) == force_like).then(|| rest.times(Dimension::MASS))
}

fn quantity(e: &Entry<'_, '_>, dim: Dimension, what: &str) -> Result<f64, InputError> {
    let example = format!("{} = {}", e.key, dim.example());
    noise_quantity(
        e,
        &NoiseKey {
            dimension: dim,
            roots: &[],
            required: false,
            mass: false,
            what,
            example: &example,
        },
        STANDARD_GRAVITY,
    )
}

const KEYS: &[&str] = &[
    "averaging_time",
    "temperature",
    "damping",
    "signal_frequency",
    "readout_angle_noise",
    "force_noise",
    "flicker",
    "random_walk",
    "drift",
    "wavelength",
    "target_resolution",
    "allan",
    "record",
];

/// Read `[noise]`; `g` turns mass-equivalent values into forces.
fn read_noise(t: &Table<'_, '_>, g: f64) -> Result<NoiseSettings, InputError> {
    t.check_keys(KEYS, EXAMPLE)?;
    let get = |k: &str, dim: Dimension, what: &str| -> Result<Option<f64>, InputError> {
        t.get(k).map(|e| quantity(&e, dim, what)).transpose()
    };
    let read = |k: &str, key: NoiseKey<'_>| -> Result<Option<f64>, InputError> {
        t.get(k).map(|e| noise_quantity(&e, &key, g)).transpose()
    };
    let damping = match t.get("damping") {
        None => Damping::Structural,
        Some(e) => match e.string("damping = \"structural\"")? {
            "structural" => Damping::Structural,
            "viscous" => Damping::Viscous,
            other => {
                return Err(e.error(format!("unknown damping {other:?}: \"structural\" (internal friction of the fibre) or \"viscous\" (gas)"), "damping = \"structural\""));
            }
        },
    };
    let target = match t.get("target_resolution") {
        None => Target::Relative(1e-3),
        Some(e) => {
            let example = "target_resolution = \"0.1 %\"   (of the force)   or   \"1 nN\"";
            let text = e.string(example)?;
            let q = parse_quantity(text)
                .map_err(|err| e.error(format!("cannot read {text:?}: {err}"), example))?;
            let v = match q.unit.as_ref().map(|u| u.dimension) {
                Some(d) if d == Dimension::FORCE => Target::Absolute(q.si),
                Some(d) if d == Dimension::NONE => Target::Relative(q.si),
                _ => return Err(e.error("a target resolution is a force (\"1 nN\") or a percentage of the force (\"0.1 %\")", example)),
            };
            if let Target::Absolute(x) | Target::Relative(x) = v
                && !(x > 0.0 && x.is_finite())
            {
                return Err(e.error("the target resolution must be greater than 0", example));
            }
            v
        }
    };
    Ok(NoiseSettings {
        averaging_time: get("averaging_time", Dimension::TIME, "the averaging time")?,
        temperature: get("temperature", Dimension::TEMPERATURE, "the temperature")?,
        damping,
        signal_frequency: get(
            "signal_frequency",
            Dimension::FREQUENCY,
            "the signal frequency",
        )?,
        readout_angle_noise: read(
            "readout_angle_noise",
            NoiseKey {
                dimension: Dimension::ANGLE,
                roots: PER_ROOT_HZ,
                required: false,
                mass: false,
                what: "the angle noise density",
                example: "readout_angle_noise = \"2 nrad/sqrt(Hz)\"",
            },
        )?,
        force_noise: read(
            "force_noise",
            NoiseKey {
                dimension: Dimension::FORCE,
                roots: PER_ROOT_HZ,
                required: false,
                mass: true,
                what: "the force noise density",
                example: "force_noise = \"20 nN/sqrt(Hz)\"   or   \"2 ug/sqrt(Hz)\"",
            },
        )?,
        flicker: read(
            "flicker",
            NoiseKey {
                dimension: Dimension::FORCE,
                roots: &[],
                required: false,
                mass: true,
                what: "the flicker floor (the flat Allan deviation)",
                example: "flicker = \"2 nN\"   or   \"0.2 ug\"",
            },
        )?,
        random_walk: read(
            "random_walk",
            NoiseKey {
                dimension: Dimension::FORCE,
                roots: PER_ROOT_S,
                required: true,
                mass: true,
                what: "the random-walk coefficient K (sigma_A(tau) = K sqrt(tau / 3))",
                example: "random_walk = \"0.05 nN/sqrt(s)\"",
            },
        )?,
        drift: read(
            "drift",
            NoiseKey {
                dimension: Dimension::FORCE.per(Dimension::TIME),
                roots: &[],
                required: false,
                mass: true,
                what: "the drift rate",
                example: "drift = \"0.5 nN/min\"   or   \"0.05 ug/h\"",
            },
        )?,
        wavelength: get("wavelength", Dimension::LENGTH, "the wavelength")?,
        target,
    })
}

/// What the floor is computed from besides the settings: the chain, its inputs' estimates, the
/// radiation force and the power at the estimates.
pub(crate) struct FloorInputs<'a> {
    pub(crate) chain: ChainKind,
    pub(crate) estimate: &'a dyn Fn(&str) -> Option<f64>,
    pub(crate) force: f64,
    pub(crate) power: f64,
    pub(crate) procedure: Option<&'a Procedure>,
}

/// The noise floor of a chain at the input estimates; an error message (the caller places it)
/// when the settings cannot make one.
pub(crate) fn noise_floor(
    s: &NoiseSettings,
    measured: Option<&MeasuredNoise>,
    at: &FloorInputs<'_>,
) -> Result<NoiseFloor, (String, String)> {
    let no_upper = |_: &str| None;
    let mut settings = s.clone();
    // Structural damping: the signal frequency is the rate the procedure switches the beam.
    if settings.signal_frequency.is_none()
        && let Some(p) = at.procedure
    {
        settings.signal_frequency = Some(1.0 / p.period());
    }
    let mut components = at
        .chain
        .instrument_noise(
            &settings,
            &InputValues {
                estimate: at.estimate,
                upper: &no_upper,
                lower: &no_upper,
                procedure: at.procedure.is_some(),
            },
        )
        .map_err(|issue| (issue.message, issue.example))?;
    if let Some(m) = measured {
        components.push(("measured (white term of the fit)", m.fit.model.white));
    }
    if let Some(f) = s.force_noise {
        components.push(("balance / force readout", f));
    }
    if let Some(lambda) = s.wavelength
        && at.power > 0.0
        && at.force.is_finite()
    {
        components.push((
            "photon shot noise",
            shot_force_psd(at.force.abs(), at.power, lambda).sqrt(),
        ));
    }
    let coloured = measured.map_or(
        NoiseModel {
            flicker: s.flicker.unwrap_or(0.0),
            random_walk: s.random_walk.unwrap_or(0.0),
            drift: s.drift.unwrap_or(0.0),
            white: 0.0,
        },
        |m| m.fit.model,
    );
    if components.is_empty() && coloured.flicker + coloured.random_walk + coloured.drift == 0.0 {
        return Err((
            "[noise] names no noise source: give force_noise, flicker, random_walk, drift, a measured [noise.allan] or [noise.record], or for a pendulum temperature or readout_angle_noise, or wavelength for the shot noise".into(),
            EXAMPLE.into(),
        ));
    }
    let psd: f64 = components.iter().map(|(_, d)| d * d).sum();
    let model = NoiseModel {
        white: psd.sqrt(),
        ..coloured
    };
    let target_resolution = match s.target {
        Target::Absolute(v) => v,
        Target::Relative(r) => r * at.force.abs(),
    };
    let (resolution, time_for_target, estimator) = match (at.procedure, s.averaging_time) {
        (Some(_), Some(_)) => {
            return Err((
                "`averaging_time` is for white noise averaged without a procedure; with [procedure] the phases and cycles set the averaging: remove `averaging_time`".into(),
                "[procedure]\npattern = \"ABA\"\ncycles = 10\non_time = \"60 s\"\noff_time = \"60 s\"\nsettle_time = \"10 s\"".into(),
            ));
        }
        (Some(p), None) => {
            let terms = p.estimator_terms(&model);
            (terms.standard_uncertainty(), None, Some(terms))
        }
        (None, Some(t)) => {
            if model.flicker + model.random_walk + model.drift > 0.0 {
                return Err((
                    "flicker, random walk and drift do not average down as sqrt(S / (2 t)): describe the measurement in [procedure] (phases, cycles, settling) instead of `averaging_time`".into(),
                    "[procedure]\npattern = \"ABA\"\ncycles = 10\non_time = \"60 s\"\noff_time = \"60 s\"\nsettle_time = \"10 s\"".into(),
                ));
            }
            (
                resolution_after(psd, t),
                Some(time_for_resolution(psd, target_resolution)),
                None,
            )
        }
        (None, None) => {
            return Err((
                "[noise] needs the measurement it is averaged over: a [procedure] (on/off phases), or for white noise only `averaging_time`".into(),
                "averaging_time = \"100 s\"   or   [procedure] ...".into(),
            ));
        }
    };
    if !(resolution > 0.0 && resolution.is_finite()) {
        return Err((
            format!(
                "the noise floor gives a force resolution of {resolution} N, which cannot be used"
            ),
            EXAMPLE.into(),
        ));
    }
    Ok(NoiseFloor {
        components,
        density: psd.sqrt(),
        model,
        measured: measured.cloned(),
        averaging_time: s.averaging_time,
        resolution,
        force: at.force,
        target_resolution,
        time_for_target,
        estimator,
        settings: s.clone(),
    })
}

/// The input quantity `noise_force` ~ N(0, sigma_F) made from a noise floor.
pub(crate) fn noise_input(
    floor: &NoiseFloor,
    span: std::ops::Range<usize>,
) -> Result<InputQuantity, String> {
    let normal = Normal::new(0.0, floor.resolution)
        .map_err(|e| format!("the noise floor is not usable: {e}"))?;
    Ok(InputQuantity {
        name: "noise_force".to_string(),
        law: Law::Distributed(Distribution::Normal(normal)),
        dof: None,
        dimension: Some(Dimension::FORCE),
        shown_unit: DisplayUnit::si(Dimension::FORCE),
        note: Some(match floor.estimator {
            Some(_) => "force noise of the on/off estimator, from [noise] and [procedure]".into(),
            None => "force noise left after averaging, from [noise]".into(),
        }),
        best: None,
        subsystem: crate::model::Subsystem::Noise,
        label: None,
        span,
    })
}

impl Loader<'_, '_> {
    /// `[noise]`, if the scenario has it: the noise floor at the input estimates and the input
    /// quantity `noise_force` it makes (the caller adds it and compiles the model again).
    pub(super) fn noise(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
        measurands: &[Measurand],
        model: &Model,
        procedure: Option<&Procedure>,
    ) -> Result<Option<(NoiseFloor, InputQuantity)>, InputError> {
        let Some(e) = self.top.get("noise") else {
            return Ok(None);
        };
        let t = e.table(EXAMPLE)?;
        let Some(kind) = chain else {
            return Err(t.error(
                "[noise] describes the balance of a built-in chain; with formulas only, model the noise as an input quantity",
                "[model]\nchain = \"torsion-power\"",
            ));
        };
        if let Some(q) = inputs.iter().find(|q| q.name == "noise_force") {
            return Err(self.src.error(
                &q.span,
                "inputs.noise_force",
                "`noise_force` is made from [noise]; remove one of the two",
                EXAMPLE,
            ));
        }
        let spec = kind.spec();
        let value_of = |name: &str| -> Option<f64> {
            if let Some(q) = inputs.iter().find(|q| q.name == name) {
                return Some(q.estimate());
            }
            spec.inputs
                .iter()
                .find(|c| c.name == name)
                .and_then(|c| c.default)
        };
        let g = value_of("local_gravity").unwrap_or(STANDARD_GRAVITY);
        let settings = read_noise(&t, g)?;
        let measured = self.measured_noise(&t, &settings, g)?;
        let estimates: Vec<f64> = inputs.iter().map(InputQuantity::estimate).collect();
        let values = model.evaluate_point::<f64>(&estimates);
        let measurand = |name: &str| {
            measurands
                .iter()
                .position(|m| m.name == name)
                .map(|i| values[i])
        };
        let force = measurand("force").unwrap_or(f64::NAN);
        let power = measurand("power")
            .or_else(|| value_of("power"))
            .unwrap_or(f64::NAN);
        let floor = noise_floor(
            &settings,
            measured.as_ref(),
            &FloorInputs {
                chain: kind,
                estimate: &value_of,
                force,
                power,
                procedure,
            },
        )
        .map_err(|(message, example)| t.error(message, example))?;
        let input = noise_input(&floor, t.span.clone()).map_err(|m| t.error(m, EXAMPLE))?;
        Ok(Some((floor, input)))
    }

    /// `[noise.allan]` or `[noise.record]`: a measured Allan deviation and the fit of the four
    /// terms to it (refused together with the coefficients they replace).
    fn measured_noise(
        &self,
        t: &Table<'_, '_>,
        s: &NoiseSettings,
        g: f64,
    ) -> Result<Option<MeasuredNoise>, InputError> {
        let allan = t.get("allan");
        let rec = t.get("record");
        let entry = match (&allan, &rec) {
            (None, None) => return Ok(None),
            (Some(_), Some(r)) => {
                return Err(r.error(
                    "give the measured noise once: [noise.allan] (an Allan deviation table) or [noise.record] (a recorded series)",
                    "[noise.record]\nfile = \"zero.csv\"\ntime = \"t\"\nvalue = \"reading\"\nunit = \"ug\"",
                ));
            }
            (Some(a), None) => a,
            (None, Some(r)) => r,
        };
        for (key, given) in [
            ("force_noise", s.force_noise),
            ("flicker", s.flicker),
            ("random_walk", s.random_walk),
            ("drift", s.drift),
        ] {
            if given.is_some() {
                return Err(t.get(key).map_or_else(
                    || t.error("", ""),
                    |e| {
                        e.error(
                            format!("`{key}` and a measured Allan deviation describe the same noise twice; the four terms are fitted to the measurement: remove `{key}`"),
                            "[noise.allan]\ntau = [1, 10, 100]\ndeviation = [\"14 nN\", \"4.5 nN\", \"1.6 nN\"]",
                        )
                    },
                ));
            }
        }
        let table = entry.table(
            "[noise.allan]\ntau = [1, 10, 100]\ndeviation = [\"14 nN\", \"4.5 nN\", \"1.6 nN\"]",
        )?;
        if allan.is_some() {
            record::allan_table(&table, g).map(Some)
        } else {
            record::recorded_series(self.src.file, &table, g).map(Some)
        }
    }
}
