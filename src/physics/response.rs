//! The instrument's response to the planned force sequence, and the settling factor: the
//! procedure's estimator applied to the response to a unit on/off force pattern (DESIGN,
//! "Forecast": the sequence starts at rest with the laser off).
//!
//! A linear instrument's step response is 1 + sum_m Re[c_m e^{p_m t}] over its modes:
//! - a force balance, the first-order system tau y' = F - y: one mode p = -1/tau, c = -1;
//! - a torsion pendulum, phi'' + (w0 / Q) phi' + w0^2 phi = tau / I, whose observed period T0
//!   gives 2 pi / T0 = w0 sqrt(1 - 1/(4 Q^2)): p = -gamma + i w_d with gamma = w0 / (2 Q),
//!   w_d = 2 pi / T0, and c = -(1 - i gamma / w_d) (the step response
//!   1 - e^{-gamma t} (cos w_d t + (gamma / w_d) sin w_d t); Landau and Lifshitz, Mechanics, 25);
//! - a force that first passes a first-order lag tau_h (the heating of the mirror and its mount)
//!   adds the lag's mode p_h = -1/tau_h with c_h = -H(p_h) and multiplies each instrument mode by
//!   1 / (1 + p tau_h) (partial fractions of H(s) / (s (1 + s tau_h)); H the instrument's
//!   transfer function, H(0) = 1).
//!
//! The response to the on/off pattern is the sum of the step responses of its switches (+1 at
//! every switch on, -1 at every switch off). The ideal part (the 1) gives the estimator exactly
//! 1; each mode adds Re[c E(p)], where E(p) sums the windows' integrals of e^{p (t - t_s)} over
//! the switches before them: the amplitudes at the phase starts follow the recursion
//! A_on(k+1) = z A_on(k) + (1 - z_off) (z = e^{p P}, z_off = e^{p off}), a geometric series, so
//! the factor is exact and costs the same for any number of cycles (a state-space solution over
//! each phase, not a time-stepping integration).

use super::procedure::{Pattern, Procedure};
use crate::scalar::Scalar;
use std::f64::consts::PI;

/// A complex number over a [`Scalar`] (for the modes of the response).
#[derive(Clone, Copy, Debug)]
pub struct Complex<T> {
    /// Real part.
    pub re: T,
    /// Imaginary part.
    pub im: T,
}

impl<T: Scalar> Complex<T> {
    /// A real number.
    pub fn real(re: T) -> Self {
        Complex {
            re,
            im: T::cst(0.0),
        }
    }
    fn cst(re: f64, im: f64) -> Self {
        Complex {
            re: T::cst(re),
            im: T::cst(im),
        }
    }
    fn add(self, o: Self) -> Self {
        Complex {
            re: self.re + o.re,
            im: self.im + o.im,
        }
    }
    fn sub(self, o: Self) -> Self {
        Complex {
            re: self.re - o.re,
            im: self.im - o.im,
        }
    }
    fn mul(self, o: Self) -> Self {
        Complex {
            re: self.re * o.re - self.im * o.im,
            im: self.re * o.im + self.im * o.re,
        }
    }
    fn scale(self, x: T) -> Self {
        Complex {
            re: self.re * x,
            im: self.im * x,
        }
    }
    fn div(self, o: Self) -> Self {
        let d = o.re * o.re + o.im * o.im;
        Complex {
            re: (self.re * o.re + self.im * o.im) / d,
            im: (self.im * o.re - self.re * o.im) / d,
        }
    }
    /// e^self.
    fn exp(self) -> Self {
        let m = self.re.exp();
        Complex {
            re: m * self.im.cos(),
            im: m * self.im.sin(),
        }
    }
    fn norm_value(self) -> f64 {
        self.re.value().hypot(self.im.value())
    }
}

/// One mode of a step response: 1 + Re[c e^{p t}] summed over the modes.
#[derive(Clone, Copy, Debug)]
pub struct Mode<T> {
    /// The pole p (Re p < 0 for a mode that dies out; 0 for an undamped pendulum).
    pub pole: Complex<T>,
    /// The coefficient c.
    pub coefficient: Complex<T>,
}

/// The instrument: how its output follows a force.
#[derive(Clone, Copy, Debug)]
pub enum Instrument<T> {
    /// At once (no modes).
    Immediate,
    /// A first-order system of time constant tau (tau y' = F - y).
    FirstOrder(T),
    /// A viscously damped oscillator of observed period T0 and quality factor Q (Q infinite:
    /// undamped).
    Oscillator {
        /// The observed (damped) period T0.
        period: T,
        /// The quality factor Q.
        quality_factor: T,
    },
}

