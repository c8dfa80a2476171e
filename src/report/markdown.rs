//! The proposal-ready report: a paragraph in plain words that a grant writer can paste, the
//! tables, the figures, the method with JCGM 100/101 cited, and the cautions.

use super::cautions::cautions;
use super::decisions_text::{target_value, target_words};
use super::format::{fixed, measurand_unit, relative_percent, significant, value_and_uncertainty};
use super::format::{grouped, percent, pretty_unit};
use super::{Context, Exporter, Report};
use crate::analysis::planning::{Comparison, PlanFinding};
use crate::analysis::{Findings, MeasurandFinding};

/// Where the figures are, to link them.
#[derive(Clone, Debug)]
pub(crate) struct MarkdownReport {
    /// The folder given to `--plots`, as written.
    pub(crate) figures: Option<String>,
    /// The format of the figures.
    pub(crate) plot_format: super::plots::PlotFormat,
}

fn table(headers: &[&str], rows: &[Vec<String>]) -> String {
    let mut out = format!(
        "| {} |\n|{}|\n",
        headers.join(" | "),
        headers.iter().map(|_| "---").collect::<Vec<_>>().join("|")
    );
    for r in rows {
        out.push_str(&format!("| {} |\n", r.join(" | ")));
    }
    out
}

/// How prose names an input: its label, or its name.
pub(crate) fn input_words(q: &crate::analysis::InputFinding) -> String {
    q.label.clone().unwrap_or_else(|| q.name.clone())
}

/// How prose names a measurand: its label, or its name.
pub(crate) fn measurand_words(m: &MeasurandFinding) -> String {
    m.label.clone().unwrap_or_else(|| m.name.clone())
}

/// "By part of the apparatus: balance 62 %, environment 30 %, beam 8 %."
pub(crate) fn subsystem_sentence(m: &MeasurandFinding) -> String {
    let parts: Vec<String> = m
        .by_subsystem
        .iter()
        .filter(|p| p.share >= 0.005)
        .map(|p| format!("{} {:.0} %", p.subsystem.name(), 100.0 * p.share))
        .collect();
    if parts.is_empty() {
        String::new()
    } else {
        format!(" By part of the apparatus: {}.", parts.join(", "))
    }
}

fn shares_sentence(f: &Findings, m: &MeasurandFinding) -> String {
    let parts: Vec<String> = m
        .budget
        .iter()
        .take(3)
        .filter(|b| b.share >= 0.005)
        .map(|b| {
            format!(
                "{:.0} % from {}",
                100.0 * b.share,
                input_words(&f.inputs[b.input])
            )
        })
        .collect();
    match parts.as_slice() {
        [] => String::new(),
        [one] => format!(
            " {} of the variance comes from {}.",
            one.split(" from ").next().unwrap_or(""),
            one.split(" from ").nth(1).unwrap_or("")
        ),
        [first, rest @ ..] => {
            let (head, tail) = first.split_once(" from ").unwrap_or((first, ""));
            let (last, middle) = rest
                .split_last()
                .map_or((String::new(), Vec::new()), |(l, m)| {
                    (l.clone(), m.to_vec())
                });
            let mut s = format!(" {head} of the variance comes from {tail}");
            for p in middle {
                s.push_str(&format!(", {p}"));
            }
            format!("{s} and {last}.")
        }
    }
}

/// The plain-words sentence about one measurand.
pub(crate) fn headline(f: &Findings, m: &MeasurandFinding) -> String {
    let s = &m.monte_carlo;
    let unit = measurand_unit(m);
    let (y, u, _) = value_and_uncertainty(
        s.estimate / unit.factor,
        s.standard_uncertainty / unit.factor,
    );
    let rel_u = relative_percent(s.relative_expanded_uncertainty());
    let k = s
        .coverage_factor
        .map_or("-".to_string(), |k| format!("{k:.2}"));
    let what = match (&m.label, m.name.as_str()) {
        (Some(l), _) => format!("the {l} is estimated as {y} {}", pretty_unit(&unit.symbol)),
        (None, "power") => format!(
            "a beam of about {y} {} is measured",
            pretty_unit(&unit.symbol)
        ),
        (None, name) => format!(
            "the {} is estimated as {y} {}",
            name.replace('_', " "),
            pretty_unit(&unit.symbol)
        ),
    };
    let rel = if rel_u == "-" {
        format!(
            "an expanded uncertainty of {} {}",
            value_and_uncertainty(0.0, s.expanded_uncertainty / unit.factor).1,
            pretty_unit(&unit.symbol)
        )
    } else {
        format!("a relative expanded uncertainty of {rel_u}")
    };
    format!(
        "With the design \u{201c}{}\u{201d}, {what} with {rel} (k = {k}, {} coverage probability; standard uncertainty {u} {}).{}",
        f.title,
        percent(f.coverage),
        pretty_unit(&unit.symbol),
        shares_sentence(f, m) + &subsystem_sentence(m)
    )
}

