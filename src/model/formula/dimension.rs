//! The dimension of a formula's value, carried through its operations where every name in it
//! has one: products and quotients multiply dimensions, integer powers raise them, a sum needs
//! terms of one dimension, trigonometric functions give pure numbers and inverse ones angles.
//! The radian counts as 1 when dimensions are compared (SI Brochure 2019, 2.3.3), so an arc
//! length `L * phi` is a length.

use super::{Expr, FormulaError, Func};
use crate::units::Dimension;

/// What is known of the dimension of a value.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Dim {
    /// Known.
    Of(Dimension),
    /// A number written in the formula: a pure number in a product, and taken to be of the
    /// other term's dimension in a sum (`x + 1` with x in metres stays in metres).
    Number,
    /// Not known: a name without a unit, or a power with an exponent that is not a number.
    Unknown,
}

/// The dimension with its radians dropped, for comparison.
fn without_angle(d: Dimension) -> Dimension {
    let mut e = d.0;
    e[7] = 0;
    Dimension(e)
}

/// Whether two dimensions agree (the radian counting as 1).
pub fn same(a: Dimension, b: Dimension) -> bool {
    without_angle(a) == without_angle(b)
}

/// Where an expression starts in the formula (its first name or constant), for messages.
fn position(e: &Expr) -> (usize, usize) {
    match e {
        Expr::Name(_, p, l) | Expr::Constant(_, p, l) => (*p, *l),
        Expr::Neg(x) => position(x),
        Expr::Binary(_, a, b) => {
            let p = position(a);
            if p.1 > 0 { p } else { position(b) }
        }
        Expr::Call(_, args) => args
            .iter()
            .map(position)
            .find(|p| p.1 > 0)
            .unwrap_or((0, 0)),
        Expr::Number(_) => (0, 0),
    }
}

/// A number the expression is, if it is written as one (for exponents).
fn literal(e: &Expr) -> Option<f64> {
    match e {
        Expr::Number(v) => Some(*v),
        Expr::Neg(x) => literal(x).map(|v| -v),
        _ => None,
    }
}

/// `d` raised to the power `n`, when every exponent comes out whole.
fn power(d: Dimension, n: f64) -> Option<Dimension> {
    let mut out = [0i8; 8];
    for (o, e) in out.iter_mut().zip(d.0) {
        let x = e as f64 * n;
        if x.fract() != 0.0 || x.abs() > 100.0 {
            return None;
        }
        *o = x as i8;
    }
    Some(Dimension(out))
}

/// Two terms of a sum (or arguments of min and max): their common dimension, or an error at
/// the second when both are known and differ.
fn sum(a: Dim, b: Dim, at: &Expr) -> Result<Dim, FormulaError> {
    Ok(match (a, b) {
        (Dim::Of(x), Dim::Of(y)) => {
            if !same(x, y) {
                let (p, l) = position(at);
                return Err(FormulaError::at(
                    p,
                    l,
                    format!(
                        "this term is {} but the one it is added to is {}: terms of a sum need one dimension",
                        y.kind(),
                        x.kind()
                    ),
                ));
            }
            Dim::Of(x)
        }
        (Dim::Of(x), Dim::Number) | (Dim::Number, Dim::Of(x)) => Dim::Of(x),
        (Dim::Number, Dim::Number) => Dim::Number,
        _ => Dim::Unknown,
    })
}

