//! The JSON report: the contract of DESIGN.md (fields are added, never renamed), written from
//! derived serde types whose field order is the order of the output. Numbers are full
//! precision, measurands in their reported unit (`unit`), inputs in SI. A value that is not
//! finite is never written as a number: fields documented as nullable are `null`, any other
//! non-finite value is an error ([`check_numbers`]).

use super::cautions::cautions;
use super::{Context, Exporter, Report};
use crate::analysis::planning::{Comparison, PlanFinding};
use crate::analysis::{Findings, MeasurandFinding};
use serde::Serialize;
use serde_json::{Map, Value};

/// The JSON report.
pub(crate) struct JsonReport;

/// An interval [low, high].
type Pair = [f64; 2];

fn pair(p: (f64, f64), k: f64) -> Pair {
    [p.0 / k, p.1 / k]
}

/// The JSON of a run.
#[derive(Serialize)]
pub(crate) struct RunJson<'a> {
    title: &'a str,
    trials: u64,
    seed: u64,
    coverage_probability: f64,
    measurands: Vec<MeasurandJson<'a>>,
    inputs: Vec<InputJson<'a>>,
    generator: &'a str,
    stream_crates: Map<String, Value>,
    radforce_version: &'static str,
    scenario: &'a str,
    chain: Option<&'static str>,
    method: &'static str,
    trials_used: u64,
    digits: u32,
    adaptive: Option<AdaptiveJson>,
    correlation: Option<CorrelationJson<'a>>,
    input_correlations: Vec<InputCorrelationJson<'a>>,
    warnings: &'a [String],
    cautions: Vec<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    noise: Option<NoiseJson<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sweep: Option<SweepJson<'a>>,
    variants: &'a [String],
    #[serde(skip_serializing_if = "Option::is_none")]
    sensitivity_method: Option<SensitivityMethodJson>,
}

#[derive(Serialize)]
struct MeasurandJson<'a> {
    name: &'a str,
    unit: &'a str,
    estimate: f64,
    standard_uncertainty: f64,
    symmetric_interval: Pair,
    shortest_interval: Pair,
    expanded_uncertainty: f64,
    coverage_factor: Option<f64>,
    relative_standard_uncertainty: Option<f64>,
    unit_to_si: f64,
    description: &'a str,
    lpu: Option<LpuJson>,
    validation: Option<ValidationJson>,
    budget: Vec<BudgetRowJson<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sensitivity: Option<Vec<SensitivityRowJson<'a>>>,
}

#[derive(Serialize)]
struct LpuJson {
    estimate: f64,
    standard_uncertainty: f64,
    higher_order_standard_uncertainty: Option<f64>,
    effective_dof: Option<f64>,
    coverage_factor: f64,
    interval: Pair,
}

#[derive(Serialize)]
struct ValidationJson {
    delta: f64,
    d_low: f64,
    d_high: f64,
    validated: bool,
    higher_order: Option<HigherOrderJson>,
}

#[derive(Serialize)]
struct HigherOrderJson {
    d_low: f64,
    d_high: f64,
    validated: bool,
}

#[derive(Serialize)]
struct BudgetRowJson<'a> {
    input: &'a str,
    distribution: &'a str,
    unit: &'a str,
    estimate: f64,
    standard_uncertainty: f64,
    sensitivity: f64,
    sensitivity_unit: String,
    contribution: f64,
    share: f64,
    degrees_of_freedom: Option<f64>,
}

#[derive(Serialize)]
struct SensitivityRowJson<'a> {
    input: &'a str,
    members: Vec<&'a str>,
    first_order: f64,
    first_order_interval: Pair,
    total: f64,
    total_interval: Pair,
    spearman: Option<f64>,
    lpu_share: Option<f64>,
    interaction: bool,
}

#[derive(Serialize)]
struct InputJson<'a> {
    name: &'a str,
    unit: &'a str,
    mean: f64,
    standard_uncertainty: Option<f64>,
    distribution: &'a str,
    degrees_of_freedom: Option<f64>,
}

#[derive(Serialize)]
struct AdaptiveJson {
    digits: u32,
    batch_trials: u64,
    batches: usize,
    converged: bool,
}

