//! The weighing chains: `weighing-power` (calibration: power from a balance reading) and
//! `weighing-signal` (planning: the reading a power produces), inverse to each other.
//!
//! weighing-power, exactly:
//! F_n = (m g / k - F_stray - F_noise) / cos(beta);
//! eta = 1 - exp(-2 a^2 / w^2);  G = (1 + R - T) cos(theta) + (2/3) Rd;  S = sum_{k<n} R^k;
//! P = F_n c / (G eta S),
//! with m the reading (equivalent mass), g the local gravity, k the calibration factor, beta the
//! angle between the mirror normal and the sensing axis (physics::balance), and the mirror and
//! beam terms of the torsion chains (physics::momentum, physics::beam). `bounces` counts only the
//! reflections whose force acts on the weighed body.

use super::chain::{
    Chain, Forecastable, ChainInput, ChainMeasurand, ChainSpec, Domain, MIRROR_AND_BEAM_INPUTS,
    NOISE_FORCE_INPUT, input, join,
};
use crate::physics::balance::{balance_reading, force_from_reading};
use crate::physics::beam::gaussian_aperture_fraction;
use crate::physics::constants::{SPEED_OF_LIGHT, STANDARD_GRAVITY};
use crate::physics::momentum::{bounce_sum, normal_force_factor};
use crate::scalar::Scalar;
use crate::units::Dimension;

/// The balance inputs of both weighing chains, before the mirror and beam.
const BALANCE_INPUTS: [ChainInput; 3] = [
    input(
        "local_gravity",
        Dimension::ACCELERATION,
        Some(STANDARD_GRAVITY),
        Domain::Positive,
        "local acceleration of gravity g at the balance (default g_n = 9.80665 m/s^2)",
    ),
    input(
        "sensing_angle",
        Dimension::ANGLE,
        Some(0.0),
        Domain::Incidence,
        "angle beta between the mirror normal and the balance's sensing axis (default 0)",
    ),
    input(
        "calibration_factor",
        Dimension::NONE,
        Some(1.0),
        Domain::Positive,
        "the balance's indication over the true value, k (default 1)",
    ),
];

/// The inputs of both weighing chains after the mirror and beam.
const WEIGHED_BODY_INPUTS: [ChainInput; 3] = [
    input(
        "bounces",
        Dimension::NONE,
        Some(1.0),
        Domain::Count,
        "reflections whose force acts on the weighed body (default 1)",
    ),
    input(
        "stray_force",
        Dimension::FORCE,
        Some(0.0),
        Domain::Any,
        "force along the sensing axis not due to radiation (convection, buoyancy drift), default 0",
    ),
    NOISE_FORCE_INPUT,
];

const fn shared(first: ChainInput) -> [ChainInput; 13] {
    join(&[
        &[first],
        &BALANCE_INPUTS,
        &MIRROR_AND_BEAM_INPUTS,
        &WEIGHED_BODY_INPUTS,
    ])
}

const WEIGHING_POWER_INPUTS: [ChainInput; 13] = shared(input(
    "reading",
    Dimension::MASS,
    None,
    Domain::Any,
    "the balance reading with the beam on minus off, as an equivalent mass m",
));

const WEIGHING_SIGNAL_INPUTS: [ChainInput; 13] = shared(input(
    "power",
    Dimension::POWER,
    None,
    Domain::NonNegative,
    "laser power P arriving at the first mirror",
));

const FORCE: ChainMeasurand = ChainMeasurand {
    name: "force",
    dimension: Dimension::FORCE,
    description: "radiation force F on the mirror, along its normal",
};

const WEIGHING_POWER: ChainSpec = ChainSpec {
    name: "weighing-power",
    summary: "laser power from the reading of a force balance or mass comparator under a mirror",
    inputs: &WEIGHING_POWER_INPUTS,
    measurands: &[
        ChainMeasurand {
            name: "power",
            dimension: Dimension::POWER,
            description: "laser power P",
        },
        FORCE,
    ],
};

