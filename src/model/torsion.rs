//! The torsion-balance chains: `torsion-power` (calibration: power from the reading) and
//! `torsion-signal` (planning: the reading a power produces). Each is the inverse of the other.
//!
//! torsion-power, exactly:
//! kappa = I (2 pi / T0)^2, divided by (1 - 1/(4 Q^2)) when Q is given, or the torsion constant
//! given directly (`torsion_constant`, calibrated statically: electrostatically or by a known
//! torque); either times (1 - anelastic_correction) for the static constant;
//! phi = atan(s / D) / 2;  F_m = kappa phi / L - F_stray - F_noise (what the estimator sees);
//! per watt arriving at the first mirror the optical path gives the normal force F_n, the force
//! along the arm's sensing direction F_x (the mirror normal, turned by `mirror_tilt`) and the
//! absorbed power P_abs (model::optics), so
//! F_m = P [sigma F_x + sigma_h h P_abs], P = F_m / (sigma F_x + sigma_h h P_abs), F = P F_n;
//! sigma and sigma_h the settling factors of the pendulum under the procedure for the radiation
//! and the heating force (1 without a procedure), h the heating force per watt absorbed. The
//! pendulum's period is T0, or 2 pi sqrt(I / kappa) when the torsion constant is given with I.
//! Sources: momentum transfer and the multi-bounce sum in `physics::momentum`, the tilted
//! footprint in `physics::clipping`, the balance and optical lever in `physics::torsion`.

use super::chain::{
    Alternative, Chain, ChainContext, ChainInput, ChainIssue, ChainMeasurand, ChainSpec, Domain,
    Forecastable, HEATING_INPUTS, InputValues, NOISE_FORCE_INPUT, Subsystem, input, join,
};
use super::optics::{OPTICS_INPUTS, OPTICS_REFLECTANCE_S, POLARISATION, optics_checks, per_watt};
use crate::physics::noise::{Damping, NoiseSettings, readout_torque_psd, thermal_torque_psd};
use crate::physics::response::Instrument;
use crate::physics::torsion::{
    damping_corrected, deflection_angle, optical_lever_angle, optical_lever_shift,
    torsion_constant_from_period,
};
use crate::scalar::Scalar;
use crate::units::Dimension;

/// The balance inputs of both torsion chains, before the mirror and beam.
const BALANCE_INPUTS: [ChainInput; 4] = [
    input(
        "scale_distance",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        Subsystem::Readout,
        "distance D from the pendulum mirror to the optical-lever scale",
    ),
    input(
        "free_period",
        Dimension::TIME,
        None,
        Domain::Positive,
        Subsystem::Balance,
        "free oscillation period T0 of the pendulum",
    ),
    input(
        "moment_of_inertia",
        Dimension::MOMENT_OF_INERTIA,
        None,
        Domain::Positive,
        Subsystem::Balance,
        "moment of inertia I of the pendulum about the fibre",
    ),
    input(
        "lever_arm",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        Subsystem::Balance,
        "lever arm L from the beam spot to the fibre axis",
    ),
];

/// The inputs of both torsion chains after the mirror and beam.
const PENDULUM_INPUTS: [ChainInput; 4] = [
    input(
        "bounces",
        Dimension::NONE,
        Some(1.0),
        Domain::Count,
        Subsystem::Mirror,
        "reflections whose force acts on the pendulum (default 1)",
    ),
    input(
        "quality_factor",
        Dimension::NONE,
        Some(f64::INFINITY),
        Domain::QualityFactor,
        Subsystem::Balance,
        "quality factor Q of the free oscillation (absent: undamped)",
    ),
    input(
        "stray_force",
        Dimension::FORCE,
        Some(0.0),
        Domain::Any,
        Subsystem::Environment,
        "force on the arm not due to radiation (gas, electrostatics), default 0",
    ),
    NOISE_FORCE_INPUT,
];

/// The fibre's anelasticity and the torsion constant given directly, after the heating inputs.
const FIBRE_INPUTS: [ChainInput; 2] = [
    input(
        "anelastic_correction",
        Dimension::NONE,
        Some(0.0),
        Domain::Any,
        Subsystem::Balance,
        "relative amount by which the static torsion constant is below the one the period gives (structural damping, about 1/(pi Q)); default 0",
    ),
    input(
        "torsion_constant",
        Dimension::TORSION_CONSTANT,
        None,
        Domain::Positive,
        Subsystem::Balance,
        "torsion constant kappa calibrated directly (electrostatically, by a known torque), instead of free_period with moment_of_inertia",
    ),
];

