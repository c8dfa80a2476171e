//! Trial generation: chunked, parallel, reproducible.
//!
//! The M trials are cut into chunks of [`CHUNK_TRIALS`]; chunk k draws its inputs from the
//! stream of (seed, k) (see [`stream`]) and evaluates the model a block of [`BLOCK_TRIALS`] at a
//! time. Chunks run on rayon's pool in any order, each writing only its own slice of the result
//! columns, and per-chunk statistics are combined in chunk order. So the samples and every
//! number computed from them depend on the seed and M only, never on the thread count.

pub mod adaptive;
pub(crate) mod columns;
pub(crate) mod memory;
pub mod progress;
pub(crate) mod result;
pub mod sampling;
pub mod sensitivity;
pub mod stream;
pub(crate) mod streaming;
pub(crate) mod tails;

pub(crate) use result::{MonteCarlo, Shape};

use crate::error::RunError;
use crate::scenario::Study;
use crate::stats::moments::{CoMoments, Moments, joint_moments};
use rayon::prelude::*;
use std::sync::atomic::{AtomicU64, Ordering};

/// Trials per chunk; part of the reproducibility contract (changing it changes the streams).
pub(crate) const CHUNK_TRIALS: usize = 16_384;
/// Trials per block inside a chunk (inputs are drawn input by input for a whole block).
pub const BLOCK_TRIALS: usize = 256;

/// Name of the generator and stream layout, as printed in reports.
pub(crate) fn generator_description() -> String {
    format!(
        "Xoshiro256++ (rand_xoshiro {}); chunk k of {CHUNK_TRIALS} trials draws from seed_from_u64(seed) advanced by k*2^128 steps; samplers of rand {} / rand_distr {}",
        env!("RADFORCE_DEP_RAND_XOSHIRO"),
        env!("RADFORCE_DEP_RAND"),
        env!("RADFORCE_DEP_RAND_DISTR"),
    )
}

/// The crate versions that define the random streams.
pub(crate) fn stream_crates() -> Vec<(&'static str, &'static str)> {
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
    pub(crate) inputs: Option<Vec<Vec<f64>>>,
    /// Mean and sum of squared deviations per measurand, combined in chunk order.
    pub moments: Vec<Moments>,
    /// Joint moments of each correlated input pair (in `study.correlations.pairs` order), for
    /// the achieved sample correlation.
    pub(crate) input_pairs: Vec<CoMoments>,
    /// Joint moments of every pair of measurands (a < b, in the order (0,1), (0,2), ..., (1,2),
    /// ...), for their correlation matrix; combined in chunk order like the moments.
    pub(crate) measurand_pairs: Vec<CoMoments>,
    /// The summary of every chunk, in chunk order (for shards, whose chunks interleave).
    pub(crate) chunks: Vec<ChunkSummary>,
}

/// The pairs (a, b), a < b, of `n` measurands in the order of `Samples::measurand_pairs`.
pub(crate) fn measurand_pair_order(n: usize) -> Vec<(usize, usize)> {
    (0..n)
        .flat_map(|a| (a + 1..n).map(move |b| (a, b)))
        .collect()
}

impl Samples {
    /// Append the trials of a later run (the next batch of an adaptive run).
    pub(crate) fn append(&mut self, other: Samples) {
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
        self.chunks.extend(other.chunks);
    }
}

/// What to generate.
#[derive(Clone, Copy, Debug)]
pub struct Plan {
    /// Number of trials.
    pub(crate) trials: u64,
    /// Seed.
    pub(crate) seed: u64,
    /// Index of the first chunk: a run that continues a stream (the next batch of an adaptive
    /// run) starts past the chunks already drawn.
    pub(crate) first_chunk: u64,
    /// Keep the input columns (for sensitivity and exports).
    pub(crate) keep_inputs: bool,
    /// Run only the chunks k with k mod N = K (`Some((K, N))`), for a shard of a run.
    pub(crate) shard: Option<(u64, u64)>,
}

impl Plan {
    /// M trials under `seed` from the first chunk, without input columns.
    pub fn new(trials: u64, seed: u64) -> Plan {
        Plan {
            trials,
            seed,
            first_chunk: 0,
            keep_inputs: false,
            shard: None,
        }
    }

    /// The chunks of the run (or of its shard), ascending, with their trial counts.
    pub(crate) fn chunks(&self) -> Vec<(u64, usize)> {
        let m = self.trials;
        let n = m.div_ceil(CHUNK_TRIALS as u64);
        (0..n)
            .filter(|k| self.shard.is_none_or(|(part, of)| k % of == part))
            .map(|k| {
                (
                    k,
                    (m - k * CHUNK_TRIALS as u64).min(CHUNK_TRIALS as u64) as usize,
                )
            })
            .collect()
    }
}

