//! The two tails of a measurand's values, gathered chunk by chunk without holding the values.
//!
//! Both coverage intervals of JCGM 101 7.7 need only the k = M - q smallest and the k largest of
//! the M sorted values (the shortest window starts in [0, M - q] and ends in [q - 1, M - 1]).
//! Given a low threshold t_lo at or above the k-th smallest value and a high threshold t_hi at
//! or below the k-th largest, the values below t_lo and above t_hi, with the counts of values
//! equal to each threshold, give those tails exactly: whatever the order in which chunks offer
//! their values, and however many values tie at a threshold (a measurand that is constant
//! costs two counters, not M values).

use std::sync::Mutex;
use std::sync::atomic::{AtomicU64, Ordering};

/// Values beyond two thresholds, offered by chunks in any order from any thread.
#[derive(Debug)]
pub(crate) struct TailCollector {
    low_threshold: f64,
    high_threshold: f64,
    below: Mutex<Vec<f64>>,
    above: Mutex<Vec<f64>>,
    at_low: AtomicU64,
    at_high: AtomicU64,
}

impl TailCollector {
    /// A collector for values below `low_threshold` and above `high_threshold`, each list
    /// reserved for `capacity` values.
    pub(crate) fn new(low_threshold: f64, high_threshold: f64, capacity: usize) -> TailCollector {
        TailCollector {
            low_threshold,
            high_threshold,
            below: Mutex::new(Vec::with_capacity(capacity)),
            above: Mutex::new(Vec::with_capacity(capacity)),
            at_low: AtomicU64::new(0),
            at_high: AtomicU64::new(0),
        }
    }

    /// Take in the values of one chunk (finite values; the engine checks them). A value with
    /// the very bits of a threshold is counted; any other at or beyond it (a zero of the other
    /// sign, as the thresholds compare) is held.
    pub(crate) fn offer(&self, values: &[f64]) {
        let (lt, ht) = (self.low_threshold, self.high_threshold);
        let (lt_bits, ht_bits) = (lt.to_bits(), ht.to_bits());
        SCRATCH.with_borrow_mut(|(below, above)| {
            if below.len() < values.len() {
                below.resize(values.len(), 0.0);
                above.resize(values.len(), 0.0);
            }
            // Values at or beyond a threshold (about one in ten) are compacted without branches:
            // each is written, and the write position moves on only for a value to hold.
            let (mut nb, mut na) = (0usize, 0usize);
            let (mut at_low, mut at_high) = (0u64, 0u64);
            for &x in values {
                // Most values lie strictly between the thresholds.
                if x > lt && x < ht {
                    continue;
                }
                let bits = x.to_bits();
                below[nb] = x;
                nb += usize::from(x <= lt && bits != lt_bits);
                at_low += u64::from(bits == lt_bits);
                above[na] = x;
                na += usize::from(x >= ht && bits != ht_bits);
                at_high += u64::from(bits == ht_bits);
            }
            self.at_low.fetch_add(at_low, Ordering::Relaxed);
            self.at_high.fetch_add(at_high, Ordering::Relaxed);
            if nb > 0 {
                lock(&self.below).extend_from_slice(&below[..nb]);
            }
            if na > 0 {
                lock(&self.above).extend_from_slice(&above[..na]);
            }
        });
    }

    /// Values held so far (for the memory check of a caller).
    #[cfg(test)]
    pub(crate) fn held(&self) -> usize {
        lock(&self.below).len() + lock(&self.above).len()
    }

    /// The k smallest and the k largest values offered, each sorted ascending; `None` when a
    /// threshold was too tight (fewer than k values at or beyond it).
    #[cfg(test)]
    pub(crate) fn finish(self, k: usize) -> Option<(Vec<f64>, Vec<f64>)> {
        use crate::stats::intervals::sort_finite;
        let (mut low, mut high) = self.finish_unsorted(k)?;
        rayon::join(|| sort_finite(&mut low), || sort_finite(&mut high));
        low.truncate(k);
        let high = high.split_off(high.len() - k);
        Some((low, high))
    }

