//! Gaussian distribution N(mu, sigma^2) (JCGM 101:2008, 6.4.7).

use super::special::{std_normal_cdf, std_normal_pdf, std_normal_quantile};
use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, require_finite, require_positive,
};
use rand::Rng;
use rand_distr::{Distribution as _, StandardNormal};

/// Gaussian with expectation `mean` and standard deviation `sd`; sampled as
/// `mean + sd z` with z from the ziggurat standard normal of rand_distr.
#[derive(Clone, Debug, PartialEq)]
pub struct Normal {
    pub(crate) mean: f64,
    pub(crate) sd: f64,
}

impl Normal {
    /// A normal distribution; `sd` must be positive (a zero spread is a constant: write
    /// `value`).
    pub fn new(mean: f64, sd: f64) -> Result<Self, ParameterError> {
        Ok(Normal {
            mean: require_finite("mean", mean)?,
            sd: require_positive("sd", sd)?,
        })
    }
}

impl Family for Normal {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "normal",
        aliases: &["gaussian"],
        params: &[("mean", ParamKind::Quantity), ("sd", ParamKind::Quantity)],
        example: "dist = \"normal\", mean = \"45 deg\", sd = \"0.1 deg\"",
        type_b_dof: true,
        build: |p| Ok(Normal::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        self.mean
    }
    fn variance(&self) -> f64 {
        self.sd * self.sd
    }
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        3.0
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let z: f64 = StandardNormal.sample(rng);
        self.mean + self.sd * z
    }
    fn quantile(&self, p: f64) -> f64 {
        self.mean + self.sd * std_normal_quantile(p)
    }
    fn cdf(&self, x: f64) -> f64 {
        std_normal_cdf((x - self.mean) / self.sd)
    }
    fn pdf(&self, x: f64) -> f64 {
        std_normal_pdf((x - self.mean) / self.sd) / self.sd
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        Ok(Normal::new(mean, self.sd)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        Ok(Normal::new(self.mean, self.sd / factor)?.into())
    }
}
