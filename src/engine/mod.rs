//! Trial generation: chunked, parallel, reproducible.
//!
//! The M trials are cut into chunks of [`CHUNK_TRIALS`]; chunk k draws its inputs from the
//! stream of (seed, k) (see [`stream`]) and evaluates the model a block of [`BLOCK_TRIALS`] at a
//! time. Chunks run on rayon's pool in any order, each writing only its own slice of the result
//! columns, and per-chunk statistics are combined in chunk order. So the samples and every
//! number computed from them depend on the seed and M only, never on the thread count.

pub mod memory;
pub mod stream;

use crate::analysis::moments::Moments;
use crate::error::RunError;
use crate::scenario::{Law, Study};
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
}

/// What to generate.
#[derive(Clone, Copy, Debug)]
pub struct Plan {
    /// Number of trials.
    pub trials: u64,
    /// Seed.
    pub seed: u64,
    /// Keep the input columns (for sensitivity and exports).
    pub keep_inputs: bool,
}

struct Fault {
    trial: u64,
    measurand: usize,
    value: f64,
    inputs: Vec<f64>,
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

    let mut meas_cols: Vec<Vec<f64>> = (0..n_meas).map(|_| vec![0.0; m]).collect();
    let mut in_cols: Option<Vec<Vec<f64>>> = plan
        .keep_inputs
        .then(|| (0..n_in).map(|_| vec![0.0; m]).collect());

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

    let first_failed_chunk = AtomicU64::new(u64::MAX);
    let results: Vec<Result<Vec<Moments>, Fault>> = per_chunk
        .into_par_iter()
        .enumerate()
        .map(|(k, mut slices)| {
            if (k as u64) > first_failed_chunk.load(Ordering::Relaxed) {
                return Ok(Vec::new());
            }
            let (outs, ins) = slices.split_at_mut(n_meas);
            let r = run_chunk(
                study,
                plan.seed,
                k,
                outs,
                if plan.keep_inputs { Some(ins) } else { None },
            );
            if r.is_err() {
                first_failed_chunk.fetch_min(k as u64, Ordering::Relaxed);
            }
            r
        })
        .collect();

    let mut moments = vec![Moments::EMPTY; n_meas];
    for r in results {
        match r {
            Ok(chunk_moments) => {
                for (total, part) in moments.iter_mut().zip(chunk_moments) {
                    *total = total.merge(&part);
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
    })
}

/// One chunk: draw, evaluate, store, and summarise its measurand values.
fn run_chunk(
    study: &Study,
    seed: u64,
    chunk: usize,
    outs: &mut [&mut [f64]],
    mut ins: Option<&mut [&mut [f64]]>,
) -> Result<Vec<Moments>, Fault> {
    let model = &study.model;
    let n_in = model.inputs;
    let stride = BLOCK_TRIALS;
    let n = outs.first().map_or(0, |s| s.len());
    let mut rng = stream::chunk_stream(seed, chunk as u64);
    let mut work = vec![0.0f64; model.columns() * stride];
    let mut stack = vec![0.0f64; model.stack_depth() * stride];
    let mut start = 0;
    while start < n {
        let b = stride.min(n - start);
        for (i, q) in study.inputs.iter().enumerate() {
            let col = &mut work[i * stride..i * stride + b];
            match &q.law {
                Law::Constant(v) => col.fill(*v),
                Law::Distributed(d) => d.fill(&mut rng, col),
            }
        }
        model.evaluate_block(&mut work, stride, b, &mut stack);
        for (mi, out) in outs.iter_mut().enumerate() {
            let col = &work[(n_in + mi) * stride..(n_in + mi) * stride + b];
            if let Some(j) = col.iter().position(|v| !v.is_finite()) {
                return Err(Fault {
                    trial: (chunk * CHUNK_TRIALS + start + j) as u64,
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
    Ok(outs.iter().map(|o| Moments::of(o)).collect())
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
