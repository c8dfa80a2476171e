//! Variance-based sensitivity (Sobol indices) with bootstrap confidence intervals, and Spearman
//! rank correlations.
//!
//! From the runs of `engine::sensitivity` (N rows of f(A), f(B), f(A_B^(i))), with V the
//! variance of the 2N values of f(A) and f(B) pooled:
//! - first-order index S_i = V_i / V, V_i = (1/N) sum_j f(B)_j (f(A_B^(i))_j - f(A)_j)
//!   (Saltelli et al., Comput. Phys. Commun. 181, 259, 2010, Table 2 (b)), with f centred on
//!   the pooled mean first (see [`estimate`]);
//! - total index ST_i = V_Ti / V, V_Ti = (1/2N) sum_j (f(A)_j - f(A_B^(i))_j)^2
//!   (Jansen, Comput. Phys. Commun. 117, 35, 1999; Saltelli et al. 2010, Table 2 (f)).
//!
//! Confidence intervals: the N rows are resampled with replacement (percentile bootstrap, Efron
//! and Tibshirani 1993, 13.3), each replicate drawing its row indices from its own stream. Every
//! estimator above is made of means of per-row terms, so a replicate is the same sums with each
//! row weighted by how many times it was drawn ([`weighted_estimate`]): one pass over the rows in
//! order, no new model run and no gather of rows.

use crate::engine::sensitivity::DesignRuns;
use crate::engine::stream;
use rand::Rng;
use rayon::prelude::*;

/// Gap between total and first-order index above which the report flags interaction (common
/// practice: a few per cent of the variance).
pub(crate) const INTERACTION_GAP: f64 = 0.05;

/// The indices of one factor for one measurand.
#[derive(Clone, Debug, PartialEq)]
pub struct FactorIndices {
    /// Input indices of the factor (one, or a correlated group).
    pub(crate) members: Vec<usize>,
    /// First-order index S_i.
    pub first_order: f64,
    /// Its bootstrap interval.
    pub first_order_interval: (f64, f64),
    /// Total index ST_i.
    pub total: f64,
    /// Its bootstrap interval.
    pub total_interval: (f64, f64),
}

/// Estimate (S_i, ST_i) for every factor over the rows `rows` (all rows when `None`).
///
/// The model values are first centred on the pooled mean of f(A) and f(B), as SALib does (it
/// standardises the output): this leaves the estimator's expectation unchanged, since
/// E[f(A_B^(i)) - f(A)] = 0, and removes the large variance the raw form has when the mean of
/// the output is large beside its spread (a 20 W estimate with u = 0.1 W).
pub(crate) fn estimate(
    fa: &[f64],
    fb: &[f64],
    fab: &[Vec<f64>],
    rows: Option<&[u32]>,
) -> Vec<(f64, f64)> {
    let n = rows.map_or(fa.len(), <[u32]>::len);
    let at = |j: usize| rows.map_or(j, |r| r[j] as usize);
    let m = 2.0 * n as f64;
    let mean = (0..n).map(|j| fa[at(j)] + fb[at(j)]).sum::<f64>() / m;
    let mut s2 = 0.0;
    for j in 0..n {
        let (a, b) = (fa[at(j)] - mean, fb[at(j)] - mean);
        s2 += a * a + b * b;
    }
    let var = s2 / (m - 1.0);
    fab.iter()
        .map(|f| {
            let (mut vi, mut vt) = (0.0, 0.0);
            for j in 0..n {
                let r = at(j);
                vi += (fb[r] - mean) * (f[r] - fa[r]);
                vt += (fa[r] - f[r]).powi(2);
            }
            let vi = vi / n as f64;
            let vt = vt / (2.0 * n as f64);
            if var > 0.0 {
                (vi / var, vt / var)
            } else {
                (0.0, 0.0)
            }
        })
        .collect()
}

/// One measurand's design outputs, row by row: `[f(A), f(B), f(A_B^(1)), ..., f(A_B^(k))]`,
/// each less the pooled mean `shift` (centring keeps the sums of squares accurate). A bootstrap
/// replicate reads each row once for all k factors, a third of the memory traffic of reading
/// k + 2 columns k times.
pub(crate) struct DesignRows {
    k: usize,
    values: Vec<f64>,
}

impl DesignRows {
    pub(crate) fn new(fa: &[f64], fb: &[f64], fab: &[Vec<f64>], shift: f64) -> Self {
        let k = fab.len();
        let mut values = Vec::with_capacity(fa.len() * (k + 2));
        for j in 0..fa.len() {
            values.push(fa[j] - shift);
            values.push(fb[j] - shift);
            values.extend(fab.iter().map(|f| f[j] - shift));
        }
        DesignRows { k, values }
    }
}

