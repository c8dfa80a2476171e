//! Runs that do not hold their values: the same estimate, u and coverage intervals as a run
//! held in memory, from the chunk summaries and the two tails of each measurand
//! ([`super::tails`]).
//!
//! One pass (the usual case for plain runs of 2^17 trials and more): the first chunks, a pilot
//! of 2^16 trials, are made and held; their sorted values set the thresholds of each
//! measurand's tails (with a margin of six binomial standard deviations); every other chunk is
//! made once and offers only its values beyond the thresholds. This never touches the M values
//! as a whole, so it is faster than holding them and needs well under a byte per trial per
//! measurand. Should a threshold prove too tight (a chance of the order of 1e-9) or the tails
//! not fit the memory budget, the run is made again in two passes.
//!
//! Two passes (runs beyond the memory budget): pass 1 makes every chunk, keeps its summary
//! (moments merged in chunk order, exactly as in memory) and an evenly spaced subsample of its
//! values, which sets the thresholds; pass 2 makes every chunk again (the streams are
//! reproducible) and keeps only the values beyond them. A threshold found too tight is widened
//! and its measurand passed again. Measurands whose tails do not fit the memory budget together
//! are passed one at a time.

use super::MonteCarlo;
use super::tails::{TailCollector, thresholds};
use super::{ChunkSummary, Plan, merge_chunks, stream_chunks};
use crate::error::RunError;
use crate::scenario::Study;
use crate::stats::intervals::{CoverageIntervals, q_index};
use crate::stats::summary::{Summary, from_parts};
use crate::stats::tail_buckets::intervals_from_unsorted_tails;
use rayon::prelude::*;

/// Subsample size per measurand aimed at in pass 1 of a two-pass run (fewer when a quarter of
/// the budget cannot hold that many for every measurand, never fewer than 2^12).
const SUBSAMPLE: u64 = 1 << 20;

/// Trials of the pilot of a one-pass run.
pub(crate) const PILOT: u64 = 1 << 16;

/// Margin of the thresholds, in binomial standard deviations of the sample's rank.
const SIGMAS: f64 = 6.0;

/// Memory set aside from the budget (at most a quarter of it) for what the run holds besides
/// the tails.
const OVERHEAD: u64 = 96 << 20;

fn budget_error(trials: u64, needed: u64, budget: u64) -> RunError {
    RunError::MemoryBudget {
        trials,
        needed: super::memory::format_bytes(needed),
        budget: super::memory::format_bytes(budget),
    }
}

/// Values the tails of one measurand are expected to hold: both tails, with the margin of a
/// threshold set from a sample of `n` values.
fn expected_tail_values(n: usize, k: usize, m: u64, sigmas: f64) -> u64 {
    let frac = k as f64 / m as f64;
    let margin = sigmas.max(0.0) * (n as f64 * frac * (1.0 - frac)).sqrt() + 16.0;
    (2.0 * (frac + margin / n as f64) * m as f64).ceil() as u64
}

/// Memory the two tails of one measurand take at their peak: the values and the buckets that
/// find the intervals in them.
fn expected_tail_bytes(n: usize, k: usize, m: u64, sigmas: f64) -> u64 {
    let per_value = 8.0 + crate::stats::tail_buckets::BYTES_PER_VALUE;
    (expected_tail_values(n, k, m, sigmas) as f64 * per_value).ceil() as u64
}

/// Room reserved for each tail list: half the expected values and a tenth more (reserved
/// address space costs no memory until it is written, and a list that outgrew it would be
/// copied whole).
fn tail_capacity(n: usize, k: usize, m: u64, sigmas: f64) -> usize {
    (expected_tail_values(n, k, m, sigmas) as f64 * 0.55) as usize
}

/// The result of a run made without holding its values.
#[derive(Clone, Debug)]
pub(crate) struct TailRun {
    /// What the findings need.
    pub(crate) monte_carlo: MonteCarlo,
    /// Passes made over the random streams: 1, or 2 and more when the values had to be made
    /// again (one more for each group of measurands whose tails fit the budget together).
    pub(crate) passes: u32,
}

/// Run `plan` without holding its values: in one pass when the tails fit `budget`, else (or
/// should a pilot threshold prove too tight) in two.
pub(crate) fn simulate_tails(study: &Study, plan: Plan, budget: u64) -> Result<TailRun, RunError> {
    simulate_tails_at(study, plan, budget, SIGMAS)
}

fn simulate_tails_at(
    study: &Study,
    plan: Plan,
    budget: u64,
    sigmas: f64,
) -> Result<TailRun, RunError> {
    if let Some(mc) = one_pass(study, plan, budget, sigmas)? {
        return Ok(TailRun {
            monte_carlo: mc,
            passes: 1,
        });
    }
    let (monte_carlo, passes) = simulate_streamed(study, plan, budget)?;
    Ok(TailRun {
        monte_carlo,
        passes,
    })
}