const METHOD: &str = "The uncertainty was evaluated by the Monte Carlo method of JCGM 101:2008 (Supplement 1 to the GUM, propagation of distributions): every input quantity was drawn from its stated probability distribution, the measurement model evaluated for each draw, and the estimate, standard uncertainty and coverage intervals taken from the model values (JCGM 101 7.5 to 7.7). The law of propagation of uncertainty of JCGM 100:2008 (GUM) was applied beside it, with exact sensitivity coefficients, and validated against the Monte Carlo result as JCGM 101 clause 8 describes. Uncertainties are rounded to two significant digits (JCGM 100 7.2.6).";

impl MarkdownReport {
    fn figures_section(&self, names: &[(String, String)]) -> String {
        let Some(dir) = &self.figures else {
            return String::new();
        };
        if names.is_empty() {
            return String::new();
        }
        let mut out = "\n## Figures\n\n".to_string();
        for (file, caption) in names {
            out.push_str(&format!("![{caption}]({dir}/{file})\n\n"));
        }
        out
    }

    fn cautions(laser: bool) -> String {
        let mut out = "\n## Cautions\n\n".to_string();
        for c in cautions(laser) {
            out.push_str(&format!("- {c}\n"));
        }
        out
    }

    /// The report of a run.
    fn run(&self, f: &Findings) -> String {
        let mut out = format!("# {}\n\n", f.title);
        for m in &f.measurands {
            out.push_str(&headline(f, m));
            out.push_str("\n\n");
        }
        let p = percent(f.coverage);
        out.push_str(&format!(
            "## Results (Monte Carlo method, JCGM 101:2008; M = {} trials, seed {})\n\n",
            grouped(f.trials),
            f.seed
        ));
        let rows: Vec<Vec<String>> = f
            .measurands
            .iter()
            .map(|m| {
                let unit = measurand_unit(m);
                let s = &m.monte_carlo;
                let (y, u, e) = value_and_uncertainty(
                    s.estimate / unit.factor,
                    s.standard_uncertainty / unit.factor,
                );
                let iv = |(a, b): (f64, f64)| {
                    format!(
                        "[{}, {}]",
                        fixed(a / unit.factor, e),
                        fixed(b / unit.factor, e)
                    )
                };
                vec![
                    m.name.clone(),
                    pretty_unit(&unit.symbol),
                    y,
                    u,
                    relative_percent(s.relative_standard_uncertainty()),
                    iv(s.symmetric_interval),
                    iv(s.shortest_interval),
                    s.coverage_factor.map_or("-".into(), |k| format!("{k:.2}")),
                ]
            })
            .collect();
        out.push_str(&table(
            &[
                "measurand",
                "unit",
                "estimate",
                "u",
                "u rel.",
                &format!("{p} interval (symmetric)"),
                &format!("{p} interval (shortest)"),
                "k",
            ],
            &rows,
        ));
        for m in f.measurands.iter().filter(|m| !m.budget.is_empty()) {
            let unit = measurand_unit(m);
            out.push_str(&format!(
                "\n## Uncertainty budget of {} ({})\n\n",
                measurand_words(m),
                pretty_unit(&unit.symbol)
            ));
            if let (Some(l), Some(v)) = (&m.lpu, &m.validation) {
                out.push_str(&format!(
                    "Law of propagation (JCGM 100:2008): u_c = {} {}{}, effective degrees of freedom {}, k = {:.3}; {} against the Monte Carlo result (JCGM 101 clause 8, delta = {} {}).\n\n",
                    value_and_uncertainty(0.0, l.standard_uncertainty / unit.factor).1,
                    pretty_unit(&unit.symbol),
                    l.higher_order_standard_uncertainty.map_or(String::new(), |h| format!(" ({} with the higher-order terms)", value_and_uncertainty(0.0, h / unit.factor).1)),
                    if l.effective_dof.is_finite() { format!("{:.0}", l.effective_dof.floor()) } else { "infinite".into() },
                    l.coverage_factor,
                    if v.first_order.validated { "validated" } else { "not validated" },
                    significant(v.first_order.delta / unit.factor, 1),
                    pretty_unit(&unit.symbol)
                ));
                if let Some(words) = super::format::validation_words(f, m) {
                    out.push_str(&format!("{words}\n\n"));
                }
            }
            let mut rows: Vec<Vec<String>> = Vec::new();
            for part in &m.by_subsystem {
                rows.push(vec![
                    format!("**{}** ({})", part.subsystem.name(), part.rows),
                    String::new(),
                    String::new(),
                    String::new(),
                    format!(
                        "**{} {}**",
                        significant(part.contribution / unit.factor, 2),
                        pretty_unit(&unit.symbol)
                    ),
                    format!("**{:.1} %**", 100.0 * part.share),
                ]);
                for b in m.budget.iter().filter(|b| b.subsystem == part.subsystem) {
                    let q = &f.inputs[b.input];
                    let (est, u, shown) = super::format::input_pair(
                        b.estimate,
                        Some(b.standard_uncertainty),
                        &q.shown_unit,
                        q.dimension,
                    );
                    let shown = pretty_unit(&shown);
                    let no_effect = b.share < crate::analysis::budget::NO_EFFECT_SHARE;
                    rows.push(vec![
                        format!("&nbsp;&nbsp;{}", input_words(q)),
                        q.distribution.clone(),
                        format!("{est} {shown}").trim().to_string(),
                        format!("{u} {shown}").trim().to_string(),
                        if no_effect {
                            "nil (1st order)".into()
                        } else {
                            format!(
                                "{} {}",
                                significant(b.contribution / unit.factor, 2),
                                pretty_unit(&unit.symbol)
                            )
                        },
                        if no_effect {
                            "< 1e-4 %".into()
                        } else {
                            format!("{:.1} %", 100.0 * b.share)
                        },
                    ]);
                }
            }
            out.push_str(&table(
                &[
                    "part of the apparatus / input",
                    "distribution",
                    "estimate",
                    "u(x)",
                    "contribution",
                    "share of u²",
                ],
                &rows,
            ));
        }
        out.push_str(&noise_and_procedure(f));
        out.push_str(&self.figures_section(&super::plots::figure_names(f, self.plot_format)));
        out.push_str(&format!(
            "\n## Method\n\n{METHOD} Random streams: {}.\n",
            f.generator
        ));
        out.push_str(&Self::cautions(f.laser));
        out
    }

