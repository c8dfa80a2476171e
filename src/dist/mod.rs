//! Probability distributions for input quantities (JCGM 101:2008, 6.4 and Table 1, and beyond
//! it: truncated normal, beta, lognormal).
//!
//! Each family lives in its own file and describes itself: the names a scenario may give it, its
//! parameters with an example line, how it is built from them (validated: a negative spread or
//! `min >= max` is an error, never clamped), how it moves to a new estimate (sweeps) and narrows
//! (plans), and its moments, sampler, quantile and density ([`Family`]). The one list in
//! [`families!`](crate::dist) below makes the closed enum [`Distribution`] the engine dispatches
//! on once per block (so each sampler is inlined in a tight loop), the scenario reader's table of
//! names ([`families`]) and the JSON Schema. To add a family: write `src/dist/<name>.rs` with a
//! struct, a validating `new` and an `impl Family` (see `rectangular.rs`), and add one line to
//! the list; `tests/distributions.rs` then checks it against a reference table.

use rand::Rng;

pub(crate) mod special;

/// A parameter that makes a distribution impossible, with the reason in words.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{reason}")]
pub struct ParameterError {
    /// The parameter name as written in a scenario (`sd`, `max`, `beta`...).
    pub(crate) parameter: &'static str,
    /// What is wrong and what would be valid.
    pub(crate) reason: String,
}

pub(crate) fn invalid(parameter: &'static str, reason: impl Into<String>) -> ParameterError {
    ParameterError {
        parameter,
        reason: reason.into(),
    }
}

/// How a family's parameter is written in a scenario.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ParamKind {
    /// A quantity with the input's dimension ("2 mm").
    Quantity,
    /// A pure number (shape, alpha, beta, dof).
    Pure,
    /// An array of quantities (readings).
    Quantities,
}

/// The parameter values read from a scenario, SI, in the order of [`FamilySpec::params`]: one
/// number per `Quantity` or `Pure` parameter in `numbers`, the array of a `Quantities` one in
/// `list`.
#[derive(Clone, Copy, Debug)]
pub struct ParamValues<'a> {
    /// The single numbers, in parameter order.
    pub numbers: &'a [f64],
    /// The values of the array parameter, if the family has one.
    pub list: &'a [f64],
}

/// A family as a scenario names it.
#[derive(Clone, Copy, Debug)]
pub struct FamilySpec {
    /// The name in `dist = "..."`.
    pub name: &'static str,
    /// Other names accepted for it (JCGM 101 Table 1 gives some families two).
    pub(crate) aliases: &'static [&'static str],
    /// Its parameters, in the order `build` reads them.
    pub params: &'static [(&'static str, ParamKind)],
    /// A valid table line, for messages, the schema and the starter file.
    pub example: &'static str,
    /// Whether a Type B `dof` key may be given (not for families that carry their own).
    pub(crate) type_b_dof: bool,
    /// Build the distribution from its parameter values.
    pub build: fn(&ParamValues<'_>) -> Result<Distribution, ParameterError>,
}

/// What every distribution family provides.
pub(crate) trait Family: Sized {
    /// How scenarios name it (usually one spec; the t distribution has two, `t` and `readings`).
    const SPECS: &'static [FamilySpec];
    /// Its name as written in a scenario's `dist` key.
    fn name(&self) -> &'static str {
        Self::SPECS[0].name
    }
    /// Expectation of the distribution.
    fn mean(&self) -> f64;
    /// Variance of the distribution (may be infinite, e.g. t with 2 or fewer degrees of freedom).
    fn variance(&self) -> f64;
    /// Skewness mu_3 / sigma^3 (NaN where the third moment does not exist).
    fn skewness(&self) -> f64;
    /// Kurtosis mu_4 / sigma^4 (3 for a normal; infinite where the fourth moment is).
    fn kurtosis(&self) -> f64;
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
    /// The same family moved so that its expectation is `mean` (a sweep point): families of
    /// location shift every parameter of place by the same amount; families on (0, inf) whose
    /// spread follows the mean scale instead, keeping their relative spread.
    fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError>;
    /// The distribution with its standard deviation divided by `factor` (> 0, checked by the
    /// caller) about the same mean (a plan): spreads, half-widths and scales are divided.
    fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError>;
}

/// A standard uniform draw in [0, 1) with 53 random bits.
#[inline(always)]
pub(crate) fn uniform01<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// A standard uniform draw in the open interval (0, 1), for inverse-distribution sampling.
#[inline(always)]
pub(crate) fn uniform_open01<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    ((rng.next_u64() >> 11) as f64 + 0.5) * (1.0 / (1u64 << 53) as f64)
}

