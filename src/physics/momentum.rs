//! Momentum transfer from light to a flat surface: radiation force and pressure, and the sum
//! over several reflections.
//!
//! A beam of power P carries momentum flux P / c. A surface with specular reflectance R,
//! diffuse (Lambertian) reflectance Rd, transmittance T and absorptance A = 1 - R - Rd - T >= 0,
//! lit at incidence theta, takes the normal force Fn = (P/c)[(1 + R - T) cos theta + (2/3) Rd]
//! and the tangential force Ft = (P/c)(1 - R - T) sin theta (momentum conservation; the
//! Lambertian term from integrating cos-weighted emission over the hemisphere: the mean normal
//! momentum of Lambertian light is 2/3 of its total).

use super::constants::SPEED_OF_LIGHT;
use crate::scalar::Scalar;

/// The normal-force factor g = (1 + R - T) cos(theta) + (2/3) Rd, so that Fn = g P / c, from
/// the cosine of the angle of incidence (computed once by the caller).
#[inline(always)]
pub fn normal_force_factor<T: Scalar>(
    reflectance: T,
    transmittance: T,
    diffuse_reflectance: T,
    cos_incidence: T,
) -> T {
    (T::cst(1.0) + reflectance - transmittance) * cos_incidence
        + T::cst(2.0 / 3.0) * diffuse_reflectance
}

/// The tangential-force factor (1 - R - T) sin(theta), so that Ft = factor P / c, from the sine
/// of the angle of incidence.
#[inline(always)]
pub fn tangential_force_factor<T: Scalar>(reflectance: T, transmittance: T, sin_incidence: T) -> T {
    (T::cst(1.0) - reflectance - transmittance) * sin_incidence
}

/// Radiation force of a beam of power `p` on a surface with force factor `factor`:
/// F = factor P / c.
pub fn radiation_force<T: Scalar>(p: T, factor: T) -> T {
    p * factor / T::cst(SPEED_OF_LIGHT)
}

/// Radiation pressure on a specular surface lit with intensity `i` at incidence `theta`:
/// p = (I / c)(1 + R - T) cos^2(theta) (absorber I/c, perfect mirror at normal incidence 2I/c).
pub fn specular_pressure<T: Scalar>(i: T, reflectance: T, transmittance: T, incidence: T) -> T {
    let c = incidence.cos();
    i / T::cst(SPEED_OF_LIGHT) * (T::cst(1.0) + reflectance - transmittance) * c * c
}

/// The power-weighted number of reflections S = sum_{k=0}^{n-1} R^k = (1 - R^n)/(1 - R):
/// the k-th reflection sees the power P R^k. Evaluated by Horner's rule, exact at R = 1.
pub fn bounce_sum<T: Scalar>(reflectance: T, bounces: u32) -> T {
    let mut s = T::cst(1.0);
    for _ in 1..bounces {
        s = T::cst(1.0) + reflectance * s;
    }
    s
}

/// Normal force of a beam making `n` reflections, each at incidence `theta` on mirrors of
/// reflectance `R` that all sit on the sensed body and a perfect fold (no transmission, no
/// scatter): F = (P/c)(1 + R) cos(theta) (1 - R^n)/(1 - R).
pub fn multi_bounce_force<T: Scalar>(p: T, reflectance: T, incidence: T, bounces: u32) -> T {
    radiation_force(
        p,
        (T::cst(1.0) + reflectance) * incidence.cos() * bounce_sum(reflectance, bounces),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use std::f64::consts::FRAC_PI_4;

    // REFERENCES 5, force per watt [calc]: absorber 3.3356 nN/W, perfect mirror 6.6713 nN/W,
    // perfect mirror at 45 deg 4.7173 nN/W; 1 kW on a normal mirror 6.671 uN.
    #[test]
    fn force_per_watt() {
        let absorber = radiation_force(1.0, normal_force_factor(0.0, 0.0, 0.0, 1.0));
        assert_relative_eq!(absorber, 3.3356e-9, max_relative = 1e-4);
        let mirror = radiation_force(1.0, normal_force_factor(1.0, 0.0, 0.0, 1.0));
        assert_relative_eq!(mirror, 6.6713e-9, max_relative = 1e-4);
        let tilted = radiation_force(1.0, normal_force_factor(1.0, 0.0, 0.0, FRAC_PI_4.cos()));
        assert_relative_eq!(tilted, 4.7173e-9, max_relative = 1e-4);
        let kw = radiation_force(1000.0, normal_force_factor(1.0, 0.0, 0.0, 1.0));
        assert_relative_eq!(kw, 6.671e-6, max_relative = 1e-4);
    }

    // A perfect reflector takes twice the momentum of an absorber at normal incidence; a fully
    // transmitting window takes none [trade, momentum conservation]. A perfect mirror feels no
    // tangential force, an absorber at 45 deg feels sin(45 deg) P/c.
    #[test]
    fn limiting_surfaces() {
        let a = normal_force_factor(0.0, 0.0, 0.0, 1.0);
        let m = normal_force_factor(1.0, 0.0, 0.0, 1.0);
        assert_relative_eq!(m, 2.0 * a);
        assert_relative_eq!(normal_force_factor(0.0, 1.0, 0.0, 0.3f64.cos()), 0.0);
        assert_relative_eq!(tangential_force_factor(1.0, 0.0, FRAC_PI_4.sin()), 0.0);
        assert_relative_eq!(
            tangential_force_factor(0.0, 0.0, FRAC_PI_4.sin()),
            FRAC_PI_4.sin()
        );
        // A perfect Lambertian reflector: 1 + 2/3.
        assert_relative_eq!(normal_force_factor(0.0, 0.0, 1.0, 1.0), 5.0 / 3.0);
    }

    // REFERENCES 5, sunlight at 1 au on a normal mirror: 2 x 1361 / c = 9.080 uPa [calc].
    #[test]
    fn solar_pressure() {
        assert_relative_eq!(
            specular_pressure(1361.0, 1.0, 0.0, 0.0),
            9.080e-6,
            max_relative = 1e-3
        );
    }

    // REFERENCES 5, multi-bounce sums [calc]: (1 + R)(1 - R^N)/(1 - R): R = 0.9999, N = 14 ->
    // 27.980; R = 0.99995, N = 33 -> 65.946; R = 0.999, N = 14 -> 27.805; 10 W with 33 ideal
    // bounces -> 2.20 uN.
    #[test]
    fn multi_bounce_sums() {
        let total = |r: f64, n| (1.0 + r) * bounce_sum(r, n);
        assert_relative_eq!(total(0.9999, 14), 27.980, max_relative = 2e-5);
        assert_relative_eq!(total(0.99995, 33), 65.946, max_relative = 2e-5);
        assert_relative_eq!(total(0.999, 14), 27.805, max_relative = 2e-5);
        assert_relative_eq!(
            multi_bounce_force(10.0, 1.0, 0.0, 33),
            2.20e-6,
            max_relative = 2e-3
        );
        let r: f64 = 0.97;
        assert_relative_eq!(
            bounce_sum(r, 9),
            (1.0 - r.powi(9)) / (1.0 - r),
            max_relative = 1e-14
        );
    }
}