    /// The report of a comparison.
    fn comparison(&self, c: &Comparison) -> String {
        let mut order: Vec<usize> = (0..c.rows.len()).collect();
        order.sort_by_key(|i| c.rows[*i].rank);
        let best = &c.rows[order[0]];
        let m = &best.findings.measurands[best.measurand];
        let mut out = format!("# Designs compared on `{}`\n\n", m.name);
        let others: Vec<String> = order[1..]
            .iter()
            .map(|i| {
                format!(
                    "{} % with {}",
                    significant(100.0 * c.rows[*i].relative_expanded_uncertainty, 2),
                    c.rows[*i].name
                )
            })
            .collect();
        out.push_str(&format!(
            "Of {} designs, {} reaches the smallest relative expanded uncertainty of `{}`: {} % ({} coverage probability){}. All designs were evaluated with the same {} Monte Carlo trials and seed {}, so the comparison is paired.\n\n",
            c.rows.len(),
            best.name,
            m.name,
            significant(100.0 * best.relative_expanded_uncertainty, 2),
            percent(c.coverage),
            if others.is_empty() { String::new() } else { format!(", against {}", others.join(", ")) },
            grouped(c.trials),
            c.seed
        ));
        for i in &order {
            let r = &c.rows[*i];
            out.push_str(&format!(
                "- {}\n",
                headline(&r.findings, &r.findings.measurands[r.measurand])
            ));
        }
        out.push('\n');
        let rows: Vec<Vec<String>> = order
            .iter()
            .map(|i| {
                let r = &c.rows[*i];
                let mf = &r.findings.measurands[r.measurand];
                let unit = measurand_unit(mf);
                let s = &r.summary;
                let (y, u, _) = value_and_uncertainty(
                    s.estimate / unit.factor,
                    s.standard_uncertainty / unit.factor,
                );
                vec![
                    format!("{}", r.rank),
                    r.name.clone(),
                    format!("{y} {}", pretty_unit(&unit.symbol)),
                    format!("{u} {}", pretty_unit(&unit.symbol)),
                    format!(
                        "{} %",
                        significant(100.0 * r.relative_expanded_uncertainty, 2)
                    ),
                    r.top
                        .iter()
                        .map(|(n, sh)| format!("{} ({:.0} %)", r.input_called(n), 100.0 * sh))
                        .collect::<Vec<_>>()
                        .join(", "),
                ]
            })
            .collect();
        out.push_str(&table(
            &[
                "rank",
                "design",
                "estimate",
                "u",
                "relative U",
                "largest contributors",
            ],
            &rows,
        ));
        if let Some(dir) = &self.figures {
            out.push_str(&format!(
                "\n![Coverage intervals of the designs]({dir}/comparison.svg)\n"
            ));
        }
        out.push_str(&format!("\n## Method\n\n{METHOD}\n"));
        out.push_str(&Self::cautions(c.rows.iter().any(|r| r.findings.laser)));
        out
    }

