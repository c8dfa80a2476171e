//! Tokenizer and recursive-descent parser for formulas.

use super::FormulaError;

/// A built-in function.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Func {
    /// Square root.
    Sqrt,
    /// Exponential.
    Exp,
    /// Natural logarithm.
    Ln,
    /// Base-10 logarithm.
    Log10,
    /// Sine (radians).
    Sin,
    /// Cosine (radians).
    Cos,
    /// Tangent (radians).
    Tan,
    /// Inverse sine.
    Asin,
    /// Inverse cosine.
    Acos,
    /// Inverse tangent.
    Atan,
    /// Absolute value.
    Abs,
    /// atan2(y, x).
    Atan2,
    /// Smallest of two or more.
    Min,
    /// Largest of two or more.
    Max,
}

/// Accepted argument counts of a function: (least, most).
type Arity = (usize, usize);

impl Func {
    /// Look a function up by name, with the number of arguments it takes.
    pub(crate) fn from_name(name: &str) -> Option<(Func, Arity)> {
        Some(match name {
            "sqrt" => (Func::Sqrt, (1, 1)),
            "exp" => (Func::Exp, (1, 1)),
            "ln" => (Func::Ln, (1, 1)),
            "log10" => (Func::Log10, (1, 1)),
            "sin" => (Func::Sin, (1, 1)),
            "cos" => (Func::Cos, (1, 1)),
            "tan" => (Func::Tan, (1, 1)),
            "asin" => (Func::Asin, (1, 1)),
            "acos" => (Func::Acos, (1, 1)),
            "atan" => (Func::Atan, (1, 1)),
            "abs" => (Func::Abs, (1, 1)),
            "atan2" => (Func::Atan2, (2, 2)),
            "min" => (Func::Min, (2, usize::MAX)),
            "max" => (Func::Max, (2, usize::MAX)),
            _ => return None,
        })
    }

    /// All function names, for error messages.
    pub(crate) const NAMES: &'static [&'static str] = &[
        "sqrt", "exp", "ln", "log10", "sin", "cos", "tan", "asin", "acos", "atan", "abs", "atan2",
        "min", "max",
    ];
}

