//! Drawing the input quantities of one block of trials.
//!
//! Independent inputs are drawn input by input, each a whole block at once. A group of
//! correlated inputs (see `scenario::Correlations`) is drawn together where its first member
//! stands: independent standard normals z, then x = L z with L the Cholesky factor of the
//! group's correlation matrix (JCGM 101:2008 6.4.8), then each member's marginal: a normal input
//! takes mean + sd x (the multivariate normal of 6.4.8 exactly); any other takes
//! quantile(Phi(x)), a Gaussian copula, so its coefficient applies to the normal scores.

use crate::dist::special::std_normal_cdf;
use crate::dist::{Distribution, Family};
use crate::scenario::{Law, Study};
use rand::Rng;
use rand_distr::{Distribution as _, StandardNormal};

/// Smallest and largest probabilities passed to a quantile function, so that a normal score far
/// in a tail never maps to an infinite value.
const P_MIN: f64 = f64::MIN_POSITIVE;
const P_MAX: f64 = 1.0 - f64::EPSILON / 2.0;

/// What to do for each input, in input order.
#[derive(Clone, Debug)]
pub enum FillStep {
    /// Fill one input from its own law.
    Single(usize),
    /// Fill a whole correlated group (by its index).
    Group(usize),
}

/// The fill steps of a study: inputs in file order, each correlated group at its first member.
pub fn fill_steps(study: &Study) -> Vec<FillStep> {
    let mut steps = Vec::new();
    for i in 0..study.inputs.len() {
        match study.correlations.group_of(i) {
            Some(g) if study.correlations.groups[g].members[0] == i => {
                steps.push(FillStep::Group(g))
            }
            Some(_) => {}
            None => steps.push(FillStep::Single(i)),
        }
    }
    steps
}

/// Fill the input columns of a block (`work[i * stride ..][.. n]` for input i).
pub fn fill_inputs<R: Rng + Clone>(
    study: &Study,
    steps: &[FillStep],
    rng: &mut R,
    work: &mut [f64],
    stride: usize,
    n: usize,
) {
    for step in steps {
        match *step {
            FillStep::Single(i) => {
                let col = &mut work[i * stride..i * stride + n];
                match &study.inputs[i].law {
                    Law::Constant(v) => col.fill(*v),
                    Law::Distributed(d) => d.fill(rng, col),
                }
            }
            FillStep::Group(g) => {
                let group = &study.correlations.groups[g];
                for &i in &group.members {
                    for x in &mut work[i * stride..i * stride + n] {
                        *x = StandardNormal.sample(rng);
                    }
                }
                correlate_group(study, g, work, stride, n);
            }
        }
    }
}

/// Fill the input columns of a block from probabilities instead of a random stream (inverse-CDF
/// sampling, for quasi-random designs): `uniform(i, t)` gives the probability in (0, 1) of input
/// i in row t of the block. Independent inputs take `quantile(u)`; a correlated group takes
/// z = Phi^-1(u), x = L z, then its marginals as in [`fill_inputs`].
pub(crate) fn fill_inputs_from_uniforms(
    study: &Study,
    steps: &[FillStep],
    uniform: &dyn Fn(usize, usize) -> f64,
    work: &mut [f64],
    stride: usize,
    n: usize,
) {
    for step in steps {
        match *step {
            FillStep::Single(i) => {
                let col = &mut work[i * stride..i * stride + n];
                match &study.inputs[i].law {
                    Law::Constant(v) => col.fill(*v),
                    Law::Distributed(d) => {
                        for (t, x) in col.iter_mut().enumerate() {
                            *x = d.quantile(uniform(i, t).clamp(P_MIN, P_MAX));
                        }
                    }
                }
            }
            FillStep::Group(g) => {
                let group = &study.correlations.groups[g];
                for &i in &group.members {
                    for t in 0..n {
                        work[i * stride + t] = crate::dist::special::std_normal_quantile(
                            uniform(i, t).clamp(P_MIN, P_MAX),
                        );
                    }
                }
                correlate_group(study, g, work, stride, n);
            }
        }
    }
}

/// Correlated group g, whose columns hold independent standard normal scores z: x = L z in
/// place (JCGM 101 6.4.8), then each member mapped to its own distribution.
fn correlate_group(study: &Study, g: usize, work: &mut [f64], stride: usize, n: usize) {
    let group = &study.correlations.groups[g];
    let m = group.members.len();
    let l = &group.cholesky;
    for t in 0..n {
        // Bottom row first: row r uses z_0..z_r, which are still unchanged.
        for r in (0..m).rev() {
            let mut acc = 0.0;
            for c in 0..=r {
                acc += l[r * m + c] * work[group.members[c] * stride + t];
            }
            work[group.members[r] * stride + t] = acc;
        }
    }
    for &i in &group.members {
        let col = &mut work[i * stride..i * stride + n];
        if let Law::Distributed(d) = &study.inputs[i].law {
            marginal(d, col);
        }
    }
}

/// Map correlated standard normal scores to the input's own distribution.
fn marginal(d: &Distribution, col: &mut [f64]) {
    match d {
        Distribution::Normal(nd) => {
            let (mu, sd) = (nd.mean(), nd.variance().sqrt());
            for x in col {
                *x = mu + sd * *x;
            }
        }
        other => {
            for x in col {
                *x = other.quantile(std_normal_cdf(*x).clamp(P_MIN, P_MAX));
            }
        }
    }
}
