//! The fraction of a Gaussian beam that a tilted circular mirror intercepts.
//!
//! Seen along the beam, a disc of radius a whose normal makes the angle theta with the beam is an
//! ellipse of semi-axes a and b = a cos(theta). For a round Gaussian beam of 1/e^2 radius w
//! centred on it, the fraction that misses the mirror is (REFERENCES 8)
//!
//!   L = (1/2pi) int_0^2pi exp(-2 r(phi)^2 / w^2) dphi,  r(phi) = a b / sqrt(b^2 cos^2 phi + a^2 sin^2 phi),
//!
//! and eta = 1 - L is caught. Three exact ways of computing it are used, each where it is cheap
//! and accurate (all sums and integrands positive, so the error is relative):
//!
//! - With x, y ~ N(0, w^2/4) the beam's coordinates, L = P(x^2/a^2 + y^2/b^2 > 1), the upper tail
//!   of a weighted sum of two chi-square(1) variables, whose density is
//!   f(s) = (2ab/w^2) exp(-p s) I0(q s) with p = (a^2 + b^2)/w^2, q = (a^2 - b^2)/w^2 (the sum of two
//!   independent gamma variables of shape 1/2; Abramowitz and Stegun 9.6.10 for the series of I0).
//!   Integrating the series of I0 term by term with the incomplete gamma function of integer order
//!   (A&S 6.5.13) gives
//!   L   = sqrt(1 - k^2) e^-p sum_n (q/2)^2n / (n!)^2 H_2n,  H_0 = 1, H_m = 1 + (m/p) H_(m-1),
//!   eta = (2ab/w^2) e^-p   sum_n (q/2)^2n / (n!)^2 K_2n,  K_m = (1 + p K_(m+1)) / (m + 1),
//!   with k = q/p = (a^2 - b^2)/(a^2 + b^2) and sqrt(1 - k^2) = 2ab/(a^2 + b^2). The first converges
//!   like k^2n once n passes q/2 (used for a mirror larger than the beam at up to about 60 deg);
//!   the second for a mirror smaller than the beam (p <= 3/2). At normal incidence (q = 0) both
//!   reduce to eta = 1 - exp(-2 a^2/w^2) (Siegman, Lasers, 1986, 17.1).
//! - Beyond that, with psi = 2 phi and the substitution tan(psi/2) = sqrt((1-k)/(1+k)) tan(v/2)
//!   (under which 1 - k cos psi = (1 - k^2)/(1 + k cos v)),
//!   eta = (sqrt(1 - k^2)/pi) int_0^pi (1 - exp(-p u)) / u dv,  u = 1 + k cos v,
//!   and L the same with exp(-p u) / u: smooth periodic integrands (analytic in a strip of
//!   half-width acosh(1/k)) that the trapezoidal rule integrates with exponentially falling error
//!   (Trefethen and Weideman, SIAM Review 56, 385, 2014); the number of points doubles until two
//!   estimates agree to 1e-13, and the smaller fraction is the one integrated.
//!
//! When 2 b^2/w^2 > 27.7 the lost fraction is below e^-27.7 = 9.3e-13 (the ellipse holds the
//! disc of radius b, which loses e^(-2 b^2/w^2)), and eta is taken as 1: an absolute error under
//! 1e-12 in the lost fraction, as asked of it, and below 1e-8 of the smallest effect a budget at
//! the 1e-4 level resolves. (This path keeps the common case, a mirror several beam
//! radii wide, at the cost of one comparison; see benches/whole_process.py.)

use crate::scalar::Scalar;
use std::f64::consts::PI;

/// Above this 2 b^2 / w^2 the lost fraction is below e^-27.7 < 1e-12 at any incidence.
const NOTHING_LOST: f64 = 27.7;
/// The series in H is used up to this k = (a^2 - b^2)/(a^2 + b^2) (about 60 deg of incidence).
const SERIES_MAX_K: f64 = 0.6;
/// The series in K is used up to this p = (a^2 + b^2)/w^2.
const SMALL_MIRROR_P: f64 = 1.5;
/// The steepest incidence at which [`tilted_mirror_fraction`] meets its accuracy within its
/// bound on work (the trapezoidal rule needs about 18 / sqrt(2 (1 - k)) points): 89.9 deg.
pub const STEEPEST_INCIDENCE: f64 = 89.9 * PI / 180.0;
/// At most this many trapezoid intervals (enough for 1e-13 up to about 89.99 deg).
const MAX_INTERVALS: usize = 1 << 17;

