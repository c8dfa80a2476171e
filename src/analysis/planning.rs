//! Decisions: designs side by side, a plan to reach a target uncertainty, and sweeps.
//!
//! The plan works on the first-order uncertainty budget (JCGM 100:2008 eq. 10): with a_i =
//! |c_i| u(x_i) the contributions and u_c^2 = sum a_i^2 + X (X the cross terms of correlated
//! inputs, held fixed), input i alone reaches a target standard uncertainty u_T when
//! u_T^2 - (u_c^2 - a_i^2) > 0, with u'(x_i) = sqrt(u_T^2 - (u_c^2 - a_i^2)) / |c_i|; otherwise
//! the others leave the floor sqrt(u_c^2 - a_i^2). The plan improves as few inputs as it can: one
//! input if any can do it alone (the one needing the smallest factor), else the n largest
//! contributors by a common factor f = sqrt(sum_top a_i^2 / (u_T^2 - rest)) for the smallest n
//! that works (greedy on the largest contribution). A Monte Carlo run with the narrowed inputs
//! then checks it.

use super::{Findings, MeasurandFinding, Summary};

/// What the user wants to reach.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct TargetSpec {
    /// The target value: a fraction of the estimate when `relative`, else in SI.
    pub(crate) value: f64,
    /// Relative to the estimate.
    pub(crate) relative: bool,
    /// An expanded uncertainty (at the scenario's coverage probability) rather than a standard one.
    pub(crate) expanded: bool,
}

impl TargetSpec {
    /// The target as a standard uncertainty in SI, given the estimate and the coverage factor.
    pub(crate) fn standard_si(&self, estimate: f64, k: f64) -> f64 {
        let v = if self.relative {
            self.value * estimate.abs()
        } else {
            self.value
        };
        if self.expanded { v / k } else { v }
    }

    /// A Monte Carlo result in the terms of the target.
    pub(crate) fn express(&self, s: &Summary) -> f64 {
        let v = if self.expanded {
            s.expanded_uncertainty
        } else {
            s.standard_uncertainty
        };
        if self.relative {
            v / s.estimate.abs()
        } else {
            v
        }
    }

    /// A standard uncertainty (SI) in the terms of the target.
    pub(crate) fn express_standard(&self, u: f64, estimate: f64, k: f64) -> f64 {
        let v = if self.expanded { u * k } else { u };
        if self.relative { v / estimate.abs() } else { v }
    }
}

/// What one input alone could do.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct AloneRow {
    /// Input index.
    pub(crate) input: usize,
    /// Its standard uncertainty now (as the LPU uses it), SI.
    pub(crate) current: f64,
    /// The standard uncertainty it would need, SI, or `None` when it cannot reach the target alone.
    pub(crate) needed: Option<f64>,
    /// The uncertainty the other inputs leave when this one is made exact, in target terms.
    pub(crate) floor: f64,
}

/// One improved input of a plan.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Change {
    /// Input index.
    pub(crate) input: usize,
    /// Standard uncertainty now, SI.
    pub(crate) from: f64,
    /// Standard uncertainty planned, SI.
    pub(crate) to: f64,
    /// from / to.
    pub(crate) factor: f64,
}

/// A plan before its check.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Proposal {
    /// Per input.
    pub(crate) alone: Vec<AloneRow>,
    /// The changes (empty when the target is met already or out of reach).
    pub(crate) changes: Vec<Change>,
    /// Whether the target is met without changes.
    pub(crate) already_met: bool,
    /// Whether no set of the inputs can reach it (the cross terms alone exceed it).
    pub(crate) unreachable: bool,
    /// How the plan was chosen, in words.
    pub(crate) explanation: String,
}

/// Propose the changes for measurand `m` of a run, for a target standard uncertainty `u_t`
/// (SI); `spec` and `k` express floors in the user's terms.
pub(crate) fn propose(
    m: &MeasurandFinding,
    u_t: f64,
    spec: &TargetSpec,
    k: f64,
) -> Option<Proposal> {
    let lpu = m.lpu.as_ref()?;
    let uc2 = lpu.standard_uncertainty.powi(2);
    let y = m.monte_carlo.estimate;
    let rows: Vec<(usize, f64, f64, f64)> = m
        .budget
        .iter()
        .map(|b| {
            (
                b.input,
                b.standard_uncertainty,
                b.sensitivity.abs(),
                b.contribution,
            )
        })
        .collect();
    let sum_a2: f64 = rows.iter().map(|r| r.3 * r.3).sum();
    let cross = uc2 - sum_a2;
    let alone: Vec<AloneRow> = rows
        .iter()
        .map(|&(i, u, c, a)| {
            let rest = uc2 - a * a;
            let room = u_t * u_t - rest;
            AloneRow {
                input: i,
                current: u,
                needed: (room > 0.0 && c > 0.0).then(|| room.sqrt() / c),
                floor: spec.express_standard(rest.max(0.0).sqrt(), y, k),
            }
        })
        .collect();
    if uc2 <= u_t * u_t {
        return Some(Proposal {
            alone,
            changes: Vec::new(),
            already_met: true,
            unreachable: false,
            explanation:
                "the law of propagation already meets the target; no input needs improving".into(),
        });
    }
    // One input, the smallest factor.
    let best_single = alone
        .iter()
        .filter_map(|r| r.needed.map(|n| (r.input, r.current, n, r.current / n)))
        .min_by(|a, b| a.3.total_cmp(&b.3));
    if let Some((i, from, to, factor)) = best_single {
        return Some(Proposal {
            alone,
            changes: vec![Change { input: i, from, to, factor }],
            already_met: false,
            unreachable: false,
            explanation: "one input can reach the target alone; the plan improves the one that needs the smallest factor".into(),
        });
    }
    // The n largest contributors by a common factor, for the smallest n that works.
    let mut sorted = rows.clone();
    sorted.sort_by(|a, b| b.3.total_cmp(&a.3));
    for n in 2..=sorted.len() {
        let top: f64 = sorted[..n].iter().map(|r| r.3 * r.3).sum();
        let rest = uc2 - top;
        let room = u_t * u_t - rest;
        if room > 0.0 {
            let f = (top / room).sqrt();
            let changes = sorted[..n]
                .iter()
                .map(|&(i, u, _, _)| Change {
                    input: i,
                    from: u,
                    to: u / f,
                    factor: f,
                })
                .collect();
            return Some(Proposal {
                alone,
                changes,
                already_met: false,
                unreachable: false,
                explanation: format!(
                    "no input can reach the target alone; the plan improves the {n} largest contributors (greedy on the largest contribution) by one common factor, the fewest inputs that can"
                ),
            });
        }
    }
    Some(Proposal {
        alone,
        changes: Vec::new(),
        already_met: false,
        unreachable: true,
        explanation: format!(
            "even exact inputs leave the correlation cross terms, {} in the target's terms: the target cannot be reached by improving inputs",
            spec.express_standard(cross.max(0.0).sqrt(), y, k)
        ),
    })
}

