//! Statistics on the samples: the Monte Carlo summary of each measurand, the law of propagation
//! beside it with its validation and budget, correlations, gathered into [`Findings`]. Reports
//! only format these.

pub(crate) mod budget;
pub(crate) mod lpu;
pub(crate) mod planning;
pub(crate) mod procedure;
pub mod sensitivity;
pub(crate) mod validation;

use crate::engine::adaptive::AdaptiveRun;
use crate::engine::{self, Samples};
pub(crate) use crate::engine::{MonteCarlo, Shape};
use crate::scenario::{InputQuantity, Study};
pub(crate) use crate::stats::Summary;
use crate::stats::moments::CoMoments;
use crate::stats::numerical_tolerance;
use crate::units::{Dimension, DisplayUnit};
use budget::BudgetRow;
use lpu::MeasurandLpu;
use validation::{Validation, validate};

/// The LPU validated against the Monte Carlo result (JCGM 101 clause 8), first order and with
/// the higher-order terms.
#[derive(Clone, Debug)]
pub(crate) struct ValidationFinding {
    /// First-order LPU.
    pub(crate) first_order: Validation,
    /// LPU with the higher-order terms, when they exist.
    pub(crate) higher_order: Option<Validation>,
}

/// What the report says about one measurand.
#[derive(Clone, Debug)]
pub(crate) struct MeasurandFinding {
    /// Name.
    pub(crate) name: String,
    /// What it is.
    pub(crate) description: String,
    /// The unit it is reported in (declared in the scenario, or SI).
    pub(crate) unit: DisplayUnit,
    /// Whether the unit was declared by the scenario (else the report may pick a prefix).
    pub(crate) unit_declared: bool,
    /// Its dimension, when known.
    pub(crate) dimension: Option<Dimension>,
    /// The Monte Carlo result in SI.
    pub(crate) monte_carlo: Summary,
    /// The law of propagation, when defined at the estimates.
    pub(crate) lpu: Option<MeasurandLpu>,
    /// The validation of the LPU.
    pub(crate) validation: Option<ValidationFinding>,
    /// The uncertainty budget.
    pub(crate) budget: Vec<BudgetRow>,
    /// The budget summed by subsystem, largest share first.
    pub(crate) by_subsystem: Vec<budget::SubsystemShare>,
    /// Words for it from the scenario (`label`), when given.
    pub(crate) label: Option<String>,
    /// The shape of its distribution, for figures (when the values were in memory).
    pub(crate) shape: Option<Shape>,
}

/// What the report says about one input quantity.
#[derive(Clone, Debug)]
pub(crate) struct InputFinding {
    /// Name.
    pub(crate) name: String,
    /// Distribution family or "constant".
    pub(crate) distribution: String,
    /// Estimate (expectation), SI.
    pub(crate) estimate: f64,
    /// Standard deviation of its distribution, SI; `None` when infinite.
    pub(crate) standard_uncertainty: Option<f64>,
    /// Degrees of freedom, when finite and known.
    pub(crate) dof: Option<f64>,
    /// SI unit symbol.
    pub(crate) si_unit: String,
    /// Its dimension, when known.
    pub(crate) dimension: Option<Dimension>,
    /// The unit the scenario wrote it in.
    pub(crate) shown_unit: DisplayUnit,
    /// Its sampled histogram against its stated density (when its column was kept).
    pub(crate) shape: Option<Shape>,
    /// The part of the apparatus it belongs to.
    pub(crate) subsystem: crate::model::Subsystem,
    /// Words for it from the scenario (`label`), when given.
    pub(crate) label: Option<String>,
}

/// A correlation coefficient asked for between two inputs, and what the trials achieved.
#[derive(Clone, Debug)]
pub(crate) struct InputCorrelationFinding {
    /// First input's name.
    pub(crate) a: String,
    /// Second input's name.
    pub(crate) b: String,
    /// The coefficient stated (of the normal scores for non-normal inputs).
    pub(crate) coefficient: f64,
    /// The Pearson correlation of the sampled values.
    pub(crate) achieved: Option<f64>,
}