/// Fraction of a round Gaussian beam (1/e^2 radius `w`) caught by a centred circular mirror of
/// radius `a` whose normal makes the angle `incidence` with the beam: the beam sees the ellipse
/// (a, a cos(incidence)). Exact to about 1e-13 relative in the caught fraction, and in the lost
/// fraction to 1e-12 relative or 1e-12 absolute (a lost fraction below 1e-12 may come out as 0),
/// for |incidence| up to [`STEEPEST_INCIDENCE`] (see the module's formulas and sources).
pub fn tilted_mirror_fraction<T: Scalar>(a: T, w: T, incidence: T) -> T {
    caught_fraction(a, w, incidence.cos())
}

/// [`tilted_mirror_fraction`] from the cosine of the incidence (computed once by the caller).
/// The common case, a mirror larger than the beam at up to about 60 deg, is a short
/// straight-line path; the others are in functions of their own.
#[inline(always)]
pub fn caught_fraction<T: Scalar>(a: T, w: T, cos: T) -> T {
    let cos2 = cos * cos;
    // One division for both a^2/w^2 and 1/p: d = 1/(a^2 w^2 (1 + cos^2)).
    let (a2, w2, opc) = (a * a, w * w, T::cst(1.0) + cos2);
    let d = T::cst(1.0) / (a2 * w2 * opc);
    let a2w2 = a2 * a2 * opc * d;
    // p = (a^2 + b^2)/w^2, q = (a^2 - b^2)/w^2 = a^2 sin^2 / w^2, 2 b^2/w^2 = p - q. (sin^2 as
    // 1 - cos^2 loses digits of q near normal incidence, where q enters only as q^2 << 1.)
    let p = a2w2 * opc;
    let q = a2w2 * (T::cst(1.0) - cos2);
    let (pv, qv) = (p.value(), q.value());
    if pv <= SMALL_MIRROR_P || qv > SERIES_MAX_K * pv {
        return other_cases(a2w2, cos, p, q);
    }
    if pv - qv > NOTHING_LOST {
        return T::cst(1.0);
    }
    // sqrt(1 - k^2) = 2ab/(a^2 + b^2) = 2 (a^2/w^2) |cos| / p.
    let inv_p = w2 * w2 * d;
    let scale = T::cst(2.0) * a2w2 * cos.abs() * inv_p * (-p).exp();
    T::cst(1.0) - scale * large_mirror_series(inv_p, q, scale.value())
}

/// The caught fraction of a mirror smaller than the beam (p <= 3/2), or at a steep incidence
/// (k > 0.6).
#[cold]
#[inline(never)]
fn other_cases<T: Scalar>(a2w2: T, cos: T, p: T, q: T) -> T {
    if p.value() <= SMALL_MIRROR_P {
        return small_mirror_series(a2w2 * cos.abs(), p, q);
    }
    if (p - q).value() > NOTHING_LOST {
        return T::cst(1.0);
    }
    let k = q / p;
    let root = T::cst(2.0) * cos.abs() / (T::cst(1.0) + cos * cos);
    // Integrate the smaller of the two fractions, so that it keeps its digits: the lost one
    // when it is surely below 1/2 (it is below (a/b) e^-(p - q)).
    let lost_bound = (-(p - q)).value().exp() / cos.abs().value();
    if lost_bound < 0.5 {
        T::cst(1.0) - root * T::cst(1.0 / PI) * trapezoid(p, k, true)
    } else {
        root * T::cst(1.0 / PI) * trapezoid(p, k, false)
    }
}