#[derive(Serialize)]
struct CorrelationJson<'a> {
    names: &'a [String],
    matrix: &'a [Vec<f64>],
    lpu_matrix: &'a [Vec<Option<f64>>],
}

#[derive(Serialize)]
struct InputCorrelationJson<'a> {
    between: [&'a str; 2],
    coefficient: f64,
    achieved: Option<f64>,
}

#[derive(Serialize)]
struct NoiseJson<'a> {
    components: Vec<NoiseComponentJson>,
    force_density: f64,
    averaging_time: f64,
    force_resolution: f64,
    radiation_force: f64,
    target_resolution: f64,
    time_for_target: f64,
    convention: &'a str,
}

#[derive(Serialize)]
struct NoiseComponentJson {
    source: &'static str,
    force_density: f64,
}

#[derive(Serialize)]
struct SweepJson<'a> {
    input: &'a str,
    unit: &'a str,
    measurand: &'a str,
    measurand_unit: &'a str,
    points: Vec<SweepPointJson>,
}

#[derive(Serialize)]
struct SweepPointJson {
    value: f64,
    estimate: f64,
    standard_uncertainty: f64,
    relative_standard_uncertainty: Option<f64>,
    expanded_uncertainty: f64,
    relative_expanded_uncertainty: Option<f64>,
    symmetric_interval: Pair,
}

#[derive(Serialize)]
struct SensitivityMethodJson {
    first_order: &'static str,
    total: &'static str,
    base_rows: usize,
    factors: usize,
    model_runs: usize,
    sampler: &'static str,
    bootstrap_replicates: usize,
    confidence: f64,
    grouped_correlated_inputs: bool,
}

fn sensitivity_unit(measurand: &str, input: &str) -> String {
    match (measurand.is_empty(), input.is_empty()) {
        (_, true) => measurand.to_string(),
        (true, false) if input.contains(' ') || input.contains('/') => format!("1/({input})"),
        (true, false) => format!("1/{input}"),
        (false, false) if input.contains(' ') || input.contains('/') => {
            format!("{measurand}/({input})")
        }
        (false, false) => format!("{measurand}/{input}"),
    }
}

fn measurand_json<'a>(f: &'a Findings, i: usize, m: &'a MeasurandFinding) -> MeasurandJson<'a> {
    let s = &m.monte_carlo;
    let k = m.unit.factor;
    let lpu = m.lpu.as_ref().map(|l| LpuJson {
        estimate: l.estimate / k,
        standard_uncertainty: l.standard_uncertainty / k,
        higher_order_standard_uncertainty: l.higher_order_standard_uncertainty.map(|u| u / k),
        effective_dof: l.effective_dof.is_finite().then_some(l.effective_dof),
        coverage_factor: l.coverage_factor,
        interval: pair(l.interval, k),
    });
    let validation = m.validation.as_ref().map(|v| ValidationJson {
        delta: v.first_order.delta / k,
        d_low: v.first_order.d_low / k,
        d_high: v.first_order.d_high / k,
        validated: v.first_order.validated,
        higher_order: v.higher_order.map(|h| HigherOrderJson {
            d_low: h.d_low / k,
            d_high: h.d_high / k,
            validated: h.validated,
        }),
    });
    let budget = m
        .budget
        .iter()
        .map(|r| {
            let q = &f.inputs[r.input];
            BudgetRowJson {
                input: &q.name,
                distribution: &q.distribution,
                unit: &q.si_unit,
                estimate: r.estimate,
                standard_uncertainty: r.standard_uncertainty,
                sensitivity: r.sensitivity / k,
                sensitivity_unit: sensitivity_unit(&m.unit.symbol, &q.si_unit),
                contribution: r.contribution / k,
                share: r.share,
                degrees_of_freedom: r.dof,
            }
        })
        .collect();
    let sensitivity = f.sensitivity.as_ref().map(|s| {
        s.measurands[i]
            .iter()
            .map(|r| {
                let ix = &r.indices;
                SensitivityRowJson {
                    input: &r.name,
                    members: ix.members.iter().map(|j| f.inputs[*j].name.as_str()).collect(),
                    first_order: ix.first_order,
                    first_order_interval: pair(ix.first_order_interval, 1.0),
                    total: ix.total,
                    total_interval: pair(ix.total_interval, 1.0),
                    spearman: r.spearman,
                    lpu_share: r.lpu_share,
                    interaction: r.interaction,
                }
            })
            .collect()
    });
    MeasurandJson {
        name: &m.name,
        unit: &m.unit.symbol,
        estimate: s.estimate / k,
        standard_uncertainty: s.standard_uncertainty / k,
        symmetric_interval: pair(s.symmetric_interval, k),
        shortest_interval: pair(s.shortest_interval, k),
        expanded_uncertainty: s.expanded_uncertainty / k,
        coverage_factor: s.coverage_factor,
        relative_standard_uncertainty: s.relative_standard_uncertainty(),
        unit_to_si: k,
        description: &m.description,
        lpu,
        validation,
        budget,
        sensitivity,
    }
}