/// How many inputs each torsion chain takes.
const N_INPUTS: usize = 25;
/// Where the optical inputs start.
const OPTICS: usize = 5;
/// Index of `torsion_constant`.
const KAPPA: usize = 24;

const fn with_first(first: ChainInput) -> [ChainInput; N_INPUTS] {
    join(&[
        &[first],
        &BALANCE_INPUTS,
        &OPTICS_INPUTS,
        &PENDULUM_INPUTS,
        &HEATING_INPUTS,
        &FIBRE_INPUTS,
    ])
}

const TORSION_POWER_INPUTS: [ChainInput; N_INPUTS] = with_first(input(
    "readout_shift",
    Dimension::LENGTH,
    None,
    Domain::Any,
    Subsystem::Readout,
    "spot displacement s on the optical-lever scale",
));

const TORSION_SIGNAL_INPUTS: [ChainInput; N_INPUTS] = with_first(input(
    "power",
    Dimension::POWER,
    None,
    Domain::NonNegative,
    Subsystem::Beam,
    "laser power P arriving at the first mirror",
));

/// The torsion constant from the period and inertia, or given directly (with at most one of
/// them, for the period).
const DIRECT_KAPPA: Alternative = Alternative {
    usual: &["free_period", "moment_of_inertia"],
    instead: &["torsion_constant"],
    usual_kept: 1,
    why: "free_period and moment_of_inertia already fix the torsion constant kappa = I (2 pi / T0)^2; with torsion_constant give at most one of them (for the pendulum's period)",
};

const TORSION_POWER: ChainSpec = ChainSpec {
    name: "torsion-power",
    summary: "laser power from the deflection of a torsion pendulum read by an optical lever",
    inputs: &TORSION_POWER_INPUTS,
    measurands: &[
        ChainMeasurand {
            name: "power",
            dimension: Dimension::POWER,
            description: "laser power P",
        },
        ChainMeasurand {
            name: "force",
            dimension: Dimension::FORCE,
            description: "radiation force F on the mirror",
        },
        ChainMeasurand {
            name: "torsion_constant",
            dimension: Dimension::TORSION_CONSTANT,
            description: "torsion constant kappa of the pendulum",
        },
    ],
    alternatives: &[POLARISATION, DIRECT_KAPPA],
};

const TORSION_SIGNAL: ChainSpec = ChainSpec {
    name: "torsion-signal",
    summary: "the force, torque, deflection and optical-lever reading a given laser power produces",
    inputs: &TORSION_SIGNAL_INPUTS,
    measurands: &[
        ChainMeasurand {
            name: "force",
            dimension: Dimension::FORCE,
            description: "radiation force F on the mirror",
        },
        ChainMeasurand {
            name: "torque",
            dimension: Dimension::TORQUE,
            description: "torque (F + stray force) L about the fibre",
        },
        ChainMeasurand {
            name: "deflection_angle",
            dimension: Dimension::ANGLE,
            description: "static deflection phi of the pendulum",
        },
        ChainMeasurand {
            name: "readout_shift",
            dimension: Dimension::LENGTH,
            description: "spot displacement s on the optical-lever scale",
        },
    ],
    alternatives: &[POLARISATION, DIRECT_KAPPA],
};

/// The shared balance, mirror and beam quantities, in spec order after the first input.
struct Setup<T> {
    scale_distance: T,
    /// The static torsion constant.
    kappa: T,
    lever_arm: T,
    /// Newtons of radiation force along the mirror normal per watt arriving at the first mirror.
    force_per_watt: T,
    /// Newtons of radiation force along the arm's sensing direction per watt.
    axis_per_watt: T,
    /// Newtons of heating force per watt arriving at the first mirror.
    heat_per_watt: T,
    /// The settling factors of the radiation force and of the heating force.
    settling: (T, T),
    /// Stray force plus the noise force.
    stray_force: T,
}

impl<T: Scalar> Setup<T> {
    /// Newtons the estimator sees per watt: sigma F_x + sigma_h h P_abs.
    fn measured_per_watt(&self) -> T {
        self.settling.0 * self.axis_per_watt + self.settling.1 * self.heat_per_watt
    }
}

