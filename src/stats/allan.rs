//! The overlapping Allan deviation of an evenly sampled record (NIST SP 1065, W. J. Riley,
//! Handbook of Frequency Stability Analysis, 2008, 5.2.4).
//!
//! For M values y_1..y_M taken every tau0 (each a mean over its interval, the "frequency" data of
//! SP 1065) and an averaging factor m (tau = m tau0), with the cumulative sums
//! x_i = tau0 sum_{k<i} y_k (the "phase", N = M + 1 points):
//! sigma^2(tau) = sum_{i=1}^{N-2m} (x_{i+2m} - 2 x_{i+m} + x_i)^2 / (2 tau^2 (N - 2m)).
//! Each term is the squared difference of two adjacent means over tau, so a constant offset
//! cancels and a linear drift D gives sigma = D tau / sqrt 2.

/// The Allan deviation at one averaging time.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AllanPoint {
    /// Averaging time tau = m tau0.
    pub tau: f64,
    /// The averaging factor m.
    pub factor: usize,
    /// The overlapping Allan deviation sigma(tau), in the unit of the values.
    pub deviation: f64,
    /// Number of terms in the sum, N - 2m.
    pub terms: usize,
}

/// The overlapping Allan deviation of `values` sampled every `tau0` at averaging factor `m`;
/// `None` when the record is too short for one term (M < 2m).
pub fn overlapping_deviation(values: &[f64], tau0: f64, m: usize) -> Option<AllanPoint> {
    let big_m = values.len();
    if m == 0 || big_m < 2 * m {
        return None;
    }
    // Phase in units of tau0 (x_i / tau0): the cumulative sums, N = M + 1 points.
    let mut phase = Vec::with_capacity(big_m + 1);
    let mut acc = 0.0f64;
    phase.push(0.0);
    for &y in values {
        acc += y;
        phase.push(acc);
    }
    let n = phase.len();
    let terms = n - 2 * m;
    let mut sum = 0.0f64;
    for i in 0..terms {
        let d = phase[i + 2 * m] - 2.0 * phase[i + m] + phase[i];
        sum += d * d;
    }
    // x is in units of tau0, so (x_{i+2m} - 2x_{i+m} + x_i)^2 / tau^2 = d^2 / m^2.
    let variance = sum / (2.0 * (m * m) as f64 * terms as f64);
    Some(AllanPoint {
        tau: m as f64 * tau0,
        factor: m,
        deviation: variance.sqrt(),
        terms,
    })
}

/// Averaging factors in octaves, 1, 2, 4, ..., up to the largest that leaves at least two terms
/// (m <= (M - 1) / 2), the usual set for a plot (SP 1065 5.2.4 allows any m up to (M - 1)/2).
pub fn octave_factors(len: usize) -> Vec<usize> {
    let mut out = Vec::new();
    let mut m = 1usize;
    while len > 2 * m {
        out.push(m);
        m *= 2;
    }
    out
}

/// The overlapping Allan deviation of `values` at every octave factor.
pub fn overlapping_deviations(values: &[f64], tau0: f64) -> Vec<AllanPoint> {
    octave_factors(values.len())
        .into_iter()
        .filter_map(|m| overlapping_deviation(values, tau0, m))
        .collect()
}

/// The dominant power-law noise at an averaging time, for the degrees of freedom of the
/// overlapping Allan variance (SP 1065 names the frequency-noise types by the exponent alpha of
/// S_y(f) ~ f^alpha).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PowerLaw {
    /// White frequency noise, alpha = 0.
    White,
    /// Flicker frequency noise, alpha = -1.
    Flicker,
    /// Random-walk frequency noise, alpha = -2 (also used where a drift dominates).
    RandomWalk,
}

/// Equivalent degrees of freedom of the overlapping Allan variance at factor m of a record of
/// N phase points (M + 1 for M values): the simple formulas of NIST SP 1065 (Riley 2008),
/// Table 5 (after Howe, Allan and Barnes 1981):
/// white FM ((3 (N - 1) / (2 m)) - 2 (N - 2) / N) 4 m^2 / (4 m^2 + 5);
/// flicker FM 2 (N - 2)^2 / (2.3 N - 4.9) at m = 1, 5 N^2 / (4 m (N + 3 m)) above
/// (the square at m = 1 from memory; the allantools implementation reads 2 (N - 2) / (...));
/// random-walk FM ((N - 2) / m) ((N - 1)^2 - 3 m (N - 1) + 4 m^2) / (N - 3)^2.
/// At least 1.
pub fn equivalent_dof(noise: PowerLaw, phase_points: usize, m: usize) -> f64 {
    let (n, m) = (phase_points as f64, m as f64);
    let edf = match noise {
        PowerLaw::White => {
            (3.0 * (n - 1.0) / (2.0 * m) - 2.0 * (n - 2.0) / n) * (4.0 * m * m)
                / (4.0 * m * m + 5.0)
        }
        PowerLaw::Flicker if m <= 1.0 => 2.0 * (n - 2.0).powi(2) / (2.3 * n - 4.9),
        PowerLaw::Flicker => 5.0 * n * n / (4.0 * m * (n + 3.0 * m)),
        PowerLaw::RandomWalk => {
            (n - 2.0) / m * ((n - 1.0).powi(2) - 3.0 * m * (n - 1.0) + 4.0 * m * m)
                / (n - 3.0).powi(2)
        }
    };
    if edf.is_finite() { edf.max(1.0) } else { 1.0 }
}