/// Bootstrap replicates computed together in one pass over the rows.
pub(crate) const LANES: usize = 4;

/// [`estimate`] over [`LANES`] resamples at once, each given as the number of times
/// `counts[j][l]` (a whole number, as f64) row j was drawn (summing to N): the same estimator,
/// its sums written as weighted sums over the rows in order. With the values shifted by the full
/// sample's pooled mean (which leaves every index unchanged and keeps the sums of squares free
/// of cancellation), a = f(A) - shift, b = f(B) - shift, d_i = f(A_B^(i)) - f(A) and W = 2 N:
///   mean = sum w (a + b) / W,  V = (sum w (a^2 + b^2) - W mean^2) / (W - 1),
///   V_i = (sum w b d_i - mean sum w d_i) / N,  V_Ti = sum w d_i^2 / (2 N).
/// Each lane's sums run in row order whatever the lanes beside it, so a replicate's result does
/// not depend on how replicates are grouped. Returns, per lane, (S_i, ST_i) for every factor.
pub(crate) fn weighted_estimates(
    rows: &DesignRows,
    counts: &[[f64; LANES]],
) -> [Vec<(f64, f64)>; LANES] {
    let k = rows.k;
    let mut n = [0.0; LANES];
    let (mut s1, mut s2) = ([0.0; LANES], [0.0; LANES]);
    // Per factor: the sums of w b d, w d and w d^2, one lane per replicate (fixed-width arrays
    // the compiler turns into vector instructions).
    let mut acc = vec![[[0.0f64; LANES]; 3]; k];
    for (row, w) in rows.values.chunks_exact(k + 2).zip(counts) {
        let (a, b) = (row[0], row[1]);
        let (t1, t2) = (a + b, a * a + b * b);
        let mut wb = [0.0; LANES];
        for l in 0..LANES {
            n[l] += w[l];
            s1[l] += w[l] * t1;
            s2[l] += w[l] * t2;
            wb[l] = w[l] * b;
        }
        for (x, [bd, dd, d2]) in row[2..].iter().zip(acc.iter_mut()) {
            let d = x - a;
            for l in 0..LANES {
                let wd = w[l] * d;
                bd[l] += wb[l] * d;
                dd[l] += wd;
                d2[l] += wd * d;
            }
        }
    }
    std::array::from_fn(|l| {
        let m = 2.0 * n[l];
        let mean = s1[l] / m;
        let var = (s2[l] - m * mean * mean) / (m - 1.0);
        acc.iter()
            .map(|[bd, dd, d2]| {
                let vi = (bd[l] - mean * dd[l]) / n[l];
                let vt = d2[l] / (2.0 * n[l]);
                if var > 0.0 {
                    (vi / var, vt / var)
                } else {
                    (0.0, 0.0)
                }
            })
            .collect()
    })
}