/// Correlation matrices of several measurands (JCGM 102:2011).
#[derive(Clone, Debug)]
pub(crate) struct MeasurandCorrelation {
    /// Measurand names, the order of rows and columns.
    pub(crate) names: Vec<String>,
    /// From the trials (`None` where undefined: a measurand that does not vary).
    pub(crate) monte_carlo: Vec<Vec<Option<f64>>>,
    /// From the law of propagation (`None` where a measurand has no LPU or u_c = 0).
    pub(crate) lpu: Vec<Vec<Option<f64>>>,
}

/// How an adaptive run went.
#[derive(Clone, Debug)]
pub(crate) struct AdaptiveFinding {
    /// Significant digits asked for.
    pub(crate) digits: u32,
    /// Trials per batch.
    pub(crate) batch_trials: u64,
    /// Batches used.
    pub(crate) batches: usize,
    /// Whether the stopping rule was met.
    pub(crate) converged: bool,
}

/// One factor's line in a sensitivity ranking.
#[derive(Clone, Debug)]
pub(crate) struct SensitivityRow {
    /// The input's name, or the names of a correlated group joined by "+".
    pub(crate) name: String,
    /// The indices and their intervals.
    pub(crate) indices: sensitivity::FactorIndices,
    /// Spearman rank correlation of the input with the measurand in the ordinary run (single
    /// inputs only).
    pub(crate) spearman: Option<f64>,
    /// The input's share of the first-order LPU variance (summed over a group's members).
    pub(crate) lpu_share: Option<f64>,
    /// Whether ST - S1 exceeds [`sensitivity::INTERACTION_GAP`].
    pub(crate) interaction: bool,
}

/// How a sensitivity analysis was made.
#[derive(Clone, Debug)]
pub(crate) struct SensitivityMethod {
    /// Base rows N.
    pub(crate) base_rows: usize,
    /// Number of factors k.
    pub(crate) factors: usize,
    /// "random" or "sobol".
    pub(crate) sampler: &'static str,
    /// Bootstrap replicates (pseudo-random designs) or independent scramblings (Sobol designs).
    pub(crate) replicates: usize,
    /// Confidence level of the intervals.
    pub(crate) confidence: f64,
    /// Whether some factors are correlated groups.
    pub(crate) grouped: bool,
    /// Trials of the ordinary run over which Spearman's correlations are computed (the first
    /// ones, at most [`sensitivity::SPEARMAN_TRIALS`]); filled in by [`sensitivity_finding`].
    pub(crate) spearman_trials: usize,
}

/// The sensitivity ranking of every measurand.
#[derive(Clone, Debug)]
pub(crate) struct SensitivityFinding {
    /// How it was made.
    pub(crate) method: SensitivityMethod,
    /// Per measurand (report order), rows ranked by total index.
    pub(crate) measurands: Vec<Vec<SensitivityRow>>,
}

/// Everything a report shows.
#[derive(Clone, Debug)]
pub struct Findings {
    /// Scenario file.
    pub(crate) file: String,
    /// Title.
    pub(crate) title: String,
    /// Trials used.
    pub(crate) trials: u64,
    /// Seed.
    pub(crate) seed: u64,
    /// Coverage probability.
    pub(crate) coverage: f64,
    /// ndig of the numerical tolerance.
    pub(crate) digits: u32,
    /// Generator description.
    pub(crate) generator: String,
    /// Crate versions that define the streams.
    pub(crate) stream_crates: Vec<(&'static str, &'static str)>,
    /// The chain's name, if any.
    pub(crate) chain: Option<&'static str>,
    /// Whether the laser caution applies.
    pub(crate) laser: bool,
    /// Measurands.
    pub(crate) measurands: Vec<MeasurandFinding>,
    /// Inputs.
    pub(crate) inputs: Vec<InputFinding>,
    /// Correlated input pairs.
    pub(crate) input_correlations: Vec<InputCorrelationFinding>,
    /// Correlation of the measurands, when there are several.
    pub(crate) correlation: Option<MeasurandCorrelation>,
    /// The adaptive procedure, when used.
    pub(crate) adaptive: Option<AdaptiveFinding>,
    /// The sensitivity ranking, from `radforce rank`.
    pub(crate) sensitivity: Option<SensitivityFinding>,
    /// The noise floor from `[noise]`.
    pub(crate) noise: Option<crate::scenario::NoiseFloor>,
    /// The forecast from `[forecast]`.
    pub forecast: Option<procedure::ForecastFinding>,
    /// The planned measurement from `[procedure]` under `[noise]`.
    pub procedure: Option<procedure::ProcedureFinding>,
    /// The sweep from `[sweep]`.
    pub(crate) sweep: Option<planning::SweepFinding>,
    /// Names of the variants in the scenario file.
    pub(crate) variants: Vec<String>,
    /// Warnings from loading and running.
    pub(crate) warnings: Vec<String>,
}