/// sum_n (q/2)^2n / (n!)^2 H_2n with H_m = 1 + (m/p) H_(m-1) (`inv_p` = 1/p): the lost
/// fraction is `scale` = sqrt(1 - k^2) e^-p times this. Since H_m / H_(m-1) <= 1 + m/p, the
/// ratio of term j to term j - 1 is at most r = (q/(2j) + k)^2, which falls with j; so once
/// r < 1 the terms after term n add at most t_n r / (1 - r). The sum stops when that bound is
/// below 1e-17 of the sum or adds less than 1e-17 to the lost fraction ([`series_done`]).
#[inline(always)]
fn large_mirror_series<T: Scalar>(inv_p: T, q: T, scale: f64) -> T {
    let one = T::cst(1.0);
    let x = q * q * T::cst(0.25);
    // The first three terms in straight-line code, with no branch (they suffice for a mirror
    // well larger than the beam at moderate incidence; a data-dependent number of terms costs
    // more in mispredicted branches than the terms themselves).
    let h2 = one + T::cst(2.0) * inv_p * (one + inv_p);
    let h4 = one + T::cst(4.0) * inv_p * (one + T::cst(3.0) * inv_p * h2);
    let h6 = one + T::cst(6.0) * inv_p * (one + T::cst(5.0) * inv_p * h4);
    let c2 = x * x * T::cst(1.0 / 4.0);
    let c3 = c2 * x * T::cst(1.0 / 9.0);
    let t3 = c3 * h6;
    let sum = one + x * h2 + c2 * h4 + t3;
    if series_done(
        3,
        t3.value(),
        sum.value(),
        q.value(),
        (q * inv_p).value(),
        scale,
    ) {
        return sum;
    }
    more_terms(inv_p, q, scale, (h6, c3, sum))
}

/// Whether the terms after term `n` of the series (term `term`, partial sum `sum`) may be left
/// out: their bound t r / (1 - r) is below max(1e-17 sum, 1e-17 / scale) (written without a
/// division): 1e-17 relative in the lost fraction, or 1e-17 absolute (half an ulp of eta near
/// 1 is 5.5e-17).
#[inline(always)]
fn series_done(n: usize, term: f64, sum: f64, q: f64, k: f64, scale: f64) -> bool {
    let r = (0.5 * q * reciprocal(n + 1) + k).powi(2);
    r < 1.0 && term * r * scale <= (1e-17 * sum * scale).max(1e-17) * (1.0 - r)
}

/// The terms from the fourth on, from H_6, the third coefficient and the sum so far.
#[cold]
#[inline(never)]
fn more_terms<T: Scalar>(inv_p: T, q: T, scale: f64, (mut h, mut c, mut sum): (T, T, T)) -> T {
    let one = T::cst(1.0);
    let x = q * q * T::cst(0.25);
    let (qv, k) = (q.value(), (q * inv_p).value());
    for n in 4..4000usize {
        let m = (2 * n) as f64;
        h = one + T::cst(m - 1.0) * inv_p * h;
        h = one + T::cst(m) * inv_p * h;
        c = c * x * T::cst(reciprocal(n) * reciprocal(n));
        let term = c * h;
        sum = sum + term;
        if series_done(n, term.value(), sum.value(), qv, k, scale) {
            break;
        }
    }
    sum
}

/// 1/n, from a table for the first terms of the series (no division in their loop).
#[inline(always)]
fn reciprocal(n: usize) -> f64 {
    const TABLE: [f64; 64] = {
        let mut t = [0.0; 64];
        let mut i = 1;
        while i < 64 {
            t[i] = 1.0 / i as f64;
            i += 1;
        }
        t
    };
    if n < 64 { TABLE[n] } else { 1.0 / n as f64 }
}

/// eta = (2ab/w^2) e^-p sum_n (q/2)^2n / (n!)^2 K_2n for p <= 3/2, with `ab_w2` = ab/w^2;
/// K_m by the stable backward recurrence K_m = (1 + p K_(m+1))/(m + 1) from
/// m = 44 (each step shrinks an error in the start by p/(m + 1) < 0.04), terms to n = 12
/// ((3/4)^24 / (12!)^2 < 1e-19).
fn small_mirror_series<T: Scalar>(ab_w2: T, p: T, q: T) -> T {
    const TERMS: usize = 12;
    const START: usize = 2 * TERMS + 20;
    let mut k_even = [T::cst(0.0); TERMS + 1];
    let mut kk = T::cst(1.0 / (START as f64 + 1.0));
    for m in (0..START).rev() {
        kk = (T::cst(1.0) + p * kk) * T::cst(1.0 / (m as f64 + 1.0));
        if m % 2 == 0 && m / 2 <= TERMS {
            k_even[m / 2] = kk;
        }
    }
    let x = q * q * T::cst(0.25);
    let (mut c, mut sum) = (T::cst(1.0), k_even[0]);
    for (n, kn) in k_even.iter().enumerate().skip(1) {
        c = c * x * T::cst(1.0 / (n as f64 * n as f64));
        sum = sum + c * *kn;
    }
    T::cst(2.0) * ab_w2 * (-p).exp() * sum
}

