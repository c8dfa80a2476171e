//! Symmetric triangular distribution T(a, b) (JCGM 101:2008, 6.4.5).

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, require_ordered, uniform01,
};
use rand::Rng;

/// Symmetric triangular on [min, max]: x = a + (b - a)(r1 + r2)/2; variance (b - a)^2 / 24.
#[derive(Clone, Debug, PartialEq)]
pub struct Triangular {
    pub(crate) min: f64,
    pub(crate) max: f64,
}

impl Triangular {
    /// A symmetric triangular distribution; requires `min < max`.
    pub fn new(min: f64, max: f64) -> Result<Self, ParameterError> {
        require_ordered(min, max)?;
        Ok(Triangular { min, max })
    }
}

impl Family for Triangular {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "triangular",
        aliases: &[],
        params: &[("min", ParamKind::Quantity), ("max", ParamKind::Quantity)],
        example: "dist = \"triangular\", min = \"1.9 m\", max = \"2.1 m\"",
        type_b_dof: true,
        build: |p| Ok(Triangular::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w / 24.0
    }
    /// Symmetric; the sum of two rectangulars of equal width: 3 - (6/5)/2 = 12/5.
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        2.4
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let r1 = uniform01(rng);
        let r2 = uniform01(rng);
        self.min + (self.max - self.min) * 0.5 * (r1 + r2)
    }
    fn quantile(&self, p: f64) -> f64 {
        let w = self.max - self.min;
        if p <= 0.5 {
            self.min + w * (0.5 * p).sqrt()
        } else {
            self.max - w * (0.5 * (1.0 - p)).sqrt()
        }
    }
    fn cdf(&self, x: f64) -> f64 {
        let w = self.max - self.min;
        if x <= self.min {
            0.0
        } else if x >= self.max {
            1.0
        } else if x <= self.mean() {
            2.0 * ((x - self.min) / w).powi(2)
        } else {
            1.0 - 2.0 * ((self.max - x) / w).powi(2)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        let half = 0.5 * (self.max - self.min);
        let t = (x - self.mean()).abs();
        if t >= half {
            0.0
        } else {
            (half - t) / (half * half)
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(Triangular::new(self.min + delta, self.max + delta)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let (a, b) = super::narrowed_limits(self.min, self.max, factor);
        Ok(Triangular::new(a, b)?.into())
    }
}
