//! `[[correlation]]` tables: pairs of correlated input quantities, grouped, with the Cholesky
//! factor of each group's correlation matrix (JCGM 101:2008 6.4.8; for non-normal inputs the
//! coefficient applies to the normal scores of a Gaussian copula).

use super::inputs::InputQuantity;
use super::source::suggestion;
use super::table::{Entry, Table};
use crate::error::InputError;
use std::ops::Range;
use toml::de::DeValue;

/// Two correlated inputs and their correlation coefficient.
#[derive(Clone, Debug, PartialEq)]
pub struct CorrelatedPair {
    /// Index of the first input.
    pub(crate) a: usize,
    /// Index of the second input.
    pub(crate) b: usize,
    /// Correlation coefficient r in [-1, 1].
    pub(crate) coefficient: f64,
}

/// Inputs linked by correlations, drawn together.
#[derive(Clone, Debug, PartialEq)]
pub struct CorrelatedGroup {
    /// Input indices, ascending.
    pub(crate) members: Vec<usize>,
    /// Lower-triangular Cholesky factor L of the group's correlation matrix (R = L L^T),
    /// row-major, `members.len()` squared entries.
    pub(crate) cholesky: Vec<f64>,
}

/// All correlations of a study.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Correlations {
    /// Pairs in file order.
    pub(crate) pairs: Vec<CorrelatedPair>,
    /// Connected groups of correlated inputs.
    pub(crate) groups: Vec<CorrelatedGroup>,
}

impl Correlations {
    /// The correlation coefficient between inputs i and j (1 on the diagonal, 0 when unrelated).
    pub(crate) fn coefficient(&self, i: usize, j: usize) -> f64 {
        if i == j {
            return 1.0;
        }
        self.pairs
            .iter()
            .find(|p| (p.a == i && p.b == j) || (p.a == j && p.b == i))
            .map_or(0.0, |p| p.coefficient)
    }

    /// Whether any inputs are correlated.
    pub(crate) fn is_empty(&self) -> bool {
        self.pairs.is_empty()
    }

    /// The group an input belongs to.
    pub(crate) fn group_of(&self, i: usize) -> Option<usize> {
        self.groups.iter().position(|g| g.members.contains(&i))
    }
}

const EXAMPLE: &str =
    "[[correlation]]\nbetween = [\"lever_arm\", \"scale_distance\"]\ncoefficient = 0.3";

/// Read the `correlation` array of tables.
pub(crate) fn read_correlations(
    entry: &Entry<'_, '_>,
    inputs: &[InputQuantity],
) -> Result<Correlations, InputError> {
    let items = entry.array(EXAMPLE)?;
    let mut pairs = Vec::new();
    let mut spans: Vec<Range<usize>> = Vec::new();
    for (k, item) in items.iter().enumerate() {
        let DeValue::Table(map) = item.get_ref() else {
            return Err(entry.error("each correlation is a [[correlation]] table", EXAMPLE));
        };
        let t = Table {
            src: entry.src,
            path: format!("correlation[{}]", k + 1),
            map,
            span: item.span(),
        };
        t.check_keys(&["between", "coefficient"], EXAMPLE)?;
        let between = t.require("between", EXAMPLE)?;
        let names = between.array(EXAMPLE)?;
        if names.len() != 2 {
            return Err(between.error(
                format!("`between` names exactly two inputs (got {})", names.len()),
                EXAMPLE,
            ));
        }
        let mut idx = [0usize; 2];
        for (slot, v) in idx.iter_mut().zip(names) {
            let DeValue::String(name) = v.get_ref() else {
                return Err(between.error("`between` holds input names as strings", EXAMPLE));
            };
            let all = inputs.iter().map(|q| q.name.as_str());
            let i = inputs
                .iter()
                .position(|q| q.name == name.as_ref())
                .ok_or_else(|| {
                    entry.src.error(
                        &v.span(),
                        &between.path,
                        format!("no input quantity `{name}`{}", suggestion(name, all)),
                        EXAMPLE,
                    )
                })?;
            if inputs[i].is_constant() {
                return Err(entry.src.error(
                    &v.span(),
                    &between.path,
                    format!("`{name}` is a constant; only quantities with a distribution can be correlated"),
                    EXAMPLE,
                ));
            }
            *slot = i;
        }
        if idx[0] == idx[1] {
            return Err(between.error("an input cannot be correlated with itself", EXAMPLE));
        }
        let c = t.require("coefficient", EXAMPLE)?;
        let r = c.number("coefficient = 0.3")?;
        if !(-1.0..=1.0).contains(&r) {
            return Err(c.error(
                format!("a correlation coefficient lies in [-1, 1] (got {r})"),
                "coefficient = 0.3",
            ));
        }
        let (a, b) = (idx[0].min(idx[1]), idx[0].max(idx[1]));
        if pairs.iter().any(|p: &CorrelatedPair| p.a == a && p.b == b) {
            return Err(between.error(
                format!(
                    "the pair ({}, {}) is given twice",
                    inputs[a].name, inputs[b].name
                ),
                EXAMPLE,
            ));
        }
        pairs.push(CorrelatedPair {
            a,
            b,
            coefficient: r,
        });
        spans.push(t.span.clone());
    }
    let groups = build_groups(&pairs, inputs, &spans, entry)?;
    Ok(Correlations { pairs, groups })
}

