//! Truncated bivariate Taylor polynomials: exact first, second and third derivatives of a model
//! along two input directions by forward-mode automatic differentiation.
//!
//! A [`Taylor2`] holds the coefficients of f(x + s e_i + t e_j) = sum c[a][b] s^a t^b for
//! a + b <= 3. Arithmetic truncates products at total degree 3; an elementary function phi is
//! applied by composition, phi(f0 + d) = phi(f0) + phi'(f0) d + phi''(f0) d^2/2 + phi'''(f0) d^3/6
//! with d the part of degree >= 1 (d^4 = 0). From the coefficients:
//! df/dxi = c[1][0], d2f/dxi dxj = c[1][1], d3f/dxi dxj^2 = 2 c[1][2] (and with both directions on
//! the same input, the same formulas give the pure derivatives).

use super::Scalar;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// Index of the coefficient of s^a t^b.
const fn idx(a: usize, b: usize) -> usize {
    match (a, b) {
        (0, 0) => 0,
        (1, 0) => 1,
        (0, 1) => 2,
        (2, 0) => 3,
        (1, 1) => 4,
        (0, 2) => 5,
        (3, 0) => 6,
        (2, 1) => 7,
        (1, 2) => 8,
        _ => 9,
    }
}

const DEGREES: [(usize, usize); 10] = [
    (0, 0),
    (1, 0),
    (0, 1),
    (2, 0),
    (1, 1),
    (0, 2),
    (3, 0),
    (2, 1),
    (1, 2),
    (0, 3),
];

/// The product terms (left index, right index, result index) of the truncated product.
const fn product_terms() -> ([(u8, u8, u8); 100], usize) {
    let mut out = [(0u8, 0u8, 0u8); 100];
    let mut n = 0;
    let mut i = 0;
    while i < 10 {
        let mut j = 0;
        while j < 10 {
            let (a1, b1) = DEGREES[i];
            let (a2, b2) = DEGREES[j];
            if a1 + a2 + b1 + b2 <= 3 {
                out[n] = (i as u8, j as u8, idx(a1 + a2, b1 + b2) as u8);
                n += 1;
            }
            j += 1;
        }
        i += 1;
    }
    (out, n)
}

const PRODUCT: ([(u8, u8, u8); 100], usize) = product_terms();

/// A bivariate Taylor polynomial of total degree 3 (see the module documentation).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Taylor2 {
    /// Coefficients in the order (0,0), (1,0), (0,1), (2,0), (1,1), (0,2), (3,0), (2,1), (1,2),
    /// (0,3) of (power of s, power of t).
    pub(crate) c: [f64; 10],
}

impl Taylor2 {
    /// x + s (direction `first`) + t (direction `second`), either or both may be set.
    pub(crate) fn seeded(x: f64, first: bool, second: bool) -> Self {
        let mut c = [0.0; 10];
        c[0] = x;
        if first {
            c[1] = 1.0;
        }
        if second {
            c[2] = 1.0;
        }
        Taylor2 { c }
    }

    /// df/dxi (direction s).
    pub(crate) fn d_s(&self) -> f64 {
        self.c[1]
    }

    /// df/dxj (direction t).
    pub(crate) fn d_t(&self) -> f64 {
        self.c[2]
    }

    /// d2f / dxi dxj.
    pub(crate) fn d_st(&self) -> f64 {
        self.c[4]
    }

    /// d3f / dxi dxj^2.
    pub(crate) fn d_stt(&self) -> f64 {
        2.0 * self.c[8]
    }

    /// d3f / dxi^2 dxj.
    pub(crate) fn d_sst(&self) -> f64 {
        2.0 * self.c[7]
    }

    /// phi(self) given phi and its first three derivatives at the value.
    fn compose(self, d0: f64, d1: f64, d2: f64, d3: f64) -> Self {
        let mut d = self;
        d.c[0] = 0.0;
        let d2p = d * d;
        let d3p = d2p * d;
        let mut out = [0.0; 10];
        out[0] = d0;
        for (k, o) in out.iter_mut().enumerate().skip(1) {
            *o = d1 * d.c[k] + 0.5 * d2 * d2p.c[k] + d3 / 6.0 * d3p.c[k];
        }
        Taylor2 { c: out }
    }

    fn is_constant(&self) -> bool {
        self.c[1..].iter().all(|x| *x == 0.0)
    }
}

impl Add for Taylor2 {
    type Output = Self;
    fn add(self, o: Self) -> Self {
        let mut c = self.c;
        for (x, y) in c.iter_mut().zip(o.c) {
            *x += y;
        }
        Taylor2 { c }
    }
}

impl Sub for Taylor2 {
    type Output = Self;
    fn sub(self, o: Self) -> Self {
        let mut c = self.c;
        for (x, y) in c.iter_mut().zip(o.c) {
            *x -= y;
        }
        Taylor2 { c }
    }
}