    /// Two unsorted lists: one whose k smallest values are the k smallest offered (the others
    /// larger), one whose k largest are the k largest offered, for
    /// [`intervals_from_unsorted_tails`](crate::stats::tail_buckets::intervals_from_unsorted_tails);
    /// `None` when a threshold was too tight. The values counted at a threshold are put in as
    /// copies of it, at most k of them (no more can be among the k).
    pub(crate) fn finish_unsorted(self, k: usize) -> Option<(Vec<f64>, Vec<f64>)> {
        let at_low = self.at_low.into_inner() as usize;
        let at_high = self.at_high.into_inner() as usize;
        let mut low = self.below.into_inner().unwrap_or_else(|e| e.into_inner());
        let mut high = self.above.into_inner().unwrap_or_else(|e| e.into_inner());
        if low.len() + at_low < k || high.len() + at_high < k {
            return None;
        }
        low.resize(low.len() + at_low.min(k), self.low_threshold);
        high.resize(high.len() + at_high.min(k), self.high_threshold);
        Some((low, high))
    }
}

thread_local! {
    /// Per-thread room for one chunk's held values (reused, so no chunk allocates).
    static SCRATCH: std::cell::RefCell<(Vec<f64>, Vec<f64>)> =
        const { std::cell::RefCell::new((Vec::new(), Vec::new())) };
}

fn lock(m: &Mutex<Vec<f64>>) -> std::sync::MutexGuard<'_, Vec<f64>> {
    m.lock().unwrap_or_else(|e| e.into_inner())
}

/// Thresholds for the k smallest and k largest of M values from a sample of them (a pilot or
/// an evenly spaced subsample, in any order; it is reordered): the sample's values at rank
/// k/M n + margin from each end, where the margin is `sigmas` binomial standard deviations
/// plus 16 ranks, so that fewer than k of the M values fall beyond a threshold only with a
/// probability of the normal tail beyond `sigmas` (common practice for selection by sampling).
/// Two selections, no sort.
pub(crate) fn thresholds(sample: &mut [f64], k: usize, m: usize, sigmas: f64) -> (f64, f64) {
    let n = sample.len();
    let frac = k as f64 / m as f64;
    let margin = sigmas * (n as f64 * frac * (1.0 - frac)).sqrt() + 16.0_f64.copysign(sigmas);
    let idx = (frac * n as f64 + margin).ceil().clamp(0.0, (n - 1) as f64) as usize;
    let low = *sample.select_nth_unstable_by(idx, f64::total_cmp).1;
    let high = *sample.select_nth_unstable_by(n - 1 - idx, f64::total_cmp).1;
    (low, high)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reference(values: &[f64], k: usize) -> (Vec<f64>, Vec<f64>) {
        let mut y = values.to_vec();
        y.sort_by(f64::total_cmp);
        (y[..k].to_vec(), y[y.len() - k..].to_vec())
    }

    // The collected tails equal those of a full sort, for values offered in any split.
    #[test]
    fn tails_equal_a_full_sort() {
        // A skewed, scrambled set of distinct values (golden-ratio sequence, cubed).
        let values: Vec<f64> = (0..100_000)
            .map(|i| (f64::from(i) * 0.618_033_988_749_895).fract().powi(3))
            .collect();
        let k = 5_000;
        let mut sample: Vec<f64> = values.iter().step_by(7).copied().collect();
        let (lt, ht) = thresholds(&mut sample, k, values.len(), 6.0);
        let c = TailCollector::new(lt, ht, 0);
        for chunk in values.chunks(977).rev() {
            c.offer(chunk);
        }
        assert_eq!(c.finish(k), Some(reference(&values, k)));
    }

    // Many values tied at a threshold, and a constant: the counts stand in for the ties.
    #[test]
    fn ties_at_the_thresholds() {
        let mut values: Vec<f64> = (0..10_000).map(|i| (i % 10) as f64).collect();
        values.extend(std::iter::repeat_n(4.0, 5_000));
        let k = 1_500;
        let c = TailCollector::new(1.0, 8.0, 0);
        c.offer(&values);
        assert_eq!(
            c.held(),
            2_000,
            "the zeros and nines are held, the ties counted"
        );
        assert_eq!(c.finish(k), Some(reference(&values, k)));
        let constant = vec![2.5; 50_000];
        let c = TailCollector::new(2.5, 2.5, 0);
        c.offer(&constant);
        assert_eq!(c.held(), 0);
        assert_eq!(c.finish(2_500), Some(reference(&constant, 2_500)));
    }

    // A threshold that is too tight is reported, not papered over.
    #[test]
    fn too_tight_is_none() {
        let values: Vec<f64> = (0..1_000).map(f64::from).collect();
        let c = TailCollector::new(10.0, 990.0, 0);
        c.offer(&values);
        assert_eq!(c.finish(50), None);
    }
}