/// int_0^pi (1 - exp(-p u)) / u dv (the caught part) or, with `lost`, int_0^pi exp(-p u) / u dv,
/// u = 1 + k cos v, by the trapezoidal rule, doubling the points until two estimates agree to
/// 1e-13 (or [`MAX_INTERVALS`]).
fn trapezoid<T: Scalar>(p: T, k: T, lost: bool) -> T {
    let f = |v: f64| {
        let u = T::cst(1.0) + k * T::cst(v.cos());
        if lost {
            (-(p * u)).exp() / u
        } else {
            -(-(p * u)).exp_m1() / u
        }
    };
    let mut n = 8usize;
    let mut inner = T::cst(0.0);
    for j in 1..n {
        inner = inner + f(PI * j as f64 / n as f64);
    }
    let ends = (f(0.0) + f(PI)) * T::cst(0.5);
    let mut estimate = (ends + inner) * T::cst(PI / n as f64);
    while n < MAX_INTERVALS {
        let mut odd = T::cst(0.0);
        for j in (1..2 * n).step_by(2) {
            odd = odd + f(PI * j as f64 / (2 * n) as f64);
        }
        inner = inner + odd;
        n *= 2;
        let next = (ends + inner) * T::cst(PI / n as f64);
        let change = (next.value() - estimate.value()).abs();
        estimate = next;
        if change <= 1e-13 * estimate.value() {
            break;
        }
    }
    estimate
}

