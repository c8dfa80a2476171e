//! The model runs of a variance-based sensitivity analysis: two independent base samples A and B
//! of N rows, and for every factor i the matrix A_B^(i) (A with the columns of factor i taken
//! from B), N (k + 2) model runs in all (Saltelli et al., Comput. Phys. Commun. 181, 259, 2010).
//!
//! A factor is one input quantity, or a whole group of correlated inputs (their columns are
//! swapped together, which keeps the indices meaningful for dependent inputs: grouped indices).
//! Rows are made in chunks of [`SENSITIVITY_CHUNK`], in parallel. With the pseudo-random sampler,
//! chunk k draws A then B from its own stream, `seed_from_u64(seed)` advanced by 2^192 (past every
//! stream of an ordinary run) plus k x 2^128. With the quasi-random sampler, row r of A and B are
//! point r of a 2k-dimensional Owen-scrambled Sobol sequence (sobol_burley: Burley, JCGT 9(4),
//! 2020, with the Joe-Kuo direction numbers), A in dimensions 0..k and B in k..2k, mapped through
//! each input's quantile function. Either way the runs depend on the seed only.

use super::sampling::{self, FillStep};
use super::{BLOCK_TRIALS, stream};
use crate::error::RunError;
use crate::scenario::Study;
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

/// Rows per chunk of a sensitivity design.
pub(crate) const SENSITIVITY_CHUNK: usize = 4096;

/// Largest base sample of the quasi-random sampler (sobol_burley's sequence length).
pub(crate) const MAX_SOBOL_ROWS: usize = 1 << 16;

/// Most dimensions of the quasi-random sampler (sobol_burley).
pub(crate) const MAX_SOBOL_DIMENSIONS: usize = 256;

/// How the base samples A and B are drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum BaseSampler {
    /// Independent pseudo-random base samples.
    Random,
    /// A scrambled Sobol low-discrepancy sequence (at most 65536 base rows).
    Sobol,
}

/// The model values of a sensitivity design.
#[derive(Clone, Debug)]
pub struct DesignRuns {
    /// Base rows N.
    pub(crate) rows: usize,
    /// The factors, each a list of input indices.
    pub(crate) factors: Vec<Vec<usize>>,
    /// f(A) per measurand, N values.
    pub(crate) f_a: Vec<Vec<f64>>,
    /// f(B) per measurand.
    pub(crate) f_b: Vec<Vec<f64>>,
    /// f(A_B^(i)) per measurand, per factor.
    pub(crate) f_ab: Vec<Vec<Vec<f64>>>,
}

/// The factors of a study: every non-constant input, with each correlated group as one factor,
/// in input order.
pub(crate) fn factors(study: &Study) -> Vec<Vec<usize>> {
    let mut out: Vec<Vec<usize>> = Vec::new();
    for (i, q) in study.inputs.iter().enumerate() {
        if q.is_constant() {
            continue;
        }
        match study.correlations.group_of(i) {
            Some(g) => {
                let members = &study.correlations.groups[g].members;
                if members[0] == i {
                    out.push(members.clone());
                }
            }
            None => out.push(vec![i]),
        }
    }
    out
}

fn sensitivity_stream(seed: u64, chunk: u64) -> Xoshiro256PlusPlus {
    let mut rng = stream::chunk_stream(seed, 0);
    rng.long_jump();
    if chunk > 0 {
        rng.jump_ce(chunk, 128);
    }
    rng
}

/// A probability in the open interval from a Sobol coordinate in [0, 1) of 24 bits.
fn open_unit(u: f32) -> f64 {
    const CELLS: f64 = (1u32 << 24) as f64;
    ((f64::from(u) * CELLS).floor() + 0.5) / CELLS
}

