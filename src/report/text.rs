//! The terminal report.

use super::cautions::cautions;
use super::format::{
    cycles_text, duration, exact, fixed, force_text, grouped, input_pair, measurand_unit, percent,
    relative_percent, significant, value_and_uncertainty,
};
use super::table::TextTable;
use super::{Context, Exporter, Report};
use crate::analysis::budget::NO_EFFECT_SHARE as NO_EFFECT;
use crate::analysis::{Findings, MeasurandFinding};

/// Human-readable tables of the results, with GUM rounding and readable units.
pub(crate) struct TextReport {
    width: usize,
}

impl Exporter for TextReport {
    fn new(context: &Context) -> Self {
        TextReport {
            width: context.text_width,
        }
    }
    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String> {
        Ok(match report {
            Report::Run(f) => run(f),
            Report::Compare(c) => super::decisions_text::comparison(c, self.width),
            Report::Plan(p) => super::decisions_text::plan(p),
        }
        .into_bytes())
    }
}

/// The report of a run.
fn run(f: &Findings) -> String {
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
    out.push_str("Monte Carlo propagation of distributions (JCGM 101:2008)\n");
    if let Some(fc) = &f.forecast {
        out.push_str(&format!(
                "forecast for {} W: the {} a meter would show, {} {}, is predicted from the model and held as an exact constant (no observation yet)\n",
                significant(fc.power, 4),
                fc.input,
                significant(fc.value / fc.unit.factor, 6),
                fc.unit.symbol
            ));
    }
    out.push('\n');

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
        let interval = |(a, b): (f64, f64)| format!("[{}, {}]", fixed(a / k, e), fixed(b / k, e));
        t.row(vec![
            m.name.clone(),
            unit.symbol.clone(),
            y,
            u,
            relative_percent(s.relative_standard_uncertainty()),
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

    lpu_section(&mut out, f);
    sensitivity_section(&mut out, f);
    for m in &f.measurands {
        budget_section(&mut out, f, m);
    }
    correlation_section(&mut out, f);
    noise_section(&mut out, f);
    procedure_section(&mut out, f);
    sweep_section(&mut out, f);

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
    if !f.input_correlations.is_empty() {
        out.push_str("correlated inputs (for non-normal inputs the coefficient applies to the normal scores of a Gaussian copula):\n");
        for c in &f.input_correlations {
            out.push_str(&format!(
                "  r({}, {}) = {}   achieved in the trials: {}\n",
                c.a,
                c.b,
                c.coefficient,
                c.achieved.map_or("-".to_string(), |r| format!("{r:.4}"))
            ));
        }
    }
    if let Some(a) = &f.adaptive {
        out.push_str(&format!(
                "adaptive procedure (JCGM 101 7.9.4): {} batches of {} trials, {} to {} significant digits\n",
                a.batches,
                grouped(a.batch_trials),
                if a.converged { "stable" } else { "NOT yet stable" },
                a.digits
            ));
    }

    if !f.variants.is_empty() {
        out.push_str(&format!(
            "\nThis file also defines the variants {}: compare them with `radforce compare {}`.\n",
            f.variants.join(", "),
            f.file
        ));
    }
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
    out
}

fn yes_no(b: bool) -> &'static str {
    if b { "yes" } else { "no" }
}

/// The law of propagation beside the Monte Carlo result, and its validation (JCGM 101 8).
fn lpu_section(out: &mut String, f: &Findings) {
    if f.measurands.iter().all(|m| m.lpu.is_none()) {
        return;
    }
    let p = percent(f.coverage);
    out.push_str("\nLaw of propagation of uncertainty (JCGM 100:2008), validated against the Monte Carlo result (JCGM 101 clause 8)\n");
    let interval = format!("{p} interval");
    let mut t = TextTable::new(
        &[
            "measurand",
            "unit",
            "y = f(x)",
            "u 1st order",
            "u higher order",
            "nu_eff",
            "k",
            &interval,
            "delta",
            "validated 1st / higher",
        ],
        &[
            false, false, true, true, true, true, true, false, true, false,
        ],
    );
    for m in &f.measurands {
        let Some(l) = &m.lpu else { continue };
        let unit = measurand_unit(m);
        let k = unit.factor;
        let (y, u, e) = value_and_uncertainty(l.estimate / k, l.standard_uncertainty / k);
        let uh = l
            .higher_order_standard_uncertainty
            .map_or("-".to_string(), |uh| value_and_uncertainty(0.0, uh / k).1);
        let v = m.validation.as_ref();
        t.row(vec![
            m.name.clone(),
            unit.symbol.clone(),
            y,
            u,
            uh,
            if l.effective_dof.is_finite() {
                format!("{:.1}", l.effective_dof)
            } else {
                "inf".into()
            },
            format!("{:.3}", l.coverage_factor),
            format!(
                "[{}, {}]",
                fixed(l.interval.0 / k, e),
                fixed(l.interval.1 / k, e)
            ),
            v.map_or("-".into(), |v| format!("{:.1e}", v.first_order.delta / k)),
            v.map_or("-".into(), |v| {
                format!(
                    "{} / {}",
                    yes_no(v.first_order.validated),
                    v.higher_order.map_or("-", |h| yes_no(h.validated))
                )
            }),
        ]);
    }
    out.push_str(&t.render());
    for m in &f.measurands {
        if let Some(words) = super::format::validation_words(f, m) {
            out.push_str(&format!("  {words}\n"));
        }
    }
}

/// The uncertainty budget of one measurand.
fn budget_section(out: &mut String, f: &Findings, m: &MeasurandFinding) {
    if m.budget.is_empty() {
        return;
    }
    let unit = measurand_unit(m);
    let k = unit.factor;
    out.push_str(&format!(
        "\nuncertainty budget of {} ({}), by part of the apparatus, largest share first\n",
        m.name,
        if unit.symbol.is_empty() {
            "no unit"
        } else {
            unit.symbol.as_str()
        }
    ));
    let mut t = TextTable::new(
        &[
            "part / input",
            "distribution",
            "estimate",
            "u(x)",
            "unit",
            "sensitivity c",
            "|c| u(x)",
            "share",
            "share of u^2 (# = 5 %)",
            "dof",
        ],
        &[
            false, false, true, true, false, true, true, true, false, true,
        ],
    );
    for part in &m.by_subsystem {
        t.row(vec![
            format!("{} ({})", part.subsystem.name(), inputs_count(part.rows)),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            significant(part.contribution / k, 2),
            format!("{:.1} %", 100.0 * part.share),
            share_bar(part.share),
            String::new(),
        ]);
        for r in m.budget.iter().filter(|r| r.subsystem == part.subsystem) {
            budget_row(&mut t, f, r, &unit);
        }
    }
    out.push_str(&t.render());
    if m.budget.iter().any(|r| r.share < NO_EFFECT) {
        out.push_str(&format!(
            "  nil (1st order): a share of u^2 below {:.0e}, no effect on the first-order uncertainty; an input of a curved model may still act through the higher-order terms, which the Monte Carlo result includes\n",
            NO_EFFECT
        ));
    }
}

/// "1 input", "3 inputs".
fn inputs_count(n: usize) -> String {
    if n == 1 {
        "1 input".into()
    } else {
        format!("{n} inputs")
    }
}

/// A share of u^2 drawn as '#' per 5 % (a '+' for a part of one), in ASCII for any terminal.
fn share_bar(share: f64) -> String {
    let steps = (share.clamp(0.0, 1.0) * 20.0).round() as usize;
    if steps == 0 && share >= 0.005 {
        "+".into()
    } else {
        "#".repeat(steps)
    }
}

/// One input's row of the budget, indented under its subsystem.
fn budget_row(
    t: &mut TextTable,
    f: &Findings,
    r: &crate::analysis::budget::BudgetRow,
    unit: &crate::units::DisplayUnit,
) {
    let k = unit.factor;
    let q = &f.inputs[r.input];
    let (est, u, shown) = input_pair(
        r.estimate,
        Some(r.standard_uncertainty),
        &q.shown_unit,
        q.dimension,
    );
    // c in (measurand unit as shown) per (input unit as shown).
    let shown_factor = if shown == q.shown_unit.symbol {
        q.shown_unit.factor
    } else {
        crate::units::parse_unit(&shown).map_or(1.0, |x| x.factor)
    };
    let c = r.sensitivity * shown_factor / k;
    let c_unit = match (unit.symbol.as_str(), shown.as_str()) {
        (a, "") => a.to_string(),
        ("", b) if b.contains(' ') || b.contains('/') => format!("1/({b})"),
        ("", b) => format!("1/{b}"),
        (a, b) if b.contains(' ') || b.contains('/') => format!("{a}/({b})"),
        (a, b) => format!("{a}/{b}"),
    };
    let no_effect = r.share < NO_EFFECT;
    t.row(vec![
        format!("  {}", q.name),
        q.distribution.clone(),
        est,
        u,
        shown,
        if no_effect {
            "nil (1st order)".into()
        } else {
            format!("{} {c_unit}", significant(c, 4))
        },
        if no_effect {
            "-".into()
        } else {
            significant(r.contribution / k, 2)
        },
        if no_effect {
            "< 1e-4 %".into()
        } else {
            format!("{:.1} %", 100.0 * r.share)
        },
        share_bar(r.share),
        r.dof.map_or(String::new(), |d| format!("{d}")),
    ]);
}

/// Correlation of several measurands (JCGM 102), from the trials and from the LPU.
fn correlation_section(out: &mut String, f: &Findings) {
    let Some(c) = &f.correlation else { return };
    out.push_str("\ncorrelation of the measurands (JCGM 102): Monte Carlo / law of propagation\n");
    let mut headers: Vec<&str> = vec![""];
    headers.extend(c.names.iter().map(String::as_str));
    let right: Vec<bool> = (0..headers.len()).map(|i| i > 0).collect();
    let mut t = TextTable::new(&headers, &right);
    for (a, name) in c.names.iter().enumerate() {
        let mut row = vec![name.clone()];
        for b in 0..c.names.len() {
            let l = c.lpu[a][b].map_or("-".to_string(), |x| format!("{x:.3}"));
            let m = c.monte_carlo[a][b].map_or("-".to_string(), |x| format!("{x:.3}"));
            row.push(format!("{m} / {l}"));
        }
        t.row(row);
    }
    out.push_str(&t.render());
}

/// The sensitivity ranking of every measurand.
fn sensitivity_section(out: &mut String, f: &Findings) {
    let Some(s) = &f.sensitivity else { return };
    let m = &s.method;
    let p = percent(m.confidence);
    out.push_str(&format!(
        "\nSensitivity ranking: Sobol indices, first order by Saltelli et al. (2010), total by Jansen (1999); N = {} base rows, {} model runs, {} base sample; {p} {}\n",
        grouped(m.base_rows as u64),
        grouped((m.base_rows * (m.factors + 2)) as u64),
        if m.sampler == "sobol" { "quasi-random (scrambled Sobol)" } else { "pseudo-random" },
        if m.sampler == "sobol" {
            format!("t intervals over {} independent scramblings of N/{} rows each (randomised quasi-Monte Carlo)", m.replicates, m.replicates)
        } else {
            format!("bootstrap intervals ({} resamples)", m.replicates)
        }
    ));
    if m.grouped {
        out.push_str("Correlated inputs break the independence the indices assume: each correlated group is ranked as one factor (grouped indices).\n");
    }
    for (mi, rows) in s.measurands.iter().enumerate() {
        let meas = &f.measurands[mi];
        out.push_str(&format!("{}:\n", meas.name));
        let mut t = TextTable::new(
            &[
                "rank",
                "input",
                "first order",
                &format!("{p} interval"),
                "total",
                &format!("{p} interval"),
                "",
                "LPU share",
                "Spearman",
            ],
            &[true, false, true, false, true, false, false, true, true],
        );
        for (r, row) in rows.iter().enumerate() {
            let ix = &row.indices;
            let iv = |(a, b): (f64, f64)| format!("[{a:.3}, {b:.3}]");
            t.row(vec![
                format!("{}", r + 1),
                row.name.clone(),
                format!("{:.3}", ix.first_order),
                iv(ix.first_order_interval),
                format!("{:.3}", ix.total),
                iv(ix.total_interval),
                if row.interaction {
                    "interaction".into()
                } else {
                    String::new()
                },
                row.lpu_share
                    .map_or("-".into(), |x| format!("{:.1} %", 100.0 * x)),
                row.spearman.map_or("-".into(), |x| format!("{x:+.3}")),
            ]);
        }
        out.push_str(&t.render());
    }
    out.push_str(&format!(
        "\"interaction\": the total index exceeds the first-order one by more than {} (variance that the input shares with others).\n",
        crate::analysis::sensitivity::INTERACTION_GAP
    ));
}

/// A force noise term's value in words ("2.0 nN"), the unit given.
fn term(x: f64, per: &str) -> String {
    format!("{}{per}", force_text(x))
}

/// The noise from `[noise]`: its terms, the measurement they were fitted to, and (white noise
/// without a procedure) the averaging.
fn noise_section(out: &mut String, f: &Findings) {
    let Some(n) = &f.noise else { return };
    out.push_str("\nnoise of the instrument at the input estimates (one-sided densities):\n");
    let white: Vec<String> = n
        .components
        .iter()
        .map(|(name, d)| format!("{name} {}", term(*d, "/sqrt(Hz)")))
        .collect();
    out.push_str(&format!(
        "  white: {}{}\n",
        white.join("; "),
        if n.components.len() > 1 {
            format!("; total {}", term(n.density, "/sqrt(Hz)"))
        } else {
            String::new()
        }
    ));
    let m = &n.model;
    let mut coloured = Vec::new();
    if m.flicker > 0.0 {
        coloured.push(format!("flicker floor {}", term(m.flicker, "")));
    }
    if m.random_walk > 0.0 {
        coloured.push(format!(
            "random walk K = {}",
            term(m.random_walk, "/sqrt(s)")
        ));
    }
    if m.drift != 0.0 {
        coloured.push(format!("drift {}", term(m.drift * 60.0, "/min")));
    }
    if !coloured.is_empty() {
        out.push_str(&format!("  {}\n", coloured.join("; ")));
    }
    if let Some(meas) = &n.measured {
        out.push_str(&format!(
            "  fitted (weighted least squares on the overlapping Allan deviation, NIST SP 1065) to the {}:\n",
            meas.source
        ));
        let mut t = TextTable::new(
            &["tau", "measured", "68 % interval", "fitted", "residual"],
            &[true, true, false, true, true],
        );
        for (p, r) in meas.points.iter().zip(&meas.fit.residuals) {
            t.row(vec![
                duration(p.0),
                force_text(p.1),
                p.2.map_or("-".into(), |(a, b)| {
                    format!("[{}, {}]", force_text(a), force_text(b))
                }),
                force_text(r.2),
                format!("{:+.1} %", 100.0 * r.3),
            ]);
        }
        out.push_str(&t.render());
    }
    if let (Some(t), Some(need)) = (n.averaging_time, n.time_for_target) {
        out.push_str(&format!(
            "  averaged for {}: force resolution {} (the input `noise_force`); {} resolution needs {} of averaging\n",
            duration(t),
            force_text(n.resolution),
            force_text(n.target_resolution),
            duration(need)
        ));
    }
    out.push_str(&format!(
        "  convention: {}\n",
        crate::physics::noise::PSD_CONVENTION
    ));
}

/// The planned measurement from `[procedure]`: the estimator's noise by term, the cycles a
/// target needs, and the best phases for the same time.
fn procedure_section(out: &mut String, f: &Findings) {
    let Some(p) = &f.procedure else { return };
    let pr = &p.procedure;
    out.push_str(&format!(
        "\nmeasurement procedure: {}, {} cycles of {} on / {} off, {} discarded after every switch; {} in all\n",
        pr.pattern.name(),
        pr.cycles,
        duration(pr.on_time),
        duration(pr.off_time),
        duration(pr.settle_time),
        duration(p.total_time)
    ));
    if p.settling_factor != 1.0 || p.heating_settling_factor != 1.0 {
        out.push_str(&format!(
            "  settling factor {:.6} (the windows' share of a unit force step through the instrument's response; the model divides by it){}\n",
            p.settling_factor,
            if p.heating_settling_factor != p.settling_factor {
                format!("; of the heating force, after its lag, {:.6}", p.heating_settling_factor)
            } else {
                String::new()
            }
        ));
    }
    let t = &p.terms;
    out.push_str(&format!(
        "  estimator noise (the input `noise_force`): {} = white {}, flicker {}, random walk {} in quadrature; drift bias {}{}\n",
        force_text(p.estimator_sd),
        force_text(t.white),
        force_text(t.flicker),
        force_text(t.random_walk),
        force_text(t.drift_bias.abs()),
        if t.drift_bias == 0.0 {
            String::new()
        } else {
            " (a bound: its rectangular variance bias^2/3 is in the noise; the ABA pattern cancels a linear drift)".into()
        }
    ));
    out.push_str(&match p.cycles_for_target {
        Some(n) => format!(
            "  target resolution {}: {} of these phases ({})\n",
            force_text(p.target_resolution),
            cycles_text(n),
            duration(pr.with_cycles(n).total_time())
        ),
        None => format!(
            "  target resolution {}: not reached with up to {} cycles of these phases (a flicker floor, or a drift bias more cycles do not reduce)\n",
            force_text(p.target_resolution),
            grouped(crate::physics::procedure::MAX_CYCLES)
        ),
    });
    if let Some((b, _)) = p.best.as_ref().filter(|(b, _)| b.cycles == pr.cycles) {
        out.push_str(&format!(
            "  for the same {}, these phases ({} cycles) are the best\n",
            duration(p.total_time),
            b.cycles
        ));
    } else if let Some((b, bt)) = &p.best {
        out.push_str(&format!(
            "  for the same {}: phases of {} on / {} off, {}, give {} (now {})\n",
            duration(p.total_time),
            duration(b.on_time),
            duration(b.off_time),
            cycles_text(b.cycles),
            force_text(bt.standard_uncertainty()),
            force_text(p.estimator_sd)
        ));
    }
}

/// The sweep from `[sweep]`.
fn sweep_section(out: &mut String, f: &Findings) {
    let Some(sw) = &f.sweep else { return };
    let q = &f.inputs[sw.input];
    let m = &f.measurands[sw.measurand];
    let unit = measurand_unit(m);
    let p = percent(f.coverage);
    out.push_str(&format!(
        "\nsweep of {} ({} points, each a full run of {} trials with the same seed):\n",
        q.name,
        sw.points.len(),
        grouped(f.trials)
    ));
    let xu = &q.shown_unit;
    let mut t = TextTable::new(
        &[
            &format!("{} ({})", q.name, xu.symbol),
            &format!("{} ({})", m.name, unit.symbol),
            "u",
            "u rel.",
            &format!("U rel. ({p})"),
        ],
        &[true, true, true, true, true],
    );
    for pt in &sw.points {
        let s = &pt.summary;
        let (y, u, _) = value_and_uncertainty(
            s.estimate / unit.factor,
            s.standard_uncertainty / unit.factor,
        );
        t.row(vec![
            significant(pt.value / xu.factor, 4),
            y,
            u,
            relative_percent(s.relative_standard_uncertainty()),
            relative_percent(s.relative_expanded_uncertainty()),
        ]);
    }
    out.push_str(&t.render());
}
