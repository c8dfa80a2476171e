//! Probability distributions for input quantities (JCGM 101:2008, 6.4 and Table 1, and beyond
//! it: truncated normal, beta, lognormal).
//!
//! Each family lives in its own file, implements [`Family`], and is validated when it is built
//! (a negative spread or `min >= max` is an error, never clamped). [`Distribution`] is the closed
//! set of families a scenario can name; the engine fills whole blocks of trials through
//! [`Distribution::fill`], so the per-family sampler is inlined in a tight loop.
//!
//! To add a family: write `src/dist/<name>.rs` with a struct, a validating `new`, and a
//! [`Family`] impl; add a variant to [`Distribution`] and to the `dispatch!` macro; teach
//! `scenario::inputs` its parameter names; add its checks to `tests/distributions.rs`.

use rand::Rng;

mod arcsine;
mod beta;
mod curvilinear;
mod exponential;
mod gamma;
mod lognormal;
mod normal;
mod rectangular;
pub mod special;
mod student_t;
mod transform;
mod trapezoidal;
mod triangular;
mod truncated_normal;

pub use arcsine::Arcsine;
pub use beta::BetaScaled;
pub use curvilinear::CurvilinearTrapezoid;
pub use exponential::Exponential;
pub use gamma::GammaDist;
pub use lognormal::LogNormal;
pub use normal::Normal;
pub use rectangular::Rectangular;
pub use student_t::{ScaledT, T_QUANTILE_NORMAL_ABOVE, t_quantile as student_t_quantile};
pub use trapezoidal::Trapezoidal;
pub use triangular::Triangular;
pub use truncated_normal::TruncatedNormal;

/// A parameter that makes a distribution impossible, with the reason in words.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{reason}")]
pub struct ParameterError {
    /// The parameter name as written in a scenario (`sd`, `max`, `beta`...).
    pub parameter: &'static str,
    /// What is wrong and what would be valid.
    pub reason: String,
}

pub(crate) fn invalid(parameter: &'static str, reason: impl Into<String>) -> ParameterError {
    ParameterError {
        parameter,
        reason: reason.into(),
    }
}

/// What every distribution family provides.
pub trait Family {
    /// Expectation of the distribution.
    fn mean(&self) -> f64;
    /// Variance of the distribution (may be infinite, e.g. t with 2 or fewer degrees of freedom).
    fn variance(&self) -> f64;
    /// One draw.
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64;
    /// The quantile (inverse distribution function) at probability `p` in (0, 1).
    fn quantile(&self, p: f64) -> f64;
    /// The distribution function.
    fn cdf(&self, x: f64) -> f64;
    /// The probability density.
    fn pdf(&self, x: f64) -> f64;
    /// Degrees of freedom attached to the distribution (t and readings), if any.
    fn degrees_of_freedom(&self) -> Option<f64> {
        None
    }
}

/// A standard uniform draw in [0, 1) with 53 random bits.
#[inline(always)]
pub fn uniform01<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// A standard uniform draw in the open interval (0, 1), for inverse-distribution sampling.
#[inline(always)]
pub fn uniform_open01<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    ((rng.next_u64() >> 11) as f64 + 0.5) * (1.0 / (1u64 << 53) as f64)
}

/// The distribution families a scenario can name.
#[derive(Clone, Debug, PartialEq)]
pub enum Distribution {
    /// Gaussian N(mean, sd^2) (JCGM 101 6.4.7).
    Normal(Normal),
    /// Rectangular R(a, b) (JCGM 101 6.4.2).
    Rectangular(Rectangular),
    /// Symmetric triangular T(a, b) (JCGM 101 6.4.5).
    Triangular(Triangular),
    /// Symmetric trapezoidal with top-to-base ratio beta (JCGM 101 6.4.4).
    Trapezoidal(Trapezoidal),
    /// Curvilinear trapezoid: rectangular with inexactly known limits (JCGM 101 6.4.3).
    CurvilinearTrapezoid(CurvilinearTrapezoid),
    /// Arcsine (U-shaped) U(a, b) (JCGM 101 6.4.6).
    Arcsine(Arcsine),
    /// Scaled and shifted t (JCGM 101 6.4.9), also built from repeated readings.
    T(ScaledT),
    /// Exponential with a given mean (JCGM 101 6.4.10).
    Exponential(Exponential),
    /// Gamma with shape and scale (JCGM 101 6.4.11).
    Gamma(GammaDist),
    /// Normal truncated to [min, max].
    TruncatedNormal(TruncatedNormal),
    /// Beta(alpha, beta) scaled to [min, max].
    Beta(BetaScaled),
    /// Lognormal with the given mean and standard deviation of the quantity itself.
    LogNormal(LogNormal),
}

