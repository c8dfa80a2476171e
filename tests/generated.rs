//! Generated inputs (proptest): random and mutated scenario texts and formulas never make the
//! loader, the formula parser or the engine panic, and always give either a valid study or a
//! clean error; properties of the statistics hold on random samples.

use proptest::prelude::*;
use radforce::engine::{Plan, simulate};
use radforce::model::formula::{Expr, Func, compile, constant, parse};
use radforce::scenario::load_str;
use radforce::stats::intervals::{coverage_intervals, q_index};
use radforce::stats::moments::Moments;

fn seeds() -> &'static [String] {
    static SEEDS: std::sync::OnceLock<Vec<String>> = std::sync::OnceLock::new();
    SEEDS.get_or_init(read_seeds)
}

fn read_seeds() -> Vec<String> {
    let mut out = Vec::new();
    for dir in ["data", "data/validation", "tests/bad-inputs"] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(dir);
        let mut files: Vec<_> = std::fs::read_dir(path)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        files.sort();
        for f in files {
            if f.extension().is_some_and(|x| x == "toml") {
                out.push(String::from_utf8_lossy(&std::fs::read(f).unwrap()).into_owned());
            }
        }
    }
    out
}

#[derive(Clone, Debug)]
enum Mutation {
    Delete(usize, usize),
    Insert(usize, String),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    Number(usize, String),
}

fn fragment() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("=".to_string()),
        Just("\"".to_string()),
        Just("[".to_string()),
        Just("]".to_string()),
        Just("[inputs.x]\n".to_string()),
        Just("dist = \"normal\"\n".to_string()),
        Just("value = \"3 mm\"\n".to_string()),
        Just(
            "[[correlation]]\nbetween = [\"reflectance\", \"incidence\"]\ncoefficient = 0.5\n"
                .to_string()
        ),
        Just("formula = \"a + \"".to_string()),
        Just("\n".to_string()),
        Just("nan".to_string()),
        Just("-1e309".to_string()),
        Just("é".to_string()),
        "[a-z_ =\"\\[\\].0-9\\n+*/^()-]{1,12}",
    ]
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), 1usize..40).prop_map(|(a, n)| Mutation::Delete(a, n)),
        (any::<usize>(), fragment()).prop_map(|(a, s)| Mutation::Insert(a, s)),
        any::<usize>().prop_map(Mutation::DuplicateLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        (
            any::<usize>(),
            prop_oneof![
                Just("0".to_string()),
                Just("-0.5".to_string()),
                Just("1e300".to_string()),
                Just("inf".to_string()),
                Just("2".to_string()),
                Just("0.9999999".to_string()),
                Just("\"5 kg\"".to_string()),
                Just("1_000_000_000_000".to_string()),
            ]
        )
            .prop_map(|(a, s)| Mutation::Number(a, s)),
    ]
}

fn boundary(text: &str, at: usize) -> usize {
    let mut i = at % (text.len() + 1);
    while !text.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn apply(text: &str, m: &Mutation) -> String {
    match m {
        Mutation::Delete(a, n) => {
            let s = boundary(text, *a);
            let e = boundary(text, (s + n).min(text.len()));
            format!("{}{}", &text[..s], &text[e.max(s)..])
        }
        Mutation::Insert(a, frag) => {
            let s = boundary(text, *a);
            format!("{}{frag}{}", &text[..s], &text[s..])
        }
        Mutation::DuplicateLine(a) | Mutation::SwapLines(a, _) if text.lines().count() == 0 => {
            let _ = a;
            text.to_string()
        }
        Mutation::DuplicateLine(a) => {
            let mut lines: Vec<&str> = text.lines().collect();
            let i = a % lines.len();
            lines.insert(i, lines[i]);
            lines.join("\n")
        }
        Mutation::SwapLines(a, b) => {
            let mut lines: Vec<&str> = text.lines().collect();
            let (i, j) = (a % lines.len(), b % lines.len());
            lines.swap(i, j);
            lines.join("\n")
        }
        Mutation::Number(a, value) => {
            // Replace the first number at or after the position.
            let s = boundary(text, *a);
            match text[s..].find(|c: char| c.is_ascii_digit()) {
                Some(off) => {
                    let start = s + off;
                    let end = text[start..]
                        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == 'e' || c == '_'))
                        .map_or(text.len(), |e| start + e);
                    format!("{}{value}{}", &text[..start], &text[end..])
                }
                None => text.to_string(),
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 10_000, failure_persistence: None, ..ProptestConfig::default() })]

    // Mutated scenario texts: a valid study or a clean error, never a panic; a valid study
    // evaluates its model at the estimates and runs a few trials without panicking.
    #[test]
    fn mutated_scenarios_never_panic(index in 0usize..1000, mutations in prop::collection::vec(mutation(), 1..4)) {
        let all = seeds();
        let mut text = all[index % all.len()].clone();
        for m in &mutations {
            text = apply(&text, m);
        }
        match load_str(&text, "mutated.toml") {
            Ok(study) => {
                let x: Vec<f64> = study.inputs.iter().map(|q| q.estimate()).collect();
                let _ = study.model.evaluate_point(&x);
                let _ = simulate(&study, Plan::new(256, 1));
            }
            Err(e) => {
                prop_assert!(!e.message.is_empty());
                prop_assert_eq!(e.file.as_str(), "mutated.toml");
            }
        }
    }
}