/// A parsed formula.
#[derive(Clone, Debug, PartialEq)]
pub enum Expr {
    /// A number literal or `pi`.
    Number(f64),
    /// A physical constant, with its character position and length.
    Constant(&'static super::FormulaConstant, usize, usize),
    /// A name, with its character position and length.
    Name(String, usize, usize),
    /// Unary minus.
    Neg(Box<Expr>),
    /// A binary operation: one of `+ - * / ^`.
    Binary(char, Box<Expr>, Box<Expr>),
    /// A function call.
    Call(Func, Vec<Expr>),
}

impl Expr {
    /// The height of the tree (a leaf is 1), walked without recursion; the parser keeps it
    /// within [`MAX_HEIGHT`].
    pub fn height(&self) -> usize {
        let mut tallest = 0;
        let mut stack = vec![(self, 1)];
        while let Some((e, h)) = stack.pop() {
            tallest = tallest.max(h);
            match e {
                Expr::Neg(a) => stack.push((a, h + 1)),
                Expr::Binary(_, a, b) => stack.extend([(&**a, h + 1), (&**b, h + 1)]),
                Expr::Call(_, args) => stack.extend(args.iter().map(|a| (a, h + 1))),
                _ => {}
            }
        }
        tallest
    }
}

#[derive(Clone, Debug, PartialEq)]
enum Tok {
    Num(f64),
    Ident(String),
    Op(char),
    End,
}

struct Token {
    tok: Tok,
    pos: usize,
    len: usize,
}

fn tokenize(text: &str) -> Result<Vec<Token>, FormulaError> {
    let chars: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_whitespace() {
            i += 1;
        } else if c.is_ascii_digit()
            || (c == '.' && chars.get(i + 1).is_some_and(char::is_ascii_digit))
        {
            let start = i;
            while i < chars.len()
                && (chars[i].is_ascii_digit() || chars[i] == '.' || chars[i] == '_')
            {
                i += 1;
            }
            if i < chars.len() && (chars[i] == 'e' || chars[i] == 'E') {
                let mut j = i + 1;
                if j < chars.len() && (chars[j] == '+' || chars[j] == '-') {
                    j += 1;
                }
                if j < chars.len() && chars[j].is_ascii_digit() {
                    while j < chars.len() && chars[j].is_ascii_digit() {
                        j += 1;
                    }
                    i = j;
                }
            }
            let literal: String = chars[start..i].iter().filter(|c| **c != '_').collect();
            let value: f64 = literal.parse().map_err(|_| {
                FormulaError::at(start, i - start, format!("`{literal}` is not a number"))
            })?;
            if !value.is_finite() {
                return Err(FormulaError::at(start, i - start, "number out of range"));
            }
            out.push(Token {
                tok: Tok::Num(value),
                pos: start,
                len: i - start,
            });
        } else if c.is_alphabetic() || c == '_' {
            let start = i;
            while i < chars.len() && (chars[i].is_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            let name: String = chars[start..i].iter().collect();
            out.push(Token {
                tok: Tok::Ident(name),
                pos: start,
                len: i - start,
            });
        } else if "+-*/^(),".contains(c) {
            out.push(Token {
                tok: Tok::Op(c),
                pos: i,
                len: 1,
            });
            i += 1;
        } else {
            return Err(FormulaError::at(
                i,
                1,
                format!(
                    "unexpected character `{c}` (a formula uses names, numbers, + - * / ^, parentheses and functions)"
                ),
            ));
        }
    }
    out.push(Token {
        tok: Tok::End,
        pos: chars.len(),
        len: 1,
    });
    Ok(out)
}

struct Parser {
    tokens: Vec<Token>,
    at: usize,
    depth: usize,
    /// The height of the expression last parsed (a leaf is 1).
    height: usize,
}

/// Deepest nesting accepted, so that a hostile formula cannot overflow the stack.
const MAX_DEPTH: usize = 200;

/// Tallest expression tree accepted: a chain of operators (`a + a + ... + a`) is parsed in a
/// loop but builds a tree as tall as it is long, which every later pass (folding, dimensions,
/// compiling, freeing) walks recursively; 500 levels stay far inside the smallest thread stack.
pub const MAX_HEIGHT: usize = 500;

impl Parser {
    fn peek(&self) -> &Token {
        &self.tokens[self.at]
    }
    fn bump(&mut self) -> &Token {
        let t = &self.tokens[self.at];
        if self.at + 1 < self.tokens.len() {
            self.at += 1;
        }
        t
    }
    fn is_op(&self, c: char) -> bool {
        self.peek().tok == Tok::Op(c)
    }
    /// Record the height of a node built over children of heights `children`, refusing a tree
    /// taller than [`MAX_HEIGHT`] at the operator `pos`.
    fn node(&mut self, children: usize, pos: usize, len: usize) -> Result<(), FormulaError> {
        self.height = children + 1;
        if self.height > MAX_HEIGHT {
            return Err(FormulaError::at(
                pos,
                len,
                format!(
                    "the formula is too long a chain: more than {MAX_HEIGHT} operations build \
                     on each other here; split it into intermediate measurands (formula \
                     \"a + b + c\" in [measurands.s1], then \"s1 + d + e\")"
                ),
            ));
        }
        Ok(())
    }

    fn enter(&mut self) -> Result<(), FormulaError> {
        self.depth += 1;
        if self.depth > MAX_DEPTH {
            let t = self.peek();
            return Err(FormulaError::at(t.pos, t.len, "formula nested too deeply"));
        }
        Ok(())
    }