/// What one chunk gives besides its values: the statistics that are merged in chunk order.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct ChunkSummary {
    /// The chunk's index in the stream (`first_chunk` included).
    pub(crate) index: u64,
    /// Moments of each measurand.
    pub(crate) moments: Vec<Moments>,
    /// Joint moments of each correlated input pair.
    pub(crate) input_pairs: Vec<CoMoments>,
    /// Joint moments of each pair of measurands.
    pub(crate) measurand_pairs: Vec<CoMoments>,
}

/// The merged statistics, as [`merge_chunks`] gives them.
pub(crate) type Merged = (Vec<Moments>, Vec<CoMoments>, Vec<CoMoments>);

/// The merged statistics of chunk summaries, combined in ascending chunk order. A measurand
/// whose mean or sum of squared deviations is not a finite double (values of spread near 1e154
/// or beyond, whose squares overflow) is refused: its standard uncertainty cannot be computed,
/// and no number is better than a wrong one.
pub(crate) fn merge_chunks(study: &Study, chunks: &[ChunkSummary]) -> Result<Merged, RunError> {
    let (moments, inputs, pairs) = merge_in_order(
        chunks,
        study.model.measurands,
        study.correlations.pairs.len(),
    );
    if let Some((i, _)) = moments
        .iter()
        .enumerate()
        .find(|(_, m)| !(m.mean.is_finite() && m.m2.is_finite()))
    {
        return Err(RunError::Numerical(format!(
            "the variance of measurand `{}` overflows double precision (its values spread over \
             more than about 1e154 in SI units), so no uncertainty can be given; check the \
             inputs' spreads (a standard deviation in the wrong unit?)",
            study.measurands[i].name
        )));
    }
    Ok((moments, inputs, pairs))
}

/// Chunk summaries combined in ascending chunk order.
fn merge_in_order(
    chunks: &[ChunkSummary],
    measurands: usize,
    input_pairs: usize,
) -> (Vec<Moments>, Vec<CoMoments>, Vec<CoMoments>) {
    let mut order: Vec<&ChunkSummary> = chunks.iter().collect();
    order.sort_by_key(|c| c.index);
    let mut moments = vec![Moments::EMPTY; measurands];
    let mut inputs = vec![CoMoments::EMPTY; input_pairs];
    let mut pairs = vec![CoMoments::EMPTY; measurand_pair_order(measurands).len()];
    for c in order {
        for (t, p) in moments.iter_mut().zip(&c.moments) {
            *t = t.merge(p);
        }
        for (t, p) in inputs.iter_mut().zip(&c.input_pairs) {
            *t = t.merge(p);
        }
        for (t, p) in pairs.iter_mut().zip(&c.measurand_pairs) {
            *t = t.merge(p);
        }
    }
    (moments, inputs, pairs)
}

struct Fault {
    trial: u64,
    measurand: usize,
    value: f64,
    inputs: Vec<f64>,
}

impl Fault {
    /// The marker of a chunk skipped because a stop was asked for.
    fn interrupted() -> Fault {
        Fault {
            trial: u64::MAX,
            measurand: usize::MAX,
            value: 0.0,
            inputs: Vec::new(),
        }
    }
}

fn fault_error(study: &Study, f: Fault) -> RunError {
    if f.measurand == usize::MAX {
        return RunError::Interrupted;
    }
    let inputs = study
        .inputs
        .iter()
        .zip(&f.inputs)
        .map(|(q, v)| format!("{} = {v:e}", q.name))
        .collect::<Vec<_>>()
        .join(", ");
    // An input of extreme size (a quality factor of 1e300, a value in the wrong unit) makes the
    // model overflow; otherwise the usual causes of NaN and infinity.
    let huge = study
        .inputs
        .iter()
        .zip(&f.inputs)
        .filter(|(_, v)| v.abs() > 1e100 || (**v != 0.0 && v.abs() < 1e-100))
        .map(|(q, v)| format!("{} = {v:e}", q.name))
        .collect::<Vec<_>>();
    let hint = if huge.is_empty() {
        "Check the input distributions (a divisor that can reach 0, a square root or logarithm \
         of a value that can go negative)"
            .to_string()
    } else {
        format!(
            "{} is of an extreme size that makes the model overflow: check its value and unit",
            huge.join(", ")
        )
    };
    RunError::NonFinite {
        hint,
        measurand: study.measurands[f.measurand].name.clone(),
        trial: f.trial,
        value: format!("{}", f.value),
        inputs,
    }
}