fn input_finding(q: &InputQuantity) -> InputFinding {
    let sd = q.standard_deviation();
    InputFinding {
        name: q.name.clone(),
        distribution: q.family().to_string(),
        estimate: q.estimate(),
        standard_uncertainty: sd.is_finite().then_some(sd),
        dof: q.dof.filter(|d| d.is_finite()),
        si_unit: q.dimension.map_or(String::new(), Dimension::si_symbol),
        dimension: q.dimension,
        shown_unit: q.shown_unit.clone(),
        shape: None,
        subsystem: q.subsystem,
        label: q.label.clone(),
    }
}

/// Pearson correlation matrix of `n` measurands from their merged joint moments (in the order of
/// `engine::measurand_pair_order`); `None` where it is undefined (a measurand that does not vary).
pub(crate) fn correlation_from_pairs(n: usize, pairs: &[CoMoments]) -> Vec<Vec<Option<f64>>> {
    let mut out = vec![vec![Some(1.0); n]; n];
    for ((a, b), c) in engine::measurand_pair_order(n).into_iter().zip(pairs) {
        let r = c.correlation();
        out[a][b] = r;
        out[b][a] = r;
    }
    out
}

/// Pearson correlation matrix of columns, from per-chunk joint moments merged in chunk order
/// (the same numbers as [`correlation_from_pairs`] on the engine's pairs).
#[cfg(test)]
pub(crate) fn sample_correlation(columns: &[Vec<f64>]) -> Vec<Vec<Option<f64>>> {
    use rayon::prelude::*;
    let n = columns.len();
    let mut out = vec![vec![Some(1.0); n]; n];
    for a in 0..n {
        for b in a + 1..n {
            let parts: Vec<CoMoments> = columns[a]
                .par_chunks(engine::CHUNK_TRIALS)
                .zip(columns[b].par_chunks(engine::CHUNK_TRIALS))
                .map(|(x, y)| CoMoments::of(x, y))
                .collect();
            let total = parts.iter().fold(CoMoments::EMPTY, |acc, p| acc.merge(p));
            let r = total.correlation();
            out[a][b] = r;
            out[b][a] = r;
        }
    }
    out
}

/// Summarise a run: Monte Carlo results, the LPU beside them, validation, budgets and
/// correlations.
pub fn findings(study: &Study, samples: &Samples, adaptive: Option<&AdaptiveRun>) -> Findings {
    findings_from(study, &MonteCarlo::from_samples(study, samples), adaptive)
}