    fn expr(&mut self) -> Result<Expr, FormulaError> {
        self.enter()?;
        let mut lhs = self.term()?;
        while self.is_op('+') || self.is_op('-') {
            let (pos, len) = (self.peek().pos, self.peek().len);
            let Tok::Op(op) = self.bump().tok else {
                unreachable!()
            };
            let left = self.height;
            let rhs = self.term()?;
            self.node(left.max(self.height), pos, len)?;
            lhs = Expr::Binary(op, Box::new(lhs), Box::new(rhs));
        }
        self.depth -= 1;
        Ok(lhs)
    }

    fn term(&mut self) -> Result<Expr, FormulaError> {
        let mut lhs = self.unary()?;
        while self.is_op('*') || self.is_op('/') {
            let (pos, len) = (self.peek().pos, self.peek().len);
            let Tok::Op(op) = self.bump().tok else {
                unreachable!()
            };
            let left = self.height;
            let rhs = self.unary()?;
            self.node(left.max(self.height), pos, len)?;
            lhs = Expr::Binary(op, Box::new(lhs), Box::new(rhs));
        }
        Ok(lhs)
    }

    fn unary(&mut self) -> Result<Expr, FormulaError> {
        self.enter()?;
        let e = if self.is_op('-') {
            let (pos, len) = (self.peek().pos, self.peek().len);
            self.bump();
            let inner = self.unary()?;
            self.node(self.height, pos, len)?;
            Expr::Neg(Box::new(inner))
        } else if self.is_op('+') {
            self.bump();
            self.unary()?
        } else {
            self.power()?
        };
        self.depth -= 1;
        Ok(e)
    }

    fn power(&mut self) -> Result<Expr, FormulaError> {
        let base = self.primary()?;
        if self.is_op('^') {
            let (pos, len) = (self.peek().pos, self.peek().len);
            self.bump();
            let left = self.height;
            let exponent = self.unary()?;
            self.node(left.max(self.height), pos, len)?;
            return Ok(Expr::Binary('^', Box::new(base), Box::new(exponent)));
        }
        Ok(base)
    }

