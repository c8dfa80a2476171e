//! The on/off measurement procedure: a sequence of laser-off and laser-on phases, each with its
//! first `settle_time` discarded, and the estimator of the radiation force from the windows
//! that are kept; its exact variance under power-law force noise.
//!
//! Patterns (DESIGN, "Forecast"): the sequence starts with the laser off.
//! - Alternate: off, on, off, on, ... (N cycles of off then on); F = mean(on windows) -
//!   mean(off windows).
//! - ABA: off, on, off, ..., on, off (N on phases between N + 1 off phases);
//!   F = (1/N) sum_k [on_k - (off_k + off_{k+1}) / 2].
//!
//! Either is F = integral w(t) x(t) dt with a piecewise-constant weight w that sums to zero.
//! Its variance under a one-sided force PSD S(f) = h0 + h_-1/f + h_-2/f^2 is
//! integral_0^inf S(f) |W(f)|^2 df, computed here exactly in the time domain (for a weight of
//! zero sum the low-frequency divergences cancel):
//! - white: (h0 / 2) integral w^2 dt;
//! - random walk (x a Wiener process of diffusion K^2 = 2 pi^2 h_-2, the K of IEEE Std 952):
//!   -(K^2 / 2) double integral w(s) w(t) |s - t| ds dt;
//! - flicker: -h_-1 double integral w(s) w(t) ln|s - t| ds dt (the structure function of
//!   1/f noise is 2 h_-1 ln|tau| plus a constant, which a zero-sum weight cancels);
//! - a linear drift D: the bias D integral w(t) t dt (zero for ABA).
//!
//! Check: for the Allan weight (+-1/tau on two adjacent intervals, halved) these give the
//! Allan variances h0/(2 tau), 2 ln 2 h_-1 and K^2 tau / 3 of NIST SP 1065 (unit tests below).
//! The double integrals over two windows have closed forms (second antiderivatives of |x| and
//! ln|x|), and the windows of each kind repeat with the cycle period, so a sum over lags makes
//! the cost linear in the number of cycles.

use super::power_law::NoiseModel;

/// The order of the phases.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pattern {
    /// off, on, off, on, ...: N cycles of off then on.
    Alternate,
    /// off, on, off, ..., on, off: N on phases between N + 1 off phases.
    Aba,
}

impl Pattern {
    /// The name as a scenario writes it.
    pub fn name(self) -> &'static str {
        match self {
            Pattern::Alternate => "alternate",
            Pattern::Aba => "ABA",
        }
    }
}

/// A planned measurement sequence.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Procedure {
    /// The order of the phases.
    pub pattern: Pattern,
    /// N: cycles (on phases).
    pub cycles: u64,
    /// Length of each phase with the laser on, s.
    pub on_time: f64,
    /// Length of each phase with the laser off, s.
    pub off_time: f64,
    /// Discarded at the start of every phase, s (less than both phase lengths).
    pub settle_time: f64,
}

/// One phase of the sequence.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Phase {
    /// Start, s from the beginning of the sequence.
    pub start: f64,
    /// End, s.
    pub end: f64,
    /// Whether the laser is on.
    pub on: bool,
}

/// A kept window and the estimator's weight on it (per second of signal).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Window {
    /// Start, s.
    pub start: f64,
    /// End, s.
    pub end: f64,
    /// Weight density, 1/s: the estimator is sum of weight x integral of the signal.
    pub weight: f64,
}

/// The estimator's standard deviation split by noise term (N), and the drift bias (N).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct EstimatorTerms {
    /// From the white term.
    pub white: f64,
    /// From the flicker term.
    pub flicker: f64,
    /// From the random walk term.
    pub random_walk: f64,
    /// The bias a linear drift leaves (signed; 0 for ABA).
    pub drift_bias: f64,
}

impl EstimatorTerms {
    /// The standard deviation of the random part: the three terms in quadrature.
    pub fn random_sd(&self) -> f64 {
        (self.white.powi(2) + self.flicker.powi(2) + self.random_walk.powi(2)).sqrt()
    }

