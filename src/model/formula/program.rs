//! Compiled formulas: a stack program over column indices, evaluated a block of trials at a
//! time (one dispatch per operation per block, not per trial).

use super::{Expr, FormulaError, Func};
use crate::scalar::Scalar;

/// One operation of a compiled formula.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Op {
    /// Push a constant.
    Const(f64),
    /// Push a column (an input quantity or an earlier measurand).
    Load(usize),
    /// Negate the top.
    Neg,
    /// Pop b, a; push a + b.
    Add,
    /// Pop b, a; push a - b.
    Sub,
    /// Pop b, a; push a * b.
    Mul,
    /// Pop b, a; push a / b.
    Div,
    /// Pop b, a; push a ^ b.
    Pow,
    /// Raise the top to an integer power.
    PowI(i32),
    /// Apply a one-argument function to the top.
    Apply(Func),
    /// Pop x, y; push atan2(y, x).
    Atan2,
    /// Pop b, a; push min(a, b).
    Min,
    /// Pop b, a; push max(a, b).
    Max,
}

/// A compiled formula.
#[derive(Clone, Debug, PartialEq)]
pub struct Program {
    ops: Vec<Op>,
    depth: usize,
}

/// A name a formula refers to: the column it resolved to and where it stands in the text.
#[derive(Clone, Debug, PartialEq)]
pub struct Reference {
    /// The column index.
    pub(crate) column: usize,
    /// The name.
    pub(crate) name: String,
    /// Character position in the formula.
    pub(crate) position: usize,
    /// Character length.
    pub(crate) length: usize,
}

/// Compile a parsed formula. `resolve` maps a name to its column, or returns `Err` with the
/// message to show (unknown name, with a suggestion). Constant subexpressions are folded;
/// integer powers become repeated multiplication.
pub fn compile(
    expr: &Expr,
    resolve: &dyn Fn(&str) -> Result<usize, String>,
) -> Result<(Program, Vec<Reference>), FormulaError> {
    let mut ops = Vec::new();
    let mut refs = Vec::new();
    emit(&fold(expr), resolve, &mut ops, &mut refs)?;
    let mut depth = 0usize;
    let mut max_depth = 0usize;
    for op in &ops {
        match op {
            Op::Const(_) | Op::Load(_) => depth += 1,
            Op::Add | Op::Sub | Op::Mul | Op::Div | Op::Pow | Op::Atan2 | Op::Min | Op::Max => {
                depth -= 1
            }
            Op::Neg | Op::PowI(_) | Op::Apply(_) => {}
        }
        max_depth = max_depth.max(depth);
    }
    debug_assert_eq!(depth, 1);
    Ok((
        Program {
            ops,
            depth: max_depth,
        },
        refs,
    ))
}

fn apply1(f: Func, x: f64) -> f64 {
    apply1_scalar(f, x)
}

#[inline(always)]
fn apply1_scalar<T: Scalar>(f: Func, x: T) -> T {
    match f {
        Func::Sqrt => x.sqrt(),
        Func::Exp => x.exp(),
        Func::Ln => x.ln(),
        Func::Log10 => x.log10(),
        Func::Sin => x.sin(),
        Func::Cos => x.cos(),
        Func::Tan => x.tan(),
        Func::Asin => x.asin(),
        Func::Acos => x.acos(),
        Func::Atan => x.atan(),
        Func::Abs => x.abs(),
        Func::Atan2 | Func::Min | Func::Max => unreachable!("binary functions are ops"),
    }
}

fn binary(op: char, a: f64, b: f64) -> f64 {
    match op {
        '+' => a + b,
        '-' => a - b,
        '*' => a * b,
        '/' => a / b,
        _ => a.powf(b),
    }
}

/// Fold constant subexpressions (only where the folded value is finite, so that a formula
/// such as `1/0` still fails at run time with the trial's inputs named).
fn fold(e: &Expr) -> Expr {
    match e {
        Expr::Number(_) | Expr::Name(..) => e.clone(),
        Expr::Constant(c, ..) => Expr::Number(c.value),
        Expr::Neg(x) => match fold(x) {
            Expr::Number(v) => Expr::Number(-v),
            other => Expr::Neg(Box::new(other)),
        },
        Expr::Binary(op, a, b) => {
            let (a, b) = (fold(a), fold(b));
            if let (Expr::Number(x), Expr::Number(y)) = (&a, &b) {
                let v = binary(*op, *x, *y);
                if v.is_finite() {
                    return Expr::Number(v);
                }
            }
            Expr::Binary(*op, Box::new(a), Box::new(b))
        }
        Expr::Call(f, args) => {
            let args: Vec<Expr> = args.iter().map(fold).collect();
            let values: Option<Vec<f64>> = args
                .iter()
                .map(|a| match a {
                    Expr::Number(v) => Some(*v),
                    _ => None,
                })
                .collect();
            if let Some(v) = values {
                let r = match f {
                    Func::Atan2 => v[0].atan2(v[1]),
                    Func::Min => v.iter().copied().fold(f64::INFINITY, f64::min),
                    Func::Max => v.iter().copied().fold(f64::NEG_INFINITY, f64::max),
                    _ => apply1(*f, v[0]),
                };
                if r.is_finite() {
                    return Expr::Number(r);
                }
            }
            Expr::Call(*f, args)
        }
    }
}

