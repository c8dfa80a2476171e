//! Both coverage intervals from tails that are not sorted, exactly as from sorted ones, while
//! sorting only a few per cent of them.
//!
//! The shortest interval of JCGM 101 7.7.3 is [y(r), y(r+q)] with the r in [1, M - q] that
//! minimises y(r+q) - y(r). With the low tail and the high tail each spread over equal-width
//! value buckets (one counting pass), every r falls in a known low bucket and high bucket, and
//! its width lies between min(high bucket) - max(low bucket) and max(high bucket) -
//! min(low bucket) (floating-point subtraction rounds monotonically, so the bounds hold for
//! the computed widths too). Let U be the least upper bound over all r: the minimum is at most
//! U, so every r whose lower bound exceeds U is wider than the minimum and cannot be it, nor
//! tie with it. Only the buckets of the remaining r (and of the symmetric interval's r) are
//! gathered and sorted; the candidates are then scanned in increasing r, keeping the first
//! minimum, as a scan of the sorted tails does. For a smooth distribution the width is flat
//! only near its minimum, so a few per cent of the tail values are sorted. (Bucketing by value,
//! then sorting within buckets, is the classic bucket sort; the pruning by bounds is common
//! practice of branch and bound.)

use super::intervals::{CoverageIntervals, q_index, sort_finite, symmetric_r};

/// Tail values per bucket aimed at.
const PER_BUCKET: usize = 64;

/// Memory the buckets take beside the tail values, in bytes per tail value: per bucket a count
/// and two bounds (24 bytes), a first rank and a gathering offset (8 bytes each), for
/// `PER_BUCKET` values. For memory budgets.
pub(crate) const BYTES_PER_VALUE: f64 = 40.0 / PER_BUCKET as f64;

/// One tail spread over value buckets: counts, bounds and each bucket's first rank.
struct Buckets {
    lo: f64,
    scale: f64,
    /// Per bucket: how many values, their least and their greatest (one cache line's worth
    /// together, as the counting pass meets the buckets in random order).
    cells: Vec<Cell>,
    /// start[b]: rank (0-based, ascending) of the first value of bucket b; start[B] = n.
    start: Vec<usize>,
}

#[derive(Clone, Copy)]
struct Cell {
    count: usize,
    min: f64,
    max: f64,
}

impl Buckets {
    fn of(values: &[f64], buckets: usize) -> Buckets {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for &x in values {
            lo = lo.min(x);
            hi = hi.max(x);
        }
        // Bucket index floor((x - lo) scale) is non-decreasing in x (each operation rounds
        // monotonically). A range too wide or too narrow for a finite scale puts every value in
        // one bucket, which is still exact, only slower.
        let scale = buckets as f64 / (hi - lo);
        let scale = if scale.is_finite() { scale } else { 0.0 };
        let empty = Cell {
            count: 0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
        };
        let mut b = Buckets {
            lo,
            scale,
            cells: vec![empty; buckets],
            start: vec![0; buckets + 1],
        };
        for &x in values {
            let i = b.index(x);
            let c = &mut b.cells[i];
            c.count += 1;
            c.min = c.min.min(x);
            c.max = c.max.max(x);
        }
        for i in 0..buckets {
            b.start[i + 1] = b.start[i] + b.cells[i].count;
        }
        b
    }

    #[inline]
    fn index(&self, x: f64) -> usize {
        (((x - self.lo) * self.scale) as usize).min(self.cells.len() - 1)
    }

    /// The bucket that holds rank `r`.
    fn bucket_of(&self, r: usize) -> usize {
        self.start.partition_point(|&s| s <= r) - 1
    }
}

/// The values of the marked buckets, each bucket sorted, and where each begins.
struct Gathered {
    values: Vec<f64>,
    offset: Vec<usize>,
}

impl Gathered {
    fn of(values: &[f64], b: &Buckets, marked: &[bool]) -> Gathered {
        let mut offset = vec![usize::MAX; marked.len()];
        let mut total = 0;
        for (i, &m) in marked.iter().enumerate() {
            if m {
                offset[i] = total;
                total += b.cells[i].count;
            }
        }
        let mut out = vec![0.0; total];
        // The offsets serve as cursors while the values are placed, then are set back.
        for &x in values {
            let i = b.index(x);
            if marked[i] {
                out[offset[i]] = x;
                offset[i] += 1;
            }
        }
        for (i, &m) in marked.iter().enumerate() {
            if m {
                offset[i] -= b.cells[i].count;
                sort_finite(&mut out[offset[i]..offset[i] + b.cells[i].count]);
            }
        }
        Gathered {
            values: out,
            offset,
        }
    }