fn finish(
    study: &Study,
    m: u64,
    summaries: &[ChunkSummary],
    intervals: Vec<CoverageIntervals>,
) -> Result<MonteCarlo, RunError> {
    let nm = study.model.measurands;
    let (moments, input_pairs, measurand_pairs) = merge_chunks(study, summaries)?;
    let summaries: Vec<Summary> = moments
        .iter()
        .zip(&intervals)
        .map(|(mo, ci)| from_parts(mo, ci))
        .collect();
    Ok(MonteCarlo {
        trials: m,
        summaries,
        measurand_pairs,
        input_pairs,
        shapes: vec![None; nm],
        input_shapes: vec![None; study.inputs.len()],
    })
}

/// One pass with thresholds from a pilot at `sigmas`; `None` when the run needs two passes
/// (too few trials for a pilot, tails beyond the budget, or a threshold too tight).
pub(crate) fn one_pass(
    study: &Study,
    plan: Plan,
    budget: u64,
    sigmas: f64,
) -> Result<Option<MonteCarlo>, RunError> {
    let chunks = plan.chunks();
    let m: u64 = chunks.iter().map(|c| c.1 as u64).sum();
    let nm = study.model.measurands;
    let p = study.coverage;
    let k = (m - q_index(m as usize, p) as u64) as usize;
    let pilot_chunks = chunks
        .iter()
        .scan(0u64, |made, c| {
            let before = *made;
            *made += c.1 as u64;
            (before < PILOT).then_some(())
        })
        .count();
    if pilot_chunks == chunks.len() {
        return Ok(None);
    }
    let (pilot, rest) = chunks.split_at(pilot_chunks);
    let made = stream_chunks(study, plan, pilot, &|_, cols: &[&[f64]]| {
        cols.iter().map(|c| c.to_vec()).collect::<Vec<Vec<f64>>>()
    })?;
    let mut samples: Vec<Vec<f64>> = vec![Vec::new(); nm];
    let mut summaries: Vec<ChunkSummary> = Vec::with_capacity(chunks.len());
    for (summary, cols) in made {
        summaries.push(summary);
        for (all, c) in samples.iter_mut().zip(cols) {
            all.extend(c);
        }
    }
    let n = samples[0].len();
    let usable = budget - OVERHEAD.min(budget / 4);
    // At the peak, the pilot's values and every measurand's tails are held together.
    let need = nm as u64 * (expected_tail_bytes(n, k, m, sigmas) + 8 * n as u64);
    if need > usable {
        return Ok(None);
    }
    let capacity = tail_capacity(n, k, m, sigmas);
    let collectors: Vec<TailCollector> = samples
        .par_iter_mut()
        .map(|s| {
            let (lo, hi) = thresholds(s, k, m as usize, sigmas);
            let c = TailCollector::new(lo, hi, capacity);
            c.offer(s);
            c
        })
        .collect();
    drop(samples);
    let made = stream_chunks(study, plan, rest, &|_, cols: &[&[f64]]| {
        for (c, col) in collectors.iter().zip(cols) {
            c.offer(col);
        }
    })?;
    summaries.extend(made.into_iter().map(|(s, ())| s));
    // Every measurand at once (the result of each depends on its own values only, and the list
    // keeps measurand order).
    let intervals: Option<Vec<CoverageIntervals>> = collectors
        .into_par_iter()
        .map(|c| {
            c.finish_unsorted(k)
                .map(|(lo, hi)| intervals_from_unsorted_tails(&lo, &hi, m as usize, p))
        })
        .collect();
    intervals
        .map(|ci| finish(study, m, &summaries, ci))
        .transpose()
}