fn emit(
    e: &Expr,
    resolve: &dyn Fn(&str) -> Result<usize, String>,
    ops: &mut Vec<Op>,
    refs: &mut Vec<Reference>,
) -> Result<(), FormulaError> {
    match e {
        Expr::Number(v) => ops.push(Op::Const(*v)),
        Expr::Constant(c, ..) => ops.push(Op::Const(c.value)),
        Expr::Name(name, pos, len) => {
            let column = resolve(name).map_err(|m| FormulaError::at(*pos, *len, m))?;
            refs.push(Reference {
                column,
                name: name.clone(),
                position: *pos,
                length: *len,
            });
            ops.push(Op::Load(column));
        }
        Expr::Neg(x) => {
            emit(x, resolve, ops, refs)?;
            ops.push(Op::Neg);
        }
        Expr::Binary('^', a, b) => {
            emit(a, resolve, ops, refs)?;
            match **b {
                Expr::Number(n) if n.fract() == 0.0 && n.abs() <= 64.0 => {
                    ops.push(Op::PowI(n as i32))
                }
                Expr::Number(0.5) => ops.push(Op::Apply(Func::Sqrt)),
                _ => {
                    emit(b, resolve, ops, refs)?;
                    ops.push(Op::Pow);
                }
            }
        }
        Expr::Binary(op, a, b) => {
            emit(a, resolve, ops, refs)?;
            emit(b, resolve, ops, refs)?;
            ops.push(match op {
                '+' => Op::Add,
                '-' => Op::Sub,
                '*' => Op::Mul,
                _ => Op::Div,
            });
        }
        Expr::Call(f, args) => {
            emit(&args[0], resolve, ops, refs)?;
            for a in &args[1..] {
                emit(a, resolve, ops, refs)?;
                ops.push(match f {
                    Func::Atan2 => Op::Atan2,
                    Func::Min => Op::Min,
                    _ => Op::Max,
                });
            }
            if args.len() == 1 {
                ops.push(Op::Apply(*f));
            }
        }
    }
    Ok(())
}

impl Program {
    /// The operations, for inspection and tests.
    #[cfg(test)]
    pub(crate) fn ops(&self) -> &[Op] {
        &self.ops
    }

    /// The stack depth the program needs (in blocks).
    pub fn depth(&self) -> usize {
        self.depth
    }

    /// Evaluate on `n` trials. Column `c` of the trials is `columns[c * stride .. c * stride + n]`;
    /// `stack` must hold at least `depth() * stride` values. The result is left in
    /// `stack[..n]`.
    #[inline]
    pub fn eval_block<T: Scalar>(&self, columns: &[T], stride: usize, n: usize, stack: &mut [T]) {
        let mut sp = 0usize;
        for op in &self.ops {
            match *op {
                Op::Const(v) => {
                    stack[sp * stride..sp * stride + n].fill(T::cst(v));
                    sp += 1;
                }
                Op::Load(c) => {
                    stack[sp * stride..sp * stride + n]
                        .copy_from_slice(&columns[c * stride..c * stride + n]);
                    sp += 1;
                }
                Op::Neg => {
                    for x in &mut stack[(sp - 1) * stride..(sp - 1) * stride + n] {
                        *x = -*x;
                    }
                }
                Op::PowI(k) => {
                    for x in &mut stack[(sp - 1) * stride..(sp - 1) * stride + n] {
                        *x = x.powi(k);
                    }
                }
                Op::Apply(f) => {
                    for x in &mut stack[(sp - 1) * stride..(sp - 1) * stride + n] {
                        *x = apply1_scalar(f, *x);
                    }
                }
                Op::Add => binary_block(stack, &mut sp, stride, n, |a, b| a + b),
                Op::Sub => binary_block(stack, &mut sp, stride, n, |a, b| a - b),
                Op::Mul => binary_block(stack, &mut sp, stride, n, |a, b| a * b),
                Op::Div => binary_block(stack, &mut sp, stride, n, |a, b| a / b),
                Op::Pow => binary_block(stack, &mut sp, stride, n, |a, b| a.powf(b)),
                Op::Atan2 => binary_block(stack, &mut sp, stride, n, |y, x| y.atan2(x)),
                Op::Min => binary_block(stack, &mut sp, stride, n, |a, b| a.min(b)),
                Op::Max => binary_block(stack, &mut sp, stride, n, |a, b| a.max(b)),
            }
        }
    }
}