const WEIGHING_SIGNAL: ChainSpec = ChainSpec {
    name: "weighing-signal",
    summary: "the balance reading and the force a given laser power produces",
    inputs: &WEIGHING_SIGNAL_INPUTS,
    measurands: &[
        ChainMeasurand {
            name: "reading",
            dimension: Dimension::MASS,
            description: "balance reading as an equivalent mass m",
        },
        FORCE,
    ],
};

/// G eta S / c: newtons of normal force per watt arriving at the first mirror.
#[inline(always)]
fn force_per_watt<T: Scalar>(a: &[T]) -> T {
    let (reflectance, incidence, beam_radius, mirror_radius) = (a[4], a[5], a[6], a[7]);
    let (transmittance, diffuse, bounces) = (a[8], a[9], a[10]);
    let eta = gaussian_aperture_fraction(mirror_radius, beam_radius);
    let g = normal_force_factor(reflectance, transmittance, diffuse, incidence);
    // `bounces` is validated at load as a whole constant >= 1.
    let s = bounce_sum(reflectance, bounces.value().round() as u32);
    g * eta * s * T::cst(1.0 / SPEED_OF_LIGHT)
}

/// `weighing-power`: laser power from the reading of a force balance or mass comparator under a
/// mirror. Outputs: power, force.
pub(crate) struct WeighingPower;

impl Chain for WeighingPower {
    const SPEC: ChainSpec = WEIGHING_POWER;
    const FORECAST: Option<Forecastable> = Some(Forecastable {
        observed: "reading",
        twin: "weighing-signal",
    });

    #[inline(always)]
    fn evaluate<T: Scalar>(a: &[T], out: &mut [T]) {
        let other = a[11] + a[12];
        let force = force_from_reading(a[0], a[2], other, a[1], a[3]);
        out[0] = force / force_per_watt(a);
        out[1] = force;
    }
}

/// `weighing-signal`: the balance reading and the force a given laser power produces. Outputs:
/// reading, force.
pub(crate) struct WeighingSignal;

impl Chain for WeighingSignal {
    const SPEC: ChainSpec = WEIGHING_SIGNAL;

    #[inline(always)]
    fn evaluate<T: Scalar>(a: &[T], out: &mut [T]) {
        let other = a[11] + a[12];
        let force = a[0] * force_per_watt(a);
        out[0] = balance_reading(force, a[2], other, a[1], a[3]);
        out[1] = force;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn args(first: f64) -> [f64; 13] {
        [
            first, 9.8123, 0.01, 1.0004, 0.99995, 0.05, 4e-3, 15e-3, 1e-5, 2e-5, 14.0, 3e-9, 1e-10,
        ]
    }

    // The two directions are inverse to each other.
    #[test]
    fn round_trip_returns_the_power() {
        let mut sig = [0.0; 2];
        WeighingSignal::evaluate(&args(1000.0), &mut sig);
        let mut back = [0.0; 2];
        WeighingPower::evaluate(&args(sig[0]), &mut back);
        assert_relative_eq!(back[0], 1000.0, max_relative = 1e-12);
        assert_relative_eq!(back[1], sig[1], max_relative = 1e-12);
    }

    // REFERENCES 5: 1 kW on a perfect mirror at normal incidence reads 0.680 mg (2P/(c g_n));
    // 10 W with 33 ideal bounces gives 2.20 uN [calc].
    #[test]
    fn reference_values() {
        let ideal = |p: f64, n: f64| {
            [
                p,
                STANDARD_GRAVITY,
                0.0,
                1.0,
                1.0,
                0.0,
                1e-3,
                1.0,
                0.0,
                0.0,
                n,
                0.0,
                0.0,
            ]
        };
        let mut out = [0.0; 2];
        WeighingSignal::evaluate(&ideal(1000.0, 1.0), &mut out);
        assert_relative_eq!(out[0], 0.680e-6, max_relative = 1e-3);
        WeighingSignal::evaluate(&ideal(10.0, 33.0), &mut out);
        assert_relative_eq!(out[1], 2.20e-6, max_relative = 1e-3);
    }
}
