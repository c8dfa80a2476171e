//! The JSON report: the contract of DESIGN.md (fields are added, never renamed). Numbers are
//! full precision, measurands in their reported unit (`unit`), inputs in SI. A value that is
//! not finite is never written as a number: fields documented as nullable are `null`, any other
//! non-finite value is an error.

use super::Exporter;
use super::cautions::cautions;
use crate::analysis::Findings;
use serde_json::{Map, Value, json};

/// The JSON report.
pub struct JsonReport;

fn num(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

fn pair(p: (f64, f64), k: f64) -> Value {
    json!([num(p.0 / k), num(p.1 / k)])
}

/// Build the report object.
pub fn report_value(f: &Findings) -> Value {
    let measurands: Vec<Value> = f
        .measurands
        .iter()
        .map(|m| {
            let s = &m.monte_carlo;
            let k = m.unit.factor;
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
            })
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
    json!({
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
        "method": "Monte Carlo propagation of distributions, JCGM 101:2008",
        "warnings": f.warnings,
        "cautions": cautions(f.laser),
    })
}

/// Fields that may be null; anything else must be a finite number.
const NULLABLE: &[&str] = &[
    "coverage_factor",
    "relative_standard_uncertainty",
    "standard_uncertainty",
    "degrees_of_freedom",
    "chain",
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

impl Exporter for JsonReport {
    fn render(&self, f: &Findings) -> Vec<u8> {
        let mut s = serde_json::to_string_pretty(&report_value(f)).unwrap_or_default();
        s.push('\n');
        s.into_bytes()
    }
}
