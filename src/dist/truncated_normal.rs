//! Normal distribution truncated to [min, max].

use super::special::{
    std_normal_cdf, std_normal_isf, std_normal_pdf, std_normal_quantile, std_normal_sf,
};
use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, invalid, require_finite,
    require_ordered, require_positive, uniform_open01,
};
use rand::Rng;
use rand_distr::{Distribution as _, StandardNormal};

/// N(mean, sd^2) conditioned on min <= x <= max; `mean` and `sd` are those of the parent normal.
/// With alpha = (min - mean)/sd, beta = (max - mean)/sd, Z = Phi(beta) - Phi(alpha):
/// E = mean + sd (phi(alpha) - phi(beta)) / Z,
/// Var = sd^2 [1 + (alpha phi(alpha) - beta phi(beta)) / Z - ((phi(alpha) - phi(beta)) / Z)^2]
/// (Johnson, Kotz and Balakrishnan, Continuous Univariate Distributions vol. 1, 2nd ed., 13.10).
/// Sampled by rejection from the parent when at least half of it lies inside, otherwise by the
/// inverse distribution function, worked on the tail side for accuracy far from the mean.
#[derive(Clone, Debug, PartialEq)]
pub struct TruncatedNormal {
    pub(crate) mean: f64,
    pub(crate) sd: f64,
    pub(crate) min: f64,
    pub(crate) max: f64,
    pub(crate) alpha: f64,
    pub(crate) beta: f64,
    pub(crate) mass: f64,
}

impl TruncatedNormal {
    /// A truncated normal; requires `sd > 0`, `min < max` and a non-negligible mass inside.
    pub fn new(mean: f64, sd: f64, min: f64, max: f64) -> Result<Self, ParameterError> {
        let mean = require_finite("mean", mean)?;
        let sd = require_positive("sd", sd)?;
        require_ordered(min, max)?;
        let alpha = (min - mean) / sd;
        let beta = (max - mean) / sd;
        let mass = if alpha > 0.0 {
            std_normal_sf(alpha) - std_normal_sf(beta)
        } else {
            std_normal_cdf(beta) - std_normal_cdf(alpha)
        };
        if mass.is_nan() || mass <= 1e-300 {
            return Err(invalid(
                "min",
                format!(
                    "[min, max] = [{min}, {max}] lies so far out in the tail of N({mean}, {sd}^2) \
                     that it holds no probability; check the units of min, max and sd"
                ),
            ));
        }
        Ok(TruncatedNormal {
            mean,
            sd,
            min,
            max,
            alpha,
            beta,
            mass,
        })
    }

    /// Standardised quantile for probability p of the truncated law.
    fn standard_quantile(&self, p: f64) -> f64 {
        let z = if self.alpha > 0.0 {
            // Upper side: work with upper-tail probabilities.
            let qa = std_normal_sf(self.alpha);
            std_normal_isf(qa - p * self.mass)
        } else if self.beta < 0.0 {
            let pa = std_normal_cdf(self.alpha);
            std_normal_quantile(pa + p * self.mass)
        } else {
            std_normal_quantile(std_normal_cdf(self.alpha) + p * self.mass)
        };
        z.clamp(self.alpha, self.beta)
    }
}

impl Family for TruncatedNormal {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "truncated-normal",
        aliases: &[],
        params: &[
            ("mean", ParamKind::Quantity),
            ("sd", ParamKind::Quantity),
            ("min", ParamKind::Quantity),
            ("max", ParamKind::Quantity),
        ],
        example: "dist = \"truncated-normal\", mean = 0.9995, sd = 0.0003, min = 0, max = 1",
        type_b_dof: true,
        build: |p| {
            let n = p.numbers;
            Ok(TruncatedNormal::new(n[0], n[1], n[2], n[3])?.into())
        },
    }];
    fn mean(&self) -> f64 {
        let (pa, pb) = (std_normal_pdf(self.alpha), std_normal_pdf(self.beta));
        self.mean + self.sd * (pa - pb) / self.mass
    }
    fn variance(&self) -> f64 {
        let (pa, pb) = (std_normal_pdf(self.alpha), std_normal_pdf(self.beta));
        let a_term = if self.alpha.is_finite() {
            self.alpha * pa
        } else {
            0.0
        };
        let b_term = if self.beta.is_finite() {
            self.beta * pb
        } else {
            0.0
        };
        let shift = (pa - pb) / self.mass;
        self.sd * self.sd * (1.0 + (a_term - b_term) / self.mass - shift * shift)
    }
    /// From the raw moments of the standard normal truncated to [alpha, beta],
    /// m_k = (k - 1) m_(k-2) - [beta^(k-1) phi(beta) - alpha^(k-1) phi(alpha)] / Z
    /// (integration by parts; Johnson, Kotz and Balakrishnan, Continuous Univariate
    /// Distributions, vol. 1, 13.10), made central.
    fn skewness(&self) -> f64 {
        let (_, m2, m3, _) = self.central_moments();
        m3 / m2.powf(1.5)
    }
    fn kurtosis(&self) -> f64 {
        let (_, m2, _, m4) = self.central_moments();
        m4 / (m2 * m2)
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        if self.mass >= 0.5 {
            loop {
                let z: f64 = StandardNormal.sample(rng);
                if z >= self.alpha && z <= self.beta {
                    return self.mean + self.sd * z;
                }
            }
        }
        let z = self.standard_quantile(uniform_open01(rng));
        (self.mean + self.sd * z).clamp(self.min, self.max)
    }
    fn quantile(&self, p: f64) -> f64 {
        (self.mean + self.sd * self.standard_quantile(p)).clamp(self.min, self.max)
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= self.min {
            return 0.0;
        }
        if x >= self.max {
            return 1.0;
        }
        let z = (x - self.mean) / self.sd;
        let f = if self.alpha > 0.0 {
            (std_normal_sf(self.alpha) - std_normal_sf(z)) / self.mass
        } else {
            (std_normal_cdf(z) - std_normal_cdf(self.alpha)) / self.mass
        };
        f.clamp(0.0, 1.0)
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < self.min || x > self.max {
            0.0
        } else {
            std_normal_pdf((x - self.mean) / self.sd) / (self.sd * self.mass)
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(TruncatedNormal::new(
            self.mean + delta,
            self.sd,
            self.min + delta,
            self.max + delta,
        )?
        .into())
    }
    /// The spread of the parent normal is divided (its own standard deviation then shrinks by
    /// about `factor`).
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        Ok(TruncatedNormal::new(self.mean, self.sd / factor, self.min, self.max)?.into())
    }
}

impl TruncatedNormal {
    /// Mean (standardised) and the second, third and fourth central moments of the standardised
    /// truncated variable, from its raw moments (see [`Family::skewness`]).
    fn central_moments(&self) -> (f64, f64, f64, f64) {
        let z = self.mass;
        let edge = |x: f64, k: i32| {
            if x.is_finite() {
                x.powi(k) * std_normal_pdf(x)
            } else {
                0.0
            }
        };
        let step = |k: i32| edge(self.beta, k) - edge(self.alpha, k);
        let m1 = -step(0) / z;
        let m2 = 1.0 - step(1) / z;
        let m3 = 2.0 * m1 - step(2) / z;
        let m4 = 3.0 * m2 - step(3) / z;
        let c2 = m2 - m1 * m1;
        let c3 = m3 - 3.0 * m1 * m2 + 2.0 * m1.powi(3);
        let c4 = m4 - 4.0 * m1 * m3 + 6.0 * m1 * m1 * m2 - 3.0 * m1.powi(4);
        (m1, c2, c3, c4)
    }
}
