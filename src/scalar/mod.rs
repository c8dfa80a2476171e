//! The number type that measurement models are written over.
//!
//! Models and physics functions are generic over [`Scalar`], so one piece of model code serves
//! both the Monte Carlo trials (`f64`) and the law of propagation of uncertainty, which evaluates
//! the same code on truncated Taylor numbers to get exact derivatives (forward-mode automatic
//! differentiation; see `analysis::lpu`).

use std::ops::{Add, Div, Mul, Neg, Sub};

/// A real number type: `f64`, or a number that also carries derivatives.
pub trait Scalar:
    Copy
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + Send
    + Sync
    + 'static
{
    /// A constant (all derivatives zero).
    fn cst(x: f64) -> Self;
    /// The value part.
    fn value(&self) -> f64;
    /// Square root.
    fn sqrt(self) -> Self;
    /// Exponential.
    fn exp(self) -> Self;
    /// Natural logarithm.
    fn ln(self) -> Self;
    /// Sine.
    fn sin(self) -> Self;
    /// Cosine.
    fn cos(self) -> Self;
    /// Tangent.
    fn tan(self) -> Self;
    /// Inverse sine.
    fn asin(self) -> Self;
    /// Inverse cosine.
    fn acos(self) -> Self;
    /// Inverse tangent.
    fn atan(self) -> Self;
    /// Four-quadrant inverse tangent of self / x.
    fn atan2(self, x: Self) -> Self;
    /// Power with a real exponent.
    fn powf(self, e: Self) -> Self;
    /// Power with an integer exponent.
    fn powi(self, n: i32) -> Self;
    /// Base-10 logarithm.
    fn log10(self) -> Self {
        self.ln() * Self::cst(std::f64::consts::LOG10_E)
    }
    /// Absolute value (derivative taken on the side of the value's sign).
    fn abs(self) -> Self {
        if self.value() < 0.0 { -self } else { self }
    }
    /// The smaller of two (by value).
    fn min(self, other: Self) -> Self {
        if other.value() < self.value() {
            other
        } else {
            self
        }
    }
    /// The larger of two (by value).
    fn max(self, other: Self) -> Self {
        if other.value() > self.value() {
            other
        } else {
            self
        }
    }
    /// exp(x) - 1, accurate for small x.
    fn exp_m1(self) -> Self;
}

impl Scalar for f64 {
    #[inline(always)]
    fn cst(x: f64) -> Self {
        x
    }
    #[inline(always)]
    fn value(&self) -> f64 {
        *self
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        f64::sqrt(self)
    }
    #[inline(always)]
    fn exp(self) -> Self {
        f64::exp(self)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        f64::ln(self)
    }
    #[inline(always)]
    fn sin(self) -> Self {
        f64::sin(self)
    }
    #[inline(always)]
    fn cos(self) -> Self {
        f64::cos(self)
    }
    #[inline(always)]
    fn tan(self) -> Self {
        f64::tan(self)
    }
    #[inline(always)]
    fn asin(self) -> Self {
        f64::asin(self)
    }
    #[inline(always)]
    fn acos(self) -> Self {
        f64::acos(self)
    }
    #[inline(always)]
    fn atan(self) -> Self {
        f64::atan(self)
    }
    #[inline(always)]
    fn atan2(self, x: Self) -> Self {
        f64::atan2(self, x)
    }
    #[inline(always)]
    fn powf(self, e: Self) -> Self {
        f64::powf(self, e)
    }
    #[inline(always)]
    fn powi(self, n: i32) -> Self {
        f64::powi(self, n)
    }
    #[inline(always)]
    fn log10(self) -> Self {
        f64::log10(self)
    }
    #[inline(always)]
    fn abs(self) -> Self {
        f64::abs(self)
    }
    #[inline(always)]
    fn min(self, other: Self) -> Self {
        f64::min(self, other)
    }
    #[inline(always)]
    fn max(self, other: Self) -> Self {
        f64::max(self, other)
    }
    #[inline(always)]
    fn exp_m1(self) -> Self {
        f64::exp_m1(self)
    }
}

mod taylor;
pub(crate) use taylor::Taylor2;