impl<T: Scalar> Instrument<T> {
    /// The modes of its step response.
    pub fn modes(&self) -> Vec<Mode<T>> {
        match *self {
            Instrument::Immediate => Vec::new(),
            Instrument::FirstOrder(tau) => {
                if tau.value() > 0.0 {
                    vec![Mode {
                        pole: Complex::real(-T::cst(1.0) / tau),
                        coefficient: Complex::cst(-1.0, 0.0),
                    }]
                } else {
                    Vec::new()
                }
            }
            Instrument::Oscillator {
                period,
                quality_factor,
            } => {
                let wd = T::cst(2.0 * PI) / period;
                let gamma = if quality_factor.value().is_finite() {
                    let q2 = quality_factor * quality_factor;
                    let w0 = wd / (T::cst(1.0) - T::cst(0.25) / q2).sqrt();
                    w0 / (T::cst(2.0) * quality_factor)
                } else {
                    T::cst(0.0)
                };
                vec![Mode {
                    pole: Complex { re: -gamma, im: wd },
                    coefficient: Complex {
                        re: T::cst(-1.0),
                        im: gamma / wd,
                    },
                }]
            }
        }
    }

    /// Its transfer function at s (H(0) = 1).
    pub fn transfer(&self, s: Complex<T>) -> Complex<T> {
        let one = Complex::cst(1.0, 0.0);
        match *self {
            Instrument::Immediate => one,
            Instrument::FirstOrder(tau) => one.div(one.add(s.scale(tau))),
            Instrument::Oscillator { .. } => {
                // H(s) = w0^2 / (s^2 + (w0 / Q) s + w0^2) = |p|^2 / ((s - p)(s - conj p)).
                let p = self.modes()[0].pole;
                let pc = Complex {
                    re: p.re,
                    im: -p.im,
                };
                let n = p.mul(pc);
                n.div(s.sub(p).mul(s.sub(pc)))
            }
        }
    }

    /// The modes of the step response of a force that first passes a first-order lag `lag`
    /// (then this instrument).
    pub fn modes_after_lag(&self, lag: T) -> Vec<Mode<T>> {
        if lag.value() <= 0.0 {
            return self.modes();
        }
        let one = Complex::cst(1.0, 0.0);
        let mut out: Vec<Mode<T>> = self
            .modes()
            .into_iter()
            .map(|m| Mode {
                pole: m.pole,
                coefficient: m.coefficient.div(one.add(m.pole.scale(lag))),
            })
            .collect();
        let ph = Complex::real(-T::cst(1.0) / lag);
        let h = self.transfer(ph);
        out.push(Mode {
            pole: ph,
            coefficient: Complex {
                re: -h.re,
                im: -h.im,
            },
        });
        out
    }
}

/// The settling factor: the procedure's estimator applied to the response to a unit on/off
/// force pattern, 1 + sum_m Re[c_m E(p_m)] (exact, see the module documentation); 1 for an
/// instrument that follows at once.
pub fn settling_factor<T: Scalar>(p: &Procedure, modes: &[Mode<T>]) -> T {
    let mut s = T::cst(1.0);
    for m in modes {
        let e = mode_sum(p, m.pole);
        s = s + m.coefficient.mul(e).re;
    }
    s
}

/// E(p): the estimator applied to the sum over switches of e^{p (t - t_s)} (+ at a switch on,
/// - at a switch off), by the geometric series of the phase-start amplitudes.
fn mode_sum<T: Scalar>(pr: &Procedure, p: Complex<T>) -> Complex<T> {
    let n = pr.cycles as f64;
    let one = Complex::cst(1.0, 0.0);
    let (on, off, settle) = (pr.on_time, pr.off_time, pr.settle_time);
    let z_on = p.scale(T::cst(on)).exp();
    let z_off = p.scale(T::cst(off)).exp();
    let z = z_on.mul(z_off);
    let one_minus_z = one.sub(z);
    // Sum_{k<m} A_on(k), A_on(0) = 1, A_on(k+1) = z A_on(k) + (1 - z_off).
    let sum_on = |m: f64| -> Complex<T> {
        if one_minus_z.norm_value() < 1e-12 {
            // z = 1 (an undamped pendulum whose period divides the cycle): A_on(k) = 1 + k (1 - z_off).
            return Complex::cst(m, 0.0).add(one.sub(z_off).scale(T::cst(0.5 * m * (m - 1.0))));
        }
        let c1 = one.sub(z_off).div(one_minus_z);
        let zm = p.scale(T::cst(m * (on + off))).exp();
        c1.scale(T::cst(m))
            .add(one.sub(c1).mul(one.sub(zm)).div(one_minus_z))
    };
    // The integral over a window [settle, len] of e^{p u}: (e^{p len} - e^{p settle}) / p.
    let window = |len: f64| -> Complex<T> {
        let a = p.scale(T::cst(len)).exp();
        let b = p.scale(T::cst(settle)).exp();
        a.sub(b).div(p)
    };
    let (l_on, l_off) = (on - settle, off - settle);
    let on_part = sum_on(n).mul(window(on)).scale(T::cst(1.0 / (n * l_on)));
    // Sum of A_off(k) for k = 1..m: z_on Sum_{k<m} A_on(k) - m (A_off(0) = 0).
    let sum_off = |m: f64| z_on.mul(sum_on(m)).sub(Complex::cst(m, 0.0));
    let off_sum = match pr.pattern {
        // Off windows 0..N-1, each weight -1/(N L_off).
        Pattern::Alternate => sum_off(n - 1.0),
        // Off windows 0..N with weights -1/(2N L_off) at the ends and -1/(N L_off) inside:
        // (sum_{k<N} A_off(k) + sum_{k=1..N} A_off(k)) / 2.
        Pattern::Aba => sum_off(n - 1.0).add(sum_off(n)).scale(T::cst(0.5)),
    };
    let off_part = off_sum.mul(window(off)).scale(T::cst(1.0 / (n * l_off)));
    on_part.sub(off_part)
}

