//! The weighing chains: `weighing-power` (calibration: power from a balance reading) and
//! `weighing-signal` (planning: the reading a power produces), inverse to each other.
//!
//! weighing-power, exactly:
//! F_a = m g / k - F_stray - F_noise (the force along the sensing axis the estimator sees);
//! per watt arriving at the first mirror the optical path gives the normal force F_n, the force
//! along the sensing axis F_x and the absorbed power P_abs (model::optics: the tilted footprint,
//! s and p reflectances, the fold, the medium, the tangential force on the tilted axis), so
//! F_a = P [sigma F_x + sigma_h h P_abs] and P = F_a / (sigma F_x + sigma_h h P_abs), F = P F_n,
//! with m the reading (equivalent mass), g the local gravity, k the calibration factor, beta the
//! angle between the mirror normal and the sensing axis (physics::balance), h the heating force
//! per watt absorbed and sigma, sigma_h the balance's settling factors under the procedure for
//! the radiation and the heating force (physics::response). `bounces` counts only the
//! reflections whose force acts on the weighed body.

use super::chain::{
    Chain, ChainContext, ChainInput, ChainMeasurand, ChainSpec, Domain, Forecastable,
    HEATING_INPUTS, InputValues, NOISE_FORCE_INPUT, Subsystem, input, join,
};
use super::optics::{
    OPTICS_INPUTS, OPTICS_REFLECTANCE_S, POLARISATION, per_watt as optics_per_watt,
};
use crate::physics::balance::{balance_reading, force_from_reading};
use crate::physics::constants::STANDARD_GRAVITY;
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
        Subsystem::Environment,
        "local acceleration of gravity g at the balance (default g_n = 9.80665 m/s^2)",
    ),
    input(
        "sensing_angle",
        Dimension::ANGLE,
        Some(0.0),
        Domain::Incidence,
        Subsystem::Balance,
        "angle beta between the mirror normal and the balance's sensing axis, positive in the direction that increases the incidence (default 0)",
    ),
    input(
        "calibration_factor",
        Dimension::NONE,
        Some(1.0),
        Domain::Positive,
        Subsystem::Balance,
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
        Subsystem::Mirror,
        "reflections whose force acts on the weighed body (default 1)",
    ),
    input(
        "stray_force",
        Dimension::FORCE,
        Some(0.0),
        Domain::Any,
        Subsystem::Environment,
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
    Subsystem::Balance,
    "first-order time constant of the balance (from [procedure] response_time or an input); default 0, at once",
);

/// How many inputs each weighing chain takes.
const N_INPUTS: usize = 22;
/// Where the optical inputs start.
const OPTICS: usize = 4;

const fn shared(first: ChainInput) -> [ChainInput; N_INPUTS] {
    join(&[
        &[first],
        &BALANCE_INPUTS,
        &OPTICS_INPUTS,
        &WEIGHED_BODY_INPUTS,
        &HEATING_INPUTS,
        &[RESPONSE_INPUT],
    ])
}

const WEIGHING_POWER_INPUTS: [ChainInput; N_INPUTS] = shared(input(
    "reading",
    Dimension::MASS,
    None,
    Domain::Any,
    Subsystem::Readout,
    "the balance reading with the beam on minus off, as an equivalent mass m",
));