impl Neg for Taylor2 {
    type Output = Self;
    fn neg(self) -> Self {
        Taylor2 {
            c: self.c.map(|x| -x),
        }
    }
}

impl Mul for Taylor2 {
    type Output = Self;
    fn mul(self, o: Self) -> Self {
        let mut c = [0.0; 10];
        let (terms, n) = PRODUCT;
        for &(i, j, k) in &terms[..n] {
            c[k as usize] += self.c[i as usize] * o.c[j as usize];
        }
        Taylor2 { c }
    }
}

impl Div for Taylor2 {
    type Output = Self;
    fn div(self, o: Self) -> Self {
        let g = o.c[0];
        if o.is_constant() {
            return Taylor2 {
                c: self.c.map(|x| x / g),
            };
        }
        let r = 1.0 / g;
        self * o.compose(r, -r * r, 2.0 * r * r * r, -6.0 * r * r * r * r)
    }
}

impl Scalar for Taylor2 {
    fn cst(x: f64) -> Self {
        let mut c = [0.0; 10];
        c[0] = x;
        Taylor2 { c }
    }
    fn value(&self) -> f64 {
        self.c[0]
    }
    fn sqrt(self) -> Self {
        let x = self.c[0];
        let s = x.sqrt();
        self.compose(s, 0.5 / s, -0.25 / (x * s), 0.375 / (x * x * s))
    }
    fn exp(self) -> Self {
        let e = self.c[0].exp();
        self.compose(e, e, e, e)
    }
    fn exp_m1(self) -> Self {
        let x = self.c[0];
        let e = x.exp();
        self.compose(x.exp_m1(), e, e, e)
    }
    fn ln(self) -> Self {
        let x = self.c[0];
        self.compose(x.ln(), 1.0 / x, -1.0 / (x * x), 2.0 / (x * x * x))
    }
    fn sin(self) -> Self {
        let (s, c) = self.c[0].sin_cos();
        self.compose(s, c, -s, -c)
    }
    fn cos(self) -> Self {
        let (s, c) = self.c[0].sin_cos();
        self.compose(c, -s, -c, s)
    }
    fn tan(self) -> Self {
        let t = self.c[0].tan();
        let sec2 = 1.0 + t * t;
        self.compose(t, sec2, 2.0 * t * sec2, 2.0 * sec2 * (1.0 + 3.0 * t * t))
    }
    fn asin(self) -> Self {
        let x = self.c[0];
        let q = 1.0 - x * x;
        let r = 1.0 / q.sqrt();
        self.compose(x.asin(), r, x * r / q, (1.0 + 2.0 * x * x) * r / (q * q))
    }
    fn acos(self) -> Self {
        let x = self.c[0];
        let q = 1.0 - x * x;
        let r = 1.0 / q.sqrt();
        self.compose(x.acos(), -r, -x * r / q, -(1.0 + 2.0 * x * x) * r / (q * q))
    }
    fn atan(self) -> Self {
        let x = self.c[0];
        let q = 1.0 + x * x;
        self.compose(
            x.atan(),
            1.0 / q,
            -2.0 * x / (q * q),
            (6.0 * x * x - 2.0) / (q * q * q),
        )
    }
    fn atan2(self, x: Self) -> Self {
        let (y0, x0) = (self.c[0], x.c[0]);
        // atan(y/x) and -atan(x/y) differ from atan2 by a constant; pick the better conditioned.
        let z = if x0.abs() >= y0.abs() {
            (self / x).atan()
        } else {
            -(x / self).atan()
        };
        let mut out = z;
        out.c[0] = y0.atan2(x0);
        out
    }
    fn powf(self, e: Self) -> Self {
        if e.is_constant() {
            let (x, n) = (self.c[0], e.c[0]);
            return self.compose(
                x.powf(n),
                n * x.powf(n - 1.0),
                n * (n - 1.0) * x.powf(n - 2.0),
                n * (n - 1.0) * (n - 2.0) * x.powf(n - 3.0),
            );
        }
        (e * self.ln()).exp()
    }
    fn powi(self, n: i32) -> Self {
        let x = self.c[0];
        let m = f64::from(n);
        // k-th derivative: n (n-1) ... (n-k+1) x^(n-k), zero once the falling factorial is
        // (so x^2 at 0 has no 0 * infinity in its third derivative).
        let d = |k: i32| {
            let falling: f64 = (0..k).map(|j| m - f64::from(j)).product();
            if falling == 0.0 {
                0.0
            } else {
                falling * x.powi(n - k)
            }
        };
        self.compose(x.powi(n), d(1), d(2), d(3))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// f(x, y) = x^3 y^2 + sin(x y) / y: derivatives by hand.
    fn f<T: Scalar>(x: T, y: T) -> T {
        x.powi(3) * y * y + (x * y).sin() / y
    }

    // Analytic derivatives of f (calc by hand).
    // Integer powers at zero: x^2 has derivatives 0, 2, 0 (no 0 * infinity from x^-1).
    #[test]
    fn integer_powers_at_zero() {
        let r = Taylor2::seeded(0.0, true, true).powi(2);
        assert_eq!(
            (r.value(), r.d_s(), r.d_st(), r.d_stt()),
            (0.0, 0.0, 2.0, 0.0)
        );
        let r = Taylor2::seeded(0.0, true, true).powi(3);
        assert_eq!((r.d_s(), r.d_st(), r.d_stt()), (0.0, 0.0, 6.0));
    }

    #[test]
    fn mixed_derivatives_are_exact() {
        let (x0, y0) = (0.7, 1.3);
        let r = f(
            Taylor2::seeded(x0, true, false),
            Taylor2::seeded(y0, false, true),
        );
        let xy = x0 * y0;
        assert_relative_eq!(
            r.value(),
            x0.powi(3) * y0 * y0 + xy.sin() / y0,
            max_relative = 1e-14
        );
        // df/dx = 3x^2 y^2 + cos(xy)
        assert_relative_eq!(
            r.d_s(),
            3.0 * x0 * x0 * y0 * y0 + xy.cos(),
            max_relative = 1e-14
        );
        // df/dy = 2x^3 y + x cos(xy)/y - sin(xy)/y^2
        assert_relative_eq!(
            r.d_t(),
            2.0 * x0.powi(3) * y0 + x0 * xy.cos() / y0 - xy.sin() / (y0 * y0),
            max_relative = 1e-13
        );
        // d2f/dxdy = 6x^2 y - x sin(xy)
        assert_relative_eq!(
            r.d_st(),
            6.0 * x0 * x0 * y0 - x0 * xy.sin(),
            max_relative = 1e-13
        );
        // d3f/dxdy^2 = 6x^2 - x^2 cos(xy)
        assert_relative_eq!(
            r.d_stt(),
            6.0 * x0 * x0 - x0 * x0 * xy.cos(),
            max_relative = 1e-13
        );
        // d3f/dx^2dy = 12 x y - sin(xy) - xy cos(xy)
        assert_relative_eq!(
            r.d_sst(),
            12.0 * x0 * y0 - xy.sin() - xy * xy.cos(),
            max_relative = 1e-13
        );
    }

    // Pure derivatives (both directions on one input) against central differences with
    // h = 1e-3 (truncation error O(h^2), hence the tolerances).
    #[test]
    fn elementary_functions_match_finite_differences() {
        type Case = (&'static str, fn(Taylor2) -> Taylor2, fn(f64) -> f64);
        let fs: Vec<Case> = vec![
            ("sqrt", |x| x.sqrt(), f64::sqrt),
            ("exp", |x| x.exp(), f64::exp),
            ("ln", |x| x.ln(), f64::ln),
            ("tan", |x| x.tan(), f64::tan),
            ("asin", |x| x.asin(), f64::asin),
            ("acos", |x| x.acos(), f64::acos),
            ("atan", |x| x.atan(), f64::atan),
            ("expm1", |x| x.exp_m1(), f64::exp_m1),
            ("powi", |x| x.powi(-3), |x| x.powi(-3)),
            ("powi2", |x| x.powi(2), |x| x.powi(2)),
            ("powf", |x| x.powf(Taylor2::cst(2.5)), |x| x.powf(2.5)),
            (
                "div",
                |x| Taylor2::cst(1.0) / (x * x + Taylor2::cst(1.0)),
                |x| 1.0 / (x * x + 1.0),
            ),
            ("atan2", |x| x.atan2(Taylor2::cst(0.3)), |x| x.atan2(0.3)),
        ];
        let x0 = 0.41;
        let h = 1e-3;
        for (name, tf, ff) in fs {
            let r = tf(Taylor2::seeded(x0, true, true));
            let d1 = (ff(x0 + h) - ff(x0 - h)) / (2.0 * h);
            let d2 = (ff(x0 + h) - 2.0 * ff(x0) + ff(x0 - h)) / (h * h);
            let d3 = (ff(x0 + 2.0 * h) - 2.0 * ff(x0 + h) + 2.0 * ff(x0 - h) - ff(x0 - 2.0 * h))
                / (2.0 * h * h * h);
            assert_relative_eq!(r.value(), ff(x0), max_relative = 1e-14);
            assert_relative_eq!(r.d_s(), d1, max_relative = 1e-4);
            assert_relative_eq!(r.d_st(), d2, max_relative = 1e-3);
            assert!(
                (r.d_stt() - d3).abs() < 2e-3 * (1.0 + d3.abs()),
                "{name}: {} vs {d3}",
                r.d_stt()
            );
        }
    }
}