/// Run `plan` in two passes (or more, when the measurands' tails must be collected in groups),
/// within `budget` bytes in all; returns the passes made.
pub(crate) fn simulate_streamed(
    study: &Study,
    plan: Plan,
    budget: u64,
) -> Result<(MonteCarlo, u32), RunError> {
    let chunks = plan.chunks();
    let m: u64 = chunks.iter().map(|c| c.1 as u64).sum();
    let nm = study.model.measurands;
    let p = study.coverage;
    let k = (m - q_index(m as usize, p) as u64) as usize;
    let subsample = (budget / 4 / (8 * nm as u64)).clamp(1 << 12, SUBSAMPLE);
    let step = (m / subsample).max(1) as usize;

    // Pass 1: summaries and subsamples.
    let first = stream_chunks(study, plan, &chunks, &|_, cols: &[&[f64]]| {
        cols.iter()
            .map(|c| c.iter().step_by(step).copied().collect::<Vec<f64>>())
            .collect::<Vec<_>>()
    })?;
    let mut summaries = Vec::with_capacity(first.len());
    let mut subsamples: Vec<Vec<f64>> = vec![Vec::new(); nm];
    for (s, parts) in first {
        summaries.push(s);
        for (all, part) in subsamples.iter_mut().zip(parts) {
            all.extend(part);
        }
    }

    let mut sigmas = vec![SIGMAS; nm];
    // The intervals of each measurand, found as soon as its tails are in (the tails are then
    // dropped, so only one group's tails are ever held).
    let mut intervals: Vec<Option<CoverageIntervals>> = vec![None; nm];
    // Room kept for everything else the process holds (subsamples, chunk summaries, buffers).
    let whole_budget = budget;
    let budget = budget - OVERHEAD.min(budget / 4);
    let mut pending: Vec<usize> = (0..nm).collect();
    let mut passes = 1;
    while !pending.is_empty() {
        passes += 1;
        // The next group of measurands whose tails fit the budget together.
        let mut group = Vec::new();
        let mut used = 0u64;
        for &i in &pending {
            let need = expected_tail_bytes(subsamples[i].len(), k, m, sigmas[i]);
            if need > budget {
                // Report the whole need, the tails and the reserve beside them.
                return Err(budget_error(
                    m,
                    need + (whole_budget - budget),
                    whole_budget,
                ));
            }
            if used + need <= budget || group.is_empty() {
                used += need;
                group.push(i);
            }
        }
        let collectors: Vec<TailCollector> = group
            .iter()
            .map(|&i| {
                let (lo, hi) = thresholds(&mut subsamples[i].clone(), k, m as usize, sigmas[i]);
                let cap = tail_capacity(subsamples[i].len(), k, m, sigmas[i]);
                TailCollector::new(lo, hi, cap)
            })
            .collect();
        stream_chunks(study, plan, &chunks, &|_, cols: &[&[f64]]| {
            for (&i, c) in group.iter().zip(&collectors) {
                c.offer(cols[i]);
            }
        })?;
        for (&g, c) in group.iter().zip(collectors) {
            match c.finish_unsorted(k) {
                Some((lo, hi)) => {
                    intervals[g] = Some(intervals_from_unsorted_tails(&lo, &hi, m as usize, p));
                    pending.retain(|&x| x != g);
                }
                // Too tight: widen and pass this measurand again.
                None => sigmas[g] = sigmas[g] * 2.0 + 6.0,
            }
        }
    }
    let intervals = intervals.into_iter().flatten().collect();
    Ok((finish(study, m, &summaries, intervals)?, passes))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> Study {
        crate::scenario::load_file(std::path::Path::new(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/data/torsion-vacuum-20w.toml"
        )))
        .expect("the demo scenario loads")
    }

    // One pass, two passes and the values held in memory give the same summaries, bit for bit.
    #[test]
    fn one_pass_two_passes_and_memory_agree() {
        let study = demo();
        let plan = Plan::new(PILOT + 100_003, 11);
        let samples = crate::engine::simulate(&study, plan).expect("runs");
        let held = MonteCarlo::from_samples(&study, &samples);
        let one = one_pass(&study, plan, 1 << 30, SIGMAS)
            .expect("runs")
            .expect("one pass suffices at six sigma");
        let (two, passes) = simulate_streamed(&study, plan, 1 << 30).expect("runs");
        assert_eq!(passes, 2, "three measurands' tails fit 1 GiB together");
        assert_eq!(one.summaries, held.summaries);
        assert_eq!(two.summaries, held.summaries);
        assert_eq!(one.measurand_pairs, held.measurand_pairs);
    }

    // Thresholds set well inside the tails are found too tight, and the run falls back to two
    // passes with the same result.
    #[test]
    fn a_pilot_threshold_too_tight_falls_back() {
        let study = demo();
        let plan = Plan::new(PILOT + 50_000, 5);
        assert!(
            one_pass(&study, plan, 1 << 30, -40.0)
                .expect("runs")
                .is_none()
        );
        let held = MonteCarlo::from_samples(
            &study,
            &crate::engine::simulate(&study, plan).expect("runs"),
        );
        let run = simulate_tails_at(&study, plan, 1 << 30, -40.0).expect("runs");
        assert_eq!(run.passes, 2);
        assert_eq!(run.monte_carlo.summaries, held.summaries);
        let run = simulate_tails(&study, plan, 1 << 30).expect("runs");
        assert_eq!(run.passes, 1);
        assert_eq!(run.monte_carlo.summaries, held.summaries);
    }

    // Too few trials for a pilot: no one-pass run.
    #[test]
    fn short_runs_have_no_pilot() {
        let study = demo();
        assert!(
            one_pass(&study, Plan::new(PILOT, 5), 1 << 30, SIGMAS)
                .expect("runs")
                .is_none()
        );
    }
}
