//! Moving and narrowing a distribution: what sweeps (a new estimate) and plans (a smaller
//! uncertainty) do to an input.
//!
//! - [`Distribution::with_mean`]: families of location are shifted (every parameter of place
//!   moves by the same amount, the shape stays); families on (0, inf) whose spread follows the
//!   mean (exponential, gamma, lognormal) are scaled instead, keeping their relative spread.
//! - [`Distribution::narrowed`]: the standard deviation is divided by `factor` about the same
//!   mean: spreads, half-widths and scales are divided; an exponential, whose spread is its mean,
//!   becomes the gamma of the same mean with shape factor^2; a gamma keeps its mean with shape
//!   x factor^2; a truncated normal divides the spread of its parent normal (its own standard
//!   deviation then shrinks by about `factor`).

use super::*;

impl Distribution {
    /// The same distribution moved so that its expectation is `mean`.
    pub fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        let ratio = mean / self.mean();
        Ok(match self {
            Distribution::Normal(d) => Distribution::Normal(Normal::new(d.mean + delta, d.sd)?),
            Distribution::Rectangular(d) => {
                Distribution::Rectangular(Rectangular::new(d.min + delta, d.max + delta)?)
            }
            Distribution::Triangular(d) => {
                Distribution::Triangular(Triangular::new(d.min + delta, d.max + delta)?)
            }
            Distribution::Trapezoidal(d) => {
                Distribution::Trapezoidal(Trapezoidal::new(d.min + delta, d.max + delta, d.beta)?)
            }
            Distribution::CurvilinearTrapezoid(d) => Distribution::CurvilinearTrapezoid(
                CurvilinearTrapezoid::new(d.min + delta, d.max + delta, d.spread)?,
            ),
            Distribution::Arcsine(d) => {
                Distribution::Arcsine(Arcsine::new(d.min + delta, d.max + delta)?)
            }
            Distribution::T(d) => {
                let mut t = ScaledT::new(d.mean + delta, d.scale, d.dof)?;
                t.readings = d.readings;
                Distribution::T(t)
            }
            Distribution::TruncatedNormal(d) => Distribution::TruncatedNormal(
                TruncatedNormal::new(d.mean + delta, d.sd, d.min + delta, d.max + delta)?,
            ),
            Distribution::Beta(d) => Distribution::Beta(BetaScaled::new(
                d.alpha,
                d.beta,
                d.min + delta,
                d.max + delta,
            )?),
            Distribution::Exponential(_) => Distribution::Exponential(Exponential::new(mean)?),
            Distribution::Gamma(d) => {
                Distribution::Gamma(GammaDist::new(d.shape, d.scale * ratio)?)
            }
            Distribution::LogNormal(d) => {
                Distribution::LogNormal(LogNormal::new(mean, d.sd * ratio)?)
            }
        })
    }

    /// The same distribution with its standard deviation divided by `factor` (> 0), same mean.
    pub fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        if !(factor > 0.0 && factor.is_finite()) {
            return Err(invalid(
                "factor",
                format!("an improvement factor must be positive and finite (got {factor})"),
            ));
        }
        let f = factor;
        let around = |min: f64, max: f64| {
            let c = 0.5 * (min + max);
            let h = 0.5 * (max - min) / f;
            (c - h, c + h)
        };
        Ok(match self {
            Distribution::Normal(d) => Distribution::Normal(Normal::new(d.mean, d.sd / f)?),
            Distribution::Rectangular(d) => {
                let (a, b) = around(d.min, d.max);
                Distribution::Rectangular(Rectangular::new(a, b)?)
            }
            Distribution::Triangular(d) => {
                let (a, b) = around(d.min, d.max);
                Distribution::Triangular(Triangular::new(a, b)?)
            }
            Distribution::Trapezoidal(d) => {
                let (a, b) = around(d.min, d.max);
                Distribution::Trapezoidal(Trapezoidal::new(a, b, d.beta)?)
            }
            Distribution::CurvilinearTrapezoid(d) => {
                let (a, b) = around(d.min, d.max);
                Distribution::CurvilinearTrapezoid(CurvilinearTrapezoid::new(a, b, d.spread / f)?)
            }
            Distribution::Arcsine(d) => {
                let (a, b) = around(d.min, d.max);
                Distribution::Arcsine(Arcsine::new(a, b)?)
            }
            Distribution::T(d) => {
                let mut t = ScaledT::new(d.mean, d.scale / f, d.dof)?;
                t.readings = d.readings;
                Distribution::T(t)
            }
            Distribution::TruncatedNormal(d) => {
                Distribution::TruncatedNormal(TruncatedNormal::new(d.mean, d.sd / f, d.min, d.max)?)
            }
            Distribution::Beta(d) => {
                // Scale the support about the mean: the variance goes as the square of the width.
                let m = self.mean();
                Distribution::Beta(BetaScaled::new(
                    d.alpha,
                    d.beta,
                    m - (m - d.min) / f,
                    m + (d.max - m) / f,
                )?)
            }
            Distribution::Exponential(d) => {
                Distribution::Gamma(GammaDist::new(f * f, d.mean / (f * f))?)
            }
            Distribution::Gamma(d) => {
                Distribution::Gamma(GammaDist::new(d.shape * f * f, d.scale / (f * f))?)
            }
            Distribution::LogNormal(d) => {
                Distribution::LogNormal(LogNormal::new(d.mean, d.sd / f)?)
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn all() -> Vec<Distribution> {
        vec![
            Distribution::Normal(Normal::new(2.0, 0.3).unwrap()),
            Distribution::Rectangular(Rectangular::new(1.0, 3.0).unwrap()),
            Distribution::Triangular(Triangular::new(1.0, 3.0).unwrap()),
            Distribution::Trapezoidal(Trapezoidal::new(1.0, 3.0, 0.4).unwrap()),
            Distribution::CurvilinearTrapezoid(CurvilinearTrapezoid::new(1.0, 3.0, 0.2).unwrap()),
            Distribution::Arcsine(Arcsine::new(1.0, 3.0).unwrap()),
            Distribution::T(ScaledT::new(2.0, 0.1, 9.0).unwrap()),
            Distribution::Exponential(Exponential::new(2.0).unwrap()),
            Distribution::Gamma(GammaDist::new(4.0, 0.5).unwrap()),
            Distribution::TruncatedNormal(TruncatedNormal::new(2.0, 0.2, 1.5, 2.5).unwrap()),
            Distribution::Beta(BetaScaled::new(3.0, 5.0, 1.0, 3.0).unwrap()),
            Distribution::LogNormal(LogNormal::new(2.0, 0.3).unwrap()),
        ]
    }

    // Moving keeps the spread (families of location) or the relative spread (families on
    // (0, inf)); narrowing divides the standard deviation by the factor at the same mean
    // (exactly, except a truncated normal, whose parent is narrowed).
    #[test]
    fn moved_and_narrowed() {
        for d in all() {
            let moved = d.with_mean(2.5).unwrap();
            assert_relative_eq!(moved.mean(), 2.5, max_relative = 1e-12);
            let relative = matches!(
                d,
                Distribution::Exponential(_) | Distribution::Gamma(_) | Distribution::LogNormal(_)
            );
            let expected_sd = if relative {
                d.standard_deviation() * 2.5 / d.mean()
            } else {
                d.standard_deviation()
            };
            assert_relative_eq!(moved.standard_deviation(), expected_sd, max_relative = 1e-9);
            let narrow = d.narrowed(4.0).unwrap();
            assert_relative_eq!(narrow.mean(), d.mean(), max_relative = 1e-12);
            if !matches!(d, Distribution::TruncatedNormal(_)) {
                assert_relative_eq!(
                    narrow.standard_deviation(),
                    d.standard_deviation() / 4.0,
                    max_relative = 1e-9
                );
            } else {
                assert!(narrow.standard_deviation() < d.standard_deviation() / 3.0);
            }
        }
        assert!(all()[0].narrowed(0.0).is_err());
    }
}
