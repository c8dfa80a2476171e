//! The JSON report: the contract of DESIGN.md (fields are added, never renamed). Numbers are
//! full precision, measurands in their reported unit (`unit`), inputs in SI. A value that is
//! not finite is never written as a number: fields documented as nullable are `null`, any other
//! non-finite value is an error.

use super::Exporter;
use super::cautions::cautions;
use crate::analysis::{Findings, MeasurandFinding};
use serde_json::{Map, Value, json};

/// The JSON report.
pub struct JsonReport;

fn num(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

fn pair(p: (f64, f64), k: f64) -> Value {
    json!([num(p.0 / k), num(p.1 / k)])
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

fn measurand_value(f: &Findings, m: &MeasurandFinding) -> Value {
    let s = &m.monte_carlo;
    let k = m.unit.factor;
    let lpu = m.lpu.as_ref().map_or(Value::Null, |l| {
        json!({
            "estimate": num(l.estimate / k),
            "standard_uncertainty": num(l.standard_uncertainty / k),
            "higher_order_standard_uncertainty": l.higher_order_standard_uncertainty.map_or(Value::Null, |u| num(u / k)),
            "effective_dof": if l.effective_dof.is_finite() { num(l.effective_dof) } else { Value::Null },
            "coverage_factor": num(l.coverage_factor),
            "interval": pair(l.interval, k),
        })
    });
    let validation = m.validation.as_ref().map_or(Value::Null, |v| {
        json!({
            "delta": num(v.first_order.delta / k),
            "d_low": num(v.first_order.d_low / k),
            "d_high": num(v.first_order.d_high / k),
            "validated": v.first_order.validated,
            "higher_order": v.higher_order.map_or(Value::Null, |h| json!({
                "d_low": num(h.d_low / k),
                "d_high": num(h.d_high / k),
                "validated": h.validated,
            })),
        })
    });
    let budget: Vec<Value> = m
        .budget
        .iter()
        .map(|r| {
            let q = &f.inputs[r.input];
            json!({
                "input": q.name,
                "distribution": q.distribution,
                "unit": q.si_unit,
                "estimate": num(r.estimate),
                "standard_uncertainty": num(r.standard_uncertainty),
                "sensitivity": num(r.sensitivity / k),
                "sensitivity_unit": sensitivity_unit(&m.unit.symbol, &q.si_unit),
                "contribution": num(r.contribution / k),
                "share": num(r.share),
                "degrees_of_freedom": r.dof.map_or(Value::Null, num),
            })
        })
        .collect();
    json!({
        "name": m.name,
        "unit": m.unit.symbol,
        "estimate": num(s.estimate / k),
        "standard_uncertainty": num(s.standard_uncertainty / k),
        "symmetric_interval": pair(s.symmetric_interval, k),
        "shortest_interval": pair(s.shortest_interval, k),
        "expanded_uncertainty": num(s.expanded_uncertainty / k),
        "coverage_factor": s.coverage_factor.map_or(Value::Null, num),
        "relative_standard_uncertainty": if s.estimate != 0.0 { num(s.standard_uncertainty / s.estimate.abs()) } else { Value::Null },
        "unit_to_si": num(k),
        "description": m.description,
        "lpu": lpu,
        "validation": validation,
        "budget": budget,
    })
}

fn sensitivity_rows(f: &Findings, m: usize) -> Option<Value> {
    let s = f.sensitivity.as_ref()?;
    let rows: Vec<Value> = s.measurands[m]
        .iter()
        .map(|r| {
            let ix = &r.indices;
            json!({
                "input": r.name,
                "members": ix.members.iter().map(|i| f.inputs[*i].name.clone()).collect::<Vec<_>>(),
                "first_order": num(ix.first_order),
                "first_order_interval": pair(ix.first_order_interval, 1.0),
                "total": num(ix.total),
                "total_interval": pair(ix.total_interval, 1.0),
                "spearman": r.spearman.map_or(Value::Null, num),
                "lpu_share": r.lpu_share.map_or(Value::Null, num),
                "interaction": r.interaction,
            })
        })
        .collect();
    Some(Value::Array(rows))
}

/// Build the report object.
pub fn report_value(f: &Findings) -> Value {
    let measurands: Vec<Value> = f
        .measurands
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let mut v = measurand_value(f, m);
            if let (Some(rows), Value::Object(o)) = (sensitivity_rows(f, i), &mut v) {
                o.insert("sensitivity".into(), rows);
            }
            v
        })
        .collect();
    let inputs: Vec<Value> = f
        .inputs
        .iter()
        .map(|q| {
            json!({
                "name": q.name,
                "unit": q.si_unit,
                "mean": num(q.estimate),
                "standard_uncertainty": q.standard_uncertainty.map_or(Value::Null, num),
                "distribution": q.distribution,
                "degrees_of_freedom": q.dof.map_or(Value::Null, num),
            })
        })
        .collect();
    let mut crates = Map::new();
    for (name, version) in &f.stream_crates {
        crates.insert((*name).to_string(), json!(version));
    }
    let correlation = f.correlation.as_ref().map_or(Value::Null, |c| {
        json!({
            "names": c.names,
            "matrix": c.monte_carlo.iter().map(|row| row.iter().map(|x| num(*x)).collect::<Vec<_>>()).collect::<Vec<_>>(),
            "lpu_matrix": c.lpu.iter().map(|row| row.iter().map(|x| x.map_or(Value::Null, num)).collect::<Vec<_>>()).collect::<Vec<_>>(),
        })
    });
    let input_correlations: Vec<Value> = f
        .input_correlations
        .iter()
        .map(|c| json!({"between": [c.a, c.b], "coefficient": num(c.coefficient), "achieved": c.achieved.map_or(Value::Null, num)}))
        .collect();
    let adaptive = f.adaptive.as_ref().map_or(Value::Null, |a| {
        json!({"digits": a.digits, "batch_trials": a.batch_trials, "batches": a.batches, "converged": a.converged})
    });
    let mut out = json!({
        "title": f.title,
        "trials": f.trials,
        "seed": f.seed,
        "coverage_probability": num(f.coverage),
        "measurands": measurands,
        "inputs": inputs,
        "generator": f.generator,
        "stream_crates": Value::Object(crates),
        "radforce_version": env!("CARGO_PKG_VERSION"),
        "scenario": f.file,
        "chain": f.chain,
        "method": "Monte Carlo propagation of distributions, JCGM 101:2008; law of propagation of uncertainty, JCGM 100:2008",
        "trials_used": f.trials,
        "digits": f.digits,
        "adaptive": adaptive,
        "correlation": correlation,
        "input_correlations": input_correlations,
        "warnings": f.warnings,
        "cautions": cautions(f.laser),
    });
    if let Value::Object(o) = &mut out {
        if let Some(n) = &f.noise {
            o.insert(
                "noise".into(),
                json!({
                    "components": n.components.iter().map(|(name, d)| json!({"source": name, "force_density": num(*d)})).collect::<Vec<_>>(),
                    "force_density": num(n.density),
                    "averaging_time": num(n.averaging_time),
                    "force_resolution": num(n.resolution),
                    "radiation_force": num(n.force),
                    "target_resolution": num(n.target_resolution),
                    "time_for_target": num(n.time_for_target),
                    "convention": crate::scenario::PSD_CONVENTION,
                }),
            );
        }
        if let Some(sw) = &f.sweep {
            let m = &f.measurands[sw.measurand];
            let k = m.unit.factor;
            o.insert(
                "sweep".into(),
                json!({
                    "input": f.inputs[sw.input].name,
                    "unit": f.inputs[sw.input].si_unit,
                    "measurand": m.name,
                    "measurand_unit": m.unit.symbol,
                    "points": sw.points.iter().map(|p| {
                        let s = &p.summary;
                        json!({
                            "value": num(p.value),
                            "estimate": num(s.estimate / k),
                            "standard_uncertainty": num(s.standard_uncertainty / k),
                            "relative_standard_uncertainty": num(s.standard_uncertainty / s.estimate.abs()),
                            "expanded_uncertainty": num(s.expanded_uncertainty / k),
                            "relative_expanded_uncertainty": num(s.expanded_uncertainty / s.estimate.abs()),
                            "symmetric_interval": pair(s.symmetric_interval, k),
                        })
                    }).collect::<Vec<_>>(),
                }),
            );
        }
        o.insert("variants".into(), json!(f.variants));
    }
    if let (Some(s), Value::Object(o)) = (&f.sensitivity, &mut out) {
        let m = &s.method;
        o.insert(
            "sensitivity_method".into(),
            json!({
                "first_order": "Saltelli et al. 2010, Table 2 (b)",
                "total": "Jansen 1999",
                "base_rows": m.base_rows,
                "factors": m.factors,
                "model_runs": m.base_rows * (m.factors + 2),
                "sampler": m.sampler,
                "bootstrap_replicates": m.replicates,
                "confidence": num(m.confidence),
                "grouped_correlated_inputs": m.grouped,
            }),
        );
    }
    out
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
pub fn check_numbers(v: &Value, key: &str) -> Result<(), String> {
    match v {
        Value::Null if !NULLABLE.contains(&key) => Err(format!("`{key}` is not a finite number")),
        Value::Array(a) => a.iter().try_for_each(|x| check_numbers(x, key)),
        Value::Object(o) => o.iter().try_for_each(|(k, x)| check_numbers(x, k)),
        _ => Ok(()),
    }
}

fn pretty(v: &Value) -> Vec<u8> {
    let mut s = serde_json::to_string_pretty(v).unwrap_or_default();
    s.push('\n');
    s.into_bytes()
}

impl Exporter for JsonReport {
    fn render(&self, f: &Findings) -> Vec<u8> {
        pretty(&report_value(f))
    }
    fn comparison(&self, c: &crate::analysis::planning::Comparison) -> Vec<u8> {
        pretty(&comparison_value(c))
    }
    fn plan(&self, p: &crate::analysis::planning::PlanFinding) -> Vec<u8> {
        pretty(&plan_value(p))
    }
}

/// The JSON of a comparison: `comparison` rows as DESIGN's issue fixes them, with more fields.
pub fn comparison_value(c: &crate::analysis::planning::Comparison) -> Value {
    let rows: Vec<Value> = c
        .rows
        .iter()
        .map(|r| {
            let m = &r.findings.measurands[r.measurand];
            let k = m.unit.factor;
            let s = &r.summary;
            json!({
                "name": r.name,
                "measurand": m.name,
                "unit": m.unit.symbol,
                "estimate": num(s.estimate / k),
                "standard_uncertainty": num(s.standard_uncertainty / k),
                "relative_standard_uncertainty": num(s.standard_uncertainty / s.estimate.abs()),
                "expanded_uncertainty": num(s.expanded_uncertainty / k),
                "relative_expanded_uncertainty": num(r.relative_expanded_uncertainty),
                "symmetric_interval": pair(s.symmetric_interval, k),
                "top_contributors": r.top.iter().map(|(n, sh)| json!({"input": n, "share": num(*sh)})).collect::<Vec<_>>(),
                "noise_force_resolution": r.findings.noise.as_ref().map_or(Value::Null, |n| num(n.resolution)),
                "averaging_time_for_target": r.findings.noise.as_ref().map_or(Value::Null, |n| num(n.time_for_target)),
                "scenario": r.findings.file,
                "rank": r.rank,
            })
        })
        .collect();
    let laser = c.rows.iter().any(|r| r.findings.laser);
    json!({
        "comparison": rows,
        "trials": c.trials,
        "seed": c.seed,
        "coverage_probability": num(c.coverage),
        "generator": crate::engine::generator_description(),
        "radforce_version": env!("CARGO_PKG_VERSION"),
        "cautions": cautions(laser),
    })
}

/// The JSON of a plan: `plan` {`measurand`, `target`, `achieved`, `changes`} in the terms the user
/// asked for, with more fields.
pub fn plan_value(p: &crate::analysis::planning::PlanFinding) -> Value {
    let f = &p.verification;
    let m = &f.measurands[p.measurand];
    let changes: Vec<Value> = p
        .proposal
        .changes
        .iter()
        .map(|c| json!({"input": f.inputs[c.input].name, "unit": f.inputs[c.input].si_unit, "from": num(c.from), "to": num(c.to), "factor": num(c.factor)}))
        .collect();
    let alone: Vec<Value> = p
        .proposal
        .alone
        .iter()
        .map(|a| json!({"input": f.inputs[a.input].name, "current": num(a.current), "needed": a.needed.map_or(Value::Null, num), "floor": num(a.floor)}))
        .collect();
    json!({
        "plan": {
            "measurand": m.name,
            "unit": if p.spec.relative { "" } else { m.unit.symbol.as_str() },
            "target": num(if p.spec.relative { p.spec.value } else { p.spec.value / m.unit.factor }),
            "achieved": num(if p.spec.relative { p.achieved } else { p.achieved / m.unit.factor }),
            "current": num(if p.spec.relative { p.current } else { p.current / m.unit.factor }),
            "relative": p.spec.relative,
            "expanded": p.spec.expanded,
            "met": p.met,
            "changes": changes,
            "alone": alone,
            "explanation": p.proposal.explanation,
            "checking_runs": p.checks,
        },
        "trials": f.trials,
        "seed": f.seed,
        "coverage_probability": num(f.coverage),
        "radforce_version": env!("CARGO_PKG_VERSION"),
        "cautions": cautions(f.laser),
    })
}
