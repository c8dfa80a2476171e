//! The numerical tolerance of JCGM 101:2008 7.9.2: how far a value held to `ndig` significant
//! digits may move.

/// The numerical tolerance of a value z held to `ndig` significant digits: write z as
/// c x 10^l with c an integer of `ndig` digits; delta = 10^l / 2 (JCGM 101 7.9.2). With
/// l = floor(log10 |z|) - ndig + 1, corrected by one when rounding z to `ndig` digits carries
/// into a new digit (so that c = 10^ndig never occurs).
pub(crate) fn numerical_tolerance(z: f64, ndig: u32) -> f64 {
    let z = z.abs();
    if !(z.is_finite() && z > 0.0) {
        return 0.0;
    }
    let digits = ndig as i32;
    let mut l = z.log10().floor() as i32 - digits + 1;
    let c = (z / 10f64.powi(l)).round();
    if c >= 10f64.powi(digits) {
        l += 1;
    }
    0.5 * 10f64.powi(l)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // The unit cases of REFERENCES 1.3 (JCGM 101 7.9.2 and its examples).
    #[test]
    fn tolerance_unit_cases() {
        assert_relative_eq!(numerical_tolerance(0.00035, 2), 5e-6);
        assert_relative_eq!(numerical_tolerance(0.01, 2), 5e-4);
        assert_relative_eq!(numerical_tolerance(2.0, 1), 0.5);
        assert_relative_eq!(numerical_tolerance(0.0754, 1), 0.005);
        // Rounding carries: 0.0996 to one digit is 0.1, so l = -1.
        assert_relative_eq!(numerical_tolerance(0.0996, 1), 0.05);
        // 0.0996 to two digits is 0.10 = 10 x 10^-2, so l = -2.
        assert_relative_eq!(numerical_tolerance(0.0996, 2), 5e-3);
    }
}
