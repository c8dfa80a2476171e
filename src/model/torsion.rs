//! The torsion-balance chains: `torsion-power` (calibration: power from the reading) and
//! `torsion-signal` (planning: the reading a power produces). Each is the inverse of the other.
//!
//! torsion-power, exactly:
//! kappa = I (2 pi / T0)^2, divided by (1 - 1/(4 Q^2)) when Q is given, times
//! (1 - anelastic_correction) for the static constant;
//! phi = atan(s / D) / 2;  F_m = kappa phi / L - F_stray - F_noise (what the estimator sees);
//! eta = 1 - exp(-2 a^2 / w^2);  g = (1 + R - T) cos(theta) + (2/3) Rd;  S = sum_{k<n} R^k;
//! F_m = P [sigma g eta S / c + sigma_h h (1 - R - T - Rd) eta S], so
//! P = F_m / (sigma g eta S / c + sigma_h h A eta S), the radiation force F = P g eta S / c;
//! sigma and sigma_h the settling factors of the pendulum under the procedure for the radiation
//! and the heating force (1 without a procedure), h the heating force per watt absorbed.
//! Sources: momentum transfer and the multi-bounce sum in `physics::momentum`, the Gaussian
//! clipping in `physics::beam`, the balance and optical lever in `physics::torsion`.

use super::chain::{
    Chain, ChainContext, ChainInput, ChainIssue, ChainMeasurand, ChainSpec, Domain, Forecastable,
    HEATING_INPUTS, InputValues, MIRROR_AND_BEAM_INPUTS, NOISE_FORCE_INPUT, input, join,
};
use crate::physics::beam::gaussian_aperture_fraction;
use crate::physics::constants::SPEED_OF_LIGHT;
use crate::physics::momentum::{bounce_sum, normal_force_factor};
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
        "distance D from the pendulum mirror to the optical-lever scale",
    ),
    input(
        "free_period",
        Dimension::TIME,
        None,
        Domain::Positive,
        "free oscillation period T0 of the pendulum",
    ),
    input(
        "moment_of_inertia",
        Dimension::MOMENT_OF_INERTIA,
        None,
        Domain::Positive,
        "moment of inertia I of the pendulum about the fibre",
    ),
    input(
        "lever_arm",
        Dimension::LENGTH,
        None,
        Domain::Positive,
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
        "reflections whose force acts on the pendulum (default 1)",
    ),
    input(
        "quality_factor",
        Dimension::NONE,
        Some(f64::INFINITY),
        Domain::QualityFactor,
        "quality factor Q of the free oscillation (absent: undamped)",
    ),
    input(
        "stray_force",
        Dimension::FORCE,
        Some(0.0),
        Domain::Any,
        "force on the arm not due to radiation (gas, electrostatics), default 0",
    ),
    NOISE_FORCE_INPUT,
];

/// The fibre's anelasticity, after the heating inputs.
const ANELASTIC_INPUT: ChainInput = input(
    "anelastic_correction",
    Dimension::NONE,
    Some(0.0),
    Domain::Any,
    "relative amount by which the static torsion constant is below the one the period gives (structural damping, about 1/(pi Q)); default 0",
);

const fn with_first(first: ChainInput) -> [ChainInput; 18] {
    join(&[
        &[first],
        &BALANCE_INPUTS,
        &MIRROR_AND_BEAM_INPUTS,
        &PENDULUM_INPUTS,
        &HEATING_INPUTS,
        &[ANELASTIC_INPUT],
    ])
}

const TORSION_POWER_INPUTS: [ChainInput; 18] = with_first(input(
    "readout_shift",
    Dimension::LENGTH,
    None,
    Domain::Any,
    "spot displacement s on the optical-lever scale",
));

const TORSION_SIGNAL_INPUTS: [ChainInput; 18] = with_first(input(
    "power",
    Dimension::POWER,
    None,
    Domain::NonNegative,
    "laser power P arriving at the first mirror",
));

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
};

/// The shared balance, mirror and beam quantities, in spec order after the first input.
struct Setup<T> {
    scale_distance: T,
    /// The static torsion constant.
    kappa: T,
    lever_arm: T,
    /// g eta S / c: newtons of radiation force per watt arriving at the first mirror.
    force_per_watt: T,
    /// Newtons of heating force per watt arriving at the first mirror.
    heat_per_watt: T,
    /// The settling factors of the radiation force and of the heating force.
    settling: (T, T),
    /// Stray force plus the noise force.
    stray_force: T,
}

impl<T: Scalar> Setup<T> {
    /// Newtons the estimator sees per watt: S F_rad + S_h F_heat per watt.
    fn measured_per_watt(&self) -> T {
        self.settling.0 * self.force_per_watt + self.settling.1 * self.heat_per_watt
    }
}

