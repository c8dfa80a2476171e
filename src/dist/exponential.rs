//! Exponential distribution with a given mean (JCGM 101:2008, 6.4.10): the maximum-entropy
//! choice for a non-negative quantity of which only the estimate is known.

use super::{Distribution, Family, FamilySpec, ParamKind, ParameterError, require_positive};
use rand::Rng;
use rand_distr::{Distribution as _, Exp1};

/// Exponential with expectation `mean` (rate 1/mean); variance mean^2.
#[derive(Clone, Debug, PartialEq)]
pub struct Exponential {
    pub(crate) mean: f64,
}

impl Exponential {
    /// An exponential distribution; `mean` must be positive.
    pub fn new(mean: f64) -> Result<Self, ParameterError> {
        Ok(Exponential {
            mean: require_positive("mean", mean)?,
        })
    }
}

impl Family for Exponential {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "exponential",
        aliases: &[],
        params: &[("mean", ParamKind::Quantity)],
        example: "dist = \"exponential\", mean = \"2 nN\"",
        type_b_dof: true,
        build: |p| Ok(Exponential::new(p.numbers[0])?.into()),
    }];
    fn mean(&self) -> f64 {
        self.mean
    }
    fn variance(&self) -> f64 {
        self.mean * self.mean
    }
    fn skewness(&self) -> f64 {
        2.0
    }
    fn kurtosis(&self) -> f64 {
        9.0
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let e: f64 = Exp1.sample(rng);
        self.mean * e
    }
    fn quantile(&self, p: f64) -> f64 {
        -self.mean * (-p).ln_1p()
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            -(-x / self.mean).exp_m1()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            (-x / self.mean).exp() / self.mean
        }
    }
    /// Scaled: its spread is its mean.
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        Ok(Exponential::new(mean)?.into())
    }
    /// Its spread is its mean, so it becomes the gamma of the same mean with shape factor^2.
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let f2 = factor * factor;
        Ok(super::GammaDist::new(f2, self.mean / f2)?.into())
    }
}