#[inline(always)]
fn binary_block<T: Scalar>(
    stack: &mut [T],
    sp: &mut usize,
    stride: usize,
    n: usize,
    f: impl Fn(T, T) -> T,
) {
    let (lower, upper) = stack.split_at_mut((*sp - 1) * stride);
    let a = &mut lower[(*sp - 2) * stride..(*sp - 2) * stride + n];
    let b = &upper[..n];
    for (x, y) in a.iter_mut().zip(b) {
        *x = f(*x, *y);
    }
    *sp -= 1;
}

#[cfg(test)]
mod tests {
    use super::super::parse;
    use super::*;
    use approx::assert_relative_eq;

    fn eval(text: &str, vars: &[(&str, f64)]) -> f64 {
        let names: Vec<&str> = vars.iter().map(|v| v.0).collect();
        let resolve = |n: &str| {
            names
                .iter()
                .position(|x| *x == n)
                .ok_or_else(|| format!("unknown `{n}`"))
        };
        let (p, _) = compile(&parse(text).unwrap(), &resolve).unwrap();
        let cols: Vec<f64> = vars.iter().map(|v| v.1).collect();
        let mut stack = vec![0.0; p.depth().max(1)];
        p.eval_block(&cols, 1, 1, &mut stack);
        stack[0]
    }

    #[test]
    fn evaluates_like_rust() {
        let (a, b) = (1.7, -0.3);
        let v = [("a", a), ("b", b)];
        assert_relative_eq!(eval("a + b * 2", &v), a + b * 2.0);
        assert_relative_eq!(eval("-a^2", &v), -(a * a));
        assert_relative_eq!(eval("(a - b) / (a + b)", &v), (a - b) / (a + b));
        assert_relative_eq!(eval("a^b", &v), a.powf(b));
        assert_relative_eq!(eval("a^0.5", &v), a.sqrt());
        assert_relative_eq!(eval("2^3^2", &v), 512.0);
        assert_relative_eq!(
            eval("sqrt(a) + exp(b) - ln(a) + log10(a)", &v),
            a.sqrt() + b.exp() - a.ln() + a.log10()
        );
        assert_relative_eq!(
            eval("sin(a)*cos(b)/tan(a)", &v),
            a.sin() * b.cos() / a.tan()
        );
        assert_relative_eq!(
            eval("asin(b) + acos(b) + atan(a)", &v),
            b.asin() + b.acos() + a.atan()
        );
        assert_relative_eq!(eval("atan2(b, a)", &v), b.atan2(a));
        assert_relative_eq!(
            eval("abs(b) + min(a, b, 0) + max(a, b)", &v),
            b.abs() + b + a
        );
        assert_relative_eq!(eval("2*pi*a", &v), 2.0 * std::f64::consts::PI * a);
        assert_relative_eq!(eval("1.5e-3 * a", &v), 1.5e-3 * a);
    }

    #[test]
    fn folds_constants_and_tracks_references() {
        let resolve = |n: &str| {
            if n == "x" {
                Ok(0)
            } else {
                Err(format!("unknown `{n}`"))
            }
        };
        let (p, refs) = compile(&parse("2*pi*x + 3^2").unwrap(), &resolve).unwrap();
        assert_eq!(p.ops().len(), 5);
        assert_eq!(refs.len(), 1);
        assert_eq!(refs[0].position, 5);
        let err = compile(&parse("x + y").unwrap(), &resolve).unwrap_err();
        assert_eq!(err.position, 4);
    }

    #[test]
    fn block_evaluation_matches_point_evaluation() {
        let resolve = |n: &str| match n {
            "x" => Ok(0),
            "y" => Ok(1),
            _ => Err(String::new()),
        };
        let (p, _) = compile(&parse("x*y - sqrt(x) / (1 + y^2)").unwrap(), &resolve).unwrap();
        let stride = 8;
        let n = 5;
        let mut cols = vec![0.0; 2 * stride];
        for i in 0..n {
            cols[i] = 1.0 + i as f64;
            cols[stride + i] = 0.5 * i as f64 - 1.0;
        }
        let mut stack = vec![0.0; p.depth() * stride];
        p.eval_block(&cols, stride, n, &mut stack);
        for i in 0..n {
            let (x, y) = (cols[i], cols[stride + i]);
            assert_relative_eq!(stack[i], x * y - x.sqrt() / (1.0 + y * y));
        }
    }
}