/// The dimension of `e`, with `of` giving the dimension of each name; an error where a sum
/// adds terms of different known dimensions.
pub fn infer(e: &Expr, of: &dyn Fn(&str) -> Dim) -> Result<Dim, FormulaError> {
    let known = |d: Dim| match d {
        Dim::Number => Some(Dimension::NONE),
        Dim::Of(x) => Some(x),
        Dim::Unknown => None,
    };
    Ok(match e {
        Expr::Number(_) => Dim::Number,
        Expr::Constant(c, ..) => Dim::Of(c.dimension),
        Expr::Name(n, ..) => of(n),
        Expr::Neg(x) => infer(x, of)?,
        Expr::Binary(op, a, b) => {
            let (x, y) = (infer(a, of)?, infer(b, of)?);
            match op {
                '+' | '-' => sum(x, y, b)?,
                '*' | '/' => match (x, y) {
                    (Dim::Number, Dim::Number) => Dim::Number,
                    _ => match (known(x), known(y)) {
                        (Some(p), Some(q)) if *op == '*' => Dim::Of(p.times(q)),
                        (Some(p), Some(q)) => Dim::Of(p.per(q)),
                        _ => Dim::Unknown,
                    },
                },
                _ => match (x, literal(b)) {
                    (Dim::Number, _) => Dim::Number,
                    (Dim::Of(d), Some(n)) => power(d, n).map_or(Dim::Unknown, Dim::Of),
                    _ => Dim::Unknown,
                },
            }
        }
        Expr::Call(f, args) => {
            let dims: Vec<Dim> = args
                .iter()
                .map(|a| infer(a, of))
                .collect::<Result<_, _>>()?;
            match f {
                Func::Sqrt => match dims[0] {
                    Dim::Number => Dim::Number,
                    Dim::Of(d) => power(d, 0.5).map_or(Dim::Unknown, Dim::Of),
                    Dim::Unknown => Dim::Unknown,
                },
                Func::Abs => dims[0],
                Func::Min | Func::Max => {
                    let mut d = dims[0];
                    for (x, a) in dims.iter().zip(args).skip(1) {
                        d = sum(d, *x, a)?;
                    }
                    d
                }
                Func::Exp | Func::Ln | Func::Log10 | Func::Sin | Func::Cos | Func::Tan => {
                    Dim::Of(Dimension::NONE)
                }
                Func::Asin | Func::Acos | Func::Atan | Func::Atan2 => Dim::Of(Dimension::ANGLE),
            }
        }
    })
}

#[cfg(test)]
mod tests {
    use super::super::parse;
    use super::*;

    fn dim_of(formula: &str) -> Result<Dim, FormulaError> {
        let of = |n: &str| match n {
            "force" => Dim::Of(Dimension::FORCE),
            "power" => Dim::Of(Dimension::POWER),
            "L" => Dim::Of(Dimension::LENGTH),
            "phi" => Dim::Of(Dimension::ANGLE),
            "t" => Dim::Of(Dimension::TIME),
            _ => Dim::Unknown,
        };
        infer(&parse(formula).unwrap(), &of)
    }

    #[test]
    fn dimensions_follow_the_operations() {
        assert_eq!(
            dim_of("force / power"),
            Ok(Dim::Of(Dimension::FORCE_PER_POWER))
        );
        assert_eq!(dim_of("2 * power / c"), Ok(Dim::Of(Dimension::FORCE)));
        assert_eq!(
            dim_of("force * c / 2 + power"),
            Ok(Dim::Of(Dimension([2, 1, -3, 0, 0, 0, 0, 0])))
        );
        assert_eq!(dim_of("sqrt(L^2 + L^2)"), Ok(Dim::Of(Dimension::LENGTH)));
        assert!(matches!(dim_of("L * phi"), Ok(Dim::Of(d)) if same(d, Dimension::LENGTH)));
        assert_eq!(dim_of("L + 1e-3"), Ok(Dim::Of(Dimension::LENGTH)));
        assert_eq!(dim_of("x * L"), Ok(Dim::Unknown));
        assert_eq!(dim_of("L ^ x"), Ok(Dim::Unknown));
        assert_eq!(dim_of("cos(phi) * force"), Ok(Dim::Of(Dimension::FORCE)));
        assert_eq!(dim_of("2 * pi"), Ok(Dim::Number));
        assert_eq!(
            dim_of("h * c / L"),
            Ok(Dim::Of(Dimension([2, 1, -2, 0, 0, 0, 0, 0])))
        );
    }

    #[test]
    fn sums_of_two_dimensions_are_refused_where_they_stand() {
        let e = dim_of("force + power").unwrap_err();
        assert_eq!(e.position, 8);
        assert!(e.message.contains("terms of a sum"), "{}", e.message);
        assert!(dim_of("max(L, t)").is_err());
        assert!(dim_of("force - 3 * power / c").is_ok());
    }
}
