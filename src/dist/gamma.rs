//! Gamma distribution with shape and scale (JCGM 101:2008, 6.4.11; counts q: shape q + 1).

use super::{Distribution, Family, FamilySpec, ParamKind, ParameterError, require_positive};
use rand::Rng;
use rand_distr::Distribution as _;
use statrs::distribution::{Continuous, ContinuousCDF};

/// Gamma with shape k and scale theta: mean k theta, variance k theta^2. Sampled by
/// rand_distr (Marsaglia and Tsang 2000); quantiles by statrs.
#[derive(Clone, Debug)]
pub struct GammaDist {
    pub(crate) shape: f64,
    pub(crate) scale: f64,
    pub(crate) sampler: rand_distr::Gamma<f64>,
    pub(crate) reference: statrs::distribution::Gamma,
}

impl PartialEq for GammaDist {
    fn eq(&self, other: &Self) -> bool {
        self.shape == other.shape && self.scale == other.scale
    }
}

impl GammaDist {
    /// A gamma distribution; `shape` and `scale` must be positive.
    pub fn new(shape: f64, scale: f64) -> Result<Self, ParameterError> {
        let shape = super::require_shape("shape", shape)?;
        let scale = require_positive("scale", scale)?;
        let sampler = rand_distr::Gamma::new(shape, scale)
            .map_err(|e| super::invalid("shape", format!("gamma parameters rejected: {e}")))?;
        // The standard gamma (scale 1), scaled outside: statrs's inverse_cdf iterates without
        // end for a rate of 1/scale that overflows or underflows (found by the generated
        // tests with scale 5e-324).
        let reference = statrs::distribution::Gamma::new(shape, 1.0)
            .map_err(|e| super::invalid("shape", format!("gamma parameters rejected: {e}")))?;
        Ok(GammaDist {
            shape,
            scale,
            sampler,
            reference,
        })
    }
}

impl Family for GammaDist {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "gamma",
        aliases: &[],
        params: &[("shape", ParamKind::Pure), ("scale", ParamKind::Quantity)],
        example: "dist = \"gamma\", shape = 3, scale = \"1 nN\"",
        type_b_dof: true,
        build: |p| Ok(GammaDist::new(p.numbers[0], p.numbers[1])?.into()),
    }];
    fn mean(&self) -> f64 {
        self.shape * self.scale
    }
    fn variance(&self) -> f64 {
        self.shape * self.scale * self.scale
    }
    /// 2/sqrt(k) and 3 + 6/k for shape k.
    fn skewness(&self) -> f64 {
        2.0 / self.shape.sqrt()
    }
    fn kurtosis(&self) -> f64 {
        3.0 + 6.0 / self.shape
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    fn quantile(&self, p: f64) -> f64 {
        self.scale * self.reference.inverse_cdf(p.clamp(0.0, 1.0))
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            self.reference.cdf(x / self.scale)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            self.reference.pdf(x / self.scale) / self.scale
        }
    }
    /// Scaled, keeping the shape (and so the relative spread).
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        Ok(GammaDist::new(self.shape, self.scale * (mean / self.mean()))?.into())
    }
    /// The same mean with shape x factor^2.
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let f2 = factor * factor;
        Ok(GammaDist::new(self.shape * f2, self.scale / f2)?.into())
    }
}
