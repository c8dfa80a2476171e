//! Coverage intervals from the Monte Carlo sample (JCGM 101:2008, 7.7), found from the two tails
//! only: no full sort.
//!
//! With q = pM if pM is a whole number, else floor(pM + 1/2), the intervals are [y(r), y(r+q)]
//! (1-based order statistics) for r = 1, ..., M - q. The probabilistically symmetric one takes
//! r = (M - q)/2 when that is whole, else floor((M - q + 1)/2) (7.7.2); the shortest takes the r
//! that minimises y(r+q) - y(r) (7.7.3; the first such r on ties). Both need only the M - q
//! smallest values y(1..M-q) and the M - q largest y(q+1..M): these are selected by a threshold
//! taken from an evenly spaced subsample, then sorted. The result is exactly that of a full sort.

use rayon::prelude::*;
use std::cmp::Ordering;

/// Both coverage intervals.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CoverageIntervals {
    /// The probabilistically symmetric interval.
    pub symmetric: (f64, f64),
    /// The shortest interval.
    pub shortest: (f64, f64),
}

/// q of JCGM 101 7.7.1 for M trials and coverage probability p.
pub fn q_index(m: usize, p: f64) -> usize {
    ((p * m as f64 + 0.5).floor() as usize).min(m)
}

/// r of JCGM 101 7.7.2 (1-based) for the probabilistically symmetric interval.
pub fn symmetric_r(m: usize, q: usize) -> usize {
    let outside = m - q;
    if outside.is_multiple_of(2) {
        outside / 2
    } else {
        outside.div_ceil(2)
    }
}

fn cmp(a: &f64, b: &f64) -> Ordering {
    a.total_cmp(b)
}

/// Below this many values a copy is sorted outright.
const DIRECT_BELOW: usize = 1 << 17;
/// Size of the subsample that sets the selection threshold.
const SUBSAMPLE: usize = 1 << 16;

/// The k smallest values, sorted ascending (`upper = false`), or the k largest, sorted
/// ascending (`upper = true`).
pub fn tail_sorted(values: &[f64], k: usize, upper: bool) -> Vec<f64> {
    let m = values.len();
    let k = k.min(m);
    if k == 0 {
        return Vec::new();
    }
    let finish = |mut picked: Vec<f64>| -> Vec<f64> {
        if upper {
            let cut = picked.len() - k;
            if cut > 0 {
                picked.select_nth_unstable_by(cut, cmp);
            }
            let mut top = picked.split_off(cut);
            top.sort_unstable_by(cmp);
            top
        } else {
            if picked.len() > k {
                picked.select_nth_unstable_by(k - 1, cmp);
                picked.truncate(k);
            }
            picked.sort_unstable_by(cmp);
            picked
        }
    };
    if m < DIRECT_BELOW || k * 8 > m {
        return finish(values.to_vec());
    }
    let step = m / SUBSAMPLE;
    let mut sample: Vec<f64> = (0..SUBSAMPLE).map(|i| values[i * step]).collect();
    sample.sort_unstable_by(cmp);
    let frac = k as f64 / m as f64;
    let s = SUBSAMPLE as f64;
    let mut margin = 6.0 * (s * frac * (1.0 - frac)).sqrt() + 16.0;
    loop {
        let expected = frac * s + margin;
        if expected >= s - 1.0 {
            return finish(values.to_vec());
        }
        let idx = expected.ceil() as usize;
        let picked: Vec<f64> = if upper {
            let threshold = sample[SUBSAMPLE - 1 - idx];
            values
                .par_chunks(1 << 16)
                .flat_map_iter(|c| c.iter().copied().filter(move |&x| x >= threshold))
                .collect()
        } else {
            let threshold = sample[idx];
            values
                .par_chunks(1 << 16)
                .flat_map_iter(|c| c.iter().copied().filter(move |&x| x <= threshold))
                .collect()
        };
        if picked.len() >= k {
            return finish(picked);
        }
        margin *= 4.0;
    }
}

/// Both coverage intervals of JCGM 101 7.7 for coverage probability `p`. Requires M - q >= 1.
pub fn coverage_intervals(values: &[f64], p: f64) -> CoverageIntervals {
    let m = values.len();
    let q = q_index(m, p);
    let k = m - q;
    assert!(
        k >= 1,
        "coverage interval needs M - q >= 1 (checked at load)"
    );
    let low = tail_sorted(values, k, false);
    let high = tail_sorted(values, k, true);
    // low[j] = y(j+1) and high[j] = y(q+j+1): the interval with r = j + 1.
    let r = symmetric_r(m, q);
    let symmetric = (low[r - 1], high[r - 1]);
    let mut best = 0;
    let mut best_width = f64::INFINITY;
    for j in 0..k {
        let w = high[j] - low[j];
        if w < best_width {
            best_width = w;
            best = j;
        }
    }
    CoverageIntervals {
        symmetric,
        shortest: (low[best], high[best]),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reference(values: &[f64], p: f64) -> CoverageIntervals {
        let mut y = values.to_vec();
        y.sort_by(f64::total_cmp);
        let m = y.len();
        let q = q_index(m, p);
        let r = symmetric_r(m, q);
        let symmetric = (y[r - 1], y[r - 1 + q]);
        let mut best = 1;
        for r in 1..=m - q {
            if y[r - 1 + q] - y[r - 1] < y[best - 1 + q] - y[best - 1] {
                best = r;
            }
        }
        CoverageIntervals {
            symmetric,
            shortest: (y[best - 1], y[best - 1 + q]),
        }
    }

    #[test]
    fn rules_of_jcgm_101_7_7() {
        // M = 10^6, p = 0.95: q = 950000, r = 25000 (JCGM 101 7.7.1, 7.7.2).
        assert_eq!(q_index(1_000_000, 0.95), 950_000);
        assert_eq!(symmetric_r(1_000_000, 950_000), 25_000);
        // pM not whole: q = floor(pM + 1/2); M - q odd: r = (M - q + 1)/2.
        assert_eq!(q_index(1001, 0.95), 951);
        assert_eq!(symmetric_r(1001, 951), 25);
        assert_eq!(symmetric_r(1000, 949), 26);
    }

    #[test]
    fn tails_match_a_full_sort() {
        // A skewed sample large enough to take the threshold route.
        let m = 400_003;
        let values: Vec<f64> = (0..m)
            .map(|i| {
                let u = ((i as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 11) as f64
                    / (1u64 << 53) as f64;
                -(1.0 - u).ln()
            })
            .collect();
        for p in [0.95, 0.99, 0.6827] {
            assert_eq!(coverage_intervals(&values, p), reference(&values, p));
        }
        let small: Vec<f64> = values[..5000].to_vec();
        assert_eq!(coverage_intervals(&small, 0.95), reference(&small, 0.95));
    }
}