/// The static torsion constant (kappa = I (2 pi / T0)^2 with the damping correction when Q is
/// finite, or the one given, times 1 - anelastic_correction) and the pendulum's period (T0, or
/// 2 pi sqrt(I / kappa) when kappa is given; NaN when neither T0 nor I is: the load refuses a
/// procedure then).
#[inline(always)]
fn kappa_and_period<T: Scalar>(ctx: &ChainContext, a: &[T]) -> (T, T) {
    let (free_period, moment_of_inertia, quality_factor) = (a[2], a[3], a[18]);
    let anelastic = a[23];
    let (kappa, period) = if ctx.given(KAPPA) {
        let kappa = a[KAPPA];
        let period = if ctx.given(2) {
            free_period
        } else {
            T::cst(2.0 * std::f64::consts::PI) * (moment_of_inertia / kappa).sqrt()
        };
        (kappa, period)
    } else {
        let mut kappa = torsion_constant_from_period(moment_of_inertia, free_period);
        if quality_factor.value().is_finite() {
            kappa = damping_corrected(kappa, quality_factor);
        }
        (kappa, free_period)
    };
    (kappa * (T::cst(1.0) - anelastic), period)
}

/// The torsion constant, the optical path per watt (model::optics: along the arm's sensing
/// direction, the mirror normal turned by the tilt), the heating per watt h P_abs and the
/// pendulum's settling factors under the procedure (physics::response).
#[inline(always)]
fn setup<T: Scalar>(ctx: &ChainContext, a: &[T]) -> Setup<T> {
    let (scale_distance, lever_arm) = (a[1], a[4]);
    let (bounces, quality_factor) = (a[17], a[18]);
    let stray_force = a[19] + a[20];
    let (heating_force, heating_time) = (a[21], a[22]);
    let (kappa, period) = kappa_and_period(ctx, a);
    // `bounces` is validated at load as a whole constant >= 1.
    let optics = per_watt(
        &a[OPTICS..OPTICS + OPTICS_INPUTS.len()],
        bounces.value().round() as u32,
        None,
        ctx.given(OPTICS + OPTICS_REFLECTANCE_S),
        ctx.given(OPTICS + 9),
    );
    let settling = ctx.settling(
        Instrument::Oscillator {
            period,
            quality_factor,
        },
        heating_time,
    );
    Setup {
        scale_distance,
        kappa,
        lever_arm,
        force_per_watt: optics.normal,
        axis_per_watt: optics.axis,
        heat_per_watt: heating_force * optics.absorbed,
        settling,
        stray_force,
    }
}

/// `torsion-power`: laser power from the deflection of a torsion pendulum read by an optical
/// lever. Outputs: power, force, torsion_constant.
pub(crate) struct TorsionPower;

impl Chain for TorsionPower {
    const SPEC: ChainSpec = TORSION_POWER;
    const FORECAST: Option<Forecastable> = Some(Forecastable {
        observed: "readout_shift",
        twin: "torsion-signal",
    });

    fn instrument(inputs: &InputValues<'_>) -> Instrument<f64> {
        pendulum(inputs)
    }
    #[inline(always)]
    fn evaluate<T: Scalar>(ctx: &ChainContext, a: &[T], out: &mut [T]) {
        let readout_shift = a[0];
        let s = setup(ctx, a);
        let phi = optical_lever_angle(readout_shift, s.scale_distance);
        let measured = s.kappa * phi / s.lever_arm - s.stray_force;
        let power = measured / s.measured_per_watt();
        out[0] = power;
        out[1] = power * s.force_per_watt;
        out[2] = s.kappa;
    }

    fn cross_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
        pendulum_checks(inputs)
    }

    fn instrument_noise(
        settings: &NoiseSettings,
        inputs: &InputValues<'_>,
    ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
        pendulum_noise(settings, inputs)
    }
}

/// `torsion-signal`: the force, torque, deflection and optical-lever reading a given laser
/// power produces. Outputs: force, torque, deflection_angle, readout_shift.
pub(crate) struct TorsionSignal;

impl Chain for TorsionSignal {
    const SPEC: ChainSpec = TORSION_SIGNAL;

    fn instrument(inputs: &InputValues<'_>) -> Instrument<f64> {
        pendulum(inputs)
    }
    #[inline(always)]
    fn evaluate<T: Scalar>(ctx: &ChainContext, a: &[T], out: &mut [T]) {
        let power = a[0];
        let s = setup(ctx, a);
        let force = power * s.force_per_watt;
        let torque = (power * s.measured_per_watt() + s.stray_force) * s.lever_arm;
        let phi = deflection_angle(torque, s.kappa);
        out[0] = force;
        out[1] = torque;
        out[2] = phi;
        out[3] = optical_lever_shift(s.scale_distance, phi);
    }

    fn cross_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
        pendulum_checks(inputs)
    }

    fn instrument_noise(
        settings: &NoiseSettings,
        inputs: &InputValues<'_>,
    ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
        pendulum_noise(settings, inputs)
    }
}

