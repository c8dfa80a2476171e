//! Arcsine (U-shaped) distribution U(a, b) (JCGM 101:2008, 6.4.6).

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, require_ordered, uniform01,
};
use rand::Rng;
use std::f64::consts::PI;

/// Arcsine on [min, max]: x = (a + b)/2 + (b - a)/2 sin(2 pi r); variance (b - a)^2 / 8.
#[derive(Clone, Debug, PartialEq)]
pub struct Arcsine {
    pub(crate) min: f64,
    pub(crate) max: f64,
}

impl Arcsine {
    /// An arcsine distribution; requires `min < max`.
    pub fn new(min: f64, max: f64) -> Result<Self, ParameterError> {
        require_ordered(min, max)?;
        Ok(Arcsine { min, max })
    }
    fn half(&self) -> f64 {
        0.5 * (self.max - self.min)
    }
}

impl Family for Arcsine {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "arcsine",
        aliases: &["u-shaped"],
        params: &[("min", ParamKind::Quantity), ("max", ParamKind::Quantity)],
        example: "dist = \"arcsine\", min = \"-2 urad\", max = \"2 urad\"",
        type_b_dof: true,
        build: |p| Ok(Arcsine::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w / 8.0
    }
    /// Symmetric; mu_4 = (3/8) a^4 against sigma^4 = a^4/4 (a the half-width): 3/2.
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        1.5
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.mean() + self.half() * (2.0 * PI * uniform01(rng)).sin()
    }
    fn quantile(&self, p: f64) -> f64 {
        self.mean() - self.half() * (PI * p).cos()
    }
    fn cdf(&self, x: f64) -> f64 {
        let t = ((x - self.mean()) / self.half()).clamp(-1.0, 1.0);
        0.5 + t.asin() / PI
    }
    fn pdf(&self, x: f64) -> f64 {
        let t = (x - self.mean()) / self.half();
        if t.abs() >= 1.0 {
            0.0
        } else {
            1.0 / (PI * self.half() * (1.0 - t * t).sqrt())
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(Arcsine::new(self.min + delta, self.max + delta)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let (a, b) = super::narrowed_limits(self.min, self.max, factor);
        Ok(Arcsine::new(a, b)?.into())
    }
}
