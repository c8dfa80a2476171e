//! The JSON of a comparison and of a plan.

use super::{Pair, pair};
use crate::analysis::planning::{Comparison, PlanFinding};
use crate::report::cautions::cautions;
use serde::Serialize;

/// The JSON of a comparison: `comparison` rows as DESIGN's issue fixes them, with more fields.
#[derive(Serialize)]
pub(crate) struct ComparisonJson<'a> {
    comparison: Vec<ComparisonRowJson<'a>>,
    trials: u64,
    seed: u64,
    coverage_probability: f64,
    generator: String,
    radforce_version: &'static str,
    cautions: Vec<&'static str>,
}

#[derive(Serialize)]
struct ComparisonRowJson<'a> {
    name: &'a str,
    measurand: &'a str,
    unit: &'a str,
    estimate: f64,
    standard_uncertainty: f64,
    relative_standard_uncertainty: Option<f64>,
    expanded_uncertainty: f64,
    relative_expanded_uncertainty: f64,
    symmetric_interval: Pair,
    top_contributors: Vec<TopJson<'a>>,
    noise_force_resolution: Option<f64>,
    averaging_time_for_target: Option<f64>,
    scenario: &'a str,
    rank: usize,
}

#[derive(Serialize)]
struct TopJson<'a> {
    input: &'a str,
    share: f64,
}

/// The JSON of a comparison, as typed data.
pub(crate) fn comparison_json(c: &Comparison) -> ComparisonJson<'_> {
    ComparisonJson {
        comparison: c
            .rows
            .iter()
            .map(|r| {
                let m = &r.findings.measurands[r.measurand];
                let k = m.unit.factor;
                let s = &r.summary;
                ComparisonRowJson {
                    name: &r.name,
                    measurand: &m.name,
                    unit: &m.unit.symbol,
                    estimate: s.estimate / k,
                    standard_uncertainty: s.standard_uncertainty / k,
                    relative_standard_uncertainty: s.relative_standard_uncertainty(),
                    expanded_uncertainty: s.expanded_uncertainty / k,
                    relative_expanded_uncertainty: r.relative_expanded_uncertainty,
                    symmetric_interval: pair(s.symmetric_interval, k),
                    top_contributors: r
                        .top
                        .iter()
                        .map(|(n, sh)| TopJson {
                            input: n,
                            share: *sh,
                        })
                        .collect(),
                    noise_force_resolution: r.findings.noise.as_ref().map(|n| n.resolution),
                    averaging_time_for_target: r
                        .findings
                        .noise
                        .as_ref()
                        .and_then(|n| n.time_for_target),
                    scenario: &r.findings.file,
                    rank: r.rank,
                }
            })
            .collect(),
        trials: c.trials,
        seed: c.seed,
        coverage_probability: c.coverage,
        generator: crate::engine::generator_description(),
        radforce_version: env!("CARGO_PKG_VERSION"),
        cautions: cautions(c.rows.iter().any(|r| r.findings.laser)),
    }
}

/// The JSON of a plan: `plan` {`measurand`, `target`, `achieved`, `changes`} in the terms the
/// user asked for, with more fields.
#[derive(Serialize)]
pub(crate) struct PlanJson<'a> {
    plan: PlanBodyJson<'a>,
    trials: u64,
    seed: u64,
    coverage_probability: f64,
    radforce_version: &'static str,
    cautions: Vec<&'static str>,
}

#[derive(Serialize)]
struct PlanBodyJson<'a> {
    measurand: &'a str,
    unit: &'a str,
    target: f64,
    achieved: f64,
    current: f64,
    relative: bool,
    expanded: bool,
    met: bool,
    changes: Vec<ChangeJson<'a>>,
    alone: Vec<AloneJson<'a>>,
    explanation: &'a str,
    floor: Option<f64>,
    checking_runs: usize,
}

#[derive(Serialize)]
struct ChangeJson<'a> {
    input: &'a str,
    unit: &'a str,
    from: f64,
    to: f64,
    factor: f64,
    at_limit: bool,
    cycles: Option<u64>,
    total_time: Option<f64>,
}

#[derive(Serialize)]
struct AloneJson<'a> {
    input: &'a str,
    current: f64,
    needed: Option<f64>,
    floor: f64,
    no_effect: bool,
}

/// The JSON of a plan, as typed data.
pub(crate) fn plan_json(p: &PlanFinding) -> PlanJson<'_> {
    let f = &p.verification;
    let m = &f.measurands[p.measurand];
    // A relative target is a pure number; an absolute one is shown in the measurand's unit.
    let shown = |v: f64| {
        if p.spec.relative {
            v
        } else {
            v / m.unit.factor
        }
    };
    PlanJson {
        plan: PlanBodyJson {
            measurand: &m.name,
            unit: if p.spec.relative { "" } else { &m.unit.symbol },
            target: shown(p.spec.value),
            achieved: shown(p.achieved),
            current: shown(p.current),
            relative: p.spec.relative,
            expanded: p.spec.expanded,
            met: p.met,
            changes: p
                .proposal
                .changes
                .iter()
                .map(|c| ChangeJson {
                    input: &f.inputs[c.input].name,
                    unit: &f.inputs[c.input].si_unit,
                    from: c.from,
                    to: c.to,
                    factor: c.factor,
                    at_limit: c.at_limit,
                    cycles: c.cycles,
                    total_time: c.total_time,
                })
                .collect(),
            alone: p
                .proposal
                .alone
                .iter()
                .map(|a| AloneJson {
                    input: &f.inputs[a.input].name,
                    current: a.current,
                    needed: (!a.no_effect).then_some(a.needed).flatten(),
                    floor: a.floor,
                    no_effect: a.no_effect,
                })
                .collect(),
            explanation: &p.proposal.explanation,
            floor: p.proposal.floor.map(&shown),
            checking_runs: p.checks,
        },
        trials: f.trials,
        seed: f.seed,
        coverage_probability: f.coverage,
        radforce_version: env!("CARGO_PKG_VERSION"),
        cautions: cautions(f.laser),
    }
}
