//! Text reports of comparisons and plans.

use super::cautions::cautions;
use super::format::{cycles_text, duration, force_text, grouped, percent};
use super::format::{fixed, measurand_unit, relative_percent, significant, value_and_uncertainty};
use super::table::{TextTable, wrap_words};
use crate::analysis::planning::{Comparison, PlanFinding};

/// "relative expanded uncertainty 0.10 % (95 %)" and the like.
pub(crate) fn target_words(p: &PlanFinding, coverage: f64) -> String {
    let kind = if p.spec.expanded {
        format!("expanded uncertainty ({} coverage)", percent(coverage))
    } else {
        "standard uncertainty".to_string()
    };
    if p.spec.relative {
        format!("relative {kind}")
    } else {
        kind
    }
}

/// A value in the plan's terms.
pub(crate) fn target_value(p: &PlanFinding, v: f64) -> String {
    if p.spec.relative {
        format!("{} %", significant(100.0 * v, 3))
    } else {
        let m = &p.verification.measurands[p.measurand];
        let u = measurand_unit(m);
        format!("{} {}", significant(v / u.factor, 3), u.symbol)
    }
}

/// The comparison table, its widest column wrapped to `width` characters.
pub(crate) fn comparison(c: &Comparison, width: usize) -> String {
    let mut out = String::new();
    let first = &c.rows[0];
    let m = &first.findings.measurands[first.measurand];
    let p = percent(c.coverage);
    let heading = format!(
        "Designs compared on `{}` (paired: M = {} trials and seed {} for every design), ranked by relative expanded uncertainty",
        m.name,
        grouped(c.trials),
        c.seed
    );
    for line in wrap_words(&heading, width) {
        out.push_str(&line);
        out.push('\n');
    }
    out.push('\n');
    // Two narrow tables (the results; what dominates and the noise) with the designs numbered
    // D1, D2, ... in file order and a key of their titles, so that the report fits a terminal;
    // the full rows are in the JSON and CSV reports.
    let mut t = TextTable::new(
        &[
            "rank",
            "design",
            "unit",
            "estimate",
            "u",
            "u rel.",
            &format!("U rel. ({p})"),
            &format!("{p} interval"),
        ],
        &[true, false, false, true, true, true, true, false],
    );
    let mut t2 = TextTable::new(
        &[
            "design",
            "largest contributors",
            "noise floor",
            "time for target",
        ],
        &[false, false, false, false],
    );
    let mut order: Vec<usize> = (0..c.rows.len()).collect();
    order.sort_by_key(|i| c.rows[*i].rank);
    for i in order {
        let id = format!("D{}", i + 1);
        let r = &c.rows[i];
        let mf = &r.findings.measurands[r.measurand];
        let unit = measurand_unit(mf);
        let s = &r.summary;
        let (y, u, e) = value_and_uncertainty(
            s.estimate / unit.factor,
            s.standard_uncertainty / unit.factor,
        );
        let top: Vec<String> = r
            .top
            .iter()
            .map(|(n, sh)| format!("{} {:.0} %", r.input_called(n), 100.0 * sh))
            .collect();
        let (noise, time) = match (&r.findings.noise, &r.findings.procedure) {
            (Some(n), Some(p)) => (
                force_text(n.resolution),
                match p.cycles_for_target {
                    Some(c) => format!(
                        "{} ({}) for {}",
                        cycles_text(c),
                        duration(p.procedure.with_cycles(c).total_time()),
                        force_text(n.target_resolution)
                    ),
                    None => format!("{} not reached", force_text(n.target_resolution)),
                },
            ),
            (Some(n), None) => (
                force_text(n.resolution),
                n.time_for_target.map_or("-".into(), |t| {
                    format!("{} for {}", duration(t), force_text(n.target_resolution))
                }),
            ),
            _ => ("-".into(), "-".into()),
        };
        t.row(vec![
            format!("{}", r.rank),
            id.clone(),
            unit.symbol.clone(),
            y,
            u,
            relative_percent(s.relative_standard_uncertainty()),
            format!(
                "{} %",
                significant(100.0 * r.relative_expanded_uncertainty, 2)
            ),
            format!(
                "[{}, {}]",
                fixed(s.symmetric_interval.0 / unit.factor, e),
                fixed(s.symmetric_interval.1 / unit.factor, e)
            ),
        ]);
        t2.row(vec![id, top.join(", "), noise, time]);
    }
    out.push_str(&t.render());
    out.push('\n');
    for (i, r) in c.rows.iter().enumerate() {
        let id = format!("D{}", i + 1);
        let indent = " ".repeat(id.len() + 2);
        for (k, line) in wrap_words(&r.name, width.saturating_sub(indent.len()))
            .iter()
            .enumerate()
        {
            let lead = if k == 0 {
                format!("{id}  ")
            } else {
                indent.clone()
            };
            out.push_str(&format!("{lead}{line}\n"));
        }
    }
    out.push('\n');
    out.push_str(&t2.render_within(width, 1));
    for line in wrap_words(
        &format!("noise floor: {}", crate::scenario::PSD_CONVENTION),
        width,
    ) {
        out.push_str(&line);
        out.push('\n');
    }
    out.push('\n');
    let laser = c.rows.iter().any(|r| r.findings.laser);
    for line in cautions(laser) {
        out.push_str(line);
        out.push('\n');
    }
    out
}

