//! What a built-in measurement chain is: the [`Chain`] trait (its spec, its evaluation over the
//! model's number type, its own noise terms and cross-checks), the description of its inputs and
//! measurands, and the pieces every chain shares (the mirror and beam inputs and their checks).
//! The chains themselves live in their own files and are listed once in `model/mod.rs`.

use crate::physics::beam::{aperture_radius_for_fraction, gaussian_aperture_fraction};
use crate::physics::noise::NoiseSettings;
use crate::physics::procedure::Procedure;
use crate::physics::response::{Instrument, settling_factor};
use crate::scalar::Scalar;
use crate::units::Dimension;

/// The physical range an input of a chain must stay in; a distribution with more than a
/// negligible probability outside it is refused at load.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Domain {
    /// Any real value.
    Any,
    /// Greater than zero.
    Positive,
    /// Zero or more.
    NonNegative,
    /// A fraction in [0, 1] (reflectance, transmittance).
    UnitInterval,
    /// An angle of incidence strictly between -90 deg and 90 deg.
    Incidence,
    /// A quality factor above 1/2 (an oscillator that still oscillates).
    QualityFactor,
    /// A whole count of at least 1, given as a constant.
    Count,
}

/// One input quantity of a chain.
#[derive(Clone, Copy, Debug)]
pub struct ChainInput {
    /// Name as written in `[inputs.NAME]`.
    pub name: &'static str,
    /// Its dimension; quantities with another dimension are refused.
    pub dimension: Dimension,
    /// The value used when the scenario leaves it out; `None` when it is required.
    pub default: Option<f64>,
    /// Where its values must lie.
    pub domain: Domain,
    /// What it is, in the trade's words.
    pub description: &'static str,
}

/// A chain input, written compactly in the chain files' tables.
pub(crate) const fn input(
    name: &'static str,
    dimension: Dimension,
    default: Option<f64>,
    domain: Domain,
    description: &'static str,
) -> ChainInput {
    ChainInput {
        name,
        dimension,
        default,
        domain,
        description,
    }
}

/// The mirror and beam inputs every chain takes, in this order: R, theta, w, a, T, Rd (the
/// terms of `physics::momentum::normal_force_factor` and `physics::beam`).
pub(crate) const MIRROR_AND_BEAM_INPUTS: [ChainInput; 6] = [
    input(
        "reflectance",
        Dimension::NONE,
        None,
        Domain::UnitInterval,
        "specular reflectance R of the mirror",
    ),
    input(
        "incidence",
        Dimension::ANGLE,
        None,
        Domain::Incidence,
        "angle of incidence theta on the mirror",
    ),
    input(
        "beam_radius",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        "1/e^2 radius w of the Gaussian beam at the mirror",
    ),
    input(
        "mirror_radius",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        "radius a of the (centred, circular) mirror",
    ),
    input(
        "transmittance",
        Dimension::NONE,
        Some(0.0),
        Domain::UnitInterval,
        "transmittance T of the mirror (default 0)",
    ),
    input(
        "diffuse_reflectance",
        Dimension::NONE,
        Some(0.0),
        Domain::UnitInterval,
        "diffuse (Lambertian) reflectance Rd (default 0)",
    ),
];

/// The heating of the sensed mirror, which every chain takes after the noise: the force the
/// balance shows per watt absorbed on the sensed mirror, and its first-order time constant.
pub const HEATING_INPUTS: [ChainInput; 2] = [
    input(
        "heating_force",
        Dimension::FORCE_PER_POWER,
        Some(0.0),
        Domain::Any,
        "force on the balance per watt absorbed on the sensed mirror (warm air and mount), default 0",
    ),
    input(
        "heating_time",
        Dimension::TIME,
        Some(0.0),
        Domain::Positive,
        "first-order time constant of the heating force (default: none, it follows at once)",
    ),
];

/// What a chain's evaluation needs besides its inputs: the planned measurement, whose
/// estimator sees the instrument's response (the settling factor).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ChainContext {
    /// The on/off procedure, if the scenario plans one.
    pub procedure: Option<Procedure>,
}

