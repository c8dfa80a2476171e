//! The standard normal distribution function and its inverse, shared by several families.
//!
//! Phi(x) = erfc(-x / sqrt 2) / 2 and Phi^-1(p) = -sqrt 2 erfc^-1(2 p) (Abramowitz & Stegun
//! 7.1.2 and 26.2.29), with statrs's `erfc` and `erfc_inv`.

use statrs::function::erf::{erfc, erfc_inv};
use std::f64::consts::{FRAC_1_SQRT_2, SQRT_2};

/// 1 / sqrt(2 pi).
pub const FRAC_1_SQRT_2PI: f64 = 0.398_942_280_401_432_7;

/// Standard normal distribution function Phi(x).
pub fn std_normal_cdf(x: f64) -> f64 {
    0.5 * erfc(-x * FRAC_1_SQRT_2)
}

/// Standard normal upper tail Q(x) = 1 - Phi(x), accurate far in the tail.
pub fn std_normal_sf(x: f64) -> f64 {
    0.5 * erfc(x * FRAC_1_SQRT_2)
}

/// Standard normal density phi(x).
pub fn std_normal_pdf(x: f64) -> f64 {
    FRAC_1_SQRT_2PI * (-0.5 * x * x).exp()
}

/// Standard normal quantile Phi^-1(p), p in (0, 1).
pub fn std_normal_quantile(p: f64) -> f64 {
    -SQRT_2 * erfc_inv(2.0 * p)
}

/// Inverse of the upper tail: the x with Q(x) = q.
pub fn std_normal_isf(q: f64) -> f64 {
    SQRT_2 * erfc_inv(2.0 * q)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    // Values of the standard normal: Abramowitz & Stegun table 26.1 (1.959964 at 0.975,
    // 2.575829 at 0.995).
    #[test]
    fn known_quantiles() {
        assert_abs_diff_eq!(std_normal_quantile(0.975), 1.959_963_985, epsilon = 1e-8);
        assert_abs_diff_eq!(std_normal_quantile(0.995), 2.575_829_304, epsilon = 1e-8);
        assert_abs_diff_eq!(std_normal_cdf(1.959_963_985), 0.975, epsilon = 1e-9);
        assert_abs_diff_eq!(std_normal_isf(std_normal_sf(6.0)), 6.0, epsilon = 1e-9);
    }
}
