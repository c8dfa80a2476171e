//! Scaled and shifted t distribution t_nu(mu, s^2) (JCGM 101:2008, 6.4.9), given directly or
//! built from a series of repeated readings.

use super::special::std_normal_quantile;
use super::{
    Distribution, Family, FamilySpec, ParamKind, ParameterError, invalid, require_finite,
    require_positive,
};
use rand::Rng;
use rand_distr::{Distribution as _, StandardNormal};
use statrs::distribution::{Continuous, ContinuousCDF};

/// Above this many degrees of freedom statrs 0.19's `StudentsT::inverse_cdf` loses accuracy
/// (measured: wrong by -6.8e-6 at 1e5) and never returns at infinity, so the normal quantile is
/// used instead; its difference from t at 1e4 degrees of freedom is below 1e-4 relative.
pub(crate) const T_QUANTILE_NORMAL_ABOVE: f64 = 1e4;

/// The quantile of Student's t with `dof` degrees of freedom at probability `p`; the normal
/// quantile above [`T_QUANTILE_NORMAL_ABOVE`] and for infinite `dof`.
pub(crate) fn t_quantile(p: f64, dof: f64) -> f64 {
    if !dof.is_finite() || dof > T_QUANTILE_NORMAL_ABOVE {
        return std_normal_quantile(p);
    }
    match statrs::distribution::StudentsT::new(0.0, 1.0, dof) {
        Ok(t) => t.inverse_cdf(p.clamp(0.0, 1.0)),
        Err(_) => f64::NAN,
    }
}

/// A standard Student t draw with `dof` degrees of freedom: t = Z / sqrt(V / nu) with Z standard
/// normal and V = 2 G, G ~ Gamma(nu/2, 1) by the method of Marsaglia and Tsang (ACM TOMS 26, 363,
/// 2000; for a shape below 1, Gamma(a) = Gamma(a + 1) U^(1/a), their section 6). Written out
/// rather than taken from rand_distr's `StudentT`, which was measured here at 38 ns a draw against
/// about 15 ns for this inlined form; the distribution is checked against statrs and SciPy.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StandardT {
    /// nu.
    dof: f64,
    /// d = a - 1/3 for the shape a >= 1 actually sampled.
    d: f64,
    /// c = 1 / sqrt(9 d).
    c: f64,
    /// 1/a when the shape a = nu/2 is below 1 (then a + 1 is sampled), else 0.
    boost: f64,
}

impl StandardT {
    /// The sampler for `dof` > 0 degrees of freedom.
    pub(crate) fn new(dof: f64) -> StandardT {
        let a = 0.5 * dof;
        let (shape, boost) = if a < 1.0 {
            (a + 1.0, 1.0 / a)
        } else {
            (a, 0.0)
        };
        let d = shape - 1.0 / 3.0;
        StandardT {
            dof,
            d,
            c: 1.0 / (9.0 * d).sqrt(),
            boost,
        }
    }

    /// One draw.
    #[inline(always)]
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let z: f64 = StandardNormal.sample(rng);
        let g = loop {
            let x: f64 = StandardNormal.sample(rng);
            let v = 1.0 + self.c * x;
            if v <= 0.0 {
                continue;
            }
            let v = v * v * v;
            let u = super::uniform_open01(rng);
            let x2 = x * x;
            if u < 1.0 - 0.0331 * x2 * x2 || u.ln() < 0.5 * x2 + self.d * (1.0 - v + v.ln()) {
                break self.d * v;
            }
        };
        let g = if self.boost > 0.0 {
            g * super::uniform_open01(rng).powf(self.boost)
        } else {
            g
        };
        z / (2.0 * g / self.dof).sqrt()
    }
}

/// x = mean + scale t_nu. From n readings with mean xbar and standard deviation s:
/// mean = xbar, scale = s / sqrt n, nu = n - 1 (JCGM 101 6.4.9.2). The variance,
/// scale^2 nu / (nu - 2), is finite only for nu > 2 (JCGM 101 6.4.9.3).
#[derive(Clone, Debug)]
pub struct ScaledT {
    pub(crate) mean: f64,
    pub(crate) scale: f64,
    pub(crate) dof: f64,
    pub(crate) readings: Option<usize>,
    pub(crate) sampler: StandardT,
    pub(crate) reference: statrs::distribution::StudentsT,
}

