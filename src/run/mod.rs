//! One study from start to finish: the trials (a fixed number, or the adaptive procedure), then
//! the findings; a ranking, a comparison, a plan, a sweep; shards and their merge; the commands
//! of the binary (`commands`, with their arguments in `options`) and the delivery of reports and
//! files (`deliver`, `output`). Shared by the command line and by programs that use the library.

use crate::analysis::planning::{
    self, Comparison, PlanFinding, Proposal, SweepFinding, SweepPoint, TargetSpec,
};
use crate::analysis::{self, Findings, SensitivityMethod};
use crate::engine::sensitivity::{self, BaseSampler, MAX_SOBOL_DIMENSIONS, MAX_SOBOL_ROWS};
use crate::engine::{self, Plan, Samples, adaptive};
use crate::error::{Error, InputError};
use crate::scenario::{Law, Study};

pub mod commands;
pub(crate) mod deliver;
pub mod options;
pub mod output;
pub(crate) mod part;
pub(crate) mod progress;
pub(crate) mod shard;

/// How to run a study.
#[derive(Clone, Copy, Debug)]
pub(crate) struct RunOptions {
    /// Most bytes the samples may take.
    pub(crate) memory_budget: u64,
    /// Keep the input columns, and so every value in memory (for sensitivity, figures of the
    /// distributions, the samples file and exports). Without them a long run keeps only the
    /// tails of its measurands' values (`engine::streaming`).
    pub(crate) keep_inputs: bool,
}

/// Whether a fixed run of the study fits the memory budget with its values held in memory.
pub(crate) fn fits_in_memory(study: &Study, options: &RunOptions) -> bool {
    let columns = study.model.measurands
        + if options.keep_inputs {
            study.inputs.len()
        } else {
            0
        };
    engine::memory::sample_bytes(study.trials, columns, study.coverage) <= options.memory_budget
}

/// The trials `sweep_study` will make, for a progress bar: M per pass (two passes when the
/// samples do not fit the budget), for the main run and each sweep point; `None` for an
/// adaptive run, whose length is not known in advance.
pub(crate) fn expected_trials(study: &Study, options: &RunOptions) -> Option<u64> {
    if study.adaptive.is_some() {
        return None;
    }
    let passes = |keep_inputs: bool| {
        let o = RunOptions {
            keep_inputs,
            ..*options
        };
        if fits_in_memory(study, &o) { 1 } else { 2 }
    };
    let points = study.sweep.as_ref().map_or(0, |s| s.values.len() as u64);
    Some(study.trials * (passes(options.keep_inputs) + points * passes(false)))
}

/// Refuse a run that cannot be made within the memory budget: one that must keep its input
/// columns (rank, exports) and does not fit. Others that do not fit are streamed in two passes.
pub(crate) fn check_memory(study: &Study, options: &RunOptions) -> Result<(), Error> {
    if study.adaptive.is_some() || !options.keep_inputs {
        return Ok(());
    }
    let columns = study.model.measurands
        + if options.keep_inputs {
            study.inputs.len()
        } else {
            0
        };
    let needed = engine::memory::sample_bytes(study.trials, columns, study.coverage);
    if needed > options.memory_budget {
        return Err(InputError {
            file: study.file.clone(),
            location: None,
            key: Some("trials".into()),
            message: format!(
                "{} trials with their input columns (needed here) would take {} of memory, more than the budget of {}; lower `trials`, or raise the budget with --memory-budget",
                study.trials,
                engine::memory::format_bytes(needed),
                engine::memory::format_bytes(options.memory_budget)
            ),
            example: Some("trials = 1_000_000".into()),
        }
        .into());
    }
    Ok(())
}

/// Settings of a sensitivity ranking.
#[derive(Clone, Copy, Debug)]
pub(crate) struct RankOptions {
    /// Base rows N of the design.
    pub(crate) base_rows: usize,
    /// How the base samples are drawn.
    pub(crate) sampler: BaseSampler,
    /// Bootstrap replicates for the intervals.
    pub(crate) replicates: usize,
}

/// Default base rows N: 2^15 (the Ishigami indices come out within about 0.01).
pub(crate) const DEFAULT_BASE_ROWS: usize = 1 << 15;
/// Default bootstrap replicates.
pub(crate) const DEFAULT_REPLICATES: usize = 400;

