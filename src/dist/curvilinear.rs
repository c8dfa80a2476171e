//! Curvilinear trapezoid: a rectangular distribution whose limits are themselves only known to
//! within +-d (JCGM 101:2008, 6.4.3).

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, invalid, invert_cdf,
    require_finite, require_ordered, uniform01,
};
use rand::Rng;

/// Rectangular on [a_s, b_s] with a_s ~ R(a - d, a + d) and b_s = a + b - a_s. Sampled as
/// JCGM 101 6.4.3.4: a_s = (a - d) + 2 d r1, b_s = (a + b) - a_s, x = a_s + (b_s - a_s) r2.
/// Variance (b - a)^2 / 12 + d^2 / 9 (JCGM 101 6.4.3.3). With centre c, half-width w = (b - a)/2
/// and t = |x - c|, the density is ln((w + d)/(w - d)) / (4 d) for t <= w - d and
/// ln((w + d)/t) / (4 d) for w - d < t <= w + d (JCGM 101 6.4.3.2). Requires 0 < d < w.
#[derive(Clone, Debug, PartialEq)]
pub struct CurvilinearTrapezoid {
    pub(crate) min: f64,
    pub(crate) max: f64,
    pub(crate) spread: f64,
}

impl CurvilinearTrapezoid {
    /// A curvilinear trapezoid; requires `min < max` and `0 < limit_spread < (max - min)/2`.
    pub fn new(min: f64, max: f64, limit_spread: f64) -> Result<Self, ParameterError> {
        require_ordered(min, max)?;
        require_finite("limit_spread", limit_spread)?;
        let w = 0.5 * (max - min);
        if !(limit_spread > 0.0 && limit_spread < w) {
            return Err(invalid(
                "limit_spread",
                format!(
                    "`limit_spread` (the half-width d of the uncertainty of each limit) must lie \
                     in (0, (max - min)/2) = (0, {w}) (got {limit_spread}); for exactly known \
                     limits use dist = \"rectangular\""
                ),
            ));
        }
        Ok(CurvilinearTrapezoid {
            min,
            max,
            spread: limit_spread,
        })
    }
    fn centre(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    fn half(&self) -> f64 {
        0.5 * (self.max - self.min)
    }
    /// Probability between the centre and centre + t, for t >= 0.
    fn half_cdf(&self, t: f64) -> f64 {
        let (w, d) = (self.half(), self.spread);
        let inner = w - d;
        if t <= 0.0 {
            0.0
        } else if t <= inner {
            t * ((w + d) / inner).ln() / (4.0 * d)
        } else if t < w + d {
            (t * ((w + d) / t).ln() + t - inner) / (4.0 * d)
        } else {
            0.5
        }
    }
}

impl Family for CurvilinearTrapezoid {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "curvilinear-trapezoid",
        aliases: &[],
        params: &[
            ("min", ParamKind::Quantity),
            ("max", ParamKind::Quantity),
            ("limit_spread", ParamKind::Quantity),
        ],
        example: "dist = \"curvilinear-trapezoid\", min = \"0.9 mm\", max = \"1.1 mm\", limit_spread = \"0.02 mm\"",
        type_b_dof: true,
        build: |p| Ok(CurvilinearTrapezoid::new(p.numbers[0], p.numbers[1], p.numbers[2])?.into()),
    }];
    fn mean(&self) -> f64 {
        self.centre()
    }
    fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w / 12.0 + self.spread * self.spread / 9.0
    }
    /// Symmetric; X = c + H V with V rectangular on [-1, 1] and the half-width H rectangular on
    /// [a - d, a + d]: E X^2 = E H^2 / 3, E X^4 = E H^4 / 5 with E H^2 = a^2 + d^2/3 and
    /// E H^4 = a^4 + 2 a^2 d^2 + d^4/5.
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        let (a, d) = (0.5 * (self.max - self.min), self.spread);
        let h2 = a * a + d * d / 3.0;
        let h4 = a.powi(4) + 2.0 * a * a * d * d + d.powi(4) / 5.0;
        (h4 / 5.0) / (h2 / 3.0).powi(2)
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let a_s = (self.min - self.spread) + 2.0 * self.spread * uniform01(rng);
        let b_s = (self.min + self.max) - a_s;
        a_s + (b_s - a_s) * uniform01(rng)
    }
    fn quantile(&self, p: f64) -> f64 {
        let (w, d) = (self.half(), self.spread);
        let target = (p - 0.5).abs();
        let t = invert_cdf(|t| self.half_cdf(t), target, 0.0, w + d);
        if p >= 0.5 {
            self.centre() + t
        } else {
            self.centre() - t
        }
    }
    fn cdf(&self, x: f64) -> f64 {
        let t = x - self.centre();
        if t >= 0.0 {
            0.5 + self.half_cdf(t)
        } else {
            0.5 - self.half_cdf(-t)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        let (w, d) = (self.half(), self.spread);
        let t = (x - self.centre()).abs();
        if t <= w - d {
            ((w + d) / (w - d)).ln() / (4.0 * d)
        } else if t < w + d {
            ((w + d) / t).ln() / (4.0 * d)
        } else {
            0.0
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(CurvilinearTrapezoid::new(self.min + delta, self.max + delta, self.spread)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let (a, b) = super::narrowed_limits(self.min, self.max, factor);
        Ok(CurvilinearTrapezoid::new(a, b, self.spread / factor)?.into())
    }
}
