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
}