/// Check a ranking's settings against the study.
pub(crate) fn check_rank(study: &Study, rank: &RankOptions) -> Result<(), Error> {
    let k = sensitivity::factors(study).len();
    let bad = |message: String, example: &str| -> Error {
        InputError {
            file: "command line".into(),
            location: None,
            key: Some("--base-trials".into()),
            message,
            example: Some(example.into()),
        }
        .into()
    };
    if k == 0 {
        return Err(InputError {
            file: study.file.clone(),
            location: None,
            key: Some("inputs".into()),
            message: "no input quantity has a distribution, so there is nothing to rank".into(),
            example: Some("[inputs.x]\ndist = \"normal\"\nmean = 1\nsd = 0.1".into()),
        }
        .into());
    }
    if rank.base_rows < 64 || rank.base_rows > 1 << 24 {
        return Err(bad(
            format!(
                "{} base rows is out of range (64 to 16777216)",
                rank.base_rows
            ),
            "--base-trials 32768",
        ));
    }
    if rank.sampler == BaseSampler::Sobol {
        let least = 64 * analysis::sensitivity::SCRAMBLINGS;
        if rank.base_rows < least {
            return Err(bad(
                format!(
                    "the quasi-random sampler makes {} independent scramblings of N / {} rows each, so it needs at least {least} base rows (got {})",
                    analysis::sensitivity::SCRAMBLINGS,
                    analysis::sensitivity::SCRAMBLINGS,
                    rank.base_rows
                ),
                "--sampler sobol --base-trials 32768",
            ));
        }
        if rank.base_rows > MAX_SOBOL_ROWS {
            return Err(bad(
                format!(
                    "the quasi-random sampler supports at most {MAX_SOBOL_ROWS} base rows (got {})",
                    rank.base_rows
                ),
                "--sampler sobol --base-trials 65536",
            ));
        }
        let dims = study.inputs.iter().filter(|q| !q.is_constant()).count() * 2;
        if dims > MAX_SOBOL_DIMENSIONS {
            return Err(bad(
                format!(
                    "the quasi-random sampler supports at most {} varying inputs (the study has {})",
                    MAX_SOBOL_DIMENSIONS / 2,
                    dims / 2
                ),
                "--sampler random",
            ));
        }
    }
    if rank.replicates < 50 {
        return Err(InputError {
            file: "command line".into(),
            location: None,
            key: Some("--replicates".into()),
            message: format!(
                "{} bootstrap replicates are too few for an interval (at least 50)",
                rank.replicates
            ),
            example: Some("--replicates 400".into()),
        }
        .into());
    }
    Ok(())
}