impl ChainContext {
    /// The settling factors of the radiation force and of the heating force (after its lag)
    /// for an instrument: the estimator applied to their responses to a unit on/off pattern
    /// (physics::response); both 1 without a procedure (a static reading).
    #[inline]
    pub fn settling<T: Scalar>(&self, instrument: Instrument<T>, heating_time: T) -> (T, T) {
        match &self.procedure {
            None => (T::cst(1.0), T::cst(1.0)),
            Some(p) => (
                settling_factor(p, &instrument.modes()),
                settling_factor(p, &instrument.modes_after_lag(heating_time)),
            ),
        }
    }
}

/// The input `[noise]` makes, which every chain adds to its force.
pub(crate) const NOISE_FORCE_INPUT: ChainInput = input(
    "noise_force",
    Dimension::FORCE,
    Some(0.0),
    Domain::Any,
    "zero-mean force noise left after averaging (made from [noise]), default 0",
);

/// The inputs of `parts` one after the other, as one table of N (checked when the table is
/// built, at compile time).
pub(crate) const fn join<const N: usize>(parts: &[&[ChainInput]]) -> [ChainInput; N] {
    let mut all = [NOISE_FORCE_INPUT; N];
    let (mut p, mut n) = (0, 0);
    while p < parts.len() {
        let mut i = 0;
        while i < parts[p].len() {
            all[n] = parts[p][i];
            n += 1;
            i += 1;
        }
        p += 1;
    }
    assert!(n == N, "join: the parts do not make N inputs");
    all
}

/// One measurand a chain gives.
#[derive(Clone, Copy, Debug)]
pub struct ChainMeasurand {
    /// Name in the report.
    pub name: &'static str,
    /// Its dimension (its SI unit is shown).
    pub dimension: Dimension,
    /// What it is.
    pub description: &'static str,
}

/// The inputs and measurands of a chain.
#[derive(Clone, Copy, Debug)]
pub struct ChainSpec {
    /// The name in `[model] chain = "..."`.
    pub name: &'static str,
    /// One line on what the chain computes.
    pub summary: &'static str,
    /// Inputs in the order [`Chain::evaluate`] takes them.
    pub inputs: &'static [ChainInput],
    /// Measurands in the order [`Chain::evaluate`] writes them.
    pub measurands: &'static [ChainMeasurand],
}

impl ChainSpec {
    /// Position of an input by name.
    pub(crate) fn input_index(&self, name: &str) -> Option<usize> {
        self.inputs.iter().position(|i| i.name == name)
    }
}

/// A problem a chain finds with a scenario, in plain data: the scenario reader turns it into an
/// error that points at the place in the file.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct ChainIssue {
    /// The dotted key the message is about (`inputs.reflectance`), or empty for the table asked
    /// about (`[noise]` for noise terms).
    pub(crate) key: &'static str,
    /// The inputs whose table to point at, the first one the scenario defines (empty: the table).
    pub(crate) inputs: &'static [&'static str],
    /// What is wrong.
    pub(crate) message: String,
    /// A valid way to write it.
    pub(crate) example: String,
}

impl ChainIssue {
    /// An issue with the table asked about (e.g. `[noise]`).
    pub(crate) fn table(message: impl Into<String>, example: impl Into<String>) -> ChainIssue {
        ChainIssue {
            key: "",
            inputs: &[],
            message: message.into(),
            example: example.into(),
        }
    }
}

/// What a chain can know of the scenario's inputs before a run: an input's estimate (or the
/// chain's default when the scenario leaves it out) and the upper end of its distribution (the
/// quantile at 1 - 1e-12, the value itself for a constant), by name.
pub(crate) struct InputValues<'a> {
    /// The estimate of an input by name (the chain default when the scenario leaves it out).
    pub(crate) estimate: &'a dyn Fn(&str) -> Option<f64>,
    /// The upper end of an input the scenario defines, by name.
    pub(crate) upper: &'a dyn Fn(&str) -> Option<f64>,
}

