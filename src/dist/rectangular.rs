//! Rectangular (uniform) distribution R(a, b) (JCGM 101:2008, 6.4.2).

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, require_ordered, uniform01,
};
use rand::Rng;

/// Rectangular on [min, max]: x = a + (b - a) r with r ~ R(0, 1); variance (b - a)^2 / 12.
#[derive(Clone, Debug, PartialEq)]
pub struct Rectangular {
    pub(crate) min: f64,
    pub(crate) max: f64,
}

impl Rectangular {
    /// A rectangular distribution; requires `min < max`.
    pub fn new(min: f64, max: f64) -> Result<Self, ParameterError> {
        require_ordered(min, max)?;
        Ok(Rectangular { min, max })
    }
}

impl Family for Rectangular {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "rectangular",
        aliases: &["uniform"],
        params: &[("min", ParamKind::Quantity), ("max", ParamKind::Quantity)],
        example: "dist = \"rectangular\", min = 0.9990, max = 0.9999",
        type_b_dof: true,
        build: |p| Ok(Rectangular::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w / 12.0
    }
    /// Symmetric; mu_4 = w^4/80 against sigma^4 = w^4/144: 9/5.
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        1.8
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.min + (self.max - self.min) * uniform01(rng)
    }
    fn quantile(&self, p: f64) -> f64 {
        self.min + (self.max - self.min) * p
    }
    fn cdf(&self, x: f64) -> f64 {
        ((x - self.min) / (self.max - self.min)).clamp(0.0, 1.0)
    }
    fn pdf(&self, x: f64) -> f64 {
        if (self.min..=self.max).contains(&x) {
            1.0 / (self.max - self.min)
        } else {
            0.0
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(Rectangular::new(self.min + delta, self.max + delta)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let (a, b) = super::narrowed_limits(self.min, self.max, factor);
        Ok(Rectangular::new(a, b)?.into())
    }
}