    /// The standard uncertainty with the drift bias as a bound of a rectangular distribution
    /// (half-width |bias|, variance bias^2 / 3, JCGM 100 4.3.7): sqrt(random^2 + bias^2 / 3).
    pub fn standard_uncertainty(&self) -> f64 {
        (self.random_sd().powi(2) + self.drift_bias.powi(2) / 3.0).sqrt()
    }
}

/// A set of windows of one length, weight and kind, repeating with the cycle period: starts
/// `first + k period`, k = 0..count.
#[derive(Clone, Copy, Debug)]
struct WindowClass {
    first: f64,
    length: f64,
    weight: f64,
    count: u64,
}

impl Procedure {
    /// The cycle period, on + off.
    pub fn period(&self) -> f64 {
        self.on_time + self.off_time
    }

    /// Total length of the sequence, s.
    pub fn total_time(&self) -> f64 {
        let n = self.cycles as f64;
        match self.pattern {
            Pattern::Alternate => n * self.period(),
            Pattern::Aba => n * self.period() + self.off_time,
        }
    }

    /// The phases in order.
    pub fn phases(&self) -> Vec<Phase> {
        let p = self.period();
        let mut out = Vec::with_capacity(2 * self.cycles as usize + 1);
        for k in 0..self.cycles {
            let t = k as f64 * p;
            out.push(Phase {
                start: t,
                end: t + self.off_time,
                on: false,
            });
            out.push(Phase {
                start: t + self.off_time,
                end: t + p,
                on: true,
            });
        }
        if self.pattern == Pattern::Aba {
            let t = self.cycles as f64 * p;
            out.push(Phase {
                start: t,
                end: t + self.off_time,
                on: false,
            });
        }
        out
    }

    /// The kept windows with their weights (each phase minus its first `settle_time`).
    pub fn windows(&self) -> Vec<Window> {
        let n = self.cycles as f64;
        let (l_on, l_off) = (
            self.on_time - self.settle_time,
            self.off_time - self.settle_time,
        );
        let last = self.phases().len().saturating_sub(1);
        self.phases()
            .iter()
            .enumerate()
            .map(|(i, ph)| {
                let weight = if ph.on {
                    1.0 / (n * l_on)
                } else {
                    let edge = self.pattern == Pattern::Aba && (i == 0 || i == last);
                    -1.0 / (n * l_off) * if edge { 0.5 } else { 1.0 }
                };
                Window {
                    start: ph.start + self.settle_time,
                    end: ph.end,
                    weight,
                }
            })
            .collect()
    }

    /// The windows as repeating classes (the ABA end windows as corrections of half weight).
    fn classes(&self) -> Vec<WindowClass> {
        let n = self.cycles as f64;
        let (l_on, l_off) = (
            self.on_time - self.settle_time,
            self.off_time - self.settle_time,
        );
        let on = WindowClass {
            first: self.off_time + self.settle_time,
            length: l_on,
            weight: 1.0 / (n * l_on),
            count: self.cycles,
        };
        let off = |count| WindowClass {
            first: self.settle_time,
            length: l_off,
            weight: -1.0 / (n * l_off),
            count,
        };
        match self.pattern {
            Pattern::Alternate => vec![on, off(self.cycles)],
            Pattern::Aba => {
                let half = 0.5 / (n * l_off);
                vec![
                    on,
                    off(self.cycles + 1),
                    WindowClass {
                        first: self.settle_time,
                        length: l_off,
                        weight: half,
                        count: 1,
                    },
                    WindowClass {
                        first: n * self.period() + self.settle_time,
                        length: l_off,
                        weight: half,
                        count: 1,
                    },
                ]
            }
        }
    }