/// Run the N (k + 2) model evaluations of a design.
pub fn design_runs(
    study: &Study,
    rows: usize,
    sampler: BaseSampler,
    seed: u64,
) -> Result<DesignRuns, RunError> {
    let factors = factors(study);
    let model = &study.model;
    let n_in = model.inputs;
    let nm = model.measurands;
    let k = factors.len();
    // Sobol dimension of each non-constant input.
    let mut dim = vec![usize::MAX; n_in];
    let mut next = 0;
    for (i, q) in study.inputs.iter().enumerate() {
        if !q.is_constant() {
            dim[i] = next;
            next += 1;
        }
    }
    let dims = next;
    let steps: Vec<FillStep> = sampling::fill_steps(study);
    let sobol_seed = (seed ^ (seed >> 32)) as u32;
    let chunks = rows.div_ceil(SENSITIVITY_CHUNK);

    type ChunkOut = (Vec<Vec<f64>>, Vec<Vec<f64>>, Vec<Vec<Vec<f64>>>);
    let results: Vec<Result<ChunkOut, RunError>> = (0..chunks)
        .into_par_iter()
        .map(|c| {
            let start = c * SENSITIVITY_CHUNK;
            let len = SENSITIVITY_CHUNK.min(rows - start);
            let stride = BLOCK_TRIALS;
            let cols = model.columns();
            let mut rng = sensitivity_stream(seed, c as u64);
            let mut work_a = vec![0.0; cols * stride];
            let mut work_b = vec![0.0; cols * stride];
            let mut work_ab = vec![0.0; cols * stride];
            let mut stack = vec![0.0; model.stack_depth() * stride];
            let mut fa = vec![Vec::with_capacity(len); nm];
            let mut fb = vec![Vec::with_capacity(len); nm];
            let mut fab = vec![vec![Vec::with_capacity(len); k]; nm];
            let mut done = 0;
            while done < len {
                let b = stride.min(len - done);
                let row0 = start + done;
                match sampler {
                    BaseSampler::Random => {
                        sampling::fill_inputs(study, &steps, &mut rng, &mut work_a, stride, b);
                        sampling::fill_inputs(study, &steps, &mut rng, &mut work_b, stride, b);
                    }
                    BaseSampler::Sobol => {
                        let ua = |i: usize, t: usize| open_unit(sobol_burley::sample((row0 + t) as u32, dim[i] as u32, sobol_seed));
                        let ub = |i: usize, t: usize| {
                            open_unit(sobol_burley::sample((row0 + t) as u32, (dims + dim[i]) as u32, sobol_seed))
                        };
                        sampling::fill_inputs_from_uniforms(study, &steps, &ua, &mut work_a, stride, b);
                        sampling::fill_inputs_from_uniforms(study, &steps, &ub, &mut work_b, stride, b);
                    }
                }
                for (f, members) in factors.iter().enumerate() {
                    work_ab.copy_from_slice(&work_a);
                    for &i in members {
                        work_ab[i * stride..i * stride + b]
                            .copy_from_slice(&work_b[i * stride..i * stride + b]);
                    }
                    model.evaluate_block(&mut work_ab, stride, b, &mut stack);
                    for m in 0..nm {
                        fab[m][f].extend_from_slice(&work_ab[(n_in + m) * stride..(n_in + m) * stride + b]);
                    }
                }
                model.evaluate_block(&mut work_a, stride, b, &mut stack);
                model.evaluate_block(&mut work_b, stride, b, &mut stack);
                for m in 0..nm {
                    fa[m].extend_from_slice(&work_a[(n_in + m) * stride..(n_in + m) * stride + b]);
                    fb[m].extend_from_slice(&work_b[(n_in + m) * stride..(n_in + m) * stride + b]);
                }
                done += b;
            }
            let finite = fa.iter().chain(&fb).chain(fab.iter().flatten()).all(|col| col.iter().all(|v| v.is_finite()));
            if !finite {
                return Err(RunError::Numerical(format!(
                    "a model value of the sensitivity design (rows {start} to {}) is not finite; run `radforce run` on the scenario to see the inputs of such a trial",
                    start + len - 1
                )));
            }
            Ok((fa, fb, fab))
        })
        .collect();
    let mut f_a = vec![Vec::with_capacity(rows); nm];
    let mut f_b = vec![Vec::with_capacity(rows); nm];
    let mut f_ab = vec![vec![Vec::with_capacity(rows); k]; nm];
    for r in results {
        let (fa, fb, fab) = r?;
        for m in 0..nm {
            f_a[m].extend_from_slice(&fa[m]);
            f_b[m].extend_from_slice(&fb[m]);
            for f in 0..k {
                f_ab[m][f].extend_from_slice(&fab[m][f]);
            }
        }
    }
    Ok(DesignRuns {
        rows,
        factors,
        f_a,
        f_b,
        f_ab,
    })
}