impl PartialEq for ScaledT {
    fn eq(&self, other: &Self) -> bool {
        self.mean == other.mean
            && self.scale == other.scale
            && self.dof == other.dof
            && self.readings == other.readings
    }
}

impl ScaledT {
    /// A scaled and shifted t; `scale` and `dof` must be positive.
    pub fn new(mean: f64, scale: f64, dof: f64) -> Result<Self, ParameterError> {
        let mean = require_finite("mean", mean)?;
        let scale = require_positive("scale", scale)?;
        let dof = require_positive("dof", dof)?;
        let least = super::SHAPE_RANGE.0;
        if dof < least {
            // Below it statrs's quantile function panics (subnormal halves) and the draws
            // overflow: no state of knowledge is that heavy-tailed.
            return Err(invalid(
                "dof",
                format!(
                    "`dof` = {dof:e} is below {least}; give the degrees of freedom of the evaluation (at least {least})"
                ),
            ));
        }
        Self::build(mean, scale, dof, None)
    }

    /// The t distribution of JCGM 101 6.4.9 for a series of repeated indications.
    pub fn from_readings(values: &[f64]) -> Result<Self, ParameterError> {
        let n = values.len();
        if n < 2 {
            return Err(invalid(
                "values",
                format!("`values` needs at least 2 readings (got {n})"),
            ));
        }
        if let Some(bad) = values.iter().find(|v| !v.is_finite()) {
            return Err(invalid("values", format!("reading {bad} is not finite")));
        }
        let mean = values.iter().sum::<f64>() / n as f64;
        let ss: f64 = values.iter().map(|v| (v - mean).powi(2)).sum();
        let s = (ss / (n as f64 - 1.0)).sqrt();
        if !(mean.is_finite() && s.is_finite()) {
            return Err(invalid(
                "values",
                "the readings' mean or spread overflows double precision (values beyond about \
                 1e154 apart); write them in a larger unit",
            ));
        }
        if s <= 0.0 {
            return Err(invalid(
                "values",
                "the readings are all equal, so their standard deviation is 0; for a known \
                 constant write `value`",
            ));
        }
        Self::build(mean, s / (n as f64).sqrt(), n as f64 - 1.0, Some(n))
    }

    fn build(
        mean: f64,
        scale: f64,
        dof: f64,
        readings: Option<usize>,
    ) -> Result<Self, ParameterError> {
        let sampler = StandardT::new(dof);
        let reference = statrs::distribution::StudentsT::new(0.0, 1.0, dof)
            .map_err(|e| invalid("dof", format!("t parameters rejected: {e}")))?;
        Ok(ScaledT {
            mean,
            scale,
            dof,
            readings,
            sampler,
            reference,
        })
    }

    /// Whether this t was built from a series of readings.
    pub(crate) fn is_from_readings(&self) -> bool {
        self.readings.is_some()
    }

    /// The scale s / sqrt n: the GUM Type A standard uncertainty (JCGM 100 4.2.3), which the
    /// law of propagation uses with `dof` degrees of freedom.
    pub(crate) fn scale(&self) -> f64 {
        self.scale
    }
}

