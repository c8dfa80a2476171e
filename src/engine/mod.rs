//! Trial generation: chunked, parallel, reproducible.
//!
//! The M trials are cut into chunks of [`CHUNK_TRIALS`]; chunk k draws its inputs from the
//! stream of (seed, k) (see [`stream`]) and evaluates the model a block of [`BLOCK_TRIALS`] at a
//! time. Chunks run on rayon's pool in any order, each writing only its own slice of the result
//! columns, and per-chunk statistics are combined in chunk order. So the samples and every
//! number computed from them depend on the seed and M only, never on the thread count.

pub mod adaptive;
pub mod columns;
pub mod memory;
pub mod sampling;
pub mod sensitivity;
pub mod stream;

use crate::analysis::moments::{CoMoments, Moments, joint_moments};
use crate::error::RunError;
use crate::scenario::Study;
use rayon::prelude::*;
use std::sync::atomic::{AtomicU64, Ordering};

/// Trials per chunk; part of the reproducibility contract (changing it changes the streams).
pub const CHUNK_TRIALS: usize = 16_384;
/// Trials per block inside a chunk (inputs are drawn input by input for a whole block).
pub const BLOCK_TRIALS: usize = 256;

/// Name of the generator and stream layout, as printed in reports.
pub fn generator_description() -> String {
    format!(
        "Xoshiro256++ (rand_xoshiro {}); chunk k of {CHUNK_TRIALS} trials draws from seed_from_u64(seed) advanced by k*2^128 steps; samplers of rand {} / rand_distr {}",
        env!("RADFORCE_DEP_RAND_XOSHIRO"),
        env!("RADFORCE_DEP_RAND"),
        env!("RADFORCE_DEP_RAND_DISTR"),
    )
}

/// The crate versions that define the random streams.
pub fn stream_crates() -> Vec<(&'static str, &'static str)> {
    vec![
        ("rand", env!("RADFORCE_DEP_RAND")),
        ("rand_distr", env!("RADFORCE_DEP_RAND_DISTR")),
        ("rand_xoshiro", env!("RADFORCE_DEP_RAND_XOSHIRO")),
        ("statrs", env!("RADFORCE_DEP_STATRS")),
    ]
}

/// The trials of a run, one column per quantity, in trial order.
#[derive(Clone, Debug)]
pub struct Samples {
    /// Number of trials M.
    pub trials: usize,
    /// One column per measurand (report order).
    pub measurands: Vec<Vec<f64>>,
    /// One column per input quantity, when asked for (constants included).
    pub inputs: Option<Vec<Vec<f64>>>,
    /// Mean and sum of squared deviations per measurand, combined in chunk order.
    pub moments: Vec<Moments>,
    /// Joint moments of each correlated input pair (in `study.correlations.pairs` order), for
    /// the achieved sample correlation.
    pub input_pairs: Vec<CoMoments>,
    /// Joint moments of every pair of measurands (a < b, in the order (0,1), (0,2), ..., (1,2),
    /// ...), for their correlation matrix; combined in chunk order like the moments.
    pub measurand_pairs: Vec<CoMoments>,
}

/// The pairs (a, b), a < b, of `n` measurands in the order of `Samples::measurand_pairs`.
pub fn measurand_pair_order(n: usize) -> Vec<(usize, usize)> {
    (0..n).flat_map(|a| (a + 1..n).map(move |b| (a, b))).collect()
}

impl Samples {
    /// Append the trials of a later run (the next batch of an adaptive run).
    pub fn append(&mut self, other: Samples) {
        self.trials += other.trials;
        for (a, b) in self.measurands.iter_mut().zip(other.measurands) {
            a.extend_from_slice(&b);
        }
        if let (Some(a), Some(b)) = (self.inputs.as_mut(), other.inputs) {
            for (x, y) in a.iter_mut().zip(b) {
                x.extend_from_slice(&y);
            }
        }
        for (a, b) in self.moments.iter_mut().zip(&other.moments) {
            *a = a.merge(b);
        }
        for (a, b) in self.input_pairs.iter_mut().zip(&other.input_pairs) {
            *a = a.merge(b);
        }
        for (a, b) in self.measurand_pairs.iter_mut().zip(&other.measurand_pairs) {
            *a = a.merge(b);
        }
    }
}