/// The JSON of a run, as typed data.
pub(crate) fn run_json(f: &Findings) -> RunJson<'_> {
    let mut stream_crates = Map::new();
    for (name, version) in &f.stream_crates {
        stream_crates.insert((*name).to_string(), Value::from(*version));
    }
    RunJson {
        title: &f.title,
        trials: f.trials,
        seed: f.seed,
        coverage_probability: f.coverage,
        measurands: f
            .measurands
            .iter()
            .enumerate()
            .map(|(i, m)| measurand_json(f, i, m))
            .collect(),
        inputs: f
            .inputs
            .iter()
            .map(|q| InputJson {
                name: &q.name,
                unit: &q.si_unit,
                mean: q.estimate,
                standard_uncertainty: q.standard_uncertainty,
                distribution: &q.distribution,
                degrees_of_freedom: q.dof,
            })
            .collect(),
        generator: &f.generator,
        stream_crates,
        radforce_version: env!("CARGO_PKG_VERSION"),
        scenario: &f.file,
        chain: f.chain,
        method: "Monte Carlo propagation of distributions, JCGM 101:2008; law of propagation of uncertainty, JCGM 100:2008",
        trials_used: f.trials,
        digits: f.digits,
        adaptive: f.adaptive.as_ref().map(|a| AdaptiveJson {
            digits: a.digits,
            batch_trials: a.batch_trials,
            batches: a.batches,
            converged: a.converged,
        }),
        correlation: f.correlation.as_ref().map(|c| CorrelationJson {
            names: &c.names,
            matrix: &c.monte_carlo,
            lpu_matrix: &c.lpu,
        }),
        input_correlations: f
            .input_correlations
            .iter()
            .map(|c| InputCorrelationJson {
                between: [&c.a, &c.b],
                coefficient: c.coefficient,
                achieved: c.achieved,
            })
            .collect(),
        warnings: &f.warnings,
        cautions: cautions(f.laser),
        noise: f.noise.as_ref().map(|n| NoiseJson {
            components: n
                .components
                .iter()
                .map(|(source, d)| NoiseComponentJson {
                    source,
                    force_density: *d,
                })
                .collect(),
            force_density: n.density,
            averaging_time: n.averaging_time,
            force_resolution: n.resolution,
            radiation_force: n.force,
            target_resolution: n.target_resolution,
            time_for_target: n.time_for_target,
            convention: crate::physics::noise::PSD_CONVENTION,
        }),
        sweep: f.sweep.as_ref().map(|sw| {
            let m = &f.measurands[sw.measurand];
            let k = m.unit.factor;
            SweepJson {
                input: &f.inputs[sw.input].name,
                unit: &f.inputs[sw.input].si_unit,
                measurand: &m.name,
                measurand_unit: &m.unit.symbol,
                points: sw
                    .points
                    .iter()
                    .map(|p| {
                        let s = &p.summary;
                        SweepPointJson {
                            value: p.value,
                            estimate: s.estimate / k,
                            standard_uncertainty: s.standard_uncertainty / k,
                            relative_standard_uncertainty: s.relative_standard_uncertainty(),
                            expanded_uncertainty: s.expanded_uncertainty / k,
                            relative_expanded_uncertainty: s.relative_expanded_uncertainty(),
                            symmetric_interval: pair(s.symmetric_interval, k),
                        }
                    })
                    .collect(),
            }
        }),
        variants: &f.variants,
        sensitivity_method: f.sensitivity.as_ref().map(|s| {
            let m = &s.method;
            SensitivityMethodJson {
                first_order: "Saltelli et al. 2010, Table 2 (b)",
                total: "Jansen 1999",
                base_rows: m.base_rows,
                factors: m.factors,
                model_runs: m.base_rows * (m.factors + 2),
                sampler: m.sampler,
                bootstrap_replicates: m.replicates,
                confidence: m.confidence,
                grouped_correlated_inputs: m.grouped,
            }
        }),
    }
}

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
                        .map(|n| n.time_for_target),
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
    checking_runs: usize,
}

