//! The adaptive Monte Carlo procedure of JCGM 101:2008 7.9.4.
//!
//! Batches of M = max(J, 10^4) trials (J = ceil(100 / (1 - p))) are drawn one after another as
//! continuations of one stream (batch b starts at chunk b * ceil(M / CHUNK_TRIALS)). After each
//! batch h >= 2, for every measurand, the standard deviation of the average of the h batch values
//! of each statistic, s = sqrt(sum (z_r - mean z)^2 / (h (h - 1))), is compared with the
//! numerical tolerance delta of u(y) computed from all h M values (JCGM 101 7.9.2); the run stops
//! when 2 s <= delta for the estimate, the standard uncertainty and both ends of both coverage
//! intervals, s being the standard deviation of the value the report gives, pooled from all
//! h M values ([`sd_of_pooled`]: for the shortest interval's ends, which converge more slowly,
//! larger than that of the batch average). The results are then computed from all h M values. Batches may be computed several
//! at a time, but the rule is applied batch by batch in order and batches past the stop are
//! discarded, so the outcome depends on the seed only.

use super::{CHUNK_TRIALS, Plan, Samples, simulate};
use crate::error::RunError;
use crate::scenario::{Adaptive, Study, adaptive_batch_trials};
use crate::stats::numerical_tolerance;
use crate::stats::summary::{Summary, summarize};
use rayon::prelude::*;

/// The six statistics of one batch for one measurand: estimate, u, and the ends of the
/// symmetric and the shortest coverage intervals (SI).
pub(crate) type BatchStatistics = [f64; 6];

/// An adaptive run.
#[derive(Clone, Debug)]
pub struct AdaptiveRun {
    /// All trials of the batches used.
    pub samples: Samples,
    /// Trials per batch, M.
    pub batch_trials: u64,
    /// Per batch (in order), per measurand, its statistics.
    pub batches: Vec<Vec<BatchStatistics>>,
    /// Whether the stopping rule was met before `max_trials`.
    pub converged: bool,
    /// The numerical tolerance delta of each measurand at the stop, SI.
    pub tolerances: Vec<f64>,
}

fn statistics(s: &Summary) -> BatchStatistics {
    [
        s.estimate,
        s.standard_uncertainty,
        s.symmetric_interval.0,
        s.symmetric_interval.1,
        s.shortest_interval.0,
        s.shortest_interval.1,
    ]
}

/// Standard deviation of the average of `values` (JCGM 101 7.9.4 g).
pub fn sd_of_average(values: &[f64]) -> f64 {
    let h = values.len() as f64;
    let mean = values.iter().sum::<f64>() / h;
    (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (h * (h - 1.0))).sqrt()
}

/// Standard deviation of a statistic computed from all h M values pooled (what the report
/// gives), from its h batch values. For the estimate, u and the ends of the probabilistically
/// symmetric interval (means and quantiles, which converge like 1/sqrt(M)) it is the standard
/// deviation of their average (JCGM 101 7.9.4 g). The ends of the shortest interval are those of
/// the shortest window holding a fraction p of the values, an estimator that converges only like
/// M^(-1/3) (cube-root asymptotics of the shorth: Kim and Pollard, Ann. Statist. 18, 191, 1990),
/// so pooling h batches divides its spread by h^(1/3), not sqrt h: s_batch h^(-1/3) =
/// s_average h^(1/6). Watching the average instead let the pooled shortest-interval ends miss
/// delta in a third of repeated runs.
pub fn sd_of_pooled(values: &[f64], cube_root: bool) -> f64 {
    let s = sd_of_average(values);
    if cube_root {
        s * (values.len() as f64).powf(1.0 / 6.0)
    } else {
        s
    }
}

/// Whether the stopping rule holds for these batches, with the tolerances used: for each
/// measurand, delta from `u_all` (SI) written in the reporting unit (`factors`).
pub(crate) fn stopping_rule_met(
    batches: &[Vec<BatchStatistics>],
    u_all: &[f64],
    factors: &[f64],
    digits: u32,
) -> (bool, Vec<f64>) {
    let mut met = batches.len() >= 2;
    let mut tolerances = Vec::with_capacity(u_all.len());
    for (m, (&u, &k)) in u_all.iter().zip(factors).enumerate() {
        let delta = numerical_tolerance(u / k, digits) * k;
        tolerances.push(delta);
        if batches.len() < 2 {
            continue;
        }
        // JCGM 101 7.9.4's factor 2 for the values that converge like 1/sqrt(M); for the
        // shortest interval's ends, whose s is scaled from the batches by a rate rather than
        // measured, the 97.5 % Student t factor with h - 1 degrees of freedom (s comes from h
        // batch values), which is 2.09 at h = 20.
        let t = crate::dist::student_t_quantile(0.975, (batches.len() - 1) as f64);
        for stat in 0..6 {
            let values: Vec<f64> = batches.iter().map(|b| b[m][stat]).collect();
            let factor = if stat >= 4 { t } else { 2.0 };
            if factor * sd_of_pooled(&values, stat >= 4) > delta {
                met = false;
            }
        }
    }
    (met, tolerances)
}

/// Run the adaptive procedure. `max_trials` caps the total (the scenario's cap or the memory
/// budget, whichever is smaller).
pub fn simulate_adaptive(
    study: &Study,
    settings: Adaptive,
    keep_inputs: bool,
    max_trials: u64,
) -> Result<AdaptiveRun, RunError> {
    let batch = adaptive_batch_trials(study.coverage);
    let chunks_per_batch = (batch as usize).div_ceil(CHUNK_TRIALS) as u64;
    let max_batches = (max_trials / batch).max(2);
    let factors: Vec<f64> = (0..study.measurands.len())
        .map(|m| study.reporting_factor(m))
        .collect();
    let group = rayon::current_num_threads().max(2) as u64;

    let mut all: Option<Samples> = None;
    let mut batches: Vec<Vec<BatchStatistics>> = Vec::new();
    let mut next = 0u64;
    loop {
        let upto = (next + group).min(max_batches);
        let runs: Vec<Result<Samples, RunError>> = (next..upto)
            .into_par_iter()
            .map(|b| {
                simulate(
                    study,
                    Plan {
                        trials: batch,
                        seed: study.seed,
                        first_chunk: b * chunks_per_batch,
                        keep_inputs,
                        shard: None,
                    },
                )
            })
            .collect();
        for run in runs {
            let run = run?;
            let stats: Vec<BatchStatistics> = run
                .measurands
                .iter()
                .zip(&run.moments)
                .map(|(col, mo)| statistics(&summarize(col, mo, study.coverage)))
                .collect();
            batches.push(stats);
            match all.as_mut() {
                Some(a) => a.append(run),
                None => all = Some(run),
            }
            let samples = all.as_ref().expect("at least one batch");
            let u_all: Vec<f64> = samples
                .moments
                .iter()
                .map(|m| m.variance().sqrt())
                .collect();
            let (met, tolerances) = stopping_rule_met(&batches, &u_all, &factors, settings.digits);
            let done = met || batches.len() as u64 >= max_batches;
            if done {
                return Ok(AdaptiveRun {
                    samples: all.expect("at least one batch"),
                    batch_trials: batch,
                    batches,
                    converged: met,
                    tolerances,
                });
            }
        }
        next = upto;
    }
}
