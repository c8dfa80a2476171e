//! User formulas: `formula = "(mRc + dmRc) * (1 + (rho_a - rho_a0) * (1/rho_W - 1/rho_R)) - m_nom"`.
//!
//! The language: numbers, names of input quantities and other measurands, `+ - * / ^`
//! (`^` binds tightest and to the right; `-x^2` is `-(x^2)`), parentheses, unary minus, the
//! constant `pi`, and the functions `sqrt exp ln log10 sin cos tan asin acos atan abs` (one
//! argument), `atan2(y, x)`, and `min`, `max` (two or more), and the physical constants `c`, `h`,
//! `k_B`, `g_n`, `epsilon_0`, `mu_0` (SI values, [`CONSTANTS`]); where every name has a unit, the
//! formula's dimension is carried through it ([`infer_dimension`]). A formula is parsed and checked once
//! ([`parse`], then [`compile`]) into a [`Program`]: a short stack program with no names and no
//! allocation, evaluated over whole blocks of trials.
//!
//! To add a function: add a variant to [`Func`], its name and arity in [`Func::from_name`], its
//! value in `program.rs` (`apply1`, or a binary op), and a line in the README's formula table.

mod constants;
mod dimension;
mod order;
mod parser;
mod program;

pub use constants::{CONSTANTS, FormulaConstant, constant};
pub use dimension::{Dim, infer as infer_dimension, same as same_dimension};
pub(crate) use order::topological_order;
pub use parser::{Expr, Func, MAX_HEIGHT, parse};
pub use program::{Op, Program, Reference, compile};

/// A formula error at a character position (0-based) of the formula text.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{message}")]
pub struct FormulaError {
    /// 0-based character index into the formula.
    pub position: usize,
    /// Number of characters the error spans (at least 1).
    pub(crate) length: usize,
    /// What is wrong.
    pub(crate) message: String,
}

impl FormulaError {
    pub(crate) fn at(position: usize, length: usize, message: impl Into<String>) -> Self {
        FormulaError {
            position,
            length: length.max(1),
            message: message.into(),
        }
    }
}

/// Whether a name is taken by the formula language (`pi` and the physical constants), so that
/// no input or measurand may have it.
pub(crate) fn reserved(name: &str) -> bool {
    name == "pi" || constant(name).is_some()
}
