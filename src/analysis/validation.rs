//! The validation of the law of propagation of uncertainty by the Monte Carlo method (JCGM 101
//! clause 8); the numerical tolerance it uses is `stats::numerical_tolerance`.

/// The comparison of an LPU coverage interval y +- U with the Monte Carlo probabilistically
/// symmetric interval [y_low, y_high] (JCGM 101 8.2).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Validation {
    /// The numerical tolerance delta.
    pub(crate) delta: f64,
    /// |y - U - y_low|.
    pub(crate) d_low: f64,
    /// |y + U - y_high|.
    pub(crate) d_high: f64,
    /// Whether both are at most delta.
    pub(crate) validated: bool,
}

/// Validate `y +- expanded` against the Monte Carlo interval `mc` with tolerance `delta`.
pub(crate) fn validate(y: f64, expanded: f64, mc: (f64, f64), delta: f64) -> Validation {
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