const WEIGHING_SIGNAL_INPUTS: [ChainInput; N_INPUTS] = shared(input(
    "power",
    Dimension::POWER,
    None,
    Domain::NonNegative,
    Subsystem::Beam,
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
    alternatives: &[POLARISATION],
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
    alternatives: &[POLARISATION],
};

/// Per watt arriving at the first mirror: the normal radiation force F_n, and the force the
/// balance shows along its axis, sigma F_x + sigma_h h P_abs (model::optics for F_n, F_x and
/// P_abs; sigma, sigma_h the balance's settling factors under the procedure for the radiation
/// and the heating force; h the heating force per watt absorbed).
#[inline(always)]
fn per_watt<T: Scalar>(ctx: &ChainContext, a: &[T]) -> (T, T) {
    let (bounces, heating_force, heating_time, response_time) = (a[16], a[19], a[20], a[21]);
    // `bounces` is validated at load as a whole constant >= 1.
    let optics = optics_per_watt(
        &a[OPTICS..OPTICS + OPTICS_INPUTS.len()],
        bounces.value().round() as u32,
        Some(a[2]),
        ctx.given(OPTICS + OPTICS_REFLECTANCE_S),
        true,
    );
    let (sigma, sigma_h) = ctx.settling(Instrument::FirstOrder(response_time), heating_time);
    let axis = sigma * optics.axis + sigma_h * heating_force * optics.absorbed;
    (optics.normal, axis)
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
        let other = a[17] + a[18];
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
        let other = a[17] + a[18];
        let (normal, axis_per_watt) = per_watt(ctx, a);
        out[0] = balance_reading(a[0] * axis_per_watt, T::cst(0.0), other, a[1], a[3]);
        out[1] = a[0] * normal;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::constants::SPEED_OF_LIGHT;
    use crate::physics::procedure::{Pattern, Procedure};
    use approx::assert_relative_eq;

    /// Every input set, in spec order: reading or power, g, beta, k, R, theta, w, a, T, Rd,
    /// R_s, R_p, psi, tilt, n, R_fold, bounces, stray, noise, h, tau_h, tau.
    fn args(first: f64) -> [f64; N_INPUTS] {
        [
            first, 9.8123, 0.01, 1.0004, 0.99995, 0.05, 4e-3, 6e-3, 1e-5, 2e-5, 0.99996, 0.9993,
            0.4, 0.003, 1.00027, 0.99985, 14.0, 3e-9, 1e-10, 2e-9, 30.0, 2.5,
        ]
    }

    // The two directions are inverse to each other for every input, with R or with the s and p
    // reflectances, with and without a procedure, a response time and heating.
    #[test]
    fn round_trip_returns_the_power() {
        let procedure = Some(Procedure {
            pattern: Pattern::Alternate,
            cycles: 7,
            on_time: 60.0,
            off_time: 45.0,
            settle_time: 10.0,
        });
        let polarised = ["reflectance_s", "reflectance_p", "polarisation_angle"];
        for procedure in [None, procedure] {
            for names in [&[][..], &polarised[..]] {
                let ctx = ChainContext {
                    procedure,
                    given: 0,
                }
                .giving(&WEIGHING_SIGNAL, names);
                let mut sig = [0.0; 2];
                WeighingSignal::evaluate(&ctx, &args(1000.0), &mut sig);
                let mut back = [0.0; 2];
                WeighingPower::evaluate(&ctx, &args(sig[0]), &mut back);
                assert_relative_eq!(back[0], 1000.0, max_relative = 1e-12);
                assert_relative_eq!(back[1], sig[1], max_relative = 1e-12);
            }
        }
    }

    /// A perfect mirror of radius 1 m at normal incidence, standard gravity, nothing else.
    fn ideal(p: f64, n: f64) -> [f64; N_INPUTS] {
        let mut a = [0.0; N_INPUTS];
        (a[0], a[1], a[3], a[4], a[6], a[7]) = (p, STANDARD_GRAVITY, 1.0, 1.0, 1e-3, 1.0);
        (a[14], a[15], a[16]) = (1.0, 1.0, n);
        a
    }

    // REFERENCES 5: 1 kW on a perfect mirror at normal incidence reads 0.680 mg (2P/(c g_n));
    // 10 W with 33 ideal bounces gives 2.20 uN [calc].
    #[test]
    fn reference_values() {
        let mut out = [0.0; 2];
        WeighingSignal::evaluate(&ChainContext::default(), &ideal(1000.0, 1.0), &mut out);
        assert_relative_eq!(out[0], 0.680e-6, max_relative = 1e-3);
        WeighingSignal::evaluate(&ChainContext::default(), &ideal(10.0, 33.0), &mut out);
        assert_relative_eq!(out[1], 2.20e-6, max_relative = 1e-3);
    }

    // In air (n = 1.00027, REFERENCES 8) the reading is n times the vacuum reading [calc].
    #[test]
    fn medium_scales_the_reading() {
        let mut out = [0.0; 2];
        let mut a = ideal(1000.0, 1.0);
        WeighingSignal::evaluate(&ChainContext::default(), &a, &mut out);
        let vacuum = out[0];
        a[14] = 1.00027;
        WeighingSignal::evaluate(&ChainContext::default(), &a, &mut out);
        assert_relative_eq!(out[0] / vacuum, 1.00027, max_relative = 1e-15);
        assert_relative_eq!(
            vacuum,
            2.0 * 1000.0 / (SPEED_OF_LIGHT * STANDARD_GRAVITY),
            max_relative = 1e-14
        );
    }
}
