//! Noise floors of a radiation-force measurement, as one-sided power spectral densities (PSD),
//! and the force resolution they allow after averaging.
//!
//! Convention: S(f) is one-sided (integrated over f >= 0 it gives the variance), in units^2/Hz;
//! amplitude spectral densities are sqrt(S). Averaging for a time t (a boxcar of equivalent noise
//! bandwidth 1/(2t)) leaves the standard deviation sqrt(S / (2 t)). Some authors quote
//! sqrt(S / t); radforce prints its convention with every noise floor.
//!
//! - Thermal (Brownian) torque noise of a torsion pendulum (Saulson, Phys. Rev. D 42, 2437,
//!   1990): viscous damping S_tau = 4 k_B T kappa / (Q omega_0); structural (internal) damping
//!   S_tau = 4 k_B T kappa / (Q omega) at the signal angular frequency omega.
//! - Readout noise: an angle noise density theta_n (rad/sqrt(Hz)) seen as the torque noise
//!   kappa theta_n, or a balance's force noise density directly.
//! - Photon shot noise of the radiation force: the photon number in a bandwidth fluctuates with
//!   relative one-sided density sqrt(2 h nu / P) (Poisson statistics of photons of energy
//!   h nu = h c / lambda), so S_F = F^2 2 h nu / P.

use super::constants::{BOLTZMANN, PLANCK, SPEED_OF_LIGHT};
use std::f64::consts::PI;

/// How the pendulum's loss behaves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Damping {
    /// Velocity damping (gas): loss angle proportional to frequency.
    Viscous,
    /// Internal friction of the fibre: frequency-independent loss angle.
    Structural,
}

/// The PSD convention, printed beside every noise floor.
pub const PSD_CONVENTION: &str = "one-sided power spectral densities; the resolution after averaging for a time t is sqrt(S_F / (2 t)) (some authors quote sqrt(S_F / t), which is larger by sqrt 2)";

/// What the `[noise]` table asked for.
#[derive(Clone, Debug, PartialEq)]
pub struct NoiseSettings {
    /// Averaging time t, s (white noise averaged without a procedure).
    pub averaging_time: Option<f64>,
    /// Temperature of the pendulum, K.
    pub temperature: Option<f64>,
    /// Damping model of the pendulum.
    pub damping: Damping,
    /// Signal frequency, Hz (structural damping).
    pub signal_frequency: Option<f64>,
    /// Optical-lever angle noise density, rad/sqrt(Hz).
    pub readout_angle_noise: Option<f64>,
    /// A balance's (or any added) white force noise density, N/sqrt(Hz).
    pub force_noise: Option<f64>,
    /// Flicker floor: the flat Allan deviation, N.
    pub flicker: Option<f64>,
    /// Random-walk coefficient K (sigma_A(tau) = K sqrt(tau / 3)), N/sqrt(s).
    pub random_walk: Option<f64>,
    /// Linear drift rate, N/s.
    pub drift: Option<f64>,
    /// Laser wavelength for the shot noise, m.
    pub wavelength: Option<f64>,
    /// Force resolution to report the averaging time for: absolute (N) or relative to the force.
    pub target: Target,
}

/// A force-resolution target.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Target {
    /// In newtons.
    Absolute(f64),
    /// A fraction of the radiation force.
    Relative(f64),
}

/// One-sided thermal torque noise PSD, (N m)^2/Hz, at temperature `temperature` (K) for a
/// pendulum of torsion constant `kappa` (N m/rad), quality factor `q`, free period `period` (s),
/// at the signal frequency `frequency` (Hz, used for structural damping).
pub fn thermal_torque_psd(
    temperature: f64,
    kappa: f64,
    q: f64,
    period: f64,
    frequency: f64,
    damping: Damping,
) -> f64 {
    let omega = match damping {
        Damping::Viscous => 2.0 * PI / period,
        Damping::Structural => 2.0 * PI * frequency,
    };
    4.0 * BOLTZMANN * temperature * kappa / (q * omega)
}

/// One-sided torque PSD from an angle readout noise density `angle_noise` (rad/sqrt(Hz)).
pub fn readout_torque_psd(kappa: f64, angle_noise: f64) -> f64 {
    (kappa * angle_noise).powi(2)
}

/// Photon energy h c / lambda, J.
pub fn photon_energy(wavelength: f64) -> f64 {
    PLANCK * SPEED_OF_LIGHT / wavelength
}

/// Relative one-sided amplitude density of the shot noise of a beam of power `power`:
/// sqrt(2 h nu / P), 1/sqrt(Hz).
pub fn shot_noise_relative_density(power: f64, wavelength: f64) -> f64 {
    (2.0 * photon_energy(wavelength) / power).sqrt()
}

/// One-sided force PSD of the photon shot noise on a radiation force `force` made by `power`.
pub fn shot_force_psd(force: f64, power: f64, wavelength: f64) -> f64 {
    (force * shot_noise_relative_density(power, wavelength)).powi(2)
}

/// Standard deviation after averaging a one-sided PSD `psd` for `time` seconds: sqrt(S/(2 t)).
pub fn resolution_after(psd: f64, time: f64) -> f64 {
    (psd / (2.0 * time)).sqrt()
}

/// Averaging time needed to bring a one-sided PSD `psd` down to the standard deviation
/// `resolution`: t = S / (2 sigma^2).
pub fn time_for_resolution(psd: f64, resolution: f64) -> f64 {
    psd / (2.0 * resolution * resolution)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // REFERENCES 5 [calc]: kappa = 1e-8 N m/rad, Q = 1e4 structural, 10 mHz, 295 K:
    // 5.1e-16 N m/sqrt(Hz).
    #[test]
    fn brownian_torque_noise() {
        let s = thermal_torque_psd(295.0, 1e-8, 1e4, 100.0, 0.01, Damping::Structural);
        assert_relative_eq!(s.sqrt(), 5.1e-16, max_relative = 1e-2);
        // Viscous damping at the resonance equals structural damping at the signal frequency
        // f0 = 1/T0 (both loss angles 1/Q there).
        let v = thermal_torque_psd(295.0, 1e-8, 1e4, 100.0, 0.0, Damping::Viscous);
        assert_relative_eq!(v, s, max_relative = 1e-12);
    }

    // REFERENCES 5 [calc]: photon shot noise on a normal mirror, relative sqrt(2 h nu / P):
    // 1 W at 1064 nm gives 6.1e-10 /sqrt(Hz).
    #[test]
    fn shot_noise() {
        assert_relative_eq!(
            shot_noise_relative_density(1.0, 1064e-9),
            6.1e-10,
            max_relative = 1e-2
        );
    }

    #[test]
    fn averaging_inverts() {
        let s = 4e-30;
        let t = time_for_resolution(s, resolution_after(s, 250.0));
        assert_relative_eq!(t, 250.0, max_relative = 1e-12);
    }
}