impl Family for ScaledT {
    const SPECS: &'static [FamilySpec] = &[
        FamilySpec {
            name: "t",
            aliases: &["student-t"],
            params: &[
                ("mean", ParamKind::Quantity),
                ("scale", ParamKind::Quantity),
                ("dof", ParamKind::Pure),
            ],
            example: "dist = \"t\", mean = \"1.25 mm\", scale = \"0.01 mm\", dof = 9",
            type_b_dof: false,
            build: |p| Ok(ScaledT::new(p.numbers[0], p.numbers[1], p.numbers[2])?.into()),
        },
        FamilySpec {
            name: "readings",
            aliases: &[],
            params: &[("values", ParamKind::Quantities)],
            example: "dist = \"readings\", values = [\"1.251 mm\", \"1.248 mm\", \"1.255 mm\", \"1.250 mm\"]",
            type_b_dof: false,
            build: |p| Ok(ScaledT::from_readings(p.list)?.into()),
        },
    ];
    fn name(&self) -> &'static str {
        if self.is_from_readings() {
            "readings"
        } else {
            "t"
        }
    }
    fn mean(&self) -> f64 {
        self.mean
    }
    fn variance(&self) -> f64 {
        if self.dof > 2.0 {
            self.scale * self.scale * self.dof / (self.dof - 2.0)
        } else {
            f64::INFINITY
        }
    }
    /// Symmetric (0 for nu > 3, NaN otherwise); kurtosis 3 + 6/(nu - 4) for nu > 4, infinite
    /// otherwise.
    fn skewness(&self) -> f64 {
        if self.dof > 3.0 { 0.0 } else { f64::NAN }
    }
    fn kurtosis(&self) -> f64 {
        if self.dof > 4.0 {
            3.0 + 6.0 / (self.dof - 4.0)
        } else {
            f64::INFINITY
        }
    }
    #[inline(always)]
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.mean + self.scale * self.sampler.sample(rng)
    }
    fn quantile(&self, p: f64) -> f64 {
        self.mean + self.scale * t_quantile(p, self.dof)
    }
    fn cdf(&self, x: f64) -> f64 {
        self.reference.cdf((x - self.mean) / self.scale)
    }
    fn pdf(&self, x: f64) -> f64 {
        self.reference.pdf((x - self.mean) / self.scale) / self.scale
    }
    fn degrees_of_freedom(&self) -> Option<f64> {
        Some(self.dof)
    }
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
        let mut t = ScaledT::new(mean, self.scale, self.dof)?;
        t.readings = self.readings;
        Ok(t.into())
    }
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
        let mut t = ScaledT::new(self.mean, self.scale / factor, self.dof)?;
        t.readings = self.readings;
        Ok(t.into())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    use rand::SeedableRng;

    // The sampler against statrs's distribution function, for small and large degrees of
    // freedom (the shape-below-1 branch included): the fraction of 200 000 draws below x is
    // within 5 binomial standard deviations of F(x).
    #[test]
    fn t_sampler_follows_the_t_distribution() {
        for dof in [0.7, 1.5, 2.0, 3.0, 9.0, 40.0] {
            let t = StandardT::new(dof);
            let reference = statrs::distribution::StudentsT::new(0.0, 1.0, dof).unwrap();
            let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(dof.to_bits());
            let n = 200_000;
            let draws: Vec<f64> = (0..n).map(|_| t.sample(&mut rng)).collect();
            for x in [-3.0, -1.0, -0.3, 0.0, 0.5, 2.0, 6.0] {
                let p = reference.cdf(x);
                let got = draws.iter().filter(|d| **d <= x).count() as f64 / n as f64;
                let tol = 5.0 * (p * (1.0 - p) / n as f64).sqrt() + 1e-4;
                assert!(
                    (got - p).abs() < tol,
                    "dof {dof}: F({x}) = {p}, sampled {got}"
                );
            }
        }
    }

    // t quantiles: t_0.975(16) = 2.1199, t_0.995(16) = 2.9208 [calc, REFERENCES 2]; above 1e4
    // degrees of freedom the normal quantile is used (statrs 0.19 is wrong there and never
    // returns at infinity); the switch moves the 97.5 % point by less than 1e-4 relative
    // (t_0.975(1e4) = 1.960201 against 1.959964).
    #[test]
    fn t_quantiles_and_the_switch_to_normal() {
        assert!((t_quantile(0.975, 16.0) - 2.1199).abs() < 1e-4);
        assert!((t_quantile(0.995, 16.0) - 2.9208).abs() < 1e-4);
        let below = t_quantile(0.975, T_QUANTILE_NORMAL_ABOVE);
        let above = t_quantile(0.975, T_QUANTILE_NORMAL_ABOVE * 1.0001);
        assert!((below - 1.960_201).abs() < 2e-6, "{below}");
        assert!((above - 1.959_964).abs() < 1e-6, "{above}");
        assert!((below - above).abs() / above < 1.3e-4);
        assert!((t_quantile(0.975, f64::INFINITY) - 1.959_964).abs() < 1e-6);
        assert!((t_quantile(0.975, 1e7) - 1.959_964).abs() < 1e-6);
    }
}
