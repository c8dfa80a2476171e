//! The Monte Carlo result for one measurand (JCGM 101:2008, 7.5 to 7.7).

use super::intervals::{CoverageIntervals, coverage_intervals};
use super::moments::Moments;

/// Estimate, standard uncertainty and coverage intervals of one measurand, in SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Summary {
    /// The estimate y: the mean of the M model values (JCGM 101 7.6).
    pub estimate: f64,
    /// The standard uncertainty u(y): their standard deviation with M - 1 (JCGM 101 7.6).
    pub standard_uncertainty: f64,
    /// The probabilistically symmetric coverage interval (JCGM 101 7.7.2).
    pub symmetric_interval: (f64, f64),
    /// The shortest coverage interval (JCGM 101 7.7.3).
    pub shortest_interval: (f64, f64),
    /// Half the length of the symmetric interval.
    pub(crate) expanded_uncertainty: f64,
    /// expanded_uncertainty / u(y); `None` when u(y) = 0.
    pub(crate) coverage_factor: Option<f64>,
}

impl Summary {
    /// u(y) / |y|, the relative standard uncertainty; `None` when the estimate is 0.
    pub(crate) fn relative_standard_uncertainty(&self) -> Option<f64> {
        (self.estimate != 0.0).then(|| self.standard_uncertainty / self.estimate.abs())
    }

    /// U / |y|, the relative expanded uncertainty; `None` when the estimate is 0.
    pub(crate) fn relative_expanded_uncertainty(&self) -> Option<f64> {
        (self.estimate != 0.0).then(|| self.expanded_uncertainty / self.estimate.abs())
    }
}

/// Summarise the values of one measurand given their moments and the coverage probability.
pub fn summarize(values: &[f64], moments: &Moments, coverage: f64) -> Summary {
    from_parts(moments, &coverage_intervals(values, coverage))
}

/// The summary from the merged moments and the coverage intervals (however they were found).
pub(crate) fn from_parts(moments: &Moments, ci: &CoverageIntervals) -> Summary {
    let u = moments.variance().sqrt();
    let expanded = 0.5 * (ci.symmetric.1 - ci.symmetric.0);
    Summary {
        estimate: moments.mean,
        standard_uncertainty: u,
        symmetric_interval: ci.symmetric,
        shortest_interval: ci.shortest,
        expanded_uncertainty: expanded,
        coverage_factor: (u > 0.0).then(|| expanded / u),
    }
}