/// How a calibration chain forecasts its observed signal for a meter that does not exist yet:
/// the input it observes (`readout_shift`, `reading`) and the chain that predicts it from a
/// power (its signal twin, which gives a measurand of the same name).
#[derive(Clone, Copy, Debug)]
pub struct Forecastable {
    /// The observed input of this chain.
    pub observed: &'static str,
    /// The name of the signal twin.
    pub twin: &'static str,
}

/// A built-in measurement chain: a named model over `physics` functions.
pub(crate) trait Chain {
    /// Its name, inputs and measurands.
    const SPEC: ChainSpec;

    /// For a calibration chain, its observed input and signal twin (`[forecast]`).
    const FORECAST: Option<Forecastable> = None;

    /// Evaluate one trial: `args` in the order of `SPEC.inputs`, results into `out` in the order
    /// of `SPEC.measurands`, under the scenario's `context` (its procedure). A pure function,
    /// generic over the model's number type so that the law of propagation differentiates it
    /// exactly.
    fn evaluate<T: Scalar>(context: &ChainContext, args: &[T], out: &mut [T]);

    /// How the instrument follows a force, at the inputs' estimates (for the report's settling
    /// factor and ring-down check); by default at once.
    fn instrument(_inputs: &InputValues<'_>) -> Instrument<f64> {
        Instrument::Immediate
    }

    /// The white force-noise densities (N/sqrt(Hz)) of the chain's own instrument that `[noise]`
    /// describes (thermal noise of a pendulum, its readout), at the input estimates, each with
    /// its name. By default a chain has none of its own, and pendulum keys are refused.
    fn instrument_noise(
        settings: &NoiseSettings,
        _inputs: &InputValues<'_>,
    ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
        if settings.temperature.is_some() || settings.readout_angle_noise.is_some() {
            return Err(ChainIssue::table(
                "`temperature` and `readout_angle_noise` describe a torsion pendulum; for a balance give its `force_noise` density",
                "force_noise = \"2 nN\"   # per sqrt(Hz)",
            ));
        }
        Ok(Vec::new())
    }

    /// Checks across inputs at load (each input alone is checked against its `Domain`):
    /// warnings, or an issue that refuses the scenario. By default the mirror checks.
    fn cross_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
        mirror_checks(inputs)
    }
}

/// The checks of the mirror and beam inputs: R + T + Rd must not exceed 1 anywhere in their
/// distributions (the absorptance would be negative); a warning when more than 1 % of the
/// Gaussian beam misses the mirror.
pub(crate) fn mirror_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
    let upper = |n: &str| (inputs.upper)(n).unwrap_or(0.0);
    let (r, t, rd) = (
        upper("reflectance"),
        upper("transmittance"),
        upper("diffuse_reflectance"),
    );
    if r + t + rd > 1.0 + 1e-12 {
        return Err(ChainIssue {
            key: "inputs.reflectance",
            inputs: &["reflectance", "transmittance", "diffuse_reflectance"],
            message: format!(
                "reflectance + transmittance + diffuse_reflectance can exceed 1 (their upper ends are {r:.6} + {t:.6} + {rd:.6} = {:.6}), which would make the absorptance negative",
                r + t + rd
            ),
            example: "reflectance in [0.9990, 0.9995] with transmittance = 1e-4".into(),
        });
    }
    let mut warnings = Vec::new();
    let defined = |n: &str| (inputs.upper)(n).and((inputs.estimate)(n));
    if let (Some(a), Some(w)) = (defined("mirror_radius"), defined("beam_radius")) {
        let eta = gaussian_aperture_fraction(a, w);
        if eta < 0.99 {
            warnings.push(format!(
                "only {:.2} % of the beam falls on the mirror (mirror_radius {:.4} mm, beam_radius {:.4} mm): the chain corrects for the clipped fraction eta = 1 - exp(-2 a^2 / w^2), but light diffracted at the mirror edge is not modelled; a mirror radius of {:.3} mm or more catches 99 %",
                100.0 * eta,
                a * 1e3,
                w * 1e3,
                aperture_radius_for_fraction(0.99, w) * 1e3
            ));
        }
    }
    Ok(warnings)
}