#[derive(Serialize)]
struct ChangeJson<'a> {
    input: &'a str,
    unit: &'a str,
    from: f64,
    to: f64,
    factor: f64,
}

#[derive(Serialize)]
struct AloneJson<'a> {
    input: &'a str,
    current: f64,
    needed: Option<f64>,
    floor: f64,
}

/// The JSON of a plan, as typed data.
pub(crate) fn plan_json(p: &PlanFinding) -> PlanJson<'_> {
    let f = &p.verification;
    let m = &f.measurands[p.measurand];
    // A relative target is a pure number; an absolute one is shown in the measurand's unit.
    let shown = |v: f64| if p.spec.relative { v } else { v / m.unit.factor };
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
                })
                .collect(),
            alone: p
                .proposal
                .alone
                .iter()
                .map(|a| AloneJson {
                    input: &f.inputs[a.input].name,
                    current: a.current,
                    needed: a.needed,
                    floor: a.floor,
                })
                .collect(),
            explanation: &p.proposal.explanation,
            checking_runs: p.checks,
        },
        trials: f.trials,
        seed: f.seed,
        coverage_probability: f.coverage,
        radforce_version: env!("CARGO_PKG_VERSION"),
        cautions: cautions(f.laser),
    }
}

/// The report as a JSON value (non-finite numbers become `null`, to be checked).
pub fn report_value(report: &Report<'_>) -> Value {
    let value = match report {
        Report::Run(f) => serde_json::to_value(run_json(f)),
        Report::Compare(c) => serde_json::to_value(comparison_json(c)),
        Report::Plan(p) => serde_json::to_value(plan_json(p)),
    };
    // Serialising these types cannot fail: every map key is a string.
    value.unwrap_or(Value::Null)
}

/// Fields that may be null; anything else must be a finite number.
const NULLABLE: &[&str] = &[
    "coverage_factor",
    "relative_standard_uncertainty",
    "standard_uncertainty",
    "degrees_of_freedom",
    "chain",
    "lpu",
    "validation",
    "higher_order",
    "higher_order_standard_uncertainty",
    "effective_dof",
    "lpu_matrix",
    "achieved",
    "adaptive",
    "correlation",
    "spearman",
    "lpu_share",
    "noise_force_resolution",
    "averaging_time_for_target",
    "needed",
];

/// Check that no number was lost: every null sits in a nullable field.
pub(crate) fn check_numbers(v: &Value, key: &str) -> Result<(), String> {
    match v {
        Value::Null if !NULLABLE.contains(&key) => Err(format!("`{key}` is not a finite number")),
        Value::Array(a) => a.iter().try_for_each(|x| check_numbers(x, key)),
        Value::Object(o) => o.iter().try_for_each(|(k, x)| check_numbers(x, k)),
        _ => Ok(()),
    }
}

/// Pretty-printed JSON text with a final newline.
pub(crate) fn pretty(v: &Value) -> Vec<u8> {
    let mut s = serde_json::to_string_pretty(v).unwrap_or_default();
    s.push('\n');
    s.into_bytes()
}

impl Exporter for JsonReport {
    fn new(_: &Context) -> Self {
        JsonReport
    }
    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String> {
        let value = report_value(report);
        check_numbers(&value, "")?;
        Ok(pretty(&value))
    }
}