/// Summarise a run from its Monte Carlo result.
pub(crate) fn findings_from(
    study: &Study,
    mc: &MonteCarlo,
    adaptive: Option<&AdaptiveRun>,
) -> Findings {
    let mcr = mc;
    let lpu = lpu::propagate(study);
    let mut warnings = study.warnings.clone();
    let summaries = &mc.summaries;
    let measurands: Vec<MeasurandFinding> = study
        .measurands
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let mc = summaries[i];
            let factor = study.reporting_factor(i);
            let lpu_m = lpu.measurands[i].clone();
            if lpu_m.is_none() {
                warnings.push(format!(
                    "the law of propagation is not defined for `{}` at the input estimates (the model or a derivative is not finite there)",
                    m.name
                ));
            }
            let validation = lpu_m.as_ref().map(|l| {
                let delta = numerical_tolerance(mc.standard_uncertainty / factor, study.digits) * factor;
                let k = l.coverage_factor;
                ValidationFinding {
                    first_order: validate(l.estimate, k * l.standard_uncertainty, mc.symmetric_interval, delta),
                    higher_order: l
                        .higher_order_standard_uncertainty
                        .map(|uh| validate(l.estimate, k * uh, mc.symmetric_interval, delta)),
                }
            });
            let budget = lpu_m.as_ref().map_or_else(Vec::new, |l| budget::budget(study, l));
            MeasurandFinding {
                name: m.name.clone(),
                description: m.description.clone(),
                unit: m
                    .unit
                    .clone()
                    .unwrap_or_else(|| DisplayUnit::si(m.dimension.unwrap_or(Dimension::NONE))),
                unit_declared: m.unit.is_some(),
                dimension: m.dimension,
                monte_carlo: mc,
                lpu: lpu_m,
                validation,
                by_subsystem: budget::by_subsystem(&budget),
                budget,
                label: m.label.clone(),
                shape: mcr.shapes.get(i).cloned().flatten(),
            }
        })
        .collect();
    let correlation = (measurands.len() > 1).then(|| {
        let lpu_corr = (0..measurands.len())
            .map(|a| {
                (0..measurands.len())
                    .map(|b| {
                        let (ua, ub) = (lpu.covariance[a][a].sqrt(), lpu.covariance[b][b].sqrt());
                        let defined = measurands[a].lpu.is_some()
                            && measurands[b].lpu.is_some()
                            && ua > 0.0
                            && ub > 0.0;
                        defined.then(|| (lpu.covariance[a][b] / (ua * ub)).clamp(-1.0, 1.0))
                    })
                    .collect()
            })
            .collect();
        MeasurandCorrelation {
            names: measurands.iter().map(|m| m.name.clone()).collect(),
            monte_carlo: correlation_from_pairs(measurands.len(), &mc.measurand_pairs),
            lpu: lpu_corr,
        }
    });
    let input_correlations = study
        .correlations
        .pairs
        .iter()
        .zip(&mc.input_pairs)
        .map(|(p, c)| InputCorrelationFinding {
            a: study.inputs[p.a].name.clone(),
            b: study.inputs[p.b].name.clone(),
            coefficient: p.coefficient,
            achieved: c.correlation(),
        })
        .collect();
    let adaptive_finding = adaptive.map(|a| AdaptiveFinding {
        digits: study.digits,
        batch_trials: a.batch_trials,
        batches: a.batches.len(),
        converged: a.converged,
    });
    if let Some(a) = &adaptive_finding
        && !a.converged
    {
        warnings.push(format!(
            "the adaptive procedure stopped at its cap of {} trials before the results were stable to {} significant digits; raise [adaptive] max_trials",
            a.batch_trials * a.batches as u64,
            a.digits
        ));
    }
    let procedure = procedure::procedure_finding(study);
    if let Some(r) = procedure.as_ref().and_then(|p| p.ring_down.as_ref()) {
        warnings.push(procedure::ring_down_warning(r));
    }
    Findings {
        file: study.file.clone(),
        title: study.title.clone(),
        trials: mc.trials,
        seed: study.seed,
        coverage: study.coverage,
        digits: study.digits,
        generator: engine::generator_description(),
        stream_crates: engine::stream_crates(),
        chain: study.chain.map(|c| c.spec().name),
        laser: study.laser,
        measurands,
        inputs: study
            .inputs
            .iter()
            .enumerate()
            .map(|(i, q)| InputFinding {
                shape: mcr.input_shapes.get(i).cloned().flatten(),
                ..input_finding(q)
            })
            .collect(),
        input_correlations,
        correlation,
        adaptive: adaptive_finding,
        sensitivity: None,
        noise: study.noise.clone(),
        forecast: procedure::forecast_finding(study),
        procedure,
        sweep: None,
        variants: study.variants.clone(),
        warnings,
    }
}

