//! The JSON report: the contract of DESIGN.md (fields are added, never renamed), written from
//! derived serde types whose field order is the order of the output. Numbers are full
//! precision, measurands in their reported unit (`unit`), inputs in SI. A value that is not
//! finite is never written as a number: fields documented as nullable are `null`, any other
//! non-finite value is an error ([`check_numbers`]).

mod decisions;
mod planning;

use super::cautions::cautions;
use super::{Context, Exporter, Report};
use crate::analysis::{Findings, MeasurandFinding};
pub(crate) use decisions::{comparison_json, plan_json};
use serde::Serialize;
use serde_json::{Map, Value};

/// The JSON report.
pub(crate) struct JsonReport;

/// An interval [low, high].
pub(super) type Pair = [f64; 2];

pub(super) fn pair(p: (f64, f64), k: f64) -> Pair {
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
    noise: Option<planning::NoiseJson<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    forecast: Option<planning::ForecastJson<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    procedure: Option<planning::ProcedureJson>,
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
    budget_by_subsystem: Vec<SubsystemShareJson>,
    #[serde(skip_serializing_if = "Option::is_none")]
    label: Option<&'a str>,
}

#[derive(Serialize)]
struct SubsystemShareJson {
    subsystem: &'static str,
    share: f64,
    contribution: f64,
    inputs: usize,
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
    subsystem: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    label: Option<&'a str>,
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
    subsystem: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    label: Option<&'a str>,
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
    matrix: &'a [Vec<Option<f64>>],
    lpu_matrix: &'a [Vec<Option<f64>>],
}

#[derive(Serialize)]
struct InputCorrelationJson<'a> {
    between: [&'a str; 2],
    coefficient: f64,
    achieved: Option<f64>,
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
    bootstrap_replicates: Option<usize>,
    scramblings: Option<usize>,
    intervals: &'static str,
    confidence: f64,
    grouped_correlated_inputs: bool,
    spearman_trials: usize,
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
                subsystem: r.subsystem.name(),
                label: q.label.as_deref(),
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
                    members: ix
                        .members
                        .iter()
                        .map(|j| f.inputs[*j].name.as_str())
                        .collect(),
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
        budget_by_subsystem: m
            .by_subsystem
            .iter()
            .map(|b| SubsystemShareJson {
                subsystem: b.subsystem.name(),
                share: b.share,
                contribution: b.contribution / k,
                inputs: b.rows,
            })
            .collect(),
        label: m.label.as_deref(),
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
                subsystem: q.subsystem.name(),
                label: q.label.as_deref(),
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
        noise: planning::noise_json(f),
        forecast: planning::forecast_json(f),
        procedure: planning::procedure_json(f),
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
                bootstrap_replicates: (m.sampler != "sobol").then_some(m.replicates),
                scramblings: (m.sampler == "sobol").then_some(m.replicates),
                intervals: if m.sampler == "sobol" {
                    "Student t over independent scramblings (randomised quasi-Monte Carlo)"
                } else {
                    "percentile bootstrap over the rows"
                },
                confidence: m.confidence,
                grouped_correlated_inputs: m.grouped,
                spearman_trials: m.spearman_trials,
            }
        }),
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
    "matrix",
    "achieved",
    "adaptive",
    "correlation",
    "spearman",
    "lpu_share",
    "noise_force_resolution",
    "averaging_time_for_target",
    "needed",
    "bootstrap_replicates",
    "scramblings",
    "averaging_time",
    "time_for_target",
    "measured",
    "interval",
    "cycles_for_target",
    "cycles",
    "total_time",
    "floor",
    "best_phase",
];

/// Check that no number was lost: every null sits in a nullable field. A lost number is named
/// by its place in the report, objects by their `name` (`measurands[power].estimate`).
pub(crate) fn check_numbers(v: &Value, path: &str, key: &str) -> Result<(), String> {
    match v {
        Value::Null if !NULLABLE.contains(&key) => Err(format!(
            "`{path}` is not a finite number (the computation overflowed or is undefined there), \
             so no report was written; check the scale of the inputs of that quantity"
        )),
        Value::Array(a) => a.iter().enumerate().try_for_each(|(i, x)| {
            let here = match x.get("name").and_then(Value::as_str) {
                Some(name) => format!("{path}[{name}]"),
                None => format!("{path}[{i}]"),
            };
            check_numbers(x, &here, key)
        }),
        Value::Object(o) => o.iter().try_for_each(|(k, x)| {
            let here = if path.is_empty() {
                k.clone()
            } else {
                format!("{path}.{k}")
            };
            check_numbers(x, &here, k)
        }),
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
        check_numbers(&value, "", "")?;
        Ok(pretty(&value))
    }
}