fn token() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("a".to_string()),
        Just("b".to_string()),
        Just("z".to_string()),
        Just("pi".to_string()),
        Just("g_n".to_string()),
        Just("c".to_string()),
        Just("+".to_string()),
        Just("-".to_string()),
        Just("*".to_string()),
        Just("/".to_string()),
        Just("^".to_string()),
        Just("(".to_string()),
        Just(")".to_string()),
        Just(",".to_string()),
        Just("sqrt(".to_string()),
        Just("atan2(".to_string()),
        Just("min(".to_string()),
        Just("ln(".to_string()),
        Just("1.5".to_string()),
        Just("2e-3".to_string()),
        Just(" ".to_string()),
        "[0-9a-z.#$]",
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 10_000, failure_persistence: None, ..ProptestConfig::default() })]

    // Random token soup: parse and compile give a program or an error with a position inside
    // the text; a program evaluates without panicking.
    #[test]
    fn random_formulas_never_panic(tokens in prop::collection::vec(token(), 0..24), x in prop::array::uniform3(-10.0f64..10.0)) {
        let text: String = tokens.concat();
        let resolve = |n: &str| match n { "a" => Ok(0), "b" => Ok(1), "z" => Ok(2), _ => Err(format!("unknown `{n}`")) };
        match parse(&text).and_then(|e| compile(&e, &resolve)) {
            Ok((program, _)) => {
                let mut stack = vec![0.0; program.depth().max(1)];
                program.eval_block(&x, 1, 1, &mut stack);
            }
            Err(e) => prop_assert!(e.position <= text.chars().count()),
        }
    }
}

/// A random expression tree, printed fully parenthesised and evaluated directly.
fn expr() -> impl Strategy<Value = Expr> {
    let leaf = prop_oneof![
        (-5.0f64..5.0).prop_map(Expr::Number),
        prop_oneof![Just("a"), Just("b"), Just("z")].prop_map(|n| Expr::Name(n.to_string(), 0, 1)),
        Just(Expr::Constant(constant("g_n").unwrap(), 0, 3)),
    ];
    leaf.prop_recursive(5, 40, 3, |inner| {
        prop_oneof![
            inner.clone().prop_map(|e| Expr::Neg(Box::new(e))),
            (
                prop_oneof![Just('+'), Just('-'), Just('*'), Just('/'), Just('^')],
                inner.clone(),
                inner.clone()
            )
                .prop_map(|(op, a, b)| Expr::Binary(op, Box::new(a), Box::new(b))),
            (
                prop_oneof![
                    Just(Func::Sqrt),
                    Just(Func::Exp),
                    Just(Func::Sin),
                    Just(Func::Atan),
                    Just(Func::Abs)
                ],
                inner.clone()
            )
                .prop_map(|(f, a)| Expr::Call(f, vec![a])),
            (inner.clone(), inner).prop_map(|(a, b)| Expr::Call(Func::Atan2, vec![a, b])),
        ]
    })
}