/// The mean of the transient (the response minus the ideal step pattern) over every kept
/// window, in order, for a unit on/off force, by direct recursion over the phases: what a
/// pendulum's ring-down leaves in each window.
pub fn window_transients(p: &Procedure, modes: &[Mode<f64>]) -> Vec<f64> {
    let phases = p.phases();
    let mut out = vec![0.0; phases.len()];
    for m in modes {
        // The amplitude of the mode at the start of each phase.
        let mut a = Complex::cst(0.0, 0.0);
        for (i, ph) in phases.iter().enumerate() {
            if i > 0 {
                let len = phases[i - 1].end - phases[i - 1].start;
                a = a.mul(m.pole.scale(len).exp());
                a = a.add(Complex::cst(if ph.on { 1.0 } else { -1.0 }, 0.0));
            }
            let len = ph.end - ph.start;
            let b = m
                .pole
                .scale(len)
                .exp()
                .sub(m.pole.scale(p.settle_time).exp());
            let mean = a.mul(b.div(m.pole)).scale(1.0 / (len - p.settle_time));
            out[i] += m.coefficient.mul(mean).re;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn procedure(pattern: Pattern, settle: f64) -> Procedure {
        Procedure {
            pattern,
            cycles: 10,
            on_time: 60.0,
            off_time: 60.0,
            settle_time: settle,
        }
    }

    /// The estimator applied to an output computed by a fourth-order Runge-Kutta integration of
    /// the instrument's equations (with the lag in front when `lag` > 0), in steps of `h`.
    fn integrated(p: &Procedure, inst: Instrument<f64>, lag: f64, h: f64) -> f64 {
        let phases = p.phases();
        let force =
            |t: f64| phases.iter().any(|ph| ph.on && t >= ph.start && t < ph.end) as u8 as f64;
        // State: [lagged force, y, y'].
        let deriv = |t: f64, s: [f64; 3]| -> [f64; 3] {
            let drive = if lag > 0.0 { s[0] } else { force(t) };
            let dl = if lag > 0.0 {
                (force(t) - s[0]) / lag
            } else {
                0.0
            };
            match inst {
                Instrument::Immediate => [dl, 0.0, 0.0],
                Instrument::FirstOrder(tau) => [dl, (drive - s[1]) / tau, 0.0],
                Instrument::Oscillator {
                    period,
                    quality_factor,
                } => {
                    let wd = 2.0 * PI / period;
                    let w0 = wd / (1.0 - 0.25 / (quality_factor * quality_factor)).sqrt();
                    [
                        dl,
                        s[2],
                        w0 * w0 * (drive - s[1]) - w0 / quality_factor * s[2],
                    ]
                }
            }
        };
        let total = p.total_time();
        let steps = (total / h).round() as usize;
        let mut s = [0.0; 3];
        let mut outputs = Vec::with_capacity(steps + 1);
        outputs.push(s[1]);
        for k in 0..steps {
            // Integrate the piecewise-constant force exactly across switches: switches fall
            // on the grid, so evaluate the force just inside the step.
            let t = k as f64 * h + 1e-9 * h;
            let k1 = deriv(t, s);
            let k2 = deriv(t + h / 2.0, add(s, k1, h / 2.0));
            let k3 = deriv(t + h / 2.0, add(s, k2, h / 2.0));
            let k4 = deriv(t + h - 2e-9 * h, add(s, k3, h));
            for i in 0..3 {
                s[i] += h / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
            }
            outputs.push(s[1]);
        }
        // The windows' integrals by the trapezoid rule on the grid.
        p.windows()
            .iter()
            .map(|w| {
                let (a, b) = ((w.start / h).round() as usize, (w.end / h).round() as usize);
                let integral: f64 = (a..b)
                    .map(|i| 0.5 * h * (outputs[i] + outputs[i + 1]))
                    .sum();
                w.weight * integral
            })
            .sum()
    }

    fn add(s: [f64; 3], d: [f64; 3], h: f64) -> [f64; 3] {
        [s[0] + h * d[0], s[1] + h * d[1], s[2] + h * d[2]]
    }

    // REFERENCES 7 [calc]: the alternate estimator of a balance of tau = 3 s, 10 cycles of
    // 60/60 s, 10 s settling: 0.99593; and every case against an independent Runge-Kutta
    // integration of the instrument's equations to 1e-6.
    #[test]
    fn settling_factors_against_integration() {
        let alt = procedure(Pattern::Alternate, 10.0);
        let balance = Instrument::FirstOrder(3.0);
        let s = settling_factor(&alt, &balance.modes());
        assert!((s - 0.99593).abs() < 5e-6, "{s}");
        let cases: Vec<(Procedure, Instrument<f64>, f64)> = vec![
            (alt, balance, 0.0),
            (
                procedure(Pattern::Aba, 10.0),
                Instrument::FirstOrder(8.0),
                0.0,
            ),
            (
                procedure(Pattern::Aba, 20.0),
                Instrument::Oscillator {
                    period: 17.0,
                    quality_factor: 6.0,
                },
                0.0,
            ),
            (
                procedure(Pattern::Alternate, 5.0),
                Instrument::Oscillator {
                    period: 23.0,
                    quality_factor: 40.0,
                },
                0.0,
            ),
            (
                procedure(Pattern::Aba, 10.0),
                Instrument::FirstOrder(3.0),
                12.0,
            ),
            (
                procedure(Pattern::Alternate, 15.0),
                Instrument::Oscillator {
                    period: 17.0,
                    quality_factor: 6.0,
                },
                9.0,
            ),
        ];
        for (p, inst, lag) in cases {
            let exact = settling_factor(&p, &inst.modes_after_lag(lag));
            let numeric = integrated(&p, inst, lag, 0.005);
            assert!(
                (exact - numeric).abs() < 1e-6,
                "{p:?} {inst:?} lag {lag}: exact {exact}, integrated {numeric}"
            );
        }
    }

    // The factor tends to 1 as the settling grows (common practice: wait for the balance):
    // monotonically for a first-order balance; within the decaying envelope e^{-gamma t} for a
    // pendulum, whose window means of a ringing transient may cross zero on the way.
    #[test]
    fn factor_tends_to_one() {
        let long = |settle: f64| Procedure {
            on_time: 600.0,
            off_time: 600.0,
            ..procedure(Pattern::Aba, settle)
        };
        let balance = Instrument::FirstOrder(20.0);
        let mut last = f64::INFINITY;
        for settle in [5.0, 50.0, 150.0, 300.0, 590.0] {
            let d = (settling_factor(&long(settle), &balance.modes()) - 1.0).abs();
            assert!(d < last, "{settle}: {d} after {last}");
            last = d;
        }
        assert!(last < 1e-9, "{last}");
        let pendulum = Instrument::Oscillator {
            period: 20.0,
            quality_factor: 30.0,
        };
        // gamma = w0 / (2 Q), about 0.00524 / s here.
        let gamma = -pendulum.modes()[0].pole.re;
        for settle in [50.0, 200.0, 400.0, 590.0] {
            let d = (settling_factor(&long(settle), &pendulum.modes()) - 1.0).abs();
            assert!(d <= 4.0 * (-gamma * settle).exp(), "{settle}: {d}");
        }
        assert_eq!(
            settling_factor(
                &procedure(Pattern::Aba, 1.0),
                &Instrument::<f64>::Immediate.modes()
            ),
            1.0
        );
    }

    // The window transients agree with the factor: the estimator of the window means of the
    // transient is the factor minus 1 [the same linear functional].
    #[test]
    fn window_transients_sum_to_the_factor() {
        for pattern in [Pattern::Alternate, Pattern::Aba] {
            let p = procedure(pattern, 7.0);
            let inst = Instrument::Oscillator {
                period: 13.0,
                quality_factor: 9.0,
            };
            let modes = inst.modes();
            let means = window_transients(&p, &modes);
            let windows = p.windows();
            let estimate: f64 = windows
                .iter()
                .zip(&means)
                .map(|(w, m)| w.weight * (w.end - w.start) * m)
                .sum();
            assert_relative_eq!(
                estimate,
                settling_factor(&p, &modes) - 1.0,
                max_relative = 1e-9
            );
        }
    }
}
