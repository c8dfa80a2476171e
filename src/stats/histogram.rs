//! Histograms and density shapes for figures: counted in parallel chunks and summed (integer
//! counts, so the result does not depend on the thread count).

use rayon::prelude::*;

/// Counts of values in equal bins over [lo, hi], with the values below and above.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Histogram {
    /// Lower edge of the first bin.
    pub(crate) lo: f64,
    /// Upper edge of the last bin.
    pub(crate) hi: f64,
    /// Count per bin.
    pub(crate) counts: Vec<u64>,
    /// Values below `lo`.
    pub(crate) below: u64,
    /// Values above `hi`.
    pub(crate) above: u64,
}

impl Histogram {
    /// Count `values` into `bins` equal bins over [lo, hi].
    pub(crate) fn of(values: &[f64], lo: f64, hi: f64, bins: usize) -> Histogram {
        let width = (hi - lo) / bins as f64;
        let partial: Vec<(Vec<u64>, u64, u64)> = values
            .par_chunks(1 << 16)
            .map(|chunk| {
                let mut counts = vec![0u64; bins];
                let (mut below, mut above) = (0, 0);
                for &x in chunk {
                    if x < lo {
                        below += 1;
                    } else if x > hi {
                        above += 1;
                    } else {
                        let b = (((x - lo) / width) as usize).min(bins - 1);
                        counts[b] += 1;
                    }
                }
                (counts, below, above)
            })
            .collect();
        let mut counts = vec![0u64; bins];
        let (mut below, mut above) = (0, 0);
        for (c, b, a) in partial {
            for (t, x) in counts.iter_mut().zip(c) {
                *t += x;
            }
            below += b;
            above += a;
        }
        Histogram {
            lo,
            hi,
            counts,
            below,
            above,
        }
    }

    /// Total number of values counted, including those outside.
    pub(crate) fn total(&self) -> u64 {
        self.counts.iter().sum::<u64>() + self.below + self.above
    }

    /// Bin width.
    pub(crate) fn width(&self) -> f64 {
        (self.hi - self.lo) / self.counts.len() as f64
    }

    /// (bin centre, probability density) per bin: count / (N width).
    pub(crate) fn density(&self) -> Vec<(f64, f64)> {
        let (n, w) = (self.total() as f64, self.width());
        self.counts
            .iter()
            .enumerate()
            .map(|(i, c)| (self.lo + (i as f64 + 0.5) * w, *c as f64 / (n * w)))
            .collect()
    }

    /// (upper bin edge, fraction of values at or below it): the empirical distribution function
    /// at the bin edges, exact there.
    pub(crate) fn distribution(&self) -> Vec<(f64, f64)> {
        let (n, w) = (self.total() as f64, self.width());
        let mut acc = self.below;
        let mut out = vec![(self.lo, acc as f64 / n)];
        for (i, c) in self.counts.iter().enumerate() {
            acc += c;
            out.push((self.lo + (i + 1) as f64 * w, acc as f64 / n));
        }
        out
    }
}

/// A Gaussian kernel density estimate at `points` equally spaced points over [lo, hi], from an
/// evenly spaced subsample of at most 20 000 values, with Silverman's rule-of-thumb bandwidth
/// 0.9 min(sd, IQR/1.34) n^(-1/5) (Silverman, Density Estimation, 1986, 3.4.2).
pub(crate) fn kernel_density(
    values: &[f64],
    sd: f64,
    lo: f64,
    hi: f64,
    points: usize,
) -> Vec<(f64, f64)> {
    let step = (values.len() / 20_000).max(1);
    let mut sub: Vec<f64> = values.iter().step_by(step).copied().collect();
    sub.sort_unstable_by(f64::total_cmp);
    let n = sub.len();
    if n < 2 || sd.is_nan() || sd <= 0.0 {
        return Vec::new();
    }
    let iqr = sub[3 * n / 4] - sub[n / 4];
    let spread = if iqr > 0.0 { sd.min(iqr / 1.34) } else { sd };
    let h = 0.9 * spread * (n as f64).powf(-0.2);
    let norm = 1.0 / (n as f64 * h * (2.0 * std::f64::consts::PI).sqrt());
    (0..points)
        .into_par_iter()
        .map(|j| {
            let x = lo + (hi - lo) * j as f64 / (points - 1) as f64;
            // Only the values within 8 bandwidths matter.
            let a = sub.partition_point(|v| *v < x - 8.0 * h);
            let b = sub.partition_point(|v| *v <= x + 8.0 * h);
            let s: f64 = sub[a..b]
                .iter()
                .map(|v| (-0.5 * ((x - v) / h).powi(2)).exp())
                .sum();
            (x, s * norm)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_and_shapes() {
        let v: Vec<f64> = (0..10_000).map(|i| (i as f64 + 0.5) / 10_000.0).collect();
        let h = Histogram::of(&v, 0.0, 1.0, 10);
        assert_eq!(h.counts, vec![1000; 10]);
        assert_eq!(h.total(), 10_000);
        assert!(h.density().iter().all(|(_, d)| (d - 1.0).abs() < 1e-12));
        let f = h.distribution();
        assert_eq!(f.first().unwrap().1, 0.0);
        assert!((f.last().unwrap().1 - 1.0).abs() < 1e-15);
        let h = Histogram::of(&[-1.0, 0.5, 2.0], 0.0, 1.0, 4);
        assert_eq!((h.below, h.above, h.counts.iter().sum::<u64>()), (1, 1, 1));
        // A uniform sample's kernel density is about 1 inside (0, 1).
        let k = kernel_density(&v, (1.0f64 / 12.0).sqrt(), 0.2, 0.8, 7);
        assert!(k.iter().all(|(_, d)| (d - 1.0).abs() < 0.05), "{k:?}");
    }
}