    /// The report of a plan.
    fn plan(&self, p: &PlanFinding) -> String {
        let f = &p.verification;
        let m = &f.measurands[p.measurand];
        let mut out = format!(
            "# Plan: {} of `{}` for {}\n\n",
            target_words(p, f.coverage),
            m.name,
            f.title
        );
        let changes: Vec<String> = p
            .proposal
            .changes
            .iter()
            .map(|c| {
                let how = match (c.cycles, c.total_time) {
                    (Some(n), Some(t)) => format!(
                        " ({n} cycles, {} of measurement)",
                        super::format::duration(t)
                    ),
                    (None, Some(t)) => format!(" ({} of averaging)", super::format::duration(t)),
                    _ if c.at_limit => " (to its limit)".to_string(),
                    _ => String::new(),
                };
                format!(
                    "{} by a factor {}{how}",
                    f.inputs[c.input].name,
                    significant(c.factor, 2)
                )
            })
            .collect();
        let verdict = if p.proposal.changes.is_empty() {
            if p.met {
                "The current design already meets it.".to_string()
            } else {
                p.proposal.explanation.clone() + "."
            }
        } else {
            format!(
                "Improving the standard uncertainty of {} brings it to {} in a Monte Carlo check with the improved inputs ({} trials): the target is {}.",
                changes.join(" and "),
                target_value(p, p.achieved),
                grouped(f.trials),
                if p.met { "met" } else { "not met" }
            )
        };
        out.push_str(&format!(
            "The target is a {} of {}; the design reaches {} today. {verdict}\n\n",
            target_words(p, f.coverage),
            target_value(p, p.spec.value),
            target_value(p, p.current)
        ));
        let rows: Vec<Vec<String>> = p
            .proposal
            .alone
            .iter()
            .map(|a| {
                let q = &f.inputs[a.input];
                let show = |u: f64| {
                    format!(
                        "{} {}",
                        significant(u / q.shown_unit.factor, 3),
                        pretty_unit(&q.shown_unit.symbol)
                    )
                    .trim()
                    .to_string()
                };
                if a.no_effect {
                    return vec![
                        input_words(q),
                        show(a.current),
                        "no effect (1st order)".into(),
                        "-".into(),
                    ];
                }
                vec![
                    input_words(q),
                    show(a.current),
                    a.needed.map_or("cannot reach alone".into(), show),
                    if a.needed.is_none() {
                        target_value(p, a.floor)
                    } else {
                        "-".into()
                    },
                ]
            })
            .collect();
        out.push_str(&table(
            &[
                "input",
                "u now",
                "u needed alone",
                "floor left by the others",
            ],
            &rows,
        ));
        out.push_str(&format!(
            "\nHow the plan was chosen: {}.\n",
            p.proposal.explanation
        ));
        out.push_str(&format!("\n## Method\n\n{METHOD} The plan uses the first-order uncertainty budget and is then checked by a Monte Carlo run.\n"));
        out.push_str(&Self::cautions(f.laser));
        out
    }
}