fn build_groups(
    pairs: &[CorrelatedPair],
    inputs: &[InputQuantity],
    spans: &[Range<usize>],
    entry: &Entry<'_, '_>,
) -> Result<Vec<CorrelatedGroup>, InputError> {
    // Connected components by union-find.
    let n = inputs.len();
    let mut parent: Vec<usize> = (0..n).collect();
    fn find(p: &mut [usize], x: usize) -> usize {
        let mut r = x;
        while p[r] != r {
            r = p[r];
        }
        p[x] = r;
        r
    }
    for p in pairs {
        let (ra, rb) = (find(&mut parent, p.a), find(&mut parent, p.b));
        if ra != rb {
            parent[ra.max(rb)] = ra.min(rb);
        }
    }
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for i in 0..n {
        if !pairs.iter().any(|p| p.a == i || p.b == i) {
            continue;
        }
        let r = find(&mut parent, i);
        match groups.iter_mut().find(|g| find(&mut parent, g[0]) == r) {
            Some(g) => g.push(i),
            None => groups.push(vec![i]),
        }
    }
    let mut out = Vec::new();
    for members in groups {
        let m = members.len();
        let coefficient = |i: usize, j: usize| -> f64 {
            if i == j {
                return 1.0;
            }
            let (a, b) = (members[i].min(members[j]), members[i].max(members[j]));
            pairs
                .iter()
                .find(|p| p.a == a && p.b == b)
                .map_or(0.0, |p| p.coefficient)
        };
        let mut l = vec![0.0; m * m];
        for j in 0..m {
            let d = coefficient(j, j) - (0..j).map(|k| l[j * m + k] * l[j * m + k]).sum::<f64>();
            let fail = |what: String| -> InputError {
                let involved: Vec<usize> = pairs
                    .iter()
                    .enumerate()
                    .filter(|(_, p)| p.a == members[j] || p.b == members[j])
                    .map(|(k, _)| k)
                    .collect();
                let names: Vec<String> = involved
                    .iter()
                    .map(|k| {
                        format!(
                            "({}, {})",
                            inputs[pairs[*k].a].name, inputs[pairs[*k].b].name
                        )
                    })
                    .collect();
                let span = involved.last().map_or(entry.span(), |k| spans[*k].clone());
                entry.src.error(
                    &span,
                    "correlation",
                    format!(
                        "the correlation matrix of {} is not positive semi-definite ({what}); check the coefficients of the pairs {}",
                        members.iter().map(|i| inputs[*i].name.as_str()).collect::<Vec<_>>().join(", "),
                        names.join(", ")
                    ),
                    "coefficients that a real set of quantities could have, e.g. r(a,b) = 0.9, r(b,c) = 0.9 needs r(a,c) >= 0.62",
                )
            };
            const TOL: f64 = 1e-12;
            if d < -TOL {
                return Err(fail(format!(
                    "pivot {d:.3e} at `{}`",
                    inputs[members[j]].name
                )));
            }
            let ljj = if d > TOL { d.sqrt() } else { 0.0 };
            l[j * m + j] = ljj;
            for i in j + 1..m {
                let s =
                    coefficient(i, j) - (0..j).map(|k| l[i * m + k] * l[j * m + k]).sum::<f64>();
                if ljj == 0.0 {
                    if s.abs() > 1e-9 {
                        return Err(fail(format!(
                            "a fully determined quantity `{}` cannot also correlate differently",
                            inputs[members[j]].name
                        )));
                    }
                    l[i * m + j] = 0.0;
                } else {
                    l[i * m + j] = s / ljj;
                }
            }
        }
        out.push(CorrelatedGroup {
            members,
            cholesky: l,
        });
    }
    Ok(out)
}