/// The chi-squared confidence interval of a deviation sigma estimated with `edf` degrees of
/// freedom, at probability `p`: [sigma sqrt(edf / chi2((1 + p)/2)), sigma sqrt(edf /
/// chi2((1 - p)/2))] (NIST SP 1065 5.3.2).
pub fn confidence_interval(deviation: f64, edf: f64, p: f64) -> (f64, f64) {
    use statrs::distribution::{ChiSquared, ContinuousCDF};
    match ChiSquared::new(edf) {
        Ok(chi) => {
            let hi = chi.inverse_cdf(0.5 * (1.0 + p));
            let lo = chi.inverse_cdf(0.5 * (1.0 - p));
            (deviation * (edf / hi).sqrt(), deviation * (edf / lo).sqrt())
        }
        Err(_) => (f64::NAN, f64::NAN),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // A linear drift y_k = D k tau0: every difference of adjacent means over tau is D tau, so
    // sigma(tau) = D tau / sqrt 2 exactly (NIST SP 1065 5.2.4; the drift term D^2 tau^2 / 2 of
    // the Allan variance).
    #[test]
    fn linear_drift_is_exact() {
        let (d, tau0) = (0.3, 2.0);
        let y: Vec<f64> = (0..400).map(|k| 5.0 + d * k as f64 * tau0).collect();
        for p in overlapping_deviations(&y, tau0) {
            assert_relative_eq!(p.deviation, d * p.tau / 2f64.sqrt(), max_relative = 1e-9);
        }
    }

    // An alternating series +a, -a: at m = 1 every adjacent difference is 2a, so
    // sigma^2 = (2a)^2 / 2 and sigma = a sqrt 2; at even m the means are 0 [calc].
    #[test]
    fn alternating_series() {
        let a = 1.5;
        let y: Vec<f64> = (0..101).map(|k| if k % 2 == 0 { a } else { -a }).collect();
        let p1 = overlapping_deviation(&y, 1.0, 1).unwrap();
        assert_relative_eq!(p1.deviation, a * 2f64.sqrt(), max_relative = 1e-12);
        assert_eq!(p1.terms, 100);
        let p2 = overlapping_deviation(&y, 1.0, 2).unwrap();
        assert!(p2.deviation < 1e-12);
        assert!(overlapping_deviation(&y, 1.0, 51).is_none());
        assert_eq!(octave_factors(9), vec![1, 2, 4]);
    }

    // NIST SP 1065 Table 5 at a few points [calc from the formulas]; and the chi-squared
    // interval contains the estimate and narrows with more degrees of freedom.
    #[test]
    fn degrees_of_freedom_and_intervals() {
        // White FM, N = 1025, m = 1: (3 * 1024 / 2 - 2 * 1023 / 1025) * 4 / 9.
        let w = equivalent_dof(PowerLaw::White, 1025, 1);
        assert_relative_eq!(
            w,
            (1536.0 - 2046.0 / 1025.0) * 4.0 / 9.0,
            max_relative = 1e-12
        );
        // Random walk FM, N = 1025, m = 256.
        let r = equivalent_dof(PowerLaw::RandomWalk, 1025, 256);
        let expect = 1023.0 / 256.0 * (1024.0f64.powi(2) - 768.0 * 1024.0 + 4.0 * 65536.0)
            / 1022.0f64.powi(2);
        assert_relative_eq!(r, expect, max_relative = 1e-12);
        let (lo, hi) = confidence_interval(1.0, 10.0, 0.683);
        assert!(lo < 1.0 && hi > 1.0);
        let (lo2, hi2) = confidence_interval(1.0, 1000.0, 0.683);
        assert!(hi2 - lo2 < hi - lo);
        // With many degrees of freedom the 68 % interval is about +-1/sqrt(2 edf).
        assert_relative_eq!(
            hi2 - 1.0,
            1.0 / (2.0f64 * 1000.0).sqrt(),
            max_relative = 0.05
        );
    }
}
