//! Decisions: designs side by side, a plan to reach a target uncertainty, and sweeps.
//!
//! The plan works on the first-order uncertainty budget (JCGM 100:2008 eq. 10): with a_i =
//! |c_i| u(x_i) the contributions and u_c^2 = sum a_i^2 + X (X the cross terms of correlated
//! inputs, held fixed), input i alone reaches a target standard uncertainty u_T when
//! u_T^2 - (u_c^2 - a_i^2) > 0, with u'(x_i) = sqrt(u_T^2 - (u_c^2 - a_i^2)) / |c_i|; otherwise
//! the others leave the floor sqrt(u_c^2 - a_i^2). Each input may have a limit b_i, the smallest
//! standard uncertainty the experiment can reach for it (`best`; for `noise_force`, what the
//! most cycles of the procedure give). The plan improves the largest contributors first: for
//! the fewest n of them (in order of contribution, those that can still improve), the smallest
//! common factor f with sum_top max(a_i / f, |c_i| b_i)^2 + rest <= u_T^2, so each goes down to
//! what is needed or to its limit. A target that even every input at its limit cannot reach is
//! reported with the floor the limits leave. A Monte Carlo run with the narrowed inputs then
//! checks it.

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
    /// Its share of u_c^2 is below 1e-6: it has no first-order effect, so no value of its u
    /// matters to the plan (a "needed" u would be an astronomically large, meaningless number).
    pub(crate) no_effect: bool,
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
    /// Whether it stops at its limit.
    pub(crate) at_limit: bool,
    /// For `noise_force` under a procedure: the cycles that give it.
    pub(crate) cycles: Option<u64>,
    /// For `noise_force`: the total time of those cycles, or the averaging time, s.
    pub(crate) total_time: Option<f64>,
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
    /// When unreachable: the uncertainty every input at its limit leaves, in the target's terms.
    pub(crate) floor: Option<f64>,
}

/// Propose the changes for measurand `m` of a run, for a target standard uncertainty `u_t`
/// (SI); `spec` and `k` express floors in the user's terms; `limit(i)` is the smallest standard
/// uncertainty input i can reach (0 when there is no limit).
pub(crate) fn propose(
    m: &MeasurandFinding,
    u_t: f64,
    spec: &TargetSpec,
    k: f64,
    limit: &dyn Fn(usize) -> f64,
) -> Option<Proposal> {
    let lpu = m.lpu.as_ref()?;
    let uc2 = lpu.standard_uncertainty.powi(2);
    let y = m.monte_carlo.estimate;
    // (input, u, |c|, a, the least contribution its limit allows)
    let rows: Vec<(usize, f64, f64, f64, f64)> = m
        .budget
        .iter()
        .map(|b| {
            let c = b.sensitivity.abs();
            let least = (c * limit(b.input)).min(b.contribution);
            (b.input, b.standard_uncertainty, c, b.contribution, least)
        })
        .collect();
    let sum_a2: f64 = rows.iter().map(|r| r.3 * r.3).sum();
    let cross = uc2 - sum_a2;
    let alone: Vec<AloneRow> = rows
        .iter()
        .map(|&(i, u, c, a, least)| {
            let rest = uc2 - a * a;
            let room = u_t * u_t - rest;
            let needed = (room > 0.0 && c > 0.0).then(|| room.sqrt() / c);
            AloneRow {
                input: i,
                current: u,
                needed: needed.filter(|n| c * n >= least),
                floor: spec.express_standard(rest.max(0.0).sqrt(), y, k),
                no_effect: a * a < super::budget::NO_EFFECT_SHARE * uc2,
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
            floor: None,
        });
    }
    // The contributors that can still improve, largest first.
    let mut order: Vec<&(usize, f64, f64, f64, f64)> =
        rows.iter().filter(|r| r.4 < r.3 * (1.0 - 1e-12)).collect();
    order.sort_by(|a, b| b.3.total_cmp(&a.3));
    let others = |n: usize| -> f64 {
        rows.iter()
            .filter(|r| !order[..n].iter().any(|o| o.0 == r.0))
            .map(|r| r.3 * r.3)
            .sum::<f64>()
            + cross
    };
    // With the top n improved by a common factor f, each held at its limit.
    let variance = |n: usize, f: f64| -> f64 {
        order[..n]
            .iter()
            .map(|r| (r.3 / f).max(r.4).powi(2))
            .sum::<f64>()
            + others(n)
    };
    for n in 1..=order.len() {
        if variance(n, f64::INFINITY) > u_t * u_t {
            continue;
        }
        // The smallest f >= 1 that reaches the target (the variance falls as f grows).
        let (mut lo, mut hi) = (1.0f64, 2.0f64);
        while variance(n, hi) > u_t * u_t {
            lo = hi;
            hi *= 2.0;
            if hi > 1e300 {
                break;
            }
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if variance(n, mid) > u_t * u_t {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let changes: Vec<Change> = order[..n]
            .iter()
            .map(|&&(i, u, c, a, least)| {
                let to = if c > 0.0 { (a / hi).max(least) / c } else { u };
                Change {
                    input: i,
                    from: u,
                    to,
                    factor: u / to,
                    at_limit: (a / hi) <= least,
                    cycles: None,
                    total_time: None,
                }
            })
            .collect();
        let limited = changes.iter().filter(|c| c.at_limit).count();
        let explanation = if n == 1 {
            "one input can reach the target: the largest contributor that can improve, as far as needed".to_string()
        } else {
            format!(
                "the {n} largest contributors that can still improve, the fewest that reach the target, each down to what is needed by one common factor{}",
                if limited > 0 {
                    format!(", or to its limit ({limited} of them)")
                } else {
                    String::new()
                }
            )
        };
        return Some(Proposal {
            alone,
            changes,
            already_met: false,
            unreachable: false,
            explanation,
            floor: None,
        });
    }
    let floor = rows.iter().map(|r| r.4 * r.4).sum::<f64>() + cross;
    Some(Proposal {
        alone,
        changes: Vec::new(),
        already_met: false,
        unreachable: true,
        explanation: "even every input at its limit (from `best`, the noise from the most cycles of the procedure, and the correlation cross terms) leaves more than the target: it cannot be reached by improving inputs".into(),
        floor: Some(spec.express_standard(floor.max(0.0).sqrt(), y, k)),
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

impl ComparisonRow {
    /// What a report calls an input of this design: its `label` when given, else its name.
    pub(crate) fn input_called<'a>(&'a self, name: &'a str) -> &'a str {
        self.findings
            .inputs
            .iter()
            .find(|q| q.name == name)
            .and_then(|q| q.label.as_deref())
            .unwrap_or(name)
    }
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
