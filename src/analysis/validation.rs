//! The numerical tolerance of JCGM 101:2008 7.9.2 and the validation of the law of propagation
//! of uncertainty by the Monte Carlo method (JCGM 101 clause 8).

/// The numerical tolerance of a value z held to `ndig` significant digits: write z as
/// c x 10^l with c an integer of `ndig` digits; delta = 10^l / 2 (JCGM 101 7.9.2). With
/// l = floor(log10 |z|) - ndig + 1, corrected by one when rounding z to `ndig` digits carries
/// into a new digit (so that c = 10^ndig never occurs).
pub fn numerical_tolerance(z: f64, ndig: u32) -> f64 {
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

/// The comparison of an LPU coverage interval y +- U with the Monte Carlo probabilistically
/// symmetric interval [y_low, y_high] (JCGM 101 8.2).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Validation {
    /// The numerical tolerance delta.
    pub delta: f64,
    /// |y - U - y_low|.
    pub d_low: f64,
    /// |y + U - y_high|.
    pub d_high: f64,
    /// Whether both are at most delta.
    pub validated: bool,
}

/// Validate `y +- expanded` against the Monte Carlo interval `mc` with tolerance `delta`.
pub fn validate(y: f64, expanded: f64, mc: (f64, f64), delta: f64) -> Validation {
    let d_low = (y - expanded - mc.0).abs();
    let d_high = (y + expanded - mc.1).abs();
    Validation {
        delta,
        d_low,
        d_high,
        validated: d_low <= delta && d_high <= delta,
    }
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

    // JCGM 101 9.3 (REFERENCES 1.2): first-order GUF [1.1285, 1.3395] against MCM
    // [1.0834, 1.3825] gives d_low = 0.0451, d_high = 0.0430 > delta = 0.005: not validated.
    #[test]
    fn mass_example_first_order_not_validated() {
        let v = validate(1.2340, 1.2340 - 1.1285, (1.0834, 1.3825), 0.005);
        assert_relative_eq!(v.d_low, 0.0451, epsilon = 1e-12);
        assert_relative_eq!(v.d_high, 0.0430, epsilon = 1e-12);
        assert!(!v.validated);
    }
}
