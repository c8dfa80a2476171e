//! The force balance (weighing) under a mirror: a balance or mass comparator reports the force
//! along its sensing axis as an equivalent mass.
//!
//! With F_n the normal force on the mirror, beta the angle between the mirror normal and the
//! sensing axis, g the local gravity and k the balance's calibration factor (indication over true
//! value, 1 when ideal), the reading is m = k (F_n cos(beta) + F_other) / g (DESIGN: m =
//! F cos(beta) / g; common practice for the calibration factor).

use crate::scalar::Scalar;

/// Equivalent-mass reading of a balance for a force `force` along the mirror normal.
pub fn balance_reading<T: Scalar>(
    force: T,
    sensing_angle: T,
    other_force: T,
    local_gravity: T,
    calibration_factor: T,
) -> T {
    calibration_factor * (force * sensing_angle.cos() + other_force) / local_gravity
}

/// The normal force on the mirror from a balance reading (inverse of [`balance_reading`]).
pub fn force_from_reading<T: Scalar>(
    reading: T,
    sensing_angle: T,
    other_force: T,
    local_gravity: T,
    calibration_factor: T,
) -> T {
    (reading * local_gravity / calibration_factor - other_force) / sensing_angle.cos()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::constants::{SPEED_OF_LIGHT, STANDARD_GRAVITY};
    use approx::assert_relative_eq;

    // REFERENCES 5: 1 kW at normal incidence on a perfect mirror reads as 0.680 mg on a
    // balance, 2 P / (c g_n) [calc].
    #[test]
    fn one_kilowatt_weighs_0_680_mg() {
        let f = 2.0 * 1000.0 / SPEED_OF_LIGHT;
        let m = balance_reading(f, 0.0, 0.0, STANDARD_GRAVITY, 1.0);
        assert_relative_eq!(m, 0.680e-6, max_relative = 1e-3);
        assert_relative_eq!(
            m,
            2.0 * 1000.0 / (SPEED_OF_LIGHT * STANDARD_GRAVITY),
            max_relative = 1e-14
        );
        let back = force_from_reading(m, 0.0, 0.0, STANDARD_GRAVITY, 1.0);
        assert_relative_eq!(back, f, max_relative = 1e-14);
        let tilted = force_from_reading(
            balance_reading(f, 0.3, 1e-9, 9.81, 1.002),
            0.3,
            1e-9,
            9.81,
            1.002,
        );
        assert_relative_eq!(tilted, f, max_relative = 1e-12);
    }
}
