//! Runs too large for memory: two passes over the same reproducible streams, with the same
//! estimate, u and coverage intervals as a run held in memory.
//!
//! Pass 1 makes every chunk, keeps its summary (moments merged in chunk order, exactly as in
//! memory) and an evenly spaced subsample of its values. From the subsample, thresholds below
//! and above which the M - q smallest and largest values must lie (with a margin of six binomial
//! standard deviations). Pass 2 makes every chunk again (the streams are reproducible) and keeps
//! only the values beyond the thresholds; their k smallest and k largest, sorted, give both
//! intervals exactly (`analysis::intervals::intervals_from_tails`). A threshold found too tight
//! is widened and its measurand passed again. Measurands whose tails do not fit the memory
//! budget together are passed one at a time.

use super::{Plan, merge_chunks, stream_chunks};
use crate::analysis::MonteCarlo;
use crate::analysis::intervals::{CoverageIntervals, intervals_from_tails, q_index};
use crate::analysis::summary::{Summary, from_parts};
use crate::error::RunError;
use crate::scenario::Study;
use std::sync::Mutex;

/// The lower and upper tail values of one measurand, gathered under locks across chunks.
type TailBuffers = (Mutex<Vec<f64>>, Mutex<Vec<f64>>);

/// Subsample size per measurand aimed at in pass 1.
const SUBSAMPLE: u64 = 1 << 20;

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

/// Run `plan` without holding its values, within `budget` bytes for the tails.
pub fn simulate_streamed(study: &Study, plan: Plan, budget: u64) -> Result<MonteCarlo, RunError> {
    let chunks = plan.chunks();
    let m: u64 = chunks.iter().map(|c| c.1 as u64).sum();
    let nm = study.model.measurands;
    let p = study.coverage;
    let k = (m - q_index(m as usize, p) as u64) as usize;
    let step = (m / SUBSAMPLE).max(1) as usize;

    // Pass 1: summaries and subsamples.
    let first = stream_chunks(study, plan, &chunks, &|_, cols: &[&[f64]]| {
        cols.iter()
            .map(|c| c.iter().step_by(step).copied().collect::<Vec<f64>>())
            .collect::<Vec<_>>()
    })?;
    let summaries: Vec<_> = first.iter().map(|(s, _)| s.clone()).collect();
    let (moments, input_pairs, measurand_pairs) =
        merge_chunks(&summaries, nm, study.correlations.pairs.len());
    let mut subsamples: Vec<Vec<f64>> = vec![Vec::new(); nm];
    for (_, parts) in first {
        for (all, part) in subsamples.iter_mut().zip(parts) {
            all.extend(part);
        }
    }
    for s in &mut subsamples {
        s.sort_unstable_by(f64::total_cmp);
    }

    // Thresholds per measurand at a margin (in subsample ranks).
    let frac = k as f64 / m as f64;
    let thresholds = |sub: &[f64], margin: f64| -> (f64, f64) {
        let n = sub.len();
        let idx = ((frac * n as f64 + margin).ceil() as usize).min(n - 1);
        (sub[idx], sub[n - 1 - idx])
    };
    let base_margin = |n: usize| 6.0 * (n as f64 * frac * (1.0 - frac)).sqrt() + 16.0;
    let mut margins: Vec<f64> = subsamples.iter().map(|s| base_margin(s.len())).collect();
    // Expected values kept per measurand: both tails with their margins.
    let expected_bytes = |n: usize, margin: f64| -> u64 {
        let kept = 2.0 * (frac + margin / n as f64) * m as f64;
        (kept * 8.0 * 1.1) as u64
    };
    // The intervals of each measurand, found as soon as its tails are in (the tails are then
    // dropped, so only one group's tails are ever held).
    let mut intervals: Vec<Option<CoverageIntervals>> = vec![None; nm];
    // Room kept for everything else the process holds (subsamples, chunk summaries, buffers).
    let whole_budget = budget;
    let budget = budget - OVERHEAD.min(budget / 4);
    let mut pending: Vec<usize> = (0..nm).collect();
    while !pending.is_empty() {
        // The next group of measurands whose tails fit the budget together.
        let mut group = Vec::new();
        let mut used = 0u64;
        for &i in &pending {
            let need = expected_bytes(subsamples[i].len(), margins[i]);
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
        let limits: Vec<(f64, f64)> = group
            .iter()
            .map(|&i| thresholds(&subsamples[i], margins[i]))
            .collect();
        // Shared buffers, reserved to the expected size: each chunk appends its values under a
        // lock (the order of appends varies, the sorted tails do not), so the tails are held
        // once, not once per chunk and again when joined.
        let buffers: Vec<TailBuffers> = group
            .iter()
            .map(|&i| {
                let cap = (expected_bytes(subsamples[i].len(), margins[i]) / 16) as usize;
                (
                    Mutex::new(Vec::with_capacity(cap)),
                    Mutex::new(Vec::with_capacity(cap)),
                )
            })
            .collect();
        stream_chunks(study, plan, &chunks, &|_, cols: &[&[f64]]| {
            for ((&i, &(lo_t, hi_t)), (lo_buf, hi_buf)) in group.iter().zip(&limits).zip(&buffers) {
                let (mut lo, mut hi) = (Vec::new(), Vec::new());
                for &x in cols[i] {
                    if x <= lo_t {
                        lo.push(x);
                    } else if x >= hi_t {
                        hi.push(x);
                    }
                }
                lo_buf
                    .lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .extend_from_slice(&lo);
                hi_buf
                    .lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .extend_from_slice(&hi);
            }
        })?;
        let collected: Vec<(Vec<f64>, Vec<f64>)> = buffers
            .into_iter()
            .map(|(a, b)| {
                (
                    a.into_inner().unwrap_or_else(|e| e.into_inner()),
                    b.into_inner().unwrap_or_else(|e| e.into_inner()),
                )
            })
            .collect();
        for (g, (mut lo, mut hi)) in group.iter().zip(collected) {
            if lo.len() >= k && hi.len() >= k {
                lo.sort_unstable_by(f64::total_cmp);
                lo.truncate(k);
                hi.sort_unstable_by(f64::total_cmp);
                let cut = hi.len() - k;
                hi.drain(..cut);
                intervals[*g] = Some(intervals_from_tails(&lo, &hi, m as usize, p));
                pending.retain(|x| x != g);
            } else {
                // Too tight: widen and pass this measurand again.
                margins[*g] *= 4.0;
            }
        }
    }
    let summaries: Vec<Summary> = (0..nm)
        .map(|i| {
            let ci = intervals[i].expect("every measurand's tails are collected");
            from_parts(&moments[i], &ci)
        })
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