/// Run the chunks of `plan` (all of them, or those of its shard) on the current rayon pool,
/// keeping the values in memory.
pub fn simulate(study: &Study, plan: Plan) -> Result<Samples, RunError> {
    let chunks = plan.chunks();
    let m: usize = chunks.iter().map(|c| c.1).sum();
    let model = &study.model;
    let n_in = model.inputs;
    let n_meas = model.measurands;

    let mut meas_cols: Vec<Vec<f64>> = (0..n_meas).map(|_| columns::column(m)).collect();
    let mut in_cols: Option<Vec<Vec<f64>>> = plan
        .keep_inputs
        .then(|| (0..n_in).map(|_| columns::column(m)).collect());

    // Cut every column into the chunks' slices, in chunk order.
    let mut per_chunk: Vec<Vec<&mut [f64]>> = (0..chunks.len()).map(|_| Vec::new()).collect();
    fn cut<'a>(col: &'a mut [f64], chunks: &[(u64, usize)], per_chunk: &mut [Vec<&'a mut [f64]>]) {
        let mut rest = col;
        for (j, &(_, len)) in chunks.iter().enumerate() {
            let (head, tail) = rest.split_at_mut(len);
            per_chunk[j].push(head);
            rest = tail;
        }
    }
    for col in meas_cols.iter_mut() {
        cut(col, &chunks, &mut per_chunk);
    }
    if let Some(cols) = in_cols.as_mut() {
        for col in cols.iter_mut() {
            cut(col, &chunks, &mut per_chunk);
        }
    }

    let steps = sampling::fill_steps(study);
    let first_failed_chunk = AtomicU64::new(u64::MAX);
    let results: Vec<Result<ChunkSummary, Fault>> = per_chunk
        .into_par_iter()
        .zip(chunks.par_iter())
        .map(|(mut slices, &(k, _))| {
            if k > first_failed_chunk.load(Ordering::Relaxed) {
                return Ok(ChunkSummary {
                    index: k,
                    ..ChunkSummary::default()
                });
            }
            let (outs, ins) = slices.split_at_mut(n_meas);
            let ins = if plan.keep_inputs { Some(ins) } else { None };
            let r = run_chunk(study, &steps, plan, k, outs, ins);
            if r.is_err() {
                first_failed_chunk.fetch_min(k, Ordering::Relaxed);
            }
            r
        })
        .collect();
    // The first fault in chunk order decides (an interruption only when no chunk failed).
    let mut summaries = Vec::with_capacity(results.len());
    let mut interrupted = false;
    for r in results {
        match r {
            Ok(s) => summaries.push(s),
            Err(f) if f.measurand == usize::MAX => interrupted = true,
            Err(f) => return Err(fault_error(study, f)),
        }
    }
    if interrupted {
        return Err(RunError::Interrupted);
    }
    let (moments, input_pairs, measurand_pairs) = merge_chunks(study, &summaries)?;
    Ok(Samples {
        trials: m,
        measurands: meas_cols,
        inputs: in_cols,
        moments,
        input_pairs,
        measurand_pairs,
        chunks: summaries,
    })
}

/// Run the chunks `chunks` of `plan` without keeping their values: each chunk's values are
/// handed to `sink` (chunk index, one slice per measurand) as soon as they are made, and its
/// summary is returned, in the order of `chunks`. For runs that do not fit in memory.
pub(crate) fn stream_chunks<T: Send>(
    study: &Study,
    plan: Plan,
    chunks: &[(u64, usize)],
    sink: &(dyn Fn(u64, &[&[f64]]) -> T + Sync),
) -> Result<Vec<(ChunkSummary, T)>, RunError> {
    let n_meas = study.model.measurands;
    let steps = sampling::fill_steps(study);
    // Each worker reuses its chunk buffers (no allocation, no fresh pages per chunk).
    let results: Vec<Result<(ChunkSummary, T), Fault>> = chunks
        .par_iter()
        .map_init(
            || vec![vec![0.0; CHUNK_TRIALS]; n_meas],
            |buffers, &(k, len)| {
                let mut outs: Vec<&mut [f64]> = buffers.iter_mut().map(|b| &mut b[..len]).collect();
                let summary = run_chunk(study, &steps, plan, k, &mut outs, None)?;
                let views: Vec<&[f64]> = buffers.iter().map(|b| &b[..len]).collect();
                Ok((summary, sink(k, &views)))
            },
        )
        .collect();
    results
        .into_iter()
        .map(|r| r.map_err(|f| fault_error(study, f)))
        .collect()
}

/// One chunk: draw, evaluate, store, and summarise its measurand values.
fn run_chunk(
    study: &Study,
    steps: &[sampling::FillStep],
    plan: Plan,
    chunk: u64,
    outs: &mut [&mut [f64]],
    mut ins: Option<&mut [&mut [f64]]>,
) -> Result<ChunkSummary, Fault> {
    if progress::interrupted() {
        return Err(Fault::interrupted());
    }
    let model = &study.model;
    let n_in = model.inputs;
    let stride = BLOCK_TRIALS;
    let n = outs.first().map_or(0, |s| s.len());
    let global_chunk = plan.first_chunk + chunk;
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
    progress::add(n as u64);
    Ok(ChunkSummary {
        index: global_chunk,
        moments,
        input_pairs: pair_stats,
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
