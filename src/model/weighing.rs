//! The weighing chains: `weighing-power` (calibration: power from a balance reading) and
//! `weighing-signal` (planning: the reading a power produces), inverse to each other.
//!
//! weighing-power, exactly:
//! F_a = m g / k - F_stray - F_noise (the force along the sensing axis the estimator sees);
//! eta = 1 - exp(-2 a^2 / w^2);  G = (1 + R - T) cos(theta) + (2/3) Rd;  S = sum_{k<n} R^k;
//! F_a = P [sigma (G eta S / c) cos(beta) + sigma_h h (1 - R - T - Rd) eta S], so
//! P = F_a / (sigma (G eta S / c) cos(beta) + sigma_h h A eta S), F_n = P G eta S / c,
//! with m the reading (equivalent mass), g the local gravity, k the calibration factor, beta the
//! angle between the mirror normal and the sensing axis (physics::balance), and the mirror and
//! beam terms of the torsion chains (physics::momentum, physics::beam). `bounces` counts only the
//! reflections whose force acts on the weighed body.

use super::chain::{
    Chain, ChainContext, ChainInput, ChainMeasurand, ChainSpec, Domain, Forecastable,
    HEATING_INPUTS, InputValues, MIRROR_AND_BEAM_INPUTS, NOISE_FORCE_INPUT, input, join,
};
use crate::physics::balance::{balance_reading, force_from_reading};
use crate::physics::beam::gaussian_aperture_fraction;
use crate::physics::constants::{SPEED_OF_LIGHT, STANDARD_GRAVITY};
use crate::physics::momentum::{bounce_sum, normal_force_factor};
use crate::physics::response::Instrument;
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

/// The balance's own response, after the heating inputs.
const RESPONSE_INPUT: ChainInput = input(
    "response_time",
    Dimension::TIME,
    Some(0.0),
    Domain::NonNegative,
    "first-order time constant of the balance (from [procedure] response_time or an input); default 0, at once",
);

const fn shared(first: ChainInput) -> [ChainInput; 16] {
    join(&[
        &[first],
        &BALANCE_INPUTS,
        &MIRROR_AND_BEAM_INPUTS,
        &WEIGHED_BODY_INPUTS,
        &HEATING_INPUTS,
        &[RESPONSE_INPUT],
    ])
}

const WEIGHING_POWER_INPUTS: [ChainInput; 16] = shared(input(
    "reading",
    Dimension::MASS,
    None,
    Domain::Any,
    "the balance reading with the beam on minus off, as an equivalent mass m",
));

const WEIGHING_SIGNAL_INPUTS: [ChainInput; 16] = shared(input(
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

/// Per watt arriving at the first mirror: the normal radiation force G eta S / c, and the
/// force the balance shows along its axis, sigma (G eta S / c) cos(beta) + sigma_h h A eta S
/// (sigma, sigma_h the balance's settling factors under the procedure for the radiation and the
/// heating force; h the heating force per watt absorbed; A = 1 - R - T - Rd).
#[inline(always)]
fn per_watt<T: Scalar>(ctx: &ChainContext, a: &[T]) -> (T, T) {
    let (reflectance, incidence, beam_radius, mirror_radius) = (a[4], a[5], a[6], a[7]);
    let (transmittance, diffuse, bounces) = (a[8], a[9], a[10]);
    let (heating_force, heating_time, response_time) = (a[13], a[14], a[15]);
    let eta = gaussian_aperture_fraction(mirror_radius, beam_radius);
    let g = normal_force_factor(reflectance, transmittance, diffuse, incidence);
    // `bounces` is validated at load as a whole constant >= 1.
    let s = bounce_sum(reflectance, bounces.value().round() as u32);
    let normal = g * eta * s * T::cst(1.0 / SPEED_OF_LIGHT);
    let absorptance = T::cst(1.0) - reflectance - transmittance - diffuse;
    let (sigma, sigma_h) = ctx.settling(Instrument::FirstOrder(response_time), heating_time);
    let axis = sigma * normal * a[2].cos() + sigma_h * heating_force * absorptance * eta * s;
    (normal, axis)
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

    fn instrument(inputs: &InputValues<'_>) -> Instrument<f64> {
        Instrument::FirstOrder((inputs.estimate)("response_time").unwrap_or(0.0))
    }
    #[inline(always)]
    fn evaluate<T: Scalar>(ctx: &ChainContext, a: &[T], out: &mut [T]) {
        let other = a[11] + a[12];
        let axis = force_from_reading(a[0], T::cst(0.0), other, a[1], a[3]);
        let (normal, axis_per_watt) = per_watt(ctx, a);
        let power = axis / axis_per_watt;
        out[0] = power;
        out[1] = power * normal;
    }
}

/// `weighing-signal`: the balance reading and the force a given laser power produces. Outputs:
/// reading, force.
pub(crate) struct WeighingSignal;

impl Chain for WeighingSignal {
    const SPEC: ChainSpec = WEIGHING_SIGNAL;

    fn instrument(inputs: &InputValues<'_>) -> Instrument<f64> {
        Instrument::FirstOrder((inputs.estimate)("response_time").unwrap_or(0.0))
    }
    #[inline(always)]
    fn evaluate<T: Scalar>(ctx: &ChainContext, a: &[T], out: &mut [T]) {
        let other = a[11] + a[12];
        let (normal, axis_per_watt) = per_watt(ctx, a);
        out[0] = balance_reading(a[0] * axis_per_watt, T::cst(0.0), other, a[1], a[3]);
        out[1] = a[0] * normal;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn args(first: f64) -> [f64; 16] {
        [
            first, 9.8123, 0.01, 1.0004, 0.99995, 0.05, 4e-3, 15e-3, 1e-5, 2e-5, 14.0, 3e-9, 1e-10,
            2e-9, 30.0, 2.5,
        ]
    }

    // The two directions are inverse to each other, also with a procedure, a response time
    // and heating.
    #[test]
    fn round_trip_returns_the_power() {
        for ctx in [
            ChainContext::default(),
            ChainContext {
                procedure: Some(crate::physics::procedure::Procedure {
                    pattern: crate::physics::procedure::Pattern::Alternate,
                    cycles: 7,
                    on_time: 60.0,
                    off_time: 45.0,
                    settle_time: 10.0,
                }),
            },
        ] {
            let mut sig = [0.0; 2];
            WeighingSignal::evaluate(&ctx, &args(1000.0), &mut sig);
            let mut back = [0.0; 2];
            WeighingPower::evaluate(&ctx, &args(sig[0]), &mut back);
            assert_relative_eq!(back[0], 1000.0, max_relative = 1e-12);
            assert_relative_eq!(back[1], sig[1], max_relative = 1e-12);
        }
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
                0.0,
                0.0,
                0.0,
            ]
        };
        let mut out = [0.0; 2];
        WeighingSignal::evaluate(&ChainContext::default(), &ideal(1000.0, 1.0), &mut out);
        assert_relative_eq!(out[0], 0.680e-6, max_relative = 1e-3);
        WeighingSignal::evaluate(&ChainContext::default(), &ideal(10.0, 33.0), &mut out);
        assert_relative_eq!(out[1], 2.20e-6, max_relative = 1e-3);
    }
}
