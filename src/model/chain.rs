//! Built-in measurement chains: named models over the `physics` functions, with the inputs
//! they take and the measurands they give.
//!
//! To add a chain: describe its inputs and measurands in a `ChainSpec` constant, write its
//! evaluation as a pure generic function in its own file under `model/`, add a [`ChainKind`]
//! variant and wire it in [`ChainKind::spec`] and [`ChainKind::evaluate`].

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
pub const fn input(
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
pub const MIRROR_AND_BEAM_INPUTS: [ChainInput; 6] = [
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

/// The input `[noise]` makes, which every chain adds to its force.
pub const NOISE_FORCE_INPUT: ChainInput = input(
    "noise_force",
    Dimension::FORCE,
    Some(0.0),
    Domain::Any,
    "zero-mean force noise left after averaging (made from [noise]), default 0",
);

/// The inputs of `parts` one after the other, as one table of N (checked when the table is
/// built, at compile time).
pub const fn join<const N: usize>(parts: &[&[ChainInput]]) -> [ChainInput; N] {
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
    /// Inputs in the order [`ChainKind::evaluate`] takes them.
    pub inputs: &'static [ChainInput],
    /// Measurands in the order [`ChainKind::evaluate`] writes them.
    pub measurands: &'static [ChainMeasurand],
}

impl ChainSpec {
    /// Position of an input by name.
    pub fn input_index(&self, name: &str) -> Option<usize> {
        self.inputs.iter().position(|i| i.name == name)
    }
}

/// The built-in chains.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ChainKind {
    /// Calibration direction of a torsion balance: power from the optical-lever reading.
    TorsionPower,
    /// Planning direction of a torsion balance: the signals a given power produces.
    TorsionSignal,
    /// Calibration direction of a force balance: power from the reading.
    WeighingPower,
    /// Planning direction of a force balance: the reading a given power produces.
    WeighingSignal,
}

impl ChainKind {
    /// Every chain, in the order shown to users.
    pub const ALL: [ChainKind; 4] = [
        ChainKind::TorsionPower,
        ChainKind::TorsionSignal,
        ChainKind::WeighingPower,
        ChainKind::WeighingSignal,
    ];

    /// Look a chain up by its scenario name.
    pub fn from_name(name: &str) -> Option<ChainKind> {
        Self::ALL.into_iter().find(|c| c.spec().name == name)
    }

    /// Its inputs and measurands.
    pub fn spec(self) -> &'static ChainSpec {
        match self {
            ChainKind::TorsionPower => &super::torsion::TORSION_POWER,
            ChainKind::TorsionSignal => &super::torsion::TORSION_SIGNAL,
            ChainKind::WeighingPower => &super::weighing::WEIGHING_POWER,
            ChainKind::WeighingSignal => &super::weighing::WEIGHING_SIGNAL,
        }
    }

    /// Evaluate the chain on one trial: `args` in the order of `spec().inputs`, results into
    /// `out` in the order of `spec().measurands`.
    #[inline(always)]
    pub fn evaluate<T: Scalar>(self, args: &[T], out: &mut [T]) {
        match self {
            ChainKind::TorsionPower => super::torsion::torsion_power(args, out),
            ChainKind::TorsionSignal => super::torsion::torsion_signal(args, out),
            ChainKind::WeighingPower => super::weighing::weighing_power(args, out),
            ChainKind::WeighingSignal => super::weighing::weighing_signal(args, out),
        }
    }
}

impl ChainKind {
    /// The planning twin of a calibration chain (and back).
    pub fn twin(self) -> ChainKind {
        match self {
            ChainKind::TorsionPower => ChainKind::TorsionSignal,
            ChainKind::TorsionSignal => ChainKind::TorsionPower,
            ChainKind::WeighingPower => ChainKind::WeighingSignal,
            ChainKind::WeighingSignal => ChainKind::WeighingPower,
        }
    }

    /// Whether the chain is a torsion balance.
    pub fn is_torsion(self) -> bool {
        matches!(self, ChainKind::TorsionPower | ChainKind::TorsionSignal)
    }

    /// Whether the chain infers the power (calibration direction).
    pub fn is_calibration(self) -> bool {
        matches!(self, ChainKind::TorsionPower | ChainKind::WeighingPower)
    }
}