fn percentile(sorted: &[f64], p: f64) -> f64 {
    // Linear interpolation between order statistics (Hyndman and Fan 1996, type 7).
    let h = (sorted.len() - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Indices of every factor for every measurand with percentile bootstrap intervals at
/// `confidence` from `replicates` resamples of the rows; replicate b draws from the stream
/// (seed, b) advanced past every ordinary and design stream, and the same resample serves every
/// measurand (as resampling the rows of the design does).
pub fn indices(
    runs: &DesignRuns,
    confidence: f64,
    replicates: usize,
    seed: u64,
) -> Vec<Vec<FactorIndices>> {
    let n = runs.rows;
    let measurands = runs.f_a.len();
    let rows: Vec<DesignRows> = (0..measurands)
        .into_par_iter()
        .map(|m| {
            let shift =
                runs.f_a[m].iter().chain(runs.f_b[m].iter()).sum::<f64>() / (2.0 * n as f64);
            DesignRows::new(&runs.f_a[m], &runs.f_b[m], &runs.f_ab[m], shift)
        })
        .collect();
    // Replicates in groups of LANES, each group one pass over the rows; boot[b][m][factor].
    let groups = replicates.div_ceil(LANES);
    let boot: Vec<Vec<Vec<(f64, f64)>>> = (0..groups)
        .into_par_iter()
        .map_init(
            || vec![[0.0f64; LANES]; n],
            |counts, g| {
                counts.iter_mut().for_each(|c| *c = [0.0; LANES]);
                // `l` picks a lane of every row's counts, not an element of one slice.
                #[allow(clippy::needless_range_loop)]
                for l in 0..LANES {
                    let mut rng = stream::chunk_stream(seed, 0);
                    rng.long_jump();
                    rng.long_jump();
                    rng.jump_ce((g * LANES + l) as u64, 128);
                    // A row index uniform on 0..n from the high half of r n (Lemire, ACM
                    // TOMACS 29, 2019: no division; its bias, below n / 2^64, is nil here).
                    for _ in 0..n {
                        let j = ((rng.next_u64() as u128 * n as u128) >> 64) as usize;
                        counts[j][l] += 1.0;
                    }
                }
                let per_measurand: Vec<[Vec<(f64, f64)>; LANES]> =
                    rows.iter().map(|r| weighted_estimates(r, counts)).collect();
                (0..LANES)
                    .map(|l| per_measurand.iter().map(|m| m[l].clone()).collect())
                    .collect::<Vec<Vec<Vec<(f64, f64)>>>>()
            },
        )
        .flatten()
        .collect();
    let boot = &boot[..replicates];
    let alpha = 0.5 * (1.0 - confidence);
    (0..measurands)
        .map(|m| {
            let point = estimate(&runs.f_a[m], &runs.f_b[m], &runs.f_ab[m], None);
            point
                .iter()
                .enumerate()
                .map(|(f, &(s, st))| {
                    let mut first: Vec<f64> = boot.iter().map(|r| r[m][f].0).collect();
                    let mut total: Vec<f64> = boot.iter().map(|r| r[m][f].1).collect();
                    first.sort_by(f64::total_cmp);
                    total.sort_by(f64::total_cmp);
                    FactorIndices {
                        members: runs.factors[f].clone(),
                        first_order: s,
                        first_order_interval: (
                            percentile(&first, alpha),
                            percentile(&first, 1.0 - alpha),
                        ),
                        total: st,
                        total_interval: (
                            percentile(&total, alpha),
                            percentile(&total, 1.0 - alpha),
                        ),
                    }
                })
                .collect()
        })
        .collect()
}

/// Most trials of the ordinary run that Spearman's correlations are computed over.
pub const SPEARMAN_TRIALS: usize = 1 << 18;

/// Independent scramblings of a quasi-random design for a randomised quasi-Monte Carlo interval.
pub const SCRAMBLINGS: usize = 16;

/// Indices of every factor for every measurand from `runs`, independent scramblings of one
/// quasi-random design: the mean of their estimates and a Student t interval at `confidence`
/// with R - 1 degrees of freedom (randomised quasi-Monte Carlo: Owen 1997; L'Ecuyer and Lemieux,
/// Modeling Uncertainty, 2002, 10.3). The rows of one scrambled design are not independent, so
/// resampling them (the bootstrap) would understate the spread; independent scramblings are.
pub fn scrambled_indices(runs: &[DesignRuns], confidence: f64) -> Vec<Vec<FactorIndices>> {
    let r = runs.len();
    let t = crate::dist::student_t_quantile(0.5 * (1.0 + confidence), (r - 1) as f64);
    let interval = |xs: &[f64]| {
        let mean = xs.iter().sum::<f64>() / r as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (r - 1) as f64;
        let half = t * (var / r as f64).sqrt();
        (mean, (mean - half, mean + half))
    };
    (0..runs[0].f_a.len())
        .map(|m| {
            let each: Vec<Vec<(f64, f64)>> = runs
                .iter()
                .map(|d| estimate(&d.f_a[m], &d.f_b[m], &d.f_ab[m], None))
                .collect();
            (0..runs[0].factors.len())
                .map(|f| {
                    let first: Vec<f64> = each.iter().map(|e| e[f].0).collect();
                    let total: Vec<f64> = each.iter().map(|e| e[f].1).collect();
                    let (s, si) = interval(&first);
                    let (st, sti) = interval(&total);
                    FactorIndices {
                        members: runs[0].factors[f].clone(),
                        first_order: s,
                        first_order_interval: si,
                        total: st,
                        total_interval: sti,
                    }
                })
                .collect()
        })
        .collect()
}

/// Ranks 1..n of a column, ties sharing their mean rank.
fn ranks(x: &[f64]) -> Vec<f64> {
    // Each value as a key whose unsigned order is the numeric order (sign bit flipped for
    // positives, all bits for negatives; -0 made +0 first so the two zeros tie), the row in the
    // low half: one contiguous sort of 16-byte integers, no indirect comparisons.
    let key = |v: f64| {
        let bits = (v + 0.0).to_bits();
        if bits >> 63 == 1 {
            !bits
        } else {
            bits | 1 << 63
        }
    };
    let mut order: Vec<u128> = x
        .iter()
        .zip(0u64..)
        .map(|(&v, j)| (key(v) as u128) << 64 | j as u128)
        .collect();
    order.sort_unstable();
    let mut r = vec![0.0; x.len()];
    let mut i = 0;
    while i < order.len() {
        let mut j = i;
        while j + 1 < order.len() && order[j + 1] >> 64 == order[i] >> 64 {
            j += 1;
        }
        let mean_rank = (i + j) as f64 / 2.0 + 1.0;
        for p in &order[i..=j] {
            r[*p as u64 as usize] = mean_rank;
        }
        i = j + 1;
    }
    r
}

/// Spearman's rank correlation: the Pearson correlation of the ranks (Spearman 1904).
#[cfg(test)]
pub(crate) fn spearman(x: &[f64], y: &[f64]) -> Option<f64> {
    spearman_ranked(&ranks(x), &ranks(y))
}

/// Spearman's correlation of columns already ranked.
pub(crate) fn spearman_ranked(rx: &[f64], ry: &[f64]) -> Option<f64> {
    crate::stats::moments::CoMoments::of(rx, ry).correlation()
}

/// The ranks of several columns, in parallel.
pub(crate) fn rank_columns(columns: &[&[f64]]) -> Vec<Vec<f64>> {
    columns.par_iter().map(|c| ranks(c)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spearman_of_monotone_and_tied_data() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.0, 4.0, 9.0, 16.0, 25.0];
        assert!((spearman(&x, &y).unwrap() - 1.0).abs() < 1e-15);
        let z = [5.0, 4.0, 3.0, 2.0, 1.0];
        assert!((spearman(&x, &z).unwrap() + 1.0).abs() < 1e-15);
        assert_eq!(ranks(&[2.0, 1.0, 2.0]), vec![2.5, 1.0, 2.5]);
        // A ten-pair example (from memory), checked with scipy.stats.spearmanr 1.17.1:
        // rho = -29/165.
        let a = [
            86.0, 97.0, 99.0, 100.0, 101.0, 103.0, 106.0, 110.0, 112.0, 113.0,
        ];
        let b = [0.0, 20.0, 28.0, 27.0, 50.0, 29.0, 7.0, 17.0, 6.0, 12.0];
        assert!((spearman(&a, &b).unwrap() - (-29.0 / 165.0)).abs() < 1e-12);
    }

    #[test]
    fn percentile_type_7() {
        let s = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(percentile(&s, 0.5), 2.5);
        assert_eq!(percentile(&s, 0.0), 1.0);
        assert_eq!(percentile(&s, 1.0), 4.0);
    }

    // The reweighted replicate equals the estimator over the drawn rows (the same sums in
    // another order: to 1e-12), on model values with a large mean beside their spread.
    #[test]
    fn reweighting_equals_resampling() {
        let n = 500usize;
        let v =
            |j: usize, k: u64| 20.0 + ((j as u64 * 2654435761 + k * 40503) % 1000) as f64 * 1e-3;
        let fa: Vec<f64> = (0..n).map(|j| v(j, 1)).collect();
        let fb: Vec<f64> = (0..n).map(|j| v(j, 2)).collect();
        let fab: Vec<Vec<f64>> = (3..6).map(|k| (0..n).map(|j| v(j, k)).collect()).collect();
        // A different resample in each lane.
        let shift = (fa.iter().sum::<f64>() + fb.iter().sum::<f64>()) / (2.0 * n as f64);
        let design = DesignRows::new(&fa, &fb, &fab, shift);
        let resamples: Vec<Vec<u32>> = (0..LANES)
            .map(|l| {
                (0..n)
                    .map(|j| ((j * (7919 + 2 * l) + 13 * l) % n) as u32)
                    .collect()
            })
            .collect();
        let mut counts = vec![[0.0f64; LANES]; n];
        for (l, rows) in resamples.iter().enumerate() {
            for &r in rows {
                counts[r as usize][l] += 1.0;
            }
        }
        let lanes = weighted_estimates(&design, &counts);
        for (rows, b) in resamples.iter().zip(&lanes) {
            let a = estimate(&fa, &fb, &fab, Some(rows));
            assert_eq!(a.len(), b.len());
            for (x, y) in a.iter().zip(b) {
                assert!(
                    (x.0 - y.0).abs() < 1e-12 && (x.1 - y.1).abs() < 1e-12,
                    "{x:?} {y:?}"
                );
            }
        }
    }
}