impl Exporter for MarkdownReport {
    fn new(context: &Context) -> Self {
        MarkdownReport {
            figures: context.figures.clone(),
            plot_format: context.plot_format,
        }
    }
    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String> {
        Ok(match report {
            Report::Run(f) => self.run(f),
            Report::Compare(c) => self.comparison(c),
            Report::Plan(p) => self.plan(p),
        }
        .into_bytes())
    }
}

/// The noise, the forecast and the planned measurement, in words.
fn noise_and_procedure(f: &Findings) -> String {
    use super::format::{duration, force_text};
    let mut out = String::new();
    if let Some(fc) = &f.forecast {
        out.push_str(&format!(
            "\n## Forecast\n\nThis is a forecast for a laser power of {} W: the {} the meter would show, {} {}, is predicted from the model at the input estimates and held as an exact constant, since there is no observation yet. The uncertainty is what the meter can claim at that power.\n",
            significant(fc.power, 4),
            fc.input,
            significant(fc.value / fc.unit.factor, 6),
            pretty_unit(&fc.unit.symbol)
        ));
    }
    if let Some(n) = &f.noise {
        let m = &n.model;
        let mut terms = vec![format!("white {}/sqrt(Hz)", force_text(m.white))];
        if m.flicker > 0.0 {
            terms.push(format!("a flicker floor of {}", force_text(m.flicker)));
        }
        if m.random_walk > 0.0 {
            terms.push(format!(
                "a random walk K = {}/sqrt(s)",
                force_text(m.random_walk)
            ));
        }
        if m.drift != 0.0 {
            terms.push(format!("a drift of {}/min", force_text(m.drift * 60.0)));
        }
        out.push_str(&format!(
            "\n## Noise of the instrument\n\nThe force noise at the balance's output is {}{}. Convention: {}.\n",
            terms.join(", "),
            n.measured.as_ref().map_or(String::new(), |meas| format!(
                ", fitted by weighted least squares to the overlapping Allan deviation (NIST SP 1065) of the {}",
                meas.source
            )),
            crate::physics::noise::PSD_CONVENTION
        ));
        if let (Some(t), Some(need)) = (n.averaging_time, n.time_for_target) {
            out.push_str(&format!(
                "\nAveraged for {}, it leaves a force resolution of {}, which enters the budget as `noise_force`; a resolution of {} would need {} of averaging.\n",
                duration(t),
                force_text(n.resolution),
                force_text(n.target_resolution),
                duration(need)
            ));
        }
    }
    if let Some(p) = &f.procedure {
        let pr = &p.procedure;
        out.push_str(&format!(
            "\n## Measurement procedure\n\n{} pattern, {} cycles of {} with the laser on and {} off, the first {} of every phase discarded: {} in all. The estimator's noise, {} (white {}, flicker {}, random walk {}; drift bias {}), enters the budget as `noise_force`.",
            pr.pattern.name(),
            pr.cycles,
            duration(pr.on_time),
            duration(pr.off_time),
            duration(pr.settle_time),
            duration(p.total_time),
            force_text(p.estimator_sd),
            force_text(p.terms.white),
            force_text(p.terms.flicker),
            force_text(p.terms.random_walk),
            force_text(p.terms.drift_bias.abs())
        ));
        if p.settling_factor != 1.0 {
            out.push_str(&format!(
                " The windows see a fraction {:.6} of a force step through the instrument's response (the settling factor; the model divides by it, so its uncertainty is propagated).",
                p.settling_factor
            ));
        }
        out.push_str(&match p.cycles_for_target {
            Some(c) => format!(
                " A force resolution of {} takes {c} cycles of these phases ({}).",
                force_text(p.target_resolution),
                duration(pr.with_cycles(c).total_time())
            ),
            None => format!(
                " A force resolution of {} is not reached by more cycles of these phases.",
                force_text(p.target_resolution)
            ),
        });
        if let Some((b, bt)) = &p.best {
            out.push_str(&format!(
                " For the same time, phases of {} on and {} off ({} cycles) would give {}.",
                duration(b.on_time),
                duration(b.off_time),
                b.cycles,
                force_text(bt.standard_uncertainty())
            ));
        }
        out.push('\n');
    }
    out
}
