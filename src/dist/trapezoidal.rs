//! Symmetric trapezoidal distribution (JCGM 101:2008, 6.4.4).

use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, invalid, require_finite,
    require_ordered, uniform01,
};
use rand::Rng;

/// Symmetric trapezoid on [min, max] whose top is `beta` times its base (0 <= beta <= 1;
/// beta = 0 is triangular, beta = 1 rectangular). Sampled as the sum of two rectangulars,
/// x = a + (b - a)/2 [(1 + beta) r1 + (1 - beta) r2]; variance (b - a)^2 (1 + beta^2) / 24
/// (JCGM 101 6.4.4.4 and 6.4.4.5).
#[derive(Clone, Debug, PartialEq)]
pub struct Trapezoidal {
    pub(crate) min: f64,
    pub(crate) max: f64,
    pub(crate) beta: f64,
}

impl Trapezoidal {
    /// A trapezoidal distribution; requires `min < max` and `0 <= beta <= 1`.
    pub fn new(min: f64, max: f64, beta: f64) -> Result<Self, ParameterError> {
        require_ordered(min, max)?;
        require_finite("beta", beta)?;
        if !(0.0..=1.0).contains(&beta) {
            return Err(invalid(
                "beta",
                format!("`beta` (top-to-base ratio) must lie in [0, 1] (got {beta})"),
            ));
        }
        Ok(Trapezoidal { min, max, beta })
    }

    /// Density on the plateau: 2 / ((b - a)(1 + beta)).
    fn height(&self) -> f64 {
        2.0 / ((self.max - self.min) * (1.0 + self.beta))
    }

    /// Width of each sloping side: (1 - beta)(b - a)/2.
    fn ramp(&self) -> f64 {
        (1.0 - self.beta) * 0.5 * (self.max - self.min)
    }
}

impl Family for Trapezoidal {
    const SPECS: &'static [FamilySpec] = &[FamilySpec {
        name: "trapezoidal",
        aliases: &[],
        params: &[
            ("min", ParamKind::Quantity),
            ("max", ParamKind::Quantity),
            ("beta", ParamKind::Pure),
        ],
        example: "dist = \"trapezoidal\", min = \"0.9 mm\", max = \"1.1 mm\", beta = 0.5",
        type_b_dof: true,
        build: |p| Ok(Trapezoidal::new(p.numbers[0], p.numbers[1], p.numbers[2])?.into()),
    }];
    fn mean(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w * (1.0 + self.beta * self.beta) / 24.0
    }
    /// Symmetric; the sum of rectangulars of half-widths h1 = w(1 + beta)/4 and
    /// h2 = w(1 - beta)/4, whose fourth cumulants -(2/15) h^4 add: 3 - (2/15)(h1^4 + h2^4)/sigma^4.
    fn skewness(&self) -> f64 {
        0.0
    }
    fn kurtosis(&self) -> f64 {
        let w = self.max - self.min;
        let (h1, h2) = (w * (1.0 + self.beta) / 4.0, w * (1.0 - self.beta) / 4.0);
        3.0 - (2.0 / 15.0) * (h1.powi(4) + h2.powi(4)) / self.variance().powi(2)
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let r1 = uniform01(rng);
        let r2 = uniform01(rng);
        self.min + 0.5 * (self.max - self.min) * ((1.0 + self.beta) * r1 + (1.0 - self.beta) * r2)
    }
    fn quantile(&self, p: f64) -> f64 {
        let (h, d) = (self.height(), self.ramp());
        let lower = |p: f64| {
            let corner = 0.5 * h * d;
            if p <= corner {
                (2.0 * d * p / h).sqrt()
            } else {
                d + (p - corner) / h
            }
        };
        if p <= 0.5 {
            self.min + lower(p)
        } else {
            self.max - lower(1.0 - p)
        }
    }
    fn cdf(&self, x: f64) -> f64 {
        let (h, d) = (self.height(), self.ramp());
        let lower = |t: f64| {
            if t <= 0.0 {
                0.0
            } else if t <= d {
                0.5 * h * t * t / d
            } else {
                0.5 * h * d + h * (t - d)
            }
        };
        if x <= self.mean() {
            lower(x - self.min)
        } else {
            1.0 - lower(self.max - x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        let (h, d) = (self.height(), self.ramp());
        let t = (x - self.min).min(self.max - x);
        if t < 0.0 {
            0.0
        } else if t < d {
            h * t / d
        } else {
            h
        }
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let delta = mean - self.mean();
        Ok(Trapezoidal::new(self.min + delta, self.max + delta, self.beta)?.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let (a, b) = super::narrowed_limits(self.min, self.max, factor);
        Ok(Trapezoidal::new(a, b, self.beta)?.into())
    }
}