/// Build the sensitivity ranking from a design's runs and an ordinary run that kept its input
/// columns (for Spearman's correlation).
pub(crate) fn sensitivity_finding(
    study: &Study,
    findings: &Findings,
    runs: &[crate::engine::sensitivity::DesignRuns],
    samples: &Samples,
    method: SensitivityMethod,
    seed: u64,
) -> SensitivityFinding {
    // Spearman's correlations over the first trials of the ordinary run: its standard error,
    // about 1/sqrt(n), is 0.002 at the 2^18 trials used at most, below the three decimals
    // reported, and ranking stays a small part of the ranking's time at any number of trials.
    let n = samples
        .measurands
        .first()
        .map_or(0, Vec::len)
        .min(sensitivity::SPEARMAN_TRIALS);
    let mut method = method;
    method.spearman_trials = n;
    let input_ranks: Vec<Option<Vec<f64>>> = match &samples.inputs {
        Some(cols) => {
            let varying: Vec<&[f64]> = cols
                .iter()
                .zip(&study.inputs)
                .filter(|(_, q)| !q.is_constant())
                .map(|(c, _)| &c[..n])
                .collect();
            let mut ranked = sensitivity::rank_columns(&varying).into_iter();
            study
                .inputs
                .iter()
                .map(|q| if q.is_constant() { None } else { ranked.next() })
                .collect()
        }
        None => vec![None; study.inputs.len()],
    };
    let meas_cols: Vec<&[f64]> = samples.measurands.iter().map(|c| &c[..n]).collect();
    let meas_ranks = sensitivity::rank_columns(&meas_cols);
    let all = match runs {
        [one] => sensitivity::indices(one, method.confidence, method.replicates, seed),
        several => sensitivity::scrambled_indices(several, method.confidence),
    };
    let measurands = all
        .into_iter()
        .enumerate()
        .map(|(m, factors)| {
            let mut rows: Vec<SensitivityRow> = factors
                .into_iter()
                .map(|ix| {
                    let name = ix
                        .members
                        .iter()
                        .map(|i| study.inputs[*i].name.as_str())
                        .collect::<Vec<_>>()
                        .join("+");
                    let spearman = match ix.members.as_slice() {
                        [i] => input_ranks[*i]
                            .as_ref()
                            .and_then(|r| sensitivity::spearman_ranked(r, &meas_ranks[m])),
                        _ => None,
                    };
                    let lpu_share = (!findings.measurands[m].budget.is_empty()).then(|| {
                        findings.measurands[m]
                            .budget
                            .iter()
                            .filter(|b| ix.members.contains(&b.input))
                            .map(|b| b.share)
                            .sum()
                    });
                    let interaction = ix.total - ix.first_order > sensitivity::INTERACTION_GAP;
                    SensitivityRow {
                        name,
                        indices: ix,
                        spearman,
                        lpu_share,
                        interaction,
                    }
                })
                .collect();
            rows.sort_by(|a, b| b.indices.total.total_cmp(&a.indices.total));
            rows
        })
        .collect();
    SensitivityFinding { method, measurands }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The correlation matrix from the engine's merged pairs is the one computed from the
    // columns afterwards (same chunks, same order).
    #[test]
    fn correlation_from_the_engine_equals_the_columns() {
        let study = crate::scenario::load_file(std::path::Path::new(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/data/torsion-vacuum-20w.toml"
        )))
        .unwrap();
        let s = engine::simulate(&study, engine::Plan::new(100_000, 3)).unwrap();
        assert_eq!(
            correlation_from_pairs(3, &s.measurand_pairs),
            sample_correlation(&s.measurands)
        );
    }
}