    /// The estimator's standard deviation by term, exactly, for a force-noise model.
    pub fn estimator_terms(&self, model: &NoiseModel) -> EstimatorTerms {
        let windows = self.windows();
        let white_var: f64 = 0.5
            * model.h0()
            * windows
                .iter()
                .map(|w| w.weight * w.weight * (w.end - w.start))
                .sum::<f64>();
        let classes = self.classes();
        let k2 = model.random_walk * model.random_walk;
        let rw_var = if k2 > 0.0 {
            -0.5 * k2 * double_sum(&classes, self.period(), abs_pair)
        } else {
            0.0
        };
        let h1 = model.h_minus1();
        let flicker_var = if h1 > 0.0 {
            -h1 * double_sum(&classes, self.period(), ln_pair)
        } else {
            0.0
        };
        let drift_bias = model.drift
            * windows
                .iter()
                .map(|w| w.weight * 0.5 * (w.end * w.end - w.start * w.start))
                .sum::<f64>();
        EstimatorTerms {
            white: white_var.max(0.0).sqrt(),
            flicker: flicker_var.max(0.0).sqrt(),
            random_walk: rw_var.max(0.0).sqrt(),
            drift_bias,
        }
    }
}

/// The most cycles a plan or search considers (a year of one-second phases is 1.6e7; beyond
/// 10^6 cycles a procedure is not a plan).
pub const MAX_CYCLES: u64 = 1_000_000;

/// The most cycles the search for the best phases tries (phases of a ten-thousandth of the
/// total time).
pub const MAX_SEARCH_CYCLES: u64 = 10_000;

/// A doubling of the cycles that improves the uncertainty by less than this factor means a
/// floor (flicker, or a drift bias) that more cycles will not pass.
const FLOOR_RATIO: f64 = 0.98;

impl Procedure {
    /// The same procedure with `cycles` cycles.
    pub fn with_cycles(&self, cycles: u64) -> Procedure {
        Procedure { cycles, ..*self }
    }