/// kappa = I (2 pi / T0)^2 (with the damping correction when Q is finite) times
/// (1 - anelastic_correction): the static constant; eta, g and S of the mirror and beam; the
/// heating per watt h A eta S (h the heating force per watt absorbed, A = 1 - R - T - Rd the
/// absorptance, each reflection's power P R^k); and the pendulum's settling factors under the
/// procedure (physics::response).
#[inline(always)]
fn setup<T: Scalar>(ctx: &ChainContext, a: &[T]) -> Setup<T> {
    let (scale_distance, free_period, moment_of_inertia, lever_arm) = (a[1], a[2], a[3], a[4]);
    let (reflectance, incidence, beam_radius, mirror_radius) = (a[5], a[6], a[7], a[8]);
    let (transmittance, diffuse, bounces, quality_factor) = (a[9], a[10], a[11], a[12]);
    let stray_force = a[13] + a[14];
    let (heating_force, heating_time, anelastic) = (a[15], a[16], a[17]);
    let mut kappa = torsion_constant_from_period(moment_of_inertia, free_period);
    if quality_factor.value().is_finite() {
        kappa = damping_corrected(kappa, quality_factor);
    }
    kappa = kappa * (T::cst(1.0) - anelastic);
    let eta = gaussian_aperture_fraction(mirror_radius, beam_radius);
    let g = normal_force_factor(reflectance, transmittance, diffuse, incidence);
    // `bounces` is validated at load as a whole constant >= 1.
    let s = bounce_sum(reflectance, bounces.value().round() as u32);
    let absorptance = T::cst(1.0) - reflectance - transmittance - diffuse;
    let settling = ctx.settling(
        Instrument::Oscillator {
            period: free_period,
            quality_factor,
        },
        heating_time,
    );
    Setup {
        scale_distance,
        kappa,
        lever_arm,
        force_per_watt: g * eta * s * T::cst(1.0 / SPEED_OF_LIGHT),
        heat_per_watt: heating_force * absorptance * eta * s,
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

    fn instrument_noise(
        settings: &NoiseSettings,
        inputs: &InputValues<'_>,
    ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
        pendulum_noise(settings, inputs)
    }
}

/// The pendulum at the estimates: a damped oscillator of its free period and quality factor.
fn pendulum(inputs: &InputValues<'_>) -> Instrument<f64> {
    Instrument::Oscillator {
        period: (inputs.estimate)("free_period").unwrap_or(f64::NAN),
        quality_factor: (inputs.estimate)("quality_factor").unwrap_or(f64::INFINITY),
    }
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
    let need = |n: &str| {
        (inputs.estimate)(n).ok_or_else(|| {
            ChainIssue::table(
                format!("the noise floor needs the input `{n}`"),
                NOISE_EXAMPLE,
            )
        })
    };
    let (inertia, period, lever) = (
        need("moment_of_inertia")?,
        need("free_period")?,
        need("lever_arm")?,
    );
    let q = (inputs.estimate)("quality_factor").filter(|q| q.is_finite());
    let mut kappa = torsion_constant_from_period(inertia, period);
    if let Some(q) = q {
        kappa = damping_corrected(kappa, q);
    }
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
    use approx::assert_relative_eq;

    fn args(first: f64) -> [f64; 18] {
        [
            first, 2.0, 240.0, 3.0e-4, 0.05, 0.9995, 0.2, 1.5e-3, 6e-3, 1e-4, 2e-4, 3.0, 5000.0,
            1e-12, 2e-13, 3e-9, 40.0, 1e-4,
        ]
    }

    // The two directions are inverse to each other (a round trip returns the power), also with
    // a procedure, heating and anelasticity.
    #[test]
    fn round_trip_returns_the_power() {
        for ctx in [
            ChainContext::default(),
            ChainContext {
                procedure: Some(crate::physics::procedure::Procedure {
                    pattern: crate::physics::procedure::Pattern::Aba,
                    cycles: 4,
                    on_time: 600.0,
                    off_time: 600.0,
                    settle_time: 100.0,
                }),
            },
        ] {
            let mut signal = [0.0; 4];
            TorsionSignal::evaluate(&ctx, &args(25.0), &mut signal);
            let mut power = [0.0; 3];
            TorsionPower::evaluate(&ctx, &args(signal[3]), &mut power);
            assert_relative_eq!(power[0], 25.0, max_relative = 1e-12);
            assert_relative_eq!(power[1], signal[0], max_relative = 1e-12);
        }
    }

    // An ideal single mirror at normal incidence: F = 2 P / c, and the reading follows from
    // kappa = I (2 pi / T0)^2 by hand [calc].
    #[test]
    fn ideal_mirror_by_hand() {
        let a = [
            10.0,
            1.0,
            100.0,
            1e-4,
            0.05,
            1.0,
            0.0,
            1e-3,
            1.0,
            0.0,
            0.0,
            1.0,
            f64::INFINITY,
            0.0,
            0.0,
            0.0,
            0.0,
            0.0,
        ];
        let mut out = [0.0; 4];
        TorsionSignal::evaluate(&ChainContext::default(), &a, &mut out);
        let f = 2.0 * 10.0 / SPEED_OF_LIGHT;
        let kappa = 1e-4 * (2.0 * std::f64::consts::PI / 100.0f64).powi(2);
        assert_relative_eq!(out[0], f, max_relative = 1e-12);
        assert_relative_eq!(out[2], f * 0.05 / kappa, max_relative = 1e-12);
        assert_relative_eq!(out[3], (2.0 * f * 0.05 / kappa).tan(), max_relative = 1e-12);
    }
}