/// A checked plan.
#[derive(Clone, Debug)]
pub struct PlanFinding {
    /// Measurand index.
    pub(crate) measurand: usize,
    /// The target.
    pub(crate) spec: TargetSpec,
    /// The proposal (after any tightening in the check).
    pub(crate) proposal: Proposal,
    /// The value reached by the checking Monte Carlo run, in target terms.
    pub(crate) achieved: f64,
    /// The current value, in target terms.
    pub(crate) current: f64,
    /// Whether the checking run meets the target.
    pub(crate) met: bool,
    /// Checking runs made (the factors are tightened when a run falls short).
    pub(crate) checks: usize,
    /// The report of the checking run.
    pub(crate) verification: Box<Findings>,
}

/// One design of a comparison.
#[derive(Clone, Debug)]
pub(crate) struct ComparisonRow {
    /// The design's name (a file's title, or a variant's name).
    pub(crate) name: String,
    /// The measurand compared.
    pub(crate) measurand: usize,
    /// The Monte Carlo result.
    pub(crate) summary: Summary,
    /// U / |y|.
    pub(crate) relative_expanded_uncertainty: f64,
    /// The three largest contributors: (input name, share of the LPU variance).
    pub(crate) top: Vec<(String, f64)>,
    /// 1-based rank by relative expanded uncertainty.
    pub(crate) rank: usize,
    /// The design's full findings.
    pub(crate) findings: Box<Findings>,
}

/// Designs side by side.
#[derive(Clone, Debug)]
pub struct Comparison {
    /// One row per design, in the order given.
    pub(crate) rows: Vec<ComparisonRow>,
    /// Trials of every design (the same for all: a paired comparison).
    pub(crate) trials: u64,
    /// Seed of every design.
    pub(crate) seed: u64,
    /// Coverage probability.
    pub(crate) coverage: f64,
}

/// Rank rows by relative expanded uncertainty (ties keep their order).
pub(crate) fn rank_rows(rows: &mut [ComparisonRow]) {
    let mut order: Vec<usize> = (0..rows.len()).collect();
    order.sort_by(|a, b| {
        rows[*a]
            .relative_expanded_uncertainty
            .total_cmp(&rows[*b].relative_expanded_uncertainty)
    });
    for (rank, i) in order.into_iter().enumerate() {
        rows[i].rank = rank + 1;
    }
}

/// The comparison row of a design.
pub(crate) fn comparison_row(name: &str, findings: Findings, measurand: usize) -> ComparisonRow {
    let m = &findings.measurands[measurand];
    let s = m.monte_carlo;
    let top = m
        .budget
        .iter()
        .take(3)
        .map(|b| (findings.inputs[b.input].name.clone(), b.share))
        .collect();
    ComparisonRow {
        name: name.to_string(),
        measurand,
        summary: s,
        relative_expanded_uncertainty: s.expanded_uncertainty / s.estimate.abs(),
        top,
        rank: 0,
        findings: Box::new(findings),
    }
}

/// One point of a sweep.
#[derive(Clone, Debug)]
pub(crate) struct SweepPoint {
    /// The swept input's estimate, SI.
    pub(crate) value: f64,
    /// The measurand's Monte Carlo result there.
    pub(crate) summary: Summary,
}

/// A sweep.
#[derive(Clone, Debug)]
pub(crate) struct SweepFinding {
    /// The swept input.
    pub(crate) input: usize,
    /// The measurand followed.
    pub(crate) measurand: usize,
    /// The points in order.
    pub(crate) points: Vec<SweepPoint>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn target_terms() {
        let spec = TargetSpec {
            value: 0.001,
            relative: true,
            expanded: true,
        };
        assert!((spec.standard_si(20.0, 2.0) - 0.01).abs() < 1e-15);
        assert!((spec.express_standard(0.01, 20.0, 2.0) - 0.001).abs() < 1e-15);
    }
}
