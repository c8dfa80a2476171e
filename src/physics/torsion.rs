//! The torsion balance and its optical-lever readout.
//!
//! A torque tau turns a pendulum of torsion constant kappa by the static angle phi = tau / kappa.
//! The torsion constant follows from the free period T0 and the moment of inertia I:
//! kappa = I (2 pi / T0)^2 (common practice; for a damped oscillator the observed period is
//! longer by 1 / sqrt(1 - 1/(4 Q^2)), so kappa = I (2 pi / T0)^2 / (1 - 1/(4 Q^2))). An optical
//! lever at distance D turns the angle into a spot displacement s = D tan(2 phi) (the reflected
//! beam turns by twice the mirror's angle).

use super::constants::BOLTZMANN;
use crate::scalar::Scalar;
use std::f64::consts::PI;

/// Torsion constant from the free period: kappa = I (2 pi / T0)^2, N m/rad.
pub fn torsion_constant_from_period<T: Scalar>(moment_of_inertia: T, free_period: T) -> T {
    moment_of_inertia * T::cst(4.0 * PI * PI) / (free_period * free_period)
}

/// Correct a torsion constant computed from a damped period for the damping of quality factor
/// Q: kappa / (1 - 1/(4 Q^2)), since omega_d^2 = omega_0^2 (1 - 1/(4 Q^2)) for viscous damping
/// (Landau and Lifshitz, Mechanics, 25).
pub fn damping_corrected<T: Scalar>(kappa: T, quality_factor: T) -> T {
    // kappa / (1 - 1/(4 Q^2)), written so that a huge Q (whose square overflows) gives kappa,
    // not inf/inf.
    let q2 = quality_factor * quality_factor;
    kappa / (T::cst(1.0) - T::cst(0.25) / q2)
}

/// Torsion constant of a round fibre of shear modulus G, radius r and length l:
/// kappa = pi G r^4 / (2 l) (Timoshenko, Strength of Materials, torsion of a circular shaft).
pub fn fibre_torsion_constant<T: Scalar>(shear_modulus: T, radius: T, length: T) -> T {
    T::cst(PI) * shear_modulus * radius.powi(4) / (T::cst(2.0) * length)
}

/// Static deflection phi = tau / kappa.
pub fn deflection_angle<T: Scalar>(torque: T, kappa: T) -> T {
    torque / kappa
}

/// Optical-lever spot displacement s = D tan(2 phi) on a scale at distance D.
pub fn optical_lever_shift<T: Scalar>(scale_distance: T, deflection: T) -> T {
    scale_distance * (T::cst(2.0) * deflection).tan()
}

/// The pendulum angle read by an optical lever: phi = atan(s / D) / 2 (inverse of
/// [`optical_lever_shift`]).
pub fn optical_lever_angle<T: Scalar>(readout_shift: T, scale_distance: T) -> T {
    (readout_shift / scale_distance).atan() * T::cst(0.5)
}

/// RMS thermal angle of a pendulum in equilibrium at temperature T: sqrt(kB T / kappa)
/// (equipartition).
pub fn thermal_angle_rms(temperature: f64, kappa: f64) -> f64 {
    (BOLTZMANN * temperature / kappa).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // REFERENCES 5, torsion balance [calc]: kappa = 1e-8 N m/rad at 295 K -> 6.4e-7 rad.
    #[test]
    fn thermal_angle() {
        assert_relative_eq!(thermal_angle_rms(295.0, 1e-8), 6.4e-7, max_relative = 1e-2);
    }

    // kappa = I omega^2 is the oscillator relation; the optical lever inverts exactly.
    #[test]
    fn period_and_lever() {
        let kappa = torsion_constant_from_period(2e-5, 2.0 * PI);
        assert_relative_eq!(kappa, 2e-5);
        let phi = 3.2e-4;
        let s = optical_lever_shift(1.5, phi);
        assert_relative_eq!(optical_lever_angle(s, 1.5), phi, max_relative = 1e-14);
        // Damping correction: Q -> infinity leaves kappa unchanged; Q = 1 adds 4/3.
        assert_relative_eq!(damping_corrected(1.0, 1e12), 1.0);
        assert_relative_eq!(damping_corrected(1.0, 1.0), 4.0 / 3.0);
        // A 25 um tungsten fibre (G = 161 GPa) 0.5 m long: pi G r^4 / 2l [calc].
        let k = fibre_torsion_constant(161e9, 12.5e-6, 0.5);
        assert_relative_eq!(
            k,
            PI * 161e9 * 12.5e-6f64.powi(4) / 1.0,
            max_relative = 1e-14
        );
    }
}