/// The one list of families: each line is `Variant(module::Type)`, in the order scenarios,
/// messages and the schema show them. It declares the modules, the enum [`Distribution`] with
/// its dispatch, and [`families`].
macro_rules! families {
    ($($(#[$doc:meta])* $variant:ident($module:ident::$ty:ident),)*) => {
        $(mod $module; pub use $module::$ty;)*

        /// The distribution families a scenario can name.
        #[derive(Clone, Debug, PartialEq)]
        pub enum Distribution {
            $($(#[$doc])* $variant($ty),)*
        }

        $(impl From<$ty> for Distribution {
            fn from(d: $ty) -> Distribution {
                Distribution::$variant(d)
            }
        })*

        /// Every family a scenario can name, in the order of the list.
        pub fn families() -> impl Iterator<Item = &'static FamilySpec> {
            [$(<$ty as Family>::SPECS),*].into_iter().flatten()
        }

        impl Distribution {
            /// The family's name as written in a scenario's `dist` key.
            pub fn family_name(&self) -> &'static str {
                match self { $(Distribution::$variant(d) => d.name(),)* }
            }

            /// Fill `out` with independent draws, in order. One match per block; the family's
            /// sampler is inlined in the loop.
            pub fn fill<R: Rng + Clone>(&self, rng: &mut R, out: &mut [f64]) {
                // Drawn from a local copy of the generator, written back after: the same
                // stream, with the generator's state kept in registers through the loop.
                let mut local = rng.clone();
                match self {
                    $(Distribution::$variant(d) => {
                        for x in out.iter_mut() {
                            *x = d.sample(&mut local);
                        }
                    })*
                }
                *rng = local;
            }

            /// One draw.
            pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
                match self { $(Distribution::$variant(d) => d.sample(rng),)* }
            }

            /// Expectation.
            pub fn mean(&self) -> f64 {
                match self { $(Distribution::$variant(d) => d.mean(),)* }
            }

            /// Variance.
            pub fn variance(&self) -> f64 {
                match self { $(Distribution::$variant(d) => d.variance(),)* }
            }

            /// Skewness mu_3 / sigma^3.
            pub fn skewness(&self) -> f64 {
                match self { $(Distribution::$variant(d) => d.skewness(),)* }
            }

            /// Kurtosis mu_4 / sigma^4.
            pub fn kurtosis(&self) -> f64 {
                match self { $(Distribution::$variant(d) => d.kurtosis(),)* }
            }

            /// Quantile at probability `p` in (0, 1).
            pub fn quantile(&self, p: f64) -> f64 {
                match self { $(Distribution::$variant(d) => d.quantile(p),)* }
            }

            /// Distribution function.
            pub fn cdf(&self, x: f64) -> f64 {
                match self { $(Distribution::$variant(d) => d.cdf(x),)* }
            }

            /// Probability density.
            pub(crate) fn pdf(&self, x: f64) -> f64 {
                match self { $(Distribution::$variant(d) => d.pdf(x),)* }
            }

            /// Degrees of freedom carried by the family (t and readings).
            pub fn degrees_of_freedom(&self) -> Option<f64> {
                match self { $(Distribution::$variant(d) => d.degrees_of_freedom(),)* }
            }

            /// The same distribution moved so that its expectation is `mean` (see
            /// [`Family::with_mean`]).
            pub(crate) fn with_mean(&self, mean: f64) -> Result<Distribution, ParameterError> {
                match self { $(Distribution::$variant(d) => d.with_mean(mean),)* }
            }

            /// The same distribution with its standard deviation divided by `factor` (> 0),
            /// same mean (see [`Family::narrowed`]).
            pub(crate) fn narrowed(&self, factor: f64) -> Result<Distribution, ParameterError> {
                if !(factor > 0.0 && factor.is_finite()) {
                    return Err(invalid(
                        "factor",
                        format!("an improvement factor must be positive and finite (got {factor})"),
                    ));
                }
                match self { $(Distribution::$variant(d) => d.narrowed(factor),)* }
            }
        }
    };
}

families! {
    /// Gaussian N(mean, sd^2) (JCGM 101 6.4.7).
    Normal(normal::Normal),
    /// Rectangular R(a, b) (JCGM 101 6.4.2).
    Rectangular(rectangular::Rectangular),
    /// Symmetric triangular T(a, b) (JCGM 101 6.4.5).
    Triangular(triangular::Triangular),
    /// Symmetric trapezoidal with top-to-base ratio beta (JCGM 101 6.4.4).
    Trapezoidal(trapezoidal::Trapezoidal),
    /// Curvilinear trapezoid: rectangular with inexactly known limits (JCGM 101 6.4.3).
    CurvilinearTrapezoid(curvilinear::CurvilinearTrapezoid),
    /// Arcsine (U-shaped) U(a, b) (JCGM 101 6.4.6).
    Arcsine(arcsine::Arcsine),
    /// Scaled and shifted t (JCGM 101 6.4.9), also built from repeated readings.
    T(student_t::ScaledT),
    /// Exponential with a given mean (JCGM 101 6.4.10).
    Exponential(exponential::Exponential),
    /// Gamma with shape and scale (JCGM 101 6.4.11).
    Gamma(gamma::GammaDist),
    /// Normal truncated to [min, max].
    TruncatedNormal(truncated_normal::TruncatedNormal),
    /// Beta(alpha, beta) scaled to [min, max].
    Beta(beta::BetaScaled),
    /// Lognormal with the given mean and standard deviation of the quantity itself.
    LogNormal(lognormal::LogNormal),
}

pub(crate) use student_t::t_quantile as student_t_quantile;

impl Distribution {
    /// Standard deviation, the standard uncertainty of JCGM 101 (square root of the variance).
    pub(crate) fn standard_deviation(&self) -> f64 {
        self.variance().sqrt()
    }
}

/// The family a scenario names by `name` or one of its aliases (case-insensitive).
pub(crate) fn family_by_name(name: &str) -> Option<&'static FamilySpec> {
    let lower = name.to_ascii_lowercase();
    families().find(|f| f.name == lower || f.aliases.contains(&lower.as_str()))
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

/// Smallest and largest shape parameter (gamma shape, beta alpha and beta) accepted. Outside,
/// the quantile function that correlated inputs are drawn through (statrs 0.19) panics on
/// subnormal values or runs for minutes on huge ones (measured: beta alpha = 1e7 with
/// beta = 1e-6 did not finish in 20 s), and the distribution is better stated another way.
pub(crate) const SHAPE_RANGE: (f64, f64) = (1e-3, 1e5);

/// A shape parameter within [`SHAPE_RANGE`], refused with the reason outside it.
pub(crate) fn require_shape(parameter: &'static str, x: f64) -> Result<f64, ParameterError> {
    let x = require_positive(parameter, x)?;
    let (least, most) = SHAPE_RANGE;
    if x < least {
        return Err(invalid(
            parameter,
            format!(
                "`{parameter}` = {x:e} is below {least}: nearly all the probability would sit at one \
                 end, which the quantile function cannot resolve; give a value of {least} or more \
                 or choose another family"
            ),
        ));
    }
    if x > most {
        return Err(invalid(
            parameter,
            format!(
                "`{parameter}` = {x:e} is above {most}: the distribution is then a normal one to \
                 within its skewness (below 0.01); state it as dist = \"normal\" with its mean \
                 and standard deviation"
            ),
        ));
    }
    Ok(x)
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

/// Limits [a, b] narrowed by `factor` about their centre (the half-width divided).
pub(crate) fn narrowed_limits(min: f64, max: f64, factor: f64) -> (f64, f64) {
    let c = 0.5 * (min + max);
    let h = 0.5 * (max - min) / factor;
    (c - h, c + h)
}
#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn all() -> Vec<Distribution> {
        vec![
            Distribution::Normal(Normal::new(2.0, 0.3).unwrap()),
            Distribution::Rectangular(Rectangular::new(1.0, 3.0).unwrap()),
            Distribution::Triangular(Triangular::new(1.0, 3.0).unwrap()),
            Distribution::Trapezoidal(Trapezoidal::new(1.0, 3.0, 0.4).unwrap()),
            Distribution::CurvilinearTrapezoid(CurvilinearTrapezoid::new(1.0, 3.0, 0.2).unwrap()),
            Distribution::Arcsine(Arcsine::new(1.0, 3.0).unwrap()),
            Distribution::T(ScaledT::new(2.0, 0.1, 9.0).unwrap()),
            Distribution::Exponential(Exponential::new(2.0).unwrap()),
            Distribution::Gamma(GammaDist::new(4.0, 0.5).unwrap()),
            Distribution::TruncatedNormal(TruncatedNormal::new(2.0, 0.2, 1.5, 2.5).unwrap()),
            Distribution::Beta(BetaScaled::new(3.0, 5.0, 1.0, 3.0).unwrap()),
            Distribution::LogNormal(LogNormal::new(2.0, 0.3).unwrap()),
        ]
    }

    // Moving keeps the spread (families of location) or the relative spread (families on
    // (0, inf)); narrowing divides the standard deviation by the factor at the same mean
    // (exactly, except a truncated normal, whose parent is narrowed).
    #[test]
    fn moved_and_narrowed() {
        for d in all() {
            let moved = d.with_mean(2.5).unwrap();
            assert_relative_eq!(moved.mean(), 2.5, max_relative = 1e-12);
            let relative = matches!(
                d,
                Distribution::Exponential(_) | Distribution::Gamma(_) | Distribution::LogNormal(_)
            );
            let expected_sd = if relative {
                d.standard_deviation() * 2.5 / d.mean()
            } else {
                d.standard_deviation()
            };
            assert_relative_eq!(moved.standard_deviation(), expected_sd, max_relative = 1e-9);
            let narrow = d.narrowed(4.0).unwrap();
            assert_relative_eq!(narrow.mean(), d.mean(), max_relative = 1e-12);
            if !matches!(d, Distribution::TruncatedNormal(_)) {
                assert_relative_eq!(
                    narrow.standard_deviation(),
                    d.standard_deviation() / 4.0,
                    max_relative = 1e-9
                );
            } else {
                assert!(narrow.standard_deviation() < d.standard_deviation() / 3.0);
            }
        }
        assert!(all()[0].narrowed(0.0).is_err());
    }
}