/// The pendulum's static torsion constant (before anelasticity) and period at the estimates:
/// from the period and inertia, or the torsion constant given with either; None for what they
/// do not fix.
fn pendulum_constants(inputs: &InputValues<'_>) -> (Option<f64>, Option<f64>) {
    let est = |n: &str| (inputs.estimate)(n);
    let q = est("quality_factor").filter(|q| q.is_finite());
    let (period, inertia) = (est("free_period"), est("moment_of_inertia"));
    if let Some(kappa) = est("torsion_constant") {
        let period =
            period.or_else(|| inertia.map(|i| 2.0 * std::f64::consts::PI * (i / kappa).sqrt()));
        return (Some(kappa), period);
    }
    let kappa = match (inertia, period) {
        (Some(i), Some(t)) => {
            let k = torsion_constant_from_period(i, t);
            Some(q.map_or(k, |q| damping_corrected(k, q)))
        }
        _ => None,
    };
    (kappa, period)
}

/// The pendulum at the estimates: a damped oscillator of its period and quality factor.
fn pendulum(inputs: &InputValues<'_>) -> Instrument<f64> {
    Instrument::Oscillator {
        period: pendulum_constants(inputs).1.unwrap_or(f64::NAN),
        quality_factor: (inputs.estimate)("quality_factor").unwrap_or(f64::INFINITY),
    }
}

/// The optics checks, and a procedure needs the pendulum's period: with `torsion_constant`,
/// give `free_period` or `moment_of_inertia` too.
fn pendulum_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
    let warnings = optics_checks(inputs)?;
    if inputs.procedure && pendulum_constants(inputs).1.is_none() {
        return Err(ChainIssue {
            key: "inputs.torsion_constant",
            inputs: &["torsion_constant"],
            message: "the pendulum's response to the on/off procedure needs its period: with torsion_constant give free_period (measured) or moment_of_inertia (the period is then 2 pi sqrt(I / kappa))".into(),
            example: "[inputs.free_period]\nvalue = \"480 s\"".into(),
        });
    }
    Ok(warnings)
}

/// Example of a `[noise]` table for a pendulum, for messages.
const NOISE_EXAMPLE: &str = "[noise]\naveraging_time = \"100 s\"\ntemperature = \"295 K\"\ndamping = \"structural\"\nsignal_frequency = \"10 mHz\"\nreadout_angle_noise = \"2 nrad\"   # per sqrt(Hz)\nwavelength = \"1064 nm\"";