/// The radius a centred circular mirror at `incidence` needs to catch the fraction `f` of a
/// Gaussian beam of 1/e^2 radius `w`: the root of [`tilted_mirror_fraction`], by bisection
/// between the radius at normal incidence a0 = w sqrt(-ln(1 - f)/2) and a0 / cos(incidence)
/// (whose footprint holds the disc of radius a0), to 1e-12 relative.
pub fn radius_for_fraction(f: f64, w: f64, incidence: f64) -> f64 {
    let a0 = w * (-(-f).ln_1p() / 2.0).sqrt();
    let (mut lo, mut hi) = (a0, a0 / incidence.cos().abs());
    for _ in 0..200 {
        if hi - lo <= 1e-12 * hi {
            break;
        }
        let mid = 0.5 * (lo + hi);
        if tilted_mirror_fraction(mid, w, incidence) < f {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// The lost and the caught fraction straight from the definition (REFERENCES 8), by the
    /// midpoint rule in phi with `n` points (each term's caught part by expm1, so that a small
    /// caught fraction keeps its digits): an independent check of all three methods.
    fn by_definition(a: f64, w: f64, theta: f64, n: usize) -> (f64, f64) {
        let b = a * theta.cos();
        let (mut lost, mut caught) = (0.0, 0.0);
        for j in 0..n {
            let phi = 2.0 * PI * (j as f64 + 0.5) / n as f64;
            let r2 = a * a * b * b / (b * b * phi.cos().powi(2) + a * a * phi.sin().powi(2));
            lost += (-2.0 * r2 / (w * w)).exp();
            caught += -(-2.0 * r2 / (w * w)).exp_m1();
        }
        (lost / n as f64, caught / n as f64)
    }

    // REFERENCES 8 [calc]: a = w at 45 deg catches 0.74253; at normal incidence 0.86466.
    #[test]
    fn reference_values() {
        let eta = tilted_mirror_fraction(1.0, 1.0, PI / 4.0);
        assert!((eta - 0.742534).abs() < 5e-7, "eta = {eta}");
        let eta0 = tilted_mirror_fraction(1.0, 1.0, 0.0);
        assert_relative_eq!(eta0, 1.0 - (-2.0f64).exp(), max_relative = 1e-15);
    }

    // Across mirror sizes and incidences that exercise each method, the caught and the lost
    // fraction agree with the definition to 1e-12 relative (the midpoint rule in phi is itself
    // exponentially convergent; 20 000 points are far more than it needs here).
    #[test]
    fn every_method_matches_the_definition() {
        for &ratio in &[0.05, 0.3, 0.8, 1.0, 1.3, 2.0, 3.0, 4.5, 6.0] {
            for &deg in &[0.0, 5.0, 10.0, 30.0, 45.0, 55.0, 62.0, 70.0, 80.0, 85.0] {
                let theta = deg * PI / 180.0;
                let (lost, caught) = by_definition(ratio, 1.0, theta, 20_000);
                let eta = tilted_mirror_fraction(ratio, 1.0, theta);
                assert!(
                    ((eta - caught) / caught).abs() < 1e-12,
                    "a/w = {ratio}, {deg} deg: eta {eta} vs {caught}"
                );
                if lost > 1e-280 && lost < 0.5 {
                    assert!(
                        (((1.0 - eta) - lost) / lost).abs() < 1e-9
                            || (1.0 - eta - lost).abs() < 1e-12,
                        "a/w = {ratio}, {deg} deg: lost {} vs {lost}",
                        1.0 - eta
                    );
                }
            }
        }
    }

    // data/reference/clipping.csv: the definition integrated by mpmath at 40 digits
    // (data/reference/make_clipping_table.py, command in its header), 99 cases from a mirror a
    // twentieth of the beam to six times it, 0 to 89 deg: both fractions to 1e-12 relative.
    #[test]
    fn matches_the_mpmath_table() {
        let table = include_str!("../../data/reference/clipping.csv");
        let mut rows = 0;
        for line in table.lines().skip(1) {
            let f: Vec<f64> = line.split(',').map(|x| x.parse().unwrap()).collect();
            let (ratio, theta) = (f[0], f[1] * PI / 180.0);
            let eta = tilted_mirror_fraction(ratio, 1.0, theta);
            let lost = 1.0 - eta;
            assert!(
                ((eta - f[2]) / f[2]).abs() < 1e-12,
                "a/w = {}, {} deg: caught {eta} vs {}",
                f[0],
                f[1],
                f[2]
            );
            // The lost fraction: relative 1e-12, or absolute 1e-12 (what is asked of it) when
            // it is so small that eta is taken as 1 or 1 - eta cannot resolve it.
            assert!(
                ((lost - f[3]) / f[3]).abs() < 1e-12 || (lost - f[3]).abs() < 1e-12,
                "a/w = {}, {} deg: lost {lost} vs {}",
                f[0],
                f[1],
                f[3]
            );
            rows += 1;
        }
        assert_eq!(rows, 99);
    }

    // Tilt can only lose light, and the loss grows with the tilt; the mirror tilted the other
    // way catches the same.
    #[test]
    fn monotone_and_even() {
        let mut last = 1.0;
        for deg in 0..=89 {
            let theta = deg as f64 * PI / 180.0;
            let eta = tilted_mirror_fraction(1.2, 1.0, theta);
            assert!(eta <= last + 1e-15, "{deg} deg: {eta} > {last}");
            assert_eq!(eta, tilted_mirror_fraction(1.2, 1.0, -theta));
            last = eta;
        }
    }

    // The radius for 99 % inverts the fraction; at normal incidence it is 1.517 w [trade].
    #[test]
    fn radius_for_99_percent() {
        assert_relative_eq!(
            radius_for_fraction(0.99, 1.0, 0.0),
            1.5174,
            max_relative = 1e-4
        );
        for deg in [0.0, 20.0, 45.0, 70.0] {
            let theta = deg * PI / 180.0;
            let a = radius_for_fraction(0.99, 2e-3, theta);
            assert_relative_eq!(
                tilted_mirror_fraction(a, 2e-3, theta),
                0.99,
                max_relative = 1e-10
            );
        }
    }

    // Derivatives through the Taylor numbers match central differences in a and in theta (the
    // series and the trapezoid are differentiated term by term).
    #[test]
    fn derivatives_follow_the_value() {
        use crate::scalar::Taylor2 as Taylor;
        for (a, theta) in [(1.0, 0.7), (0.5, 0.3), (1.4, 1.3), (2.5, 0.2)] {
            let t = tilted_mirror_fraction(
                Taylor::seeded(a, true, false),
                Taylor::cst(1.0),
                Taylor::seeded(theta, false, true),
            );
            let h = 1e-5;
            let f = |a: f64, th: f64| tilted_mirror_fraction(a, 1.0, th);
            let d_a = (f(a + h, theta) - f(a - h, theta)) / (2.0 * h);
            let d_theta = (f(a, theta + h) - f(a, theta - h)) / (2.0 * h);
            assert!(
                (t.d_s() - d_a).abs() < 1e-9,
                "d/da at {a}, {theta}: {} vs {d_a}",
                t.d_s()
            );
            assert!(
                (t.d_t() - d_theta).abs() < 1e-9,
                "d/dtheta at {a}, {theta}: {} vs {d_theta}",
                t.d_t()
            );
        }
    }
}