/// An ordinary run that keeps its inputs, then the sensitivity design, then the ranking.
pub(crate) fn rank_study(
    study: &Study,
    options: &RunOptions,
    rank: &RankOptions,
) -> Result<Findings, Error> {
    check_rank(study, rank)?;
    let keep = RunOptions {
        keep_inputs: true,
        ..*options
    };
    let (mut findings, samples) = run_study(study, &keep)?;
    let samples = samples.ok_or_else(|| {
        Error::Run(crate::error::RunError::Numerical(
            "the ranking needs the input columns of the ordinary run in memory".into(),
        ))
    })?;
    // A pseudo-random design: one, with bootstrap intervals. A quasi-random one: independent
    // scramblings of N / R rows each (the same model runs in all), each from its own seed.
    let runs: Vec<sensitivity::DesignRuns> = match rank.sampler {
        BaseSampler::Random => vec![sensitivity::design_runs(
            study,
            rank.base_rows,
            rank.sampler,
            study.seed,
        )?],
        BaseSampler::Sobol => (0..analysis::sensitivity::SCRAMBLINGS as u64)
            .map(|r| {
                let seed = study.seed ^ (r + 1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
                sensitivity::design_runs(
                    study,
                    rank.base_rows / analysis::sensitivity::SCRAMBLINGS,
                    rank.sampler,
                    seed,
                )
            })
            .collect::<Result<_, _>>()?,
    };
    let method = SensitivityMethod {
        base_rows: rank.base_rows,
        factors: runs[0].factors.len(),
        sampler: match rank.sampler {
            BaseSampler::Random => "random",
            BaseSampler::Sobol => "sobol",
        },
        replicates: match rank.sampler {
            BaseSampler::Random => rank.replicates,
            BaseSampler::Sobol => analysis::sensitivity::SCRAMBLINGS,
        },
        confidence: study.coverage,
        grouped: runs[0].factors.iter().any(|f| f.len() > 1),
        spearman_trials: 0,
    };
    findings.sensitivity = Some(analysis::sensitivity_finding(
        study, &findings, &runs, &samples, method, study.seed,
    ));
    Ok(findings)
}

/// Run a study on the current rayon pool and summarise it.
///
/// A fixed run without input columns of 2^19 trials or more, or one whose values do not fit
/// the memory budget, keeps only the tails of its values (`engine::streaming`: one pass, or
/// two over the same streams beyond the budget), with the same results; it then returns no
/// samples.
pub(crate) fn run_study(
    study: &Study,
    options: &RunOptions,
) -> Result<(Findings, Option<Samples>), Error> {
    check_memory(study, options)?;
    match study.adaptive {
        None => {
            let plan = Plan {
                keep_inputs: options.keep_inputs,
                ..Plan::new(study.trials, study.seed)
            };
            // Without input columns, a long run keeps only the tails of its values (one pass,
            // or two beyond the memory budget), with the same results as holding them all.
            let long = study.trials >= 2 * engine::streaming::PILOT;
            let fits = fits_in_memory(study, options);
            if !options.keep_inputs && (long || !fits) {
                let run = engine::streaming::simulate_tails(study, plan, options.memory_budget)?;
                let mut findings = analysis::findings_from(study, &run.monte_carlo, None);
                if run.passes > 1 {
                    let why = if fits {
                        format!(
                            "a tail threshold set by the first {} trials proved too tight",
                            engine::streaming::PILOT
                        )
                    } else {
                        format!(
                            "the values of {} trials do not fit the memory budget of {}",
                            study.trials,
                            engine::memory::format_bytes(options.memory_budget)
                        )
                    };
                    findings.warnings.push(format!(
                        "{why}: the run was made in {} passes over the same random streams (the results are those of a run held in memory)",
                        run.passes
                    ));
                }
                return Ok((findings, None));
            }
            let samples = engine::simulate(study, plan)?;
            Ok((analysis::findings(study, &samples, None), Some(samples)))
        }
        Some(settings) => {
            let columns = study.model.measurands
                + if options.keep_inputs {
                    study.inputs.len()
                } else {
                    0
                };
            let per_trial =
                engine::memory::sample_bytes(1_000_000, columns, study.coverage) as f64 / 1e6;
            let by_memory = (options.memory_budget as f64 / per_trial) as u64;
            let cap = settings.max_trials.min(by_memory);
            let run = adaptive::simulate_adaptive(study, settings, options.keep_inputs, cap)?;
            let findings = analysis::findings(study, &run.samples, Some(&run));
            Ok((findings, Some(run.samples)))
        }
    }
}

/// Run the study and then every point of its `[sweep]` (the same seed and trials throughout);
/// the pool and the parsed study are reused, nothing is read again.
pub(crate) fn sweep_study(
    study: &Study,
    options: &RunOptions,
) -> Result<(Findings, Option<Samples>), Error> {
    let (mut findings, samples) = run_study(study, options)?;
    let Some(sweep) = &study.sweep else {
        return Ok((findings, samples));
    };
    let point_options = RunOptions {
        keep_inputs: false,
        ..*options
    };
    let mut points = Vec::with_capacity(sweep.values.len());
    for &v in &sweep.values {
        let point = study.with_input_estimate(sweep.input, v).map_err(|e| {
            Error::Run(crate::error::RunError::Numerical(format!(
                "cannot move `{}` to {v}: {e}",
                study.inputs[sweep.input].name
            )))
        })?;
        let (f, _) = run_study(&point, &point_options)?;
        points.push(SweepPoint {
            value: v,
            summary: f.measurands[sweep.measurand].monte_carlo,
        });
    }
    findings.sweep = Some(SweepFinding {
        input: sweep.input,
        measurand: sweep.measurand,
        points,
    });
    Ok((findings, samples))
}

/// Compare designs on one measurand with the same seed and trials (a paired comparison): the
/// first design's seed and trials (after its adaptive run, if it has one) apply to all.
pub(crate) fn compare_designs(
    designs: &[(String, Study)],
    options: &RunOptions,
    measurand: Option<&str>,
) -> Result<Comparison, Error> {
    let first = &designs[0].1;
    let measurand_name = match measurand {
        Some(m) => m.to_string(),
        None => first.measurands[0].name.clone(),
    };
    let mut rows = Vec::with_capacity(designs.len());
    let mut trials = first.trials;
    let seed = first.seed;
    for (k, (name, study)) in designs.iter().enumerate() {
        let Some(m) = study
            .measurands
            .iter()
            .position(|x| x.name == measurand_name)
        else {
            return Err(InputError {
                file: study.file.clone(),
                location: None,
                key: Some("--measurand".into()),
                message: format!(
                    "design `{name}` has no measurand `{measurand_name}` (it has: {})",
                    study.measurand_names()
                ),
                example: Some("--measurand power".into()),
            }
            .into());
        };
        let mut s = study.clone();
        s.seed = seed;
        if k > 0 || s.adaptive.is_none() {
            s.adaptive = None;
            s.trials = trials;
        }
        let (f, _) = run_study(&s, options)?;
        if k == 0 {
            trials = f.trials;
        }
        rows.push(planning::comparison_row(name, f, m));
    }
    planning::rank_rows(&mut rows);
    Ok(Comparison {
        rows,
        trials,
        seed,
        coverage: first.coverage,
    })
}

/// Plan the improvements that reach a target for one measurand, and check the plan by a Monte
/// Carlo run with the narrowed inputs (same seed and trials). When the check falls short (the
/// budget is first order; the model may not be linear), the plan is made again for a target
/// tightened by the ratio of target to achieved, which may improve more inputs, at most four
/// times.
pub(crate) fn plan_study(
    study: &Study,
    options: &RunOptions,
    spec: TargetSpec,
    measurand: usize,
) -> Result<PlanFinding, Error> {
    let (findings, _) = run_study(study, options)?;
    let m = &findings.measurands[measurand];
    let k = m
        .monte_carlo
        .coverage_factor
        .or(m.lpu.as_ref().map(|l| l.coverage_factor))
        .unwrap_or(2.0);
    let mut u_t = spec.standard_si(m.monte_carlo.estimate, k);
    let current = spec.express(&m.monte_carlo);
    let no_budget = || {
        Error::Run(crate::error::RunError::Numerical(format!(
            "the law of propagation is not defined for `{}` at the estimates, so there is no budget to plan from",
            m.name
        )))
    };
    let limit = |i: usize| input_limit(study, i);
    let mut proposal = planning::propose(m, u_t, &spec, k, &limit).ok_or_else(no_budget)?;
    let mut checks = 0;
    let mut verification = findings.clone();
    let mut achieved = current;
    while !proposal.changes.is_empty() {
        checks += 1;
        let mut s = study.clone();
        s.adaptive = None;
        s.trials = findings.trials;
        apply_changes(&mut s, &mut proposal.changes)?;
        let (f, _) = run_study(&s, options)?;
        achieved = spec.express(&f.measurands[measurand].monte_carlo);
        verification = f;
        if achieved <= spec.value || checks >= 4 {
            break;
        }
        u_t *= spec.value / achieved * 0.999;
        let tighter = planning::propose(m, u_t, &spec, k, &limit).ok_or_else(no_budget)?;
        if tighter.changes.is_empty() {
            break;
        }
        proposal = Proposal {
            alone: proposal.alone,
            ..tighter
        };
    }
    let met = if proposal.changes.is_empty() {
        current <= spec.value
    } else {
        achieved <= spec.value
    };
    Ok(PlanFinding {
        measurand,
        spec,
        proposal,
        achieved,
        current,
        met,
        checks,
        verification: Box::new(verification),
    })
}

/// The smallest standard uncertainty input `i` can reach: its `best`, or for `noise_force`
/// under a procedure what the most cycles give (more time beyond that is not a plan); 0 when
/// there is no limit.
fn input_limit(study: &Study, i: usize) -> f64 {
    let q = &study.inputs[i];
    if q.name == "noise_force"
        && let (Some(p), Some(floor)) = (&study.procedure, &study.noise)
    {
        return p
            .with_cycles(crate::physics::procedure::MAX_CYCLES)
            .estimator_terms(&floor.model)
            .standard_uncertainty();
    }
    q.best.unwrap_or(0.0)
}

/// Apply a plan's changes to a study: narrow each input, except `noise_force`, which is reached
/// by more cycles of the procedure (or a longer averaging time for white noise), noted in the
/// change; then derive the forecast and the noise floor again.
fn apply_changes(s: &mut Study, changes: &mut [planning::Change]) -> Result<(), Error> {
    let numerical = |m: String| Error::Run(crate::error::RunError::Numerical(m));
    for c in changes.iter_mut() {
        let name = s.inputs[c.input].name.clone();
        if name == "noise_force"
            && let Some(floor) = s.noise.as_mut()
        {
            match s.procedure.as_mut() {
                Some(p) => {
                    let cycles = p
                        .cycles_for(&floor.model, c.to)
                        .unwrap_or(crate::physics::procedure::MAX_CYCLES);
                    p.cycles = cycles;
                    c.cycles = Some(cycles);
                    c.total_time = Some(p.total_time());
                }
                None => {
                    let t = crate::physics::noise::time_for_resolution(
                        floor.density * floor.density,
                        c.to,
                    );
                    floor.settings.averaging_time = Some(t);
                    c.total_time = Some(t);
                }
            }
            continue;
        }
        if let Law::Distributed(d) = &s.inputs[c.input].law {
            let narrowed = d
                .narrowed(c.factor)
                .map_err(|e| numerical(format!("cannot narrow `{name}` by {}: {e}", c.factor)))?;
            s.inputs[c.input].law = Law::Distributed(narrowed);
        }
    }
    s.refresh().map_err(numerical)
}
