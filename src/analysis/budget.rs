//! The uncertainty budget: each input's part in the law of propagation (JCGM 100:2008 7.2.5
//! asks for the components u_i(y) = |c_i| u(x_i) to be reported).

use super::lpu::MeasurandLpu;
use crate::model::Subsystem;
use crate::scenario::Study;

/// Below this share of u_c^2 an input has no first-order effect: budgets, figures and plans say
/// so instead of printing a meaningless number (common practice).
pub(crate) const NO_EFFECT_SHARE: f64 = 1e-6;

/// One line of a budget (SI).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct BudgetRow {
    /// Input index.
    pub(crate) input: usize,
    /// The input's estimate.
    pub(crate) estimate: f64,
    /// Its standard uncertainty u(x_i) as the law of propagation uses it.
    pub(crate) standard_uncertainty: f64,
    /// Sensitivity coefficient c_i.
    pub(crate) sensitivity: f64,
    /// Contribution |c_i| u(x_i), in the measurand's unit.
    pub(crate) contribution: f64,
    /// Share (c_i u(x_i))^2 / u_c^2 of the first-order variance (cross terms of correlated
    /// inputs belong to no single input, so shares then need not sum to 1).
    pub(crate) share: f64,
    /// Degrees of freedom of u(x_i), when finite.
    pub(crate) dof: Option<f64>,
    /// The part of the apparatus the input belongs to.
    pub(crate) subsystem: Subsystem,
}

/// One subsystem's part of a budget: the sum of its inputs' shares of the first-order variance
/// (the variance the measurand would keep if every other subsystem were perfect, when its inputs
/// are uncorrelated with the others').
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct SubsystemShare {
    /// The subsystem.
    pub(crate) subsystem: Subsystem,
    /// Sum of its rows' shares.
    pub(crate) share: f64,
    /// Its contribution sqrt(sum (c_i u(x_i))^2), in the measurand's SI unit.
    pub(crate) contribution: f64,
    /// How many budget rows it holds.
    pub(crate) rows: usize,
}

/// The budget summed by subsystem, largest share first (ties in [`Subsystem::ALL`] order); only
/// subsystems with a row appear.
pub(crate) fn by_subsystem(rows: &[BudgetRow]) -> Vec<SubsystemShare> {
    let mut out: Vec<SubsystemShare> = Subsystem::ALL
        .into_iter()
        .filter_map(|s| {
            let mine: Vec<&BudgetRow> = rows.iter().filter(|r| r.subsystem == s).collect();
            (!mine.is_empty()).then(|| SubsystemShare {
                subsystem: s,
                share: mine.iter().map(|r| r.share).sum(),
                contribution: mine
                    .iter()
                    .map(|r| r.contribution.powi(2))
                    .sum::<f64>()
                    .sqrt(),
                rows: mine.len(),
            })
        })
        .collect();
    out.sort_by(|a, b| {
        b.share
            .total_cmp(&a.share)
            .then(a.subsystem.cmp(&b.subsystem))
    });
    out
}

/// The budget of one measurand: every input with an uncertainty, largest contribution first
/// (ties in input order).
pub(crate) fn budget(study: &Study, lpu: &MeasurandLpu) -> Vec<BudgetRow> {
    let uc2 = lpu.standard_uncertainty.powi(2);
    let mut rows: Vec<BudgetRow> = study
        .inputs
        .iter()
        .enumerate()
        .filter(|(_, q)| !q.is_constant())
        .map(|(i, q)| {
            let u = q.gum_standard_uncertainty();
            let c = lpu.sensitivities[i];
            let contribution = (c * u).abs();
            BudgetRow {
                input: i,
                estimate: q.estimate(),
                standard_uncertainty: u,
                sensitivity: c,
                contribution,
                share: if uc2 > 0.0 {
                    contribution * contribution / uc2
                } else {
                    0.0
                },
                dof: q.dof.filter(|d| d.is_finite()),
                subsystem: q.subsystem,
            }
        })
        .collect();
    rows.sort_by(|a, b| {
        b.contribution
            .total_cmp(&a.contribution)
            .then(a.input.cmp(&b.input))
    });
    rows
}