/// What to generate.
#[derive(Clone, Copy, Debug)]
pub struct Plan {
    /// Number of trials.
    pub trials: u64,
    /// Seed.
    pub seed: u64,
    /// Index of the first chunk: a run that continues a stream (the next batch of an adaptive
    /// run) starts past the chunks already drawn.
    pub first_chunk: u64,
    /// Keep the input columns (for sensitivity and exports).
    pub keep_inputs: bool,
}

impl Plan {
    /// M trials under `seed` from the first chunk, without input columns.
    pub fn new(trials: u64, seed: u64) -> Plan {
        Plan {
            trials,
            seed,
            first_chunk: 0,
            keep_inputs: false,
        }
    }
}

struct Fault {
    trial: u64,
    measurand: usize,
    value: f64,
    inputs: Vec<f64>,
}

/// What one chunk reports besides its samples.
#[derive(Default)]
struct ChunkStats {
    moments: Vec<Moments>,
    pairs: Vec<CoMoments>,
    measurand_pairs: Vec<CoMoments>,
}

/// Run the trials of `plan` on the current rayon pool.
pub fn simulate(study: &Study, plan: Plan) -> Result<Samples, RunError> {
    let m = usize::try_from(plan.trials).map_err(|_| RunError::MemoryBudget {
        trials: plan.trials,
        needed: "more than this machine can address".into(),
        budget: "-".into(),
    })?;
    let model = &study.model;
    let n_in = model.inputs;
    let n_meas = model.measurands;
    let n_chunks = m.div_ceil(CHUNK_TRIALS);

    let mut meas_cols: Vec<Vec<f64>> = (0..n_meas).map(|_| columns::column(m)).collect();
    let mut in_cols: Option<Vec<Vec<f64>>> = plan
        .keep_inputs
        .then(|| (0..n_in).map(|_| columns::column(m)).collect());

    let mut per_chunk: Vec<Vec<&mut [f64]>> = (0..n_chunks).map(|_| Vec::new()).collect();
    for col in meas_cols.iter_mut() {
        for (k, s) in col.chunks_mut(CHUNK_TRIALS).enumerate() {
            per_chunk[k].push(s);
        }
    }
    if let Some(cols) = in_cols.as_mut() {
        for col in cols.iter_mut() {
            for (k, s) in col.chunks_mut(CHUNK_TRIALS).enumerate() {
                per_chunk[k].push(s);
            }
        }
    }

    let steps = sampling::fill_steps(study);
    let first_failed_chunk = AtomicU64::new(u64::MAX);
    let results: Vec<Result<ChunkStats, Fault>> = per_chunk
        .into_par_iter()
        .enumerate()
        .map(|(k, mut slices)| {
            if (k as u64) > first_failed_chunk.load(Ordering::Relaxed) {
                return Ok(ChunkStats::default());
            }
            let (outs, ins) = slices.split_at_mut(n_meas);
            let ins = if plan.keep_inputs { Some(ins) } else { None };
            let r = run_chunk(study, &steps, plan, k, outs, ins);
            if r.is_err() {
                first_failed_chunk.fetch_min(k as u64, Ordering::Relaxed);
            }
            r
        })
        .collect();

    let mut moments = vec![Moments::EMPTY; n_meas];
    let mut input_pairs = vec![CoMoments::EMPTY; study.correlations.pairs.len()];
    let mut measurand_pairs = vec![CoMoments::EMPTY; measurand_pair_order(n_meas).len()];
    for r in results {
        match r {
            Ok(chunk) => {
                for (total, part) in moments.iter_mut().zip(&chunk.moments) {
                    *total = total.merge(part);
                }
                for (total, part) in input_pairs.iter_mut().zip(&chunk.pairs) {
                    *total = total.merge(part);
                }
                for (total, part) in measurand_pairs.iter_mut().zip(&chunk.measurand_pairs) {
                    *total = total.merge(part);
                }
            }
            Err(f) => {
                let inputs = study
                    .inputs
                    .iter()
                    .zip(&f.inputs)
                    .map(|(q, v)| format!("{} = {v:e}", q.name))
                    .collect::<Vec<_>>()
                    .join(", ");
                return Err(RunError::NonFinite {
                    measurand: study.measurands[f.measurand].name.clone(),
                    trial: f.trial,
                    value: format!("{}", f.value),
                    inputs,
                });
            }
        }
    }
    Ok(Samples {
        trials: m,
        measurands: meas_cols,
        inputs: in_cols,
        moments,
        input_pairs,
        measurand_pairs,
    })
}

