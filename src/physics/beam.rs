//! The laser beam: intensity of top-hat and Gaussian profiles and plane-wave field amplitudes
//! (the fraction a mirror catches is in `physics::clipping`).

use super::constants::{SPEED_OF_LIGHT, VACUUM_PERMITTIVITY};
use crate::scalar::Scalar;
use std::f64::consts::PI;

/// Mean intensity of a top-hat beam of power `p` and radius `r`: I = P / (pi r^2).
pub fn tophat_intensity<T: Scalar>(p: T, r: T) -> T {
    p / (T::cst(PI) * r * r)
}

/// Peak (on-axis) intensity of a Gaussian beam of power `p` and 1/e^2 radius `w`:
/// I0 = 2 P / (pi w^2) (Siegman, Lasers, 1986, ch. 17).
pub fn gaussian_peak_intensity<T: Scalar>(p: T, w: T) -> T {
    T::cst(2.0) * p / (T::cst(PI) * w * w)
}

/// Intensity of a Gaussian beam at distance `r` from its axis: I0 exp(-2 r^2 / w^2).
pub fn gaussian_intensity<T: Scalar>(p: T, w: T, r: T) -> T {
    gaussian_peak_intensity(p, w) * (T::cst(-2.0) * r * r / (w * w)).exp()
}

/// Peak electric field of a plane wave of intensity `i`: E0 = sqrt(2 I / (c eps0))
/// (Jackson, Classical Electrodynamics, 3rd ed., 7.1; I = c eps0 E0^2 / 2).
pub fn electric_field_amplitude<T: Scalar>(i: T) -> T {
    (T::cst(2.0) * i / T::cst(SPEED_OF_LIGHT * VACUUM_PERMITTIVITY)).sqrt()
}

/// Peak magnetic flux density of a plane wave of intensity `i`: B0 = E0 / c.
pub fn magnetic_field_amplitude<T: Scalar>(i: T) -> T {
    electric_field_amplitude(i) / T::cst(SPEED_OF_LIGHT)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // REFERENCES 5, Gaussian beam [calc]: 1 W, w = 1 mm: I0 = 6.37e5 W/m^2, E0 = 21.9 kV/m,
    // B0 = 7.31e-5 T (the fractions a mirror catches are checked in physics::clipping).
    #[test]
    fn gaussian_beam_values() {
        let i0 = gaussian_peak_intensity(1.0, 1e-3);
        assert_relative_eq!(i0, 6.366e5, max_relative = 1e-3);
        assert_relative_eq!(electric_field_amplitude(i0), 21.9e3, max_relative = 2e-3);
        assert_relative_eq!(magnetic_field_amplitude(i0), 7.31e-5, max_relative = 2e-3);
    }

    // REFERENCES 5, top-hat beam [calc]: 20 mW over 0.5 mm radius: I = 2.546e4 W/m^2,
    // E0 = 4380 V/m, B0 = 1.461e-5 T.
    #[test]
    fn tophat_beam_values() {
        let i = tophat_intensity(20e-3, 0.5e-3);
        assert_relative_eq!(i, 2.546e4, max_relative = 1e-3);
        assert_relative_eq!(electric_field_amplitude(i), 4380.0, max_relative = 1e-3);
        assert_relative_eq!(magnetic_field_amplitude(i), 1.461e-5, max_relative = 1e-3);
    }

    // The Gaussian profile integrates to the beam power: 2 pi int_0^inf I(r) r dr = P.
    #[test]
    fn gaussian_profile_integrates_to_power() {
        let (p, w) = (3.0, 2e-3);
        let n = 200_000;
        let rmax = 5.0 * w;
        let dr = rmax / n as f64;
        let total: f64 = (0..n)
            .map(|k| {
                let r = (k as f64 + 0.5) * dr;
                2.0 * PI * gaussian_intensity(p, w, r) * r * dr
            })
            .sum();
        assert_relative_eq!(total, p, max_relative = 1e-6);
    }
}