    fn primary(&mut self) -> Result<Expr, FormulaError> {
        let (pos, len) = (self.peek().pos, self.peek().len);
        match self.peek().tok.clone() {
            Tok::Num(v) => {
                self.bump();
                self.height = 1;
                Ok(Expr::Number(v))
            }
            Tok::Ident(name) => {
                self.bump();
                self.height = 1;
                if self.is_op('(') {
                    let Some((func, (least, most))) = Func::from_name(&name) else {
                        return Err(FormulaError::at(
                            pos,
                            len,
                            format!(
                                "unknown function `{name}` (known: {})",
                                Func::NAMES.join(", ")
                            ),
                        ));
                    };
                    self.bump();
                    let mut args = Vec::new();
                    let mut tallest = 0;
                    if !self.is_op(')') {
                        loop {
                            args.push(self.expr()?);
                            tallest = tallest.max(self.height);
                            if self.is_op(',') {
                                self.bump();
                            } else {
                                break;
                            }
                        }
                    }
                    if !self.is_op(')') {
                        let t = self.peek();
                        return Err(FormulaError::at(
                            t.pos,
                            t.len,
                            format!("expected `)` to close `{name}(`"),
                        ));
                    }
                    self.bump();
                    if args.len() < least || args.len() > most {
                        let wanted = match (least, most) {
                            (a, b) if a == b => format!("{a}"),
                            (a, _) => format!("{a} or more"),
                        };
                        return Err(FormulaError::at(
                            pos,
                            len,
                            format!("`{name}` takes {wanted} argument(s), got {}", args.len()),
                        ));
                    }
                    self.node(tallest, pos, len)?;
                    return Ok(Expr::Call(func, args));
                }
                if name == "pi" {
                    return Ok(Expr::Number(std::f64::consts::PI));
                }
                if let Some(c) = super::constant(&name) {
                    return Ok(Expr::Constant(c, pos, len));
                }
                if Func::from_name(&name).is_some() {
                    return Err(FormulaError::at(
                        pos,
                        len,
                        format!("`{name}` is a function: write `{name}(...)`"),
                    ));
                }
                Ok(Expr::Name(name, pos, len))
            }
            Tok::Op('(') => {
                self.bump();
                let e = self.expr()?;
                if !self.is_op(')') {
                    let t = self.peek();
                    return Err(FormulaError::at(t.pos, t.len, "expected `)`"));
                }
                self.bump();
                Ok(e)
            }
            Tok::End => Err(FormulaError::at(
                pos,
                1,
                "the formula ends where a value was expected",
            )),
            Tok::Op(c) => Err(FormulaError::at(
                pos,
                1,
                format!("expected a value, found `{c}`"),
            )),
        }
    }
}

/// Parse a formula into an expression tree; errors carry the character position.
pub fn parse(text: &str) -> Result<Expr, FormulaError> {
    let tokens = tokenize(text)?;
    let mut p = Parser {
        tokens,
        at: 0,
        depth: 0,
        height: 0,
    };
    if p.peek().tok == Tok::End {
        return Err(FormulaError::at(0, 1, "the formula is empty"));
    }
    let e = p.expr()?;
    let t = p.peek();
    if t.tok != Tok::End {
        return Err(FormulaError::at(
            t.pos,
            t.len,
            "unexpected text after the end of the formula (a missing operator?)",
        ));
    }
    Ok(e)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn precedence_and_associativity() {
        // -x^2 is -(x^2); 2^3^2 is 2^(3^2); a - b - c is (a - b) - c.
        let e = parse("-x^2").unwrap();
        assert!(matches!(e, Expr::Neg(_)));
        let e = parse("2^3^2").unwrap();
        let Expr::Binary('^', _, rhs) = e else {
            panic!()
        };
        assert!(matches!(*rhs, Expr::Binary('^', _, _)));
        let e = parse("a - b - c").unwrap();
        let Expr::Binary('-', lhs, _) = e else {
            panic!()
        };
        assert!(matches!(*lhs, Expr::Binary('-', _, _)));
    }

    #[test]
    fn errors_carry_positions() {
        let e = parse("a + * b").unwrap_err();
        assert_eq!(e.position, 4);
        let e = parse("sqrt(a, b)").unwrap_err();
        assert_eq!(e.position, 0);
        assert!(e.message.contains("takes 1"));
        let e = parse("a b").unwrap_err();
        assert_eq!(e.position, 2);
        let e = parse("foo(a)").unwrap_err();
        assert!(e.message.contains("unknown function"));
        let e = parse("(a + b").unwrap_err();
        assert_eq!(e.position, 6);
        let e = parse("a $ b").unwrap_err();
        assert_eq!(e.position, 2);
        let deep = "(".repeat(500) + "a" + &")".repeat(500);
        assert!(parse(&deep).unwrap_err().message.contains("deeply"));
    }

    #[test]
    fn long_chains_are_refused_before_they_grow_a_tall_tree() {
        // Every kind of chain, within the limit and far past it (30 000 terms, 60 kB: the
        // size that overflowed the stack before the limit).
        for op in ["+", "-", "*", "/", "^"] {
            let terms = |n: usize| vec!["a"; n].join(op);
            // `^` is right-associative, parsed by recursion: the nesting limit applies first.
            let ok = parse(&terms(150)).unwrap();
            assert_eq!(ok.height(), 150);
            let e = parse(&terms(30_000)).unwrap_err();
            assert!(
                e.message.contains("too long a chain") || e.message.contains("deeply"),
                "{op}: {}",
                e.message
            );
        }
        let negations = "-".repeat(30_000) + "a";
        assert!(parse(&negations).is_err());
        let nested_calls = "abs(".repeat(80) + &vec!["a"; 450].join("+") + &")".repeat(80);
        assert!(parse(&nested_calls).unwrap_err().message.contains("chain"));
        let wide = format!("max({})", vec!["a"; 30_000].join(", "));
        assert_eq!(parse(&wide).unwrap().height(), 2);
    }
}
