//! Lognormal distribution given by the mean and standard deviation of the quantity itself.

use super::special::{std_normal_cdf, std_normal_pdf, std_normal_quantile};
use super::{Distribution, Family, FamilySpec, ParamKind, ParameterError, require_positive};
use rand::Rng;
use rand_distr::{Distribution as _, StandardNormal};

/// x = exp(mu + sigma z) with sigma^2 = ln(1 + sd^2/mean^2) and mu = ln(mean) - sigma^2/2, so
/// that E[x] = mean and sd(x) = sd (Johnson, Kotz and Balakrishnan vol. 1, 14.3).
#[derive(Clone, Debug, PartialEq)]
pub struct LogNormal {
    pub(crate) mean: f64,
    pub(crate) sd: f64,
    pub(crate) mu: f64,
    pub(crate) sigma: f64,
}

impl LogNormal {
    /// A lognormal of the given mean and standard deviation, both positive.
    pub fn new(mean: f64, sd: f64) -> Result<Self, ParameterError> {
        let mean = require_positive("mean", mean)?;
        let sd = require_positive("sd", sd)?;
        let sigma2 = (sd / mean).powi(2).ln_1p();
        Ok(LogNormal {
            mean,
            sd,
            mu: mean.ln() - 0.5 * sigma2,
            sigma: sigma2.sqrt(),
        })
    }
}

impl Family for LogNormal {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "lognormal",
        aliases: &[],
        params: &[("mean", ParamKind::Quantity), ("sd", ParamKind::Quantity)],
        example: "dist = \"lognormal\", mean = \"300 s\", sd = \"2 s\"",
        type_b_dof: true,
        build: |p| Ok(LogNormal::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        self.mean
    }
    fn variance(&self) -> f64 {
        self.sd * self.sd
    }
    /// With s^2 the variance of the logarithm: (e^(s^2) + 2) sqrt(e^(s^2) - 1) and
    /// e^(4 s^2) + 2 e^(3 s^2) + 3 e^(2 s^2) - 3.
    fn skewness(&self) -> f64 {
        let e = (self.sigma * self.sigma).exp();
        (e + 2.0) * (self.sigma * self.sigma).exp_m1().sqrt()
    }
    fn kurtosis(&self) -> f64 {
        let s2 = self.sigma * self.sigma;
        (4.0 * s2).exp() + 2.0 * (3.0 * s2).exp() + 3.0 * (2.0 * s2).exp() - 3.0
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let z: f64 = StandardNormal.sample(rng);
        (self.mu + self.sigma * z).exp()
    }
    fn quantile(&self, p: f64) -> f64 {
        (self.mu + self.sigma * std_normal_quantile(p)).exp()
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            std_normal_cdf((x.ln() - self.mu) / self.sigma)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            std_normal_pdf((x.ln() - self.mu) / self.sigma) / (x * self.sigma)
        }
    }
    /// Scaled, keeping the relative spread.
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        Ok(LogNormal::new(mean, self.sd * (mean / self.mean()))?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        Ok(LogNormal::new(self.mean, self.sd / factor)?.into())
    }
}