macro_rules! dispatch {
    ($self:expr, $d:ident => $body:expr) => {
        match $self {
            Distribution::Normal($d) => $body,
            Distribution::Rectangular($d) => $body,
            Distribution::Triangular($d) => $body,
            Distribution::Trapezoidal($d) => $body,
            Distribution::CurvilinearTrapezoid($d) => $body,
            Distribution::Arcsine($d) => $body,
            Distribution::T($d) => $body,
            Distribution::Exponential($d) => $body,
            Distribution::Gamma($d) => $body,
            Distribution::TruncatedNormal($d) => $body,
            Distribution::Beta($d) => $body,
            Distribution::LogNormal($d) => $body,
        }
    };
}

impl Distribution {
    /// The family's name as written in a scenario's `dist` key.
    pub fn family_name(&self) -> &'static str {
        match self {
            Distribution::Normal(_) => "normal",
            Distribution::Rectangular(_) => "rectangular",
            Distribution::Triangular(_) => "triangular",
            Distribution::Trapezoidal(_) => "trapezoidal",
            Distribution::CurvilinearTrapezoid(_) => "curvilinear-trapezoid",
            Distribution::Arcsine(_) => "arcsine",
            Distribution::T(t) if t.is_from_readings() => "readings",
            Distribution::T(_) => "t",
            Distribution::Exponential(_) => "exponential",
            Distribution::Gamma(_) => "gamma",
            Distribution::TruncatedNormal(_) => "truncated-normal",
            Distribution::Beta(_) => "beta",
            Distribution::LogNormal(_) => "lognormal",
        }
    }

    /// Fill `out` with independent draws, in order. One match per block; the family's sampler
    /// is inlined in the loop.
    pub fn fill<R: Rng + Clone>(&self, rng: &mut R, out: &mut [f64]) {
        // Drawn from a local copy of the generator, written back after: the same stream, with
        // the generator's state kept in registers through the loop.
        let mut local = rng.clone();
        dispatch!(self, d => {
            for x in out.iter_mut() {
                *x = d.sample(&mut local);
            }
        });
        *rng = local;
    }

    /// One draw.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        dispatch!(self, d => d.sample(rng))
    }

    /// Expectation.
    pub fn mean(&self) -> f64 {
        dispatch!(self, d => d.mean())
    }

    /// Variance.
    pub fn variance(&self) -> f64 {
        dispatch!(self, d => d.variance())
    }

    /// Standard deviation, the standard uncertainty of JCGM 101 (square root of the variance).
    pub fn standard_deviation(&self) -> f64 {
        self.variance().sqrt()
    }

    /// Quantile at probability `p` in (0, 1).
    pub fn quantile(&self, p: f64) -> f64 {
        dispatch!(self, d => d.quantile(p))
    }

    /// Distribution function.
    pub fn cdf(&self, x: f64) -> f64 {
        dispatch!(self, d => d.cdf(x))
    }

    /// Probability density.
    pub fn pdf(&self, x: f64) -> f64 {
        dispatch!(self, d => d.pdf(x))
    }

    /// Degrees of freedom carried by the family (t and readings).
    pub fn degrees_of_freedom(&self) -> Option<f64> {
        dispatch!(self, d => d.degrees_of_freedom())
    }
}

/// Invert a continuous, non-decreasing distribution function by bisection on [lo, hi], to full
/// double precision. Used where no closed-form quantile exists.
pub(crate) fn invert_cdf(cdf: impl Fn(f64) -> f64, p: f64, mut lo: f64, mut hi: f64) -> f64 {
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if cdf(mid) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

pub(crate) fn require_finite(parameter: &'static str, x: f64) -> Result<f64, ParameterError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(invalid(
            parameter,
            format!("`{parameter}` must be a finite number"),
        ))
    }
}

pub(crate) fn require_positive(parameter: &'static str, x: f64) -> Result<f64, ParameterError> {
    require_finite(parameter, x)?;
    if x > 0.0 {
        Ok(x)
    } else {
        Err(invalid(
            parameter,
            format!("`{parameter}` must be greater than 0 (got {x})"),
        ))
    }
}

pub(crate) fn require_ordered(min: f64, max: f64) -> Result<(), ParameterError> {
    require_finite("min", min)?;
    require_finite("max", max)?;
    if min < max {
        Ok(())
    } else {
        Err(invalid(
            "max",
            format!("`min` must be less than `max` (got min = {min}, max = {max})"),
        ))
    }
}