/// One chunk: draw, evaluate, store, and summarise its measurand values.
fn run_chunk(
    study: &Study,
    steps: &[sampling::FillStep],
    plan: Plan,
    chunk: usize,
    outs: &mut [&mut [f64]],
    mut ins: Option<&mut [&mut [f64]]>,
) -> Result<ChunkStats, Fault> {
    let model = &study.model;
    let n_in = model.inputs;
    let stride = BLOCK_TRIALS;
    let n = outs.first().map_or(0, |s| s.len());
    let global_chunk = plan.first_chunk + chunk as u64;
    let mut rng = stream::chunk_stream(plan.seed, global_chunk);
    let mut work = vec![0.0f64; model.columns() * stride];
    let mut stack = vec![0.0f64; model.stack_depth() * stride];
    let pairs = &study.correlations.pairs;
    let mut pair_stats = vec![CoMoments::EMPTY; pairs.len()];
    let mut start = 0;
    while start < n {
        let b = stride.min(n - start);
        sampling::fill_inputs(study, steps, &mut rng, &mut work, stride, b);
        for (stat, p) in pair_stats.iter_mut().zip(pairs) {
            let x = &work[p.a * stride..p.a * stride + b];
            let y = &work[p.b * stride..p.b * stride + b];
            *stat = stat.merge(&CoMoments::of(x, y));
        }
        model.evaluate_block(&mut work, stride, b, &mut stack);
        for (mi, out) in outs.iter_mut().enumerate() {
            let col = &work[(n_in + mi) * stride..(n_in + mi) * stride + b];
            if let Some(j) = col.iter().position(|v| !v.is_finite()) {
                return Err(Fault {
                    trial: global_chunk * CHUNK_TRIALS as u64 + (start + j) as u64,
                    measurand: mi,
                    value: col[j],
                    inputs: (0..n_in).map(|i| work[i * stride + j]).collect(),
                });
            }
            out[start..start + b].copy_from_slice(col);
        }
        if let Some(ins) = ins.as_deref_mut() {
            for (i, dst) in ins.iter_mut().enumerate() {
                dst[start..start + b].copy_from_slice(&work[i * stride..i * stride + b]);
            }
        }
        start += b;
    }
    let cols: Vec<&[f64]> = outs.iter().map(|o| &**o).collect();
    let (moments, measurand_pairs) = joint_moments(&cols);
    Ok(ChunkStats {
        moments,
        pairs: pair_stats,
        measurand_pairs,
    })
}

/// Run `f` on a pool of `threads` workers (all cores when `None`).
pub fn with_threads<R: Send>(
    threads: Option<usize>,
    f: impl FnOnce() -> R + Send,
) -> Result<R, RunError> {
    let mut builder = rayon::ThreadPoolBuilder::new();
    if let Some(t) = threads {
        builder = builder.num_threads(t);
    }
    let pool = builder.build().map_err(|e| RunError::Threads {
        threads: threads.unwrap_or(0),
        message: e.to_string(),
    })?;
    Ok(pool.install(f))
}
