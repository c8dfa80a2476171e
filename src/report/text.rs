//! The terminal report.

use super::Exporter;
use super::cautions::cautions;
use super::format::{
    exact, fixed, input_pair, measurand_unit, relative_percent, value_and_uncertainty,
};
use super::table::TextTable;
use crate::analysis::Findings;

/// Human-readable tables of the results, with GUM rounding and readable units.
pub struct TextReport;

fn percent(p: f64) -> String {
    let s = format!("{:.4}", 100.0 * p);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    format!("{s} %")
}

/// Group digits of a count: 1000000 -> "1 000 000" (SI Brochure 5.4.4).
pub fn grouped(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(' ');
        }
        out.push(c);
    }
    out
}

impl Exporter for TextReport {
    fn render(&self, f: &Findings) -> Vec<u8> {
        let mut out = String::new();
        out.push_str(&format!("{}\n", f.title));
        out.push_str(&format!(
            "scenario {}{} | M = {} trials | seed {} | coverage probability {}\n",
            f.file,
            f.chain.map_or(String::new(), |c| format!(" | chain {c}")),
            grouped(f.trials),
            f.seed,
            percent(f.coverage)
        ));
        out.push_str("Monte Carlo propagation of distributions (JCGM 101:2008)\n\n");

        let p = percent(f.coverage);
        let mut t = TextTable::new(
            &[
                "measurand",
                "unit",
                "estimate",
                "u",
                "u rel.",
                &format!("{p} symmetric"),
                &format!("{p} shortest"),
            ],
            &[false, false, true, true, true, false, false],
        );
        for m in &f.measurands {
            let unit = measurand_unit(m);
            let s = &m.monte_carlo;
            let k = unit.factor;
            let (y, u, e) = value_and_uncertainty(s.estimate / k, s.standard_uncertainty / k);
            let interval =
                |(a, b): (f64, f64)| format!("[{}, {}]", fixed(a / k, e), fixed(b / k, e));
            t.row(vec![
                m.name.clone(),
                unit.symbol.clone(),
                y,
                u,
                relative_percent(s.standard_uncertainty, s.estimate),
                interval(s.symmetric_interval),
                interval(s.shortest_interval),
            ]);
        }
        out.push_str(&t.render());
        out.push_str(
            "u: standard uncertainty; rounded to two significant digits (JCGM 100 7.2.6). Expanded uncertainty U = half the symmetric interval:
",
        );
        for m in &f.measurands {
            let unit = measurand_unit(m);
            let s = &m.monte_carlo;
            let (_, uu, _) = value_and_uncertainty(0.0, s.expanded_uncertainty / unit.factor);
            let k = s
                .coverage_factor
                .map_or("-".to_string(), |k| format!("{k:.2}"));
            out.push_str(&format!(
                "  {}: U = {uu} {} (k = {k})\n",
                m.name, unit.symbol
            ));
        }

        out.push('\n');
        let mut t = TextTable::new(
            &[
                "input quantity",
                "distribution",
                "estimate",
                "u",
                "unit",
                "dof",
            ],
            &[false, false, true, true, false, true],
        );
        for q in &f.inputs {
            let u = if q.distribution == "constant" {
                None
            } else {
                Some(q.standard_uncertainty.unwrap_or(f64::INFINITY))
            };
            let (est, u, unit) = match u {
                Some(u) if !u.is_finite() => (
                    exact(q.estimate / q.shown_unit.factor),
                    "infinite".to_string(),
                    q.shown_unit.symbol.clone(),
                ),
                _ => input_pair(q.estimate, u, &q.shown_unit, q.dimension),
            };
            t.row(vec![
                q.name.clone(),
                q.distribution.clone(),
                est,
                u,
                unit,
                q.dof.map_or(String::new(), |d| format!("{d}")),
            ]);
        }
        out.push_str(&t.render());

        if !f.warnings.is_empty() {
            out.push_str("\nwarnings:\n");
            for w in &f.warnings {
                out.push_str(&format!("  * {w}\n"));
            }
        }
        out.push('\n');
        for c in cautions(f.laser) {
            out.push_str(c);
            out.push('\n');
        }
        out.push_str(&format!("Random streams: {}\n", f.generator));
        out.into_bytes()
    }
}
