//! CSV exports: the summary and the budget (full precision, SI for inputs, measurands in their
//! reported unit), and the trials themselves.

use super::{Context, Exporter, Report};
use crate::analysis::Findings;
use crate::analysis::planning::{Comparison, PlanFinding};
use crate::engine::Samples;

/// The CSV exporter.
pub(crate) struct CsvReport;

fn g(x: f64) -> String {
    // Shortest text that reads back to the same f64; exponent form outside 1e-5..1e16 so that
    // tiny sensitivities do not print as long runs of zeros.
    if !x.is_finite() {
        String::new()
    } else if x != 0.0 && !(1e-5..1e16).contains(&x.abs()) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

fn opt(x: Option<f64>) -> String {
    x.map_or(String::new(), g)
}

fn table(header: &[&str], rows: Vec<Vec<String>>) -> Vec<u8> {
    let mut w = csv::Writer::from_writer(Vec::new());
    // Writing to memory cannot fail; an error would only come from the csv crate itself.
    let _ = w.write_record(header);
    for r in rows {
        let _ = w.write_record(&r);
    }
    w.into_inner().unwrap_or_default()
}

/// One row per measurand: the Monte Carlo result and the LPU beside it.
pub(crate) fn summary(f: &Findings) -> Vec<u8> {
    let rows = f
        .measurands
        .iter()
        .map(|m| {
            let s = &m.monte_carlo;
            let k = m.unit.factor;
            let l = m.lpu.as_ref();
            vec![
                m.name.clone(),
                m.unit.symbol.clone(),
                g(s.estimate / k),
                g(s.standard_uncertainty / k),
                s.relative_standard_uncertainty().map_or(String::new(), g),
                g(s.symmetric_interval.0 / k),
                g(s.symmetric_interval.1 / k),
                g(s.shortest_interval.0 / k),
                g(s.shortest_interval.1 / k),
                g(s.expanded_uncertainty / k),
                opt(s.coverage_factor),
                opt(l.map(|l| l.standard_uncertainty / k)),
                opt(l
                    .and_then(|l| l.higher_order_standard_uncertainty)
                    .map(|u| u / k)),
                opt(l.map(|l| l.effective_dof)),
                opt(l.map(|l| l.coverage_factor)),
                m.validation
                    .as_ref()
                    .map_or(String::new(), |v| v.first_order.validated.to_string()),
            ]
        })
        .collect();
    table(
        &[
            "measurand",
            "unit",
            "estimate",
            "standard_uncertainty",
            "relative_standard_uncertainty",
            "symmetric_low",
            "symmetric_high",
            "shortest_low",
            "shortest_high",
            "expanded_uncertainty",
            "coverage_factor",
            "lpu_standard_uncertainty",
            "lpu_higher_order_standard_uncertainty",
            "lpu_effective_dof",
            "lpu_coverage_factor",
            "lpu_validated",
        ],
        rows,
    )
}

/// One row per measurand and input of the uncertainty budget.
pub(crate) fn budget(f: &Findings) -> Vec<u8> {
    let mut rows = Vec::new();
    for m in &f.measurands {
        let k = m.unit.factor;
        for b in &m.budget {
            let q = &f.inputs[b.input];
            rows.push(vec![
                m.name.clone(),
                m.unit.symbol.clone(),
                q.name.clone(),
                q.distribution.clone(),
                q.si_unit.clone(),
                g(b.estimate),
                g(b.standard_uncertainty),
                g(b.sensitivity / k),
                g(b.contribution / k),
                g(b.share),
                opt(b.dof),
                b.subsystem.name().to_string(),
            ]);
        }
    }
    table(
        &[
            "measurand",
            "measurand_unit",
            "input",
            "distribution",
            "input_unit",
            "estimate",
            "standard_uncertainty",
            "sensitivity",
            "contribution",
            "share",
            "degrees_of_freedom",
            "subsystem",
        ],
        rows,
    )
}

/// The trials as CSV: one column per input (SI) and per measurand (in its reported unit), every
/// trial or, with `max_rows`, rows evenly thinned (row j of N is trial floor(j M / N)).
pub(crate) fn samples(f: &Findings, s: &Samples, max_rows: Option<usize>) -> Vec<u8> {
    let m = s.trials;
    let n = max_rows.map_or(m, |r| r.min(m));
    let mut header: Vec<String> = Vec::new();
    let inputs = s.inputs.as_deref().unwrap_or(&[]);
    for (q, _) in f.inputs.iter().zip(inputs) {
        header.push(if q.si_unit.is_empty() {
            q.name.clone()
        } else {
            format!("{} [{}]", q.name, q.si_unit)
        });
    }
    for meas in &f.measurands {
        // SI like the inputs: the dimension's coherent unit (a declared unit names it too).
        let si = meas
            .dimension
            .or_else(|| {
                crate::units::parse_unit(&meas.unit.symbol)
                    .ok()
                    .map(|u| u.dimension)
            })
            .map_or(String::new(), crate::units::Dimension::si_symbol);
        header.push(if si.is_empty() {
            meas.name.clone()
        } else {
            format!("{} [{si}]", meas.name)
        });
    }
    let mut w = csv::Writer::from_writer(Vec::new());
    let _ = w.write_record(&header);
    let mut row = Vec::with_capacity(header.len());
    for j in 0..n {
        let i = (j as u128 * m as u128 / n as u128) as usize;
        row.clear();
        for col in inputs {
            row.push(g(col[i]));
        }
        for col in &s.measurands {
            row.push(g(col[i]));
        }
        let _ = w.write_record(&row);
    }
    w.into_inner().unwrap_or_default()
}

impl Exporter for CsvReport {
    fn new(_: &Context) -> Self {
        CsvReport
    }
    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String> {
        Ok(match report {
            Report::Run(f) => {
                let mut out = summary(f);
                out.push(b'\n');
                out.extend(budget(f));
                out
            }
            Report::Compare(c) => comparison(c),
            Report::Plan(p) => plan(p),
        })
    }
}

/// The comparison as one CSV table.
fn comparison(c: &Comparison) -> Vec<u8> {
    let rows = c
        .rows
        .iter()
        .map(|r| {
            let m = &r.findings.measurands[r.measurand];
            let k = m.unit.factor;
            vec![
                r.name.clone(),
                m.name.clone(),
                m.unit.symbol.clone(),
                g(r.summary.estimate / k),
                g(r.summary.standard_uncertainty / k),
                g(r.relative_expanded_uncertainty),
                g(r.summary.symmetric_interval.0 / k),
                g(r.summary.symmetric_interval.1 / k),
                r.rank.to_string(),
            ]
        })
        .collect();
    table(
        &[
            "name",
            "measurand",
            "unit",
            "estimate",
            "standard_uncertainty",
            "relative_expanded_uncertainty",
            "symmetric_low",
            "symmetric_high",
            "rank",
        ],
        rows,
    )
}

/// The plan's changes as a CSV table, then the target line.
fn plan(p: &PlanFinding) -> Vec<u8> {
    let f = &p.verification;
    let rows = p
        .proposal
        .changes
        .iter()
        .map(|c| {
            vec![
                f.inputs[c.input].name.clone(),
                f.inputs[c.input].si_unit.clone(),
                g(c.from),
                g(c.to),
                g(c.factor),
            ]
        })
        .collect();
    let mut out = table(&["input", "unit", "from", "to", "factor"], rows);
    out.extend(
        format!(
            "\ntarget,{},achieved,{},met,{}\n",
            g(p.spec.value),
            g(p.achieved),
            p.met
        )
        .into_bytes(),
    );
    out
}