/// The plan.
pub(crate) fn plan(p: &PlanFinding) -> String {
    let f = &p.verification;
    let m = &f.measurands[p.measurand];
    let mut out = String::new();
    out.push_str(&format!(
        "Plan for `{}` of {}: target {} of {}; now {}\n\n",
        m.name,
        f.title,
        target_words(p, f.coverage),
        target_value(p, p.spec.value),
        target_value(p, p.current)
    ));
    out.push_str("What each input alone would need (first-order budget of JCGM 100, the other inputs unchanged):\n");
    let mut t = TextTable::new(
        &[
            "input",
            "u now",
            "u needed alone",
            "factor",
            "or: floor the others leave",
        ],
        &[false, true, true, true, false],
    );
    for a in &p.proposal.alone {
        let q = &f.inputs[a.input];
        let show = |u: f64| {
            let unit = &q.shown_unit;
            format!("{} {}", significant(u / unit.factor, 3), unit.symbol)
                .trim_end()
                .to_string()
        };
        if a.no_effect {
            t.row(vec![
                q.name.clone(),
                show(a.current),
                "no effect (1st order)".into(),
                "-".into(),
                String::new(),
            ]);
            continue;
        }
        t.row(vec![
            q.name.clone(),
            show(a.current),
            a.needed.map_or("cannot reach alone".into(), show),
            a.needed
                .map_or("-".into(), |n| significant(a.current / n, 3)),
            if a.needed.is_none() {
                target_value(p, a.floor)
            } else {
                String::new()
            },
        ]);
    }
    out.push_str(&t.render());
    out.push_str(&format!("\nThe plan: {}.\n", p.proposal.explanation));
    if let Some(floor) = p.proposal.floor {
        out.push_str(&format!(
            "The limits leave {} against the target {}.\n",
            target_value(p, floor),
            target_value(p, p.spec.value)
        ));
    }
    for c in &p.proposal.changes {
        let q = &f.inputs[c.input];
        let unit = &q.shown_unit;
        let hint = match (c.cycles, c.total_time) {
            (Some(n), Some(t)) => format!(
                ": {} of the procedure's phases, {} in all",
                cycles_text(n),
                duration(t)
            ),
            (None, Some(t)) => format!(": {} of averaging", duration(t)),
            _ if c.at_limit => ": to its limit (`best`)".to_string(),
            _ => String::new(),
        };
        out.push_str(&format!(
            "  {}: u from {} to {} {} (improve by a factor {}){hint}\n",
            q.name,
            significant(c.from / unit.factor, 3),
            significant(c.to / unit.factor, 3),
            unit.symbol,
            significant(c.factor, 3)
        ));
    }
    if p.checks > 0 {
        out.push_str(&format!(
            "\nChecked by a Monte Carlo run with the improved inputs ({} trials, seed {}{}): achieved {} against the target {}: {}\n",
            grouped(f.trials),
            f.seed,
            if p.checks > 1 { format!(", planned again for a tighter target {} times", p.checks - 1) } else { String::new() },
            target_value(p, p.achieved),
            target_value(p, p.spec.value),
            if p.met { "met" } else { "NOT met" }
        ));
    } else {
        out.push_str(&format!(
            "\nTarget {}.\n",
            if p.met {
                "met already"
            } else {
                "not reachable by improving inputs"
            }
        ));
    }
    out.push('\n');
    for line in cautions(f.laser) {
        out.push_str(line);
        out.push('\n');
    }
    out
}
