//! Beta distribution scaled to [min, max], for bounded quantities such as a reflectance.

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, invalid, require_ordered,
};
use rand::Rng;
use rand_distr::Distribution as _;
use statrs::distribution::{Continuous, ContinuousCDF};

/// x = min + (max - min) B with B ~ Beta(alpha, beta): mean min + (max - min) alpha/(alpha + beta),
/// variance (max - min)^2 alpha beta / ((alpha + beta)^2 (alpha + beta + 1)) (Johnson, Kotz and
/// Balakrishnan vol. 2, 25.2). Sampled by rand_distr, quantiles by statrs.
#[derive(Clone, Debug)]
pub struct BetaScaled {
    pub(crate) alpha: f64,
    pub(crate) beta: f64,
    pub(crate) min: f64,
    pub(crate) max: f64,
    pub(crate) sampler: rand_distr::Beta<f64>,
    pub(crate) reference: statrs::distribution::Beta,
}

impl PartialEq for BetaScaled {
    fn eq(&self, other: &Self) -> bool {
        (self.alpha, self.beta, self.min, self.max)
            == (other.alpha, other.beta, other.min, other.max)
    }
}

impl BetaScaled {
    /// A scaled beta; `alpha`, `beta` positive and `min < max`.
    pub fn new(alpha: f64, beta: f64, min: f64, max: f64) -> Result<Self, ParameterError> {
        let alpha = super::require_shape("alpha", alpha)?;
        let beta = super::require_shape("beta", beta)?;
        require_ordered(min, max)?;
        let sampler = rand_distr::Beta::new(alpha, beta)
            .map_err(|e| invalid("alpha", format!("beta parameters rejected: {e}")))?;
        let reference = statrs::distribution::Beta::new(alpha, beta)
            .map_err(|e| invalid("alpha", format!("beta parameters rejected: {e}")))?;
        Ok(BetaScaled {
            alpha,
            beta,
            min,
            max,
            sampler,
            reference,
        })
    }
    fn width(&self) -> f64 {
        self.max - self.min
    }
}

impl Family for BetaScaled {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "beta",
        aliases: &[],
        params: &[
            ("alpha", ParamKind::Pure),
            ("beta", ParamKind::Pure),
            ("min", ParamKind::Quantity),
            ("max", ParamKind::Quantity),
        ],
        example: "dist = \"beta\", alpha = 8, beta = 2, min = 0.999, max = 1",
        type_b_dof: true,
        build: |p| {
            let n = p.numbers;
            Ok(BetaScaled::new(n[0], n[1], n[2], n[3])?.into())
        },
    }];
    fn mean(&self) -> f64 {
        self.min + self.width() * self.alpha / (self.alpha + self.beta)
    }
    fn variance(&self) -> f64 {
        let s = self.alpha + self.beta;
        self.width().powi(2) * self.alpha * self.beta / (s * s * (s + 1.0))
    }
    /// 2 (b - a) sqrt(a + b + 1) / ((a + b + 2) sqrt(a b)) and
    /// 3 + 6 [(a - b)^2 (a + b + 1) - a b (a + b + 2)] / (a b (a + b + 2)(a + b + 3)) (the scaling
    /// to [min, max] keeps both).
    fn skewness(&self) -> f64 {
        let (a, b) = (self.alpha, self.beta);
        2.0 * (b - a) * (a + b + 1.0).sqrt() / ((a + b + 2.0) * (a * b).sqrt())
    }
    fn kurtosis(&self) -> f64 {
        let (a, b) = (self.alpha, self.beta);
        3.0 + 6.0 * ((a - b).powi(2) * (a + b + 1.0) - a * b * (a + b + 2.0))
            / (a * b * (a + b + 2.0) * (a + b + 3.0))
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.min + self.width() * self.sampler.sample(rng)
    }
    fn quantile(&self, p: f64) -> f64 {
        self.min + self.width() * self.reference.inverse_cdf(p.clamp(0.0, 1.0))
    }
    fn cdf(&self, x: f64) -> f64 {
        let t = (x - self.min) / self.width();
        if t <= 0.0 {
            0.0
        } else if t >= 1.0 {
            1.0
        } else {
            self.reference.cdf(t)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        let t = (x - self.min) / self.width();
        if !(0.0..=1.0).contains(&t) {
            0.0
        } else {
            self.reference.pdf(t) / self.width()
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(BetaScaled::new(self.alpha, self.beta, self.min + delta, self.max + delta)?.into())
    }
    /// The support scaled about the mean: the variance goes as the square of the width.
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let m = self.mean();
        Ok(BetaScaled::new(
            self.alpha,
            self.beta,
            m - (m - self.min) / factor,
            m + (self.max - m) / factor,
        )?
        .into())
    }
}