    /// The value of rank `r` (its bucket must be marked).
    #[inline]
    fn at(&self, b: &Buckets, bucket: usize, r: usize) -> f64 {
        self.values[self.offset[bucket] + (r - b.start[bucket])]
    }
}

/// Both coverage intervals of M values at coverage probability p from two unsorted lists:
/// `low`, whose k = M - q smallest values (in the order of `f64::total_cmp`) are the k smallest
/// of the M values, any others being larger; and `high`, whose k largest are the k largest of
/// the M values. Equal, bit for bit, to
/// [`intervals_from_tails`](super::intervals::intervals_from_tails) on the sorted tails.
/// Finite values only; each list must hold at least k values.
pub(crate) fn intervals_from_unsorted_tails(
    low: &[f64],
    high: &[f64],
    m: usize,
    p: f64,
) -> CoverageIntervals {
    intervals_and_sorted(low, high, m, p).0
}

/// The intervals, and how many tail values were sorted to find them.
fn intervals_and_sorted(low: &[f64], high: &[f64], m: usize, p: f64) -> (CoverageIntervals, usize) {
    let q = q_index(m, p);
    let k = m - q;
    assert!(
        k >= 1 && low.len() >= k && high.len() >= k,
        "tails too short"
    );
    let (lb, hb) = rayon::join(
        || Buckets::of(low, (low.len() / PER_BUCKET).max(1)),
        || Buckets::of(high, (high.len() / PER_BUCKET).max(1)),
    );
    // Rank j of the window (0-based, j < k): the low value has rank j in `low`, the high
    // value rank high_off + j in `high`.
    let high_off = high.len() - k;

    // Segments of j over which both buckets stay the same, walked twice (they are as many as
    // the buckets, so they are not stored): first for the least upper bound, then for the
    // candidates.
    let walk = |f: &mut dyn FnMut(usize, usize, usize, usize)| {
        let (mut i, mut h) = (lb.bucket_of(0), hb.bucket_of(high_off));
        let mut j = 0;
        while j < k {
            // Move on to the buckets that hold ranks j and high_off + j (both only grow), so
            // the segment is never empty.
            while lb.start[i + 1] <= j {
                i += 1;
            }
            while hb.start[h + 1] <= high_off + j {
                h += 1;
            }
            let end = lb.start[i + 1].min(hb.start[h + 1] - high_off).min(k);
            f(j, end, i, h);
            j = end;
        }
    };
    let mut least_upper = f64::INFINITY;
    walk(&mut |_, _, i, h| {
        least_upper = least_upper.min(hb.cells[h].max - lb.cells[i].min);
    });
    let mut candidates: Vec<(usize, usize, usize, usize)> = Vec::new(); // (j0, j1, low b, high b)
    walk(&mut |j0, j1, i, h| {
        if hb.cells[h].min - lb.cells[i].max <= least_upper {
            candidates.push((j0, j1, i, h));
        }
    });
    let mut low_marked = vec![false; lb.cells.len()];
    let mut high_marked = vec![false; hb.cells.len()];
    for &(_, _, i, h) in &candidates {
        low_marked[i] = true;
        high_marked[h] = true;
    }
    let rs = symmetric_r(m, q) - 1;
    let (ls, hs) = (lb.bucket_of(rs), hb.bucket_of(high_off + rs));
    low_marked[ls] = true;
    high_marked[hs] = true;

    let (lg, hg) = rayon::join(
        || Gathered::of(low, &lb, &low_marked),
        || Gathered::of(high, &hb, &high_marked),
    );
    let symmetric = (lg.at(&lb, ls, rs), hg.at(&hb, hs, high_off + rs));
    let mut best = None;
    let mut best_width = f64::INFINITY;
    for &(j0, j1, i, h) in &candidates {
        for j in j0..j1 {
            let (a, b) = (lg.at(&lb, i, j), hg.at(&hb, h, high_off + j));
            let w = b - a;
            if w < best_width {
                best_width = w;
                best = Some((a, b));
            }
        }
    }
    // No finite width at all (values at opposite extremes of the f64 range): the scan of
    // sorted tails keeps the first window, which is then a candidate (as every window is).
    let best = best.unwrap_or_else(|| {
        let (i, h) = (lb.bucket_of(0), hb.bucket_of(high_off));
        (lg.at(&lb, i, 0), hg.at(&hb, h, high_off))
    });
    let sorted = lg.values.len() + hg.values.len();
    (
        CoverageIntervals {
            symmetric,
            shortest: best,
        },
        sorted,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::intervals::intervals_from_tails;

    fn sorted_tails(values: &[f64], k: usize) -> (Vec<f64>, Vec<f64>) {
        let mut y = values.to_vec();
        y.sort_by(f64::total_cmp);
        (y[..k].to_vec(), y[y.len() - k..].to_vec())
    }

    // The point of it: for a smooth distribution only a few per cent of the tails are sorted
    // (the width is flat only near its minimum).
    #[test]
    fn few_tail_values_are_sorted() {
        let mut s = 3u64;
        let m = 1_000_000;
        let values: Vec<f64> = (0..m)
            .map(|_| (0..4).map(|_| splitmix(&mut s)).sum::<f64>())
            .collect();
        let k = m - q_index(m, 0.95);
        let (lo, hi) = sorted_tails(&values, k);
        let (_, sorted) = intervals_and_sorted(&lo, &hi, m, 0.95);
        // About 10 % here (64 values a bucket, 781 buckets a tail); the share falls as M grows
        // and the buckets narrow (a few per cent at 10^7 on the demo). A full sort is 100 %.
        assert!(sorted < 3 * k / 10, "sorted {sorted} of {}", 2 * k);
    }

    /// A distribution to draw test values from.
    type Shape = dyn Fn(&mut u64) -> f64;

    /// A deterministic generator for the tests (SplitMix64, Steele et al. 2014).
    fn splitmix(state: &mut u64) -> f64 {
        *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = *state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }

    // Against the scan of sorted tails (the definition of JCGM 101 7.7): smooth, skewed,
    // two-humped, discrete (many ties), constant, signed zeros, tiny and odd sizes, the tails
    // given with extra values beyond k and shuffled.
    #[test]
    fn equal_to_the_scan_of_sorted_tails() {
        let mut s = 7u64;
        let shapes: Vec<Box<Shape>> = vec![
            Box::new(|s| splitmix(s) + splitmix(s) + splitmix(s)),
            Box::new(|s| -(1.0 - splitmix(s)).ln()),
            Box::new(|s| {
                let u = splitmix(s);
                if u < 0.3 { u } else { 10.0 + u }
            }),
            Box::new(|s| (splitmix(s) * 7.0).floor()),
            Box::new(|_| 2.5),
            Box::new(|s| {
                let u = splitmix(s);
                if u < 0.2 {
                    -0.0
                } else if u < 0.4 {
                    0.0
                } else {
                    u - 0.7
                }
            }),
            Box::new(|s| (splitmix(s) - 0.5).powi(3) * 1e-300),
        ];
        for (n_shape, shape) in shapes.iter().enumerate() {
            for m in [20usize, 101, 1000, 20_000, 100_003] {
                for p in [0.95, 0.5, 0.99, 0.6827] {
                    let values: Vec<f64> = (0..m).map(|_| shape(&mut s)).collect();
                    let k = m - q_index(m, p);
                    if k == 0 {
                        continue;
                    }
                    let (lo, hi) = sorted_tails(&values, k);
                    let expected = intervals_from_tails(&lo, &hi, m, p);
                    // Extra values beyond the tails, then a shuffle.
                    let extra = (k / 10).min(m - k);
                    let (mut lo2, mut hi2) = sorted_tails(&values, k + extra);
                    for v in [&mut lo2, &mut hi2] {
                        for i in (1..v.len()).rev() {
                            let j = (splitmix(&mut s) * (i + 1) as f64) as usize;
                            v.swap(i, j.min(i));
                        }
                    }
                    let got = intervals_from_unsorted_tails(&lo2, &hi2, m, p);
                    let bits = |c: CoverageIntervals| {
                        [c.symmetric.0, c.symmetric.1, c.shortest.0, c.shortest.1].map(f64::to_bits)
                    };
                    assert_eq!(
                        bits(got),
                        bits(expected),
                        "shape {n_shape}, M = {m}, p = {p}"
                    );
                }
            }
        }
    }
}