/// The pendulum's own white force-noise densities at the input estimates: thermal (Brownian)
/// torque noise sqrt(S_tau) / L (Saulson 1990, `physics::noise`) when `temperature` is given,
/// and the optical lever's angle noise as kappa theta_n / L.
fn pendulum_noise(
    settings: &NoiseSettings,
    inputs: &InputValues<'_>,
) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
    let lever = (inputs.estimate)("lever_arm").ok_or_else(|| {
        ChainIssue::table("the noise floor needs the input `lever_arm`", NOISE_EXAMPLE)
    })?;
    let q = (inputs.estimate)("quality_factor").filter(|q| q.is_finite());
    let (Some(kappa), Some(period)) = pendulum_constants(inputs) else {
        return Err(ChainIssue::table(
            "the pendulum's noise needs its torsion constant and period: give free_period with moment_of_inertia, or torsion_constant with one of them",
            NOISE_EXAMPLE,
        ));
    };
    let mut components = Vec::new();
    if let Some(temperature) = settings.temperature {
        let Some(q) = q else {
            return Err(ChainIssue::table(
                "the thermal noise of the pendulum needs its quality factor: give [inputs.quality_factor] (or leave out `temperature` to ignore thermal noise)",
                "[inputs.quality_factor]\nvalue = 3000",
            ));
        };
        let frequency = match (settings.damping, settings.signal_frequency) {
            (Damping::Structural, None) => {
                return Err(ChainIssue::table(
                    "structural damping makes the thermal noise depend on the signal frequency: give `signal_frequency` (the rate at which the beam is switched)",
                    "signal_frequency = \"10 mHz\"",
                ));
            }
            (_, f) => f.unwrap_or(0.0),
        };
        let psd = thermal_torque_psd(temperature, kappa, q, period, frequency, settings.damping);
        components.push(("thermal (pendulum)", psd.sqrt() / lever));
    }
    if let Some(theta) = settings.readout_angle_noise {
        components.push((
            "readout (optical lever)",
            readout_torque_psd(kappa, theta).sqrt() / lever,
        ));
    }
    Ok(components)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::constants::SPEED_OF_LIGHT;
    use crate::physics::procedure::{Pattern, Procedure};
    use approx::assert_relative_eq;

    /// Every input set, in spec order: readout_shift or power, D, T0, I, L, R, theta, w, a, T,
    /// Rd, R_s, R_p, psi, tilt, n, R_fold, bounces, Q, stray, noise, h, tau_h, anelastic, kappa.
    fn args(first: f64) -> [f64; N_INPUTS] {
        [
            first, 2.0, 240.0, 3.0e-4, 0.05, 0.9995, 0.2, 1.5e-3, 6e-3, 1e-4, 2e-4, 0.9997, 0.9990,
            0.3, -0.002, 1.00027, 0.9998, 3.0, 5000.0, 1e-12, 2e-13, 3e-9, 40.0, 1e-4, 2.1e-4,
        ]
    }

    // The two directions are inverse to each other (a round trip returns the power) for every
    // input: R or the s and p reflectances, the tilt, the medium, the fold, the torsion
    // constant from the period or given (with the inertia or the period), with and without a
    // procedure, heating and anelasticity.
    #[test]
    fn round_trip_returns_the_power() {
        let procedure = Some(Procedure {
            pattern: Pattern::Aba,
            cycles: 4,
            on_time: 600.0,
            off_time: 600.0,
            settle_time: 100.0,
        });
        let choices: [&[&str]; 5] = [
            &[],
            &["mirror_tilt"],
            &[
                "reflectance_s",
                "reflectance_p",
                "polarisation_angle",
                "mirror_tilt",
            ],
            &["torsion_constant", "moment_of_inertia"],
            &["torsion_constant", "free_period", "mirror_tilt"],
        ];
        for procedure in [None, procedure] {
            for names in choices {
                let ctx = ChainContext {
                    procedure,
                    given: 0,
                }
                .giving(&TORSION_SIGNAL, names);
                let mut signal = [0.0; 4];
                TorsionSignal::evaluate(&ctx, &args(25.0), &mut signal);
                let mut power = [0.0; 3];
                TorsionPower::evaluate(&ctx, &args(signal[3]), &mut power);
                assert_relative_eq!(power[0], 25.0, max_relative = 1e-12);
                assert_relative_eq!(power[1], signal[0], max_relative = 1e-12);
            }
        }
    }

    /// An ideal single mirror of radius 1 m at normal incidence, nothing else.
    fn ideal() -> [f64; N_INPUTS] {
        let mut a = [0.0; N_INPUTS];
        (a[0], a[1], a[2], a[3], a[4]) = (10.0, 1.0, 100.0, 1e-4, 0.05);
        (a[5], a[7], a[8]) = (1.0, 1e-3, 1.0);
        (a[15], a[16], a[17], a[18]) = (1.0, 1.0, 1.0, f64::INFINITY);
        a
    }

    // An ideal single mirror at normal incidence: F = 2 P / c, and the reading follows from
    // kappa = I (2 pi / T0)^2 by hand [calc].
    #[test]
    fn ideal_mirror_by_hand() {
        let mut out = [0.0; 4];
        TorsionSignal::evaluate(&ChainContext::default(), &ideal(), &mut out);
        let f = 2.0 * 10.0 / SPEED_OF_LIGHT;
        let kappa = 1e-4 * (2.0 * std::f64::consts::PI / 100.0f64).powi(2);
        assert_relative_eq!(out[0], f, max_relative = 1e-12);
        assert_relative_eq!(out[2], f * 0.05 / kappa, max_relative = 1e-12);
        assert_relative_eq!(out[3], (2.0 * f * 0.05 / kappa).tan(), max_relative = 1e-12);
    }

    // A torsion constant given directly replaces I (2 pi / T0)^2: the same kappa gives the same
    // reading, and the damping correction (for a period) no longer applies.
    #[test]
    fn torsion_constant_given() {
        let mut a = ideal();
        let mut from_period = [0.0; 4];
        TorsionSignal::evaluate(&ChainContext::default(), &a, &mut from_period);
        a[24] = 1e-4 * (2.0 * std::f64::consts::PI / 100.0f64).powi(2);
        a[18] = 50.0;
        let ctx = ChainContext::default().giving(&TORSION_SIGNAL, &["torsion_constant"]);
        let mut direct = [0.0; 4];
        TorsionSignal::evaluate(&ctx, &a, &mut direct);
        assert_relative_eq!(direct[2], from_period[2], max_relative = 1e-14);
    }
}
