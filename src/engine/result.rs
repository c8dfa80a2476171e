//! The Monte Carlo result of a run, however it was made: values held in memory, streamed tails,
//! or shards merged; and the shapes of the sampled distributions for figures.

use super::Samples;
use crate::scenario::{InputQuantity, Law, Study};
use crate::stats::histogram::{self, Histogram};
use crate::stats::moments::CoMoments;
use crate::stats::{Summary, summarize};
use rayon::prelude::*;

/// The shape of a sampled distribution, for figures.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Shape {
    /// The histogram of the values.
    pub(crate) histogram: Histogram,
    /// A smooth density: a kernel estimate for a measurand, the stated density for an input.
    pub(crate) density: Vec<(f64, f64)>,
}

/// Bins of a measurand's histogram.
pub(crate) const MEASURAND_BINS: usize = 100;
/// Bins of an input's histogram.
pub(crate) const INPUT_BINS: usize = 60;

fn measurand_shape(values: &[f64], s: &Summary) -> Option<Shape> {
    let (a, b) = s.symmetric_interval;
    let w = b - a;
    if w.is_nan() || w <= 0.0 {
        return None;
    }
    let (lo, hi) = (a - 0.6 * w, b + 0.6 * w);
    Some(Shape {
        histogram: Histogram::of(values, lo, hi, MEASURAND_BINS),
        density: histogram::kernel_density(values, s.standard_uncertainty, lo, hi, 200),
    })
}

fn input_shape(values: &[f64], q: &InputQuantity) -> Option<Shape> {
    let Law::Distributed(d) = &q.law else {
        return None;
    };
    let (lo, hi) = (d.quantile(0.001), d.quantile(0.999));
    if hi.is_nan() || lo.is_nan() || hi <= lo {
        return None;
    }
    let density = (0..200)
        .map(|j| {
            let x = lo + (hi - lo) * j as f64 / 199.0;
            (x, d.pdf(x))
        })
        .collect();
    Some(Shape {
        histogram: Histogram::of(values, lo, hi, INPUT_BINS),
        density,
    })
}

/// The Monte Carlo result of a run, whether its values were kept in memory, streamed, or made by
/// shards on several machines: what the findings need and nothing more.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct MonteCarlo {
    /// Trials M.
    pub(crate) trials: u64,
    /// Per measurand.
    pub(crate) summaries: Vec<Summary>,
    /// Joint moments of each pair of measurands (engine order).
    pub(crate) measurand_pairs: Vec<CoMoments>,
    /// Joint moments of each correlated input pair.
    pub(crate) input_pairs: Vec<CoMoments>,
    /// Shapes of the measurands' distributions (when their values were in memory).
    pub(crate) shapes: Vec<Option<Shape>>,
    /// Shapes of the inputs' sampled distributions (when their columns were kept).
    pub(crate) input_shapes: Vec<Option<Shape>>,
}

impl MonteCarlo {
    /// From values held in memory; the measurands are summarised in parallel.
    pub(crate) fn from_samples(study: &Study, samples: &Samples) -> MonteCarlo {
        let summaries: Vec<Summary> = samples
            .measurands
            .par_iter()
            .zip(samples.moments.par_iter())
            .map(|(col, mo)| summarize(col, mo, study.coverage))
            .collect();
        let shapes = samples
            .measurands
            .iter()
            .zip(&summaries)
            .map(|(col, s)| measurand_shape(col, s))
            .collect();
        let input_shapes = match &samples.inputs {
            Some(cols) => cols
                .iter()
                .zip(&study.inputs)
                .map(|(c, q)| input_shape(c, q))
                .collect(),
            None => vec![None; study.inputs.len()],
        };
        MonteCarlo {
            trials: samples.trials as u64,
            summaries,
            measurand_pairs: samples.measurand_pairs.clone(),
            input_pairs: samples.input_pairs.clone(),
            shapes,
            input_shapes,
        }
    }
}