    /// The fewest cycles (the phases unchanged) whose estimator standard uncertainty
    /// ([`EstimatorTerms::standard_uncertainty`]) is at most `target`, searched by doubling then
    /// bisection (the uncertainty falls with the number of cycles); `None` when even
    /// [`MAX_CYCLES`] cycles do not reach it, or when a doubling improves it by less than 2 %
    /// (a flicker floor, or a drift bias that more cycles do not reduce).
    pub fn cycles_for(&self, model: &NoiseModel, target: f64) -> Option<u64> {
        let u = |n: u64| {
            self.with_cycles(n)
                .estimator_terms(model)
                .standard_uncertainty()
        };
        if target.is_nan() || target <= 0.0 {
            return None;
        }
        let mut hi = 1u64;
        let mut at = u(hi);
        while at > target {
            if hi >= MAX_CYCLES {
                return None;
            }
            hi = (hi * 2).min(MAX_CYCLES);
            let next = u(hi);
            if next > FLOOR_RATIO * at && next > target {
                return None;
            }
            at = next;
        }
        let mut lo = hi / 2; // u(lo) > target, or lo = 0
        while hi - lo > 1 {
            let mid = lo + (hi - lo) / 2;
            if u(mid) > target {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        Some(hi)
    }

    /// For the same total time, the phase lengths (on and off in their ratio, the settling
    /// kept) and number of cycles that give the smallest estimator standard uncertainty: flicker
    /// and random walk make long phases costly, white noise and the settling make short ones
    /// wasteful. A search over whole numbers of cycles up to [`MAX_SEARCH_CYCLES`]: a geometric
    /// grid (ratio 1.1), then a ternary search between the best point's neighbours on the grid.
    /// `None` when no count fits (phases no longer than the settling).
    pub fn best_phases(&self, model: &NoiseModel) -> Option<(Procedure, EstimatorTerms)> {
        self.best_phases_where(model, &|_| true)
    }

    /// [`Procedure::best_phases`] among the candidates `admissible` accepts (for a pendulum,
    /// those whose ring-down the windows do not see).
    pub fn best_phases_where(
        &self,
        model: &NoiseModel,
        admissible: &dyn Fn(&Procedure) -> bool,
    ) -> Option<(Procedure, EstimatorTerms)> {
        let total = self.total_time();
        let ratio = self.on_time / self.off_time;
        let with_count = |n: u64| -> Option<Procedure> {
            let nf = n as f64;
            let off = match self.pattern {
                Pattern::Alternate => total / (nf * (1.0 + ratio)),
                Pattern::Aba => total / (nf * (1.0 + ratio) + 1.0),
            };
            let on = ratio * off;
            (off > self.settle_time && on > self.settle_time).then_some(Procedure {
                cycles: n,
                on_time: on,
                off_time: off,
                ..*self
            })
        };
        let score = |n: u64| {
            with_count(n).filter(|p| admissible(p)).map(|p| {
                let t = p.estimator_terms(model);
                (p, t, t.standard_uncertainty())
            })
        };
        let mut best: Option<(Procedure, EstimatorTerms, f64)> = None;
        let consider = |n: u64, best: &mut Option<(Procedure, EstimatorTerms, f64)>| {
            if let Some(c) = score(n)
                && best.as_ref().is_none_or(|b| c.2 < b.2)
            {
                *best = Some(c);
            }
        };
        let mut grid = Vec::new();
        let mut n = 1.0f64;
        while (n as u64) <= MAX_SEARCH_CYCLES && with_count(n as u64).is_some() {
            grid.push(n as u64);
            n = (n * 1.1).max(n + 1.0);
        }
        for &g in &grid {
            consider(g, &mut best);
        }
        let centre = best.as_ref()?.0.cycles;
        let at = grid.iter().position(|g| *g == centre).unwrap_or(0);
        let (mut lo, mut hi) = (
            grid[at.saturating_sub(1)],
            grid[(at + 1).min(grid.len() - 1)],
        );
        // Ternary search on whole numbers (the uncertainty is unimodal in the count).
        let value = |k: u64| score(k).map_or(f64::INFINITY, |c| c.2);
        while hi - lo > 2 {
            let m1 = lo + (hi - lo) / 3;
            let m2 = hi - (hi - lo) / 3;
            if value(m1) <= value(m2) {
                hi = m2;
            } else {
                lo = m1;
            }
        }
        for k in lo..=hi {
            consider(k, &mut best);
        }
        best.map(|(p, t, _)| (p, t))
    }
}

/// sum over pairs of windows of w_j w_k J(j, k), J the double integral of g(s - t) over the two
/// windows, grouped by class pair and lag: O(number of cycles).
fn double_sum(classes: &[WindowClass], period: f64, pair: fn(f64, f64, f64) -> f64) -> f64 {
    let mut total = 0.0;
    for a in classes {
        for b in classes {
            let (na, nb) = (a.count as i64, b.count as i64);
            let mut sum = 0.0;
            // Lag q = l - k between window k of a and window l of b.
            for q in -(na - 1)..nb {
                let pairs = (na.min(nb - q) - 0.max(-q)) as f64;
                if pairs <= 0.0 {
                    continue;
                }
                let centre_a = a.first + 0.5 * a.length;
                let centre_b = b.first + q as f64 * period + 0.5 * b.length;
                sum += pairs * pair(centre_b - centre_a, a.length, b.length);
            }
            total += a.weight * b.weight * sum;
        }
    }
    total
}

/// The four corner offsets of two windows of lengths `l1`, `l2` whose centres are `d` apart
/// (the second minus the first), with their signs: J = sum sign G(x) for G'' = g.
fn corners(d: f64, l1: f64, l2: f64) -> [(f64, f64); 4] {
    // s in the first window [-l1/2, l1/2], t in the second [d - l2/2, d + l2/2]; s - t at the
    // corners: (b - c), (a - c), (b - d), (a - d).
    let h = 0.5 * (l1 + l2);
    let g = 0.5 * (l2 - l1);
    [(h - d, 1.0), (g - d, -1.0), (-g - d, -1.0), (-h - d, 1.0)]
}

/// double integral of |s - t| over two windows: for separated windows exactly l1 l2 |d|
/// (the second difference of |x|^3 / 6), else from the corners.
fn abs_pair(d: f64, l1: f64, l2: f64) -> f64 {
    if d.abs() >= 0.5 * (l1 + l2) {
        return l1 * l2 * d.abs();
    }
    corners(d, l1, l2)
        .iter()
        .map(|(x, sign)| sign * x.abs().powi(3) / 6.0)
        .sum()
}

/// double integral of ln|s - t| over two windows, from G(x) = x^2 ln|x| / 2 - 3 x^2 / 4. For
/// windows well apart, written as l1 l2 (ln|d| - 3/2) plus the remainder with ln_1p, which
/// keeps the digits the leading terms would cancel.
fn ln_pair(d: f64, l1: f64, l2: f64) -> f64 {
    let c = corners(d, l1, l2);
    if d.abs() > l1 + l2 {
        let ad = d.abs();
        // |x_i| = |d| - delta_i with the sign of -d throughout.
        let rest: f64 = c
            .iter()
            .map(|(x, sign)| {
                let ax = x.abs();
                sign * 0.5 * ax * ax * ((ax - ad) / ad).ln_1p()
            })
            .sum();
        return l1 * l2 * (ad.ln() - 1.5) + rest;
    }
    c.iter()
        .map(|(x, sign)| {
            let g = if *x == 0.0 {
                0.0
            } else {
                0.5 * x * x * x.abs().ln() - 0.75 * x * x
            };
            sign * g
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn model(white: f64, flicker: f64, random_walk: f64, drift: f64) -> NoiseModel {
        NoiseModel {
            white,
            flicker,
            random_walk,
            drift,
        }
    }

    // REFERENCES 7 [calc]: 10 cycles of 60 s on / 60 s off, 10 s settling, 20 nN/sqrt(Hz):
    // 0.894 nN alternate (h0 / (N t)), 0.883 nN ABA.
    #[test]
    fn white_noise_of_both_patterns() {
        let m = model(20e-9, 0.0, 0.0, 0.0);
        let mut p = Procedure {
            pattern: Pattern::Alternate,
            cycles: 10,
            on_time: 60.0,
            off_time: 60.0,
            settle_time: 10.0,
        };
        let alt = p.estimator_terms(&m);
        assert_relative_eq!(
            alt.white,
            20e-9 / (10.0f64 * 50.0).sqrt(),
            max_relative = 1e-12
        );
        assert_relative_eq!(alt.white, 0.894e-9, max_relative = 1e-3);
        p.pattern = Pattern::Aba;
        let aba = p.estimator_terms(&m);
        assert_relative_eq!(aba.white, 0.883e-9, max_relative = 1e-3);
        // (h0 / (2 N L)) (2 - 1 / (2 N)) [calc].
        let exact = (400e-18f64 / (2.0 * 10.0 * 50.0) * (2.0 - 0.05)).sqrt();
        assert_relative_eq!(aba.white, exact, max_relative = 1e-12);
        assert_eq!(p.total_time(), 10.0 * 120.0 + 60.0);
    }

    // The Allan variance is the estimator with weight +-1/tau on two adjacent intervals,
    // halved: it must give h0/(2 tau), 2 ln 2 h_-1 and K^2 tau / 3 (NIST SP 1065, Riley 2008,
    // and IEEE Std 952 for K) at every tau, from the same pair sums.
    #[test]
    fn allan_weight_gives_the_allan_variances() {
        for tau in [0.5, 1.0, 37.0, 1e4] {
            let classes = [
                WindowClass {
                    first: 0.0,
                    length: tau,
                    weight: -1.0 / tau,
                    count: 1,
                },
                WindowClass {
                    first: tau,
                    length: tau,
                    weight: 1.0 / tau,
                    count: 1,
                },
            ];
            let flicker = -0.5 * double_sum(&classes, 1.0, ln_pair);
            assert_relative_eq!(flicker, 2.0 * 2f64.ln(), max_relative = 1e-10);
            let rw = -0.25 * double_sum(&classes, 1.0, abs_pair);
            assert_relative_eq!(rw, tau / 3.0, max_relative = 1e-10);
        }
    }

    // The pair sums against a direct quadrature of the double integrals [calc].
    #[test]
    fn pair_integrals_against_quadrature() {
        let quad = |d: f64, l1: f64, l2: f64, g: &dyn Fn(f64) -> f64| {
            let n = 2000;
            let mut s = 0.0;
            for i in 0..n {
                let x = -0.5 * l1 + (i as f64 + 0.5) * l1 / n as f64;
                for j in 0..n {
                    let y = d - 0.5 * l2 + (j as f64 + 0.5) * l2 / n as f64;
                    s += g(x - y);
                }
            }
            s * l1 * l2 / (n * n) as f64
        };
        for (d, l1, l2) in [(7.0, 2.0, 3.0), (-9.0, 1.5, 0.5), (40.0, 3.0, 2.0)] {
            assert_relative_eq!(
                ln_pair(d, l1, l2),
                quad(d, l1, l2, &|x: f64| x.abs().ln()),
                max_relative = 1e-6
            );
            assert_relative_eq!(
                abs_pair(d, l1, l2),
                quad(d, l1, l2, &|x: f64| x.abs()),
                max_relative = 1e-6
            );
        }
        // Overlapping windows (the integrand's logarithmic singularity is integrable).
        assert_relative_eq!(ln_pair(0.0, 1.0, 1.0), -1.5, max_relative = 1e-12);
        assert_relative_eq!(abs_pair(0.0, 1.0, 1.0), 1.0 / 3.0, max_relative = 1e-12);
    }

    // The searches: the fewest cycles for a target is the first count whose uncertainty is
    // at most the target (checked against its neighbour); with white noise only, the best
    // phases for a fixed total time are the longest (settling is pure loss), with random walk
    // they are shorter [common practice of on/off measurements; exact variances above].
    #[test]
    fn searches() {
        let p = Procedure {
            pattern: Pattern::Alternate,
            cycles: 10,
            on_time: 60.0,
            off_time: 60.0,
            settle_time: 10.0,
        };
        let white = model(20e-9, 0.0, 0.0, 0.0);
        let target = 0.3e-9;
        let n = p.cycles_for(&white, target).unwrap();
        let u = |n| {
            p.with_cycles(n)
                .estimator_terms(&white)
                .standard_uncertainty()
        };
        assert!(u(n) <= target && u(n - 1) > target);
        // h0 / (N t) <= target^2: N = ceil(h0 / (t target^2)) [calc].
        assert_eq!(n, (400e-18f64 / (50.0 * target * target)).ceil() as u64);
        let (best, _) = p.best_phases(&white).unwrap();
        assert_eq!(best.cycles, 1);
        let walk = model(1e-9, 0.0, 2e-10, 0.0);
        let (best_rw, terms) = p.best_phases(&walk).unwrap();
        assert!(best_rw.cycles > 10, "{best_rw:?}");
        assert!(terms.standard_uncertainty() <= p.estimator_terms(&walk).standard_uncertainty());
        assert!((best_rw.total_time() - p.total_time()).abs() < 1e-9);
        // A flicker floor that more cycles of the same phases cannot pass.
        let floor = model(0.0, 5e-9, 0.0, 0.0);
        assert!(p.cycles_for(&floor, 1e-12).is_none());
    }

    // ABA cancels a linear drift exactly; the alternate pattern keeps D (mean time on - mean
    // time off) = D period / 2 [calc].
    #[test]
    fn drift_bias() {
        let m = model(0.0, 0.0, 0.0, 1e-12);
        let mut p = Procedure {
            pattern: Pattern::Aba,
            cycles: 7,
            on_time: 40.0,
            off_time: 25.0,
            settle_time: 5.0,
        };
        assert!(p.estimator_terms(&m).drift_bias.abs() < 1e-24);
        p.pattern = Pattern::Alternate;
        p.off_time = 40.0;
        assert_relative_eq!(
            p.estimator_terms(&m).drift_bias,
            1e-12 * 40.0,
            max_relative = 1e-12
        );
    }
}