fn show(e: &Expr) -> String {
    match e {
        Expr::Number(v) => format!("({v:e})"),
        Expr::Name(n, _, _) => n.clone(),
        Expr::Constant(c, _, _) => c.name.to_string(),
        Expr::Neg(x) => format!("(-{})", show(x)),
        Expr::Binary(op, a, b) => format!("({} {op} {})", show(a), show(b)),
        Expr::Call(f, args) => {
            let name = match f {
                Func::Sqrt => "sqrt",
                Func::Exp => "exp",
                Func::Sin => "sin",
                Func::Atan => "atan",
                Func::Abs => "abs",
                Func::Atan2 => "atan2",
                _ => unreachable!(),
            };
            format!(
                "{name}({})",
                args.iter().map(show).collect::<Vec<_>>().join(", ")
            )
        }
    }
}

fn direct(e: &Expr, x: &[f64; 3]) -> f64 {
    match e {
        Expr::Number(v) => *v,
        Expr::Constant(c, _, _) => c.value,
        Expr::Name(n, _, _) => {
            x[match n.as_str() {
                "a" => 0,
                "b" => 1,
                _ => 2,
            }]
        }
        Expr::Neg(a) => -direct(a, x),
        Expr::Binary(op, a, b) => {
            let (p, q) = (direct(a, x), direct(b, x));
            match op {
                '+' => p + q,
                '-' => p - q,
                '*' => p * q,
                '/' => p / q,
                _ => p.powf(q),
            }
        }
        Expr::Call(f, args) => {
            let p = direct(&args[0], x);
            match f {
                Func::Sqrt => p.sqrt(),
                Func::Exp => p.exp(),
                Func::Sin => p.sin(),
                Func::Atan => p.atan(),
                Func::Abs => p.abs(),
                _ => p.atan2(direct(&args[1], x)),
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 4_000, failure_persistence: None, ..ProptestConfig::default() })]

    // A printed expression parses back and evaluates to what the tree itself gives (integer
    // powers are evaluated by repeated multiplication, hence the relative tolerance).
    #[test]
    fn printed_formulas_evaluate_like_their_trees(e in expr(), x in prop::array::uniform3(-3.0f64..3.0)) {
        let text = show(&e);
        let resolve = |n: &str| match n { "a" => Ok(0), "b" => Ok(1), "z" => Ok(2), _ => Err(String::new()) };
        let (program, _) = compile(&parse(&text).unwrap(), &resolve).unwrap();
        let mut stack = vec![0.0; program.depth().max(1)];
        program.eval_block(&x, 1, 1, &mut stack);
        let (got, want) = (stack[0], direct(&e, &x));
        if want.is_finite() && want.abs() < 1e12 {
            prop_assert!((got - want).abs() <= 1e-9 * (1.0 + want.abs()), "{text}: {got} vs {want}");
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2_000, failure_persistence: None, ..ProptestConfig::default() })]

    // JCGM 101 7.7: the interval [y(r), y(r+q)] holds q + 1 >= pM of the M values; the shortest
    // interval is never longer than the symmetric one; results do not depend on the order of
    // the values (the intervals exactly, the moments to rounding).
    #[test]
    fn statistics_of_random_samples(values in prop::collection::vec(-1e3f64..1e3, 40..3000), p in 0.5f64..0.99, rotate in any::<usize>()) {
        let m = values.len();
        prop_assume!(m > q_index(m, p));
        let ci = coverage_intervals(&values, p);
        for (lo, hi) in [ci.symmetric, ci.shortest] {
            let inside = values.iter().filter(|v| **v >= lo && **v <= hi).count();
            prop_assert!(inside as f64 >= p * m as f64 - 0.5, "{inside} of {m} inside at p = {p}");
        }
        prop_assert!(ci.shortest.1 - ci.shortest.0 <= ci.symmetric.1 - ci.symmetric.0);
        let mut other = values.clone();
        other.rotate_left(rotate % m);
        other.reverse();
        prop_assert_eq!(coverage_intervals(&other, p), ci);
        let (a, b) = (Moments::of(&values), Moments::of(&other));
        prop_assert!((a.mean - b.mean).abs() <= 1e-12 * (1.0 + a.mean.abs()));
        prop_assert!((a.variance() - b.variance()).abs() <= 1e-9 * (1.0 + a.variance()));
    }
}
