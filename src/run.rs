//! One study from start to finish: the trials (a fixed number, or the adaptive procedure), then
//! the findings. Shared by the command line and by programs that use the library.

use crate::analysis::{self, Findings, SensitivityMethod};
use crate::engine::sensitivity::{self, BaseSampler, MAX_SOBOL_DIMENSIONS, MAX_SOBOL_ROWS};
use crate::engine::{self, Plan, Samples, adaptive};
use crate::error::{Error, InputError};
use crate::scenario::Study;

/// How to run a study.
#[derive(Clone, Copy, Debug)]
pub struct RunOptions {
    /// Most bytes the samples may take.
    pub memory_budget: u64,
    /// Keep the input columns.
    pub keep_inputs: bool,
}

/// The storage a fixed run of the study needs, refused when over the budget.
pub fn check_memory(study: &Study, options: &RunOptions) -> Result<(), Error> {
    if study.adaptive.is_some() {
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
                "{} trials would need {} of sample storage, more than the memory budget of {}; lower `trials`, or raise the budget with --memory-budget",
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
pub struct RankOptions {
    /// Base rows N of the design.
    pub base_rows: usize,
    /// How the base samples are drawn.
    pub sampler: BaseSampler,
    /// Bootstrap replicates for the intervals.
    pub replicates: usize,
}

/// Default base rows N: 2^15 (the Ishigami indices come out within about 0.01).
pub const DEFAULT_BASE_ROWS: usize = 1 << 15;
/// Default bootstrap replicates.
pub const DEFAULT_REPLICATES: usize = 400;

/// Check a ranking's settings against the study.
pub fn check_rank(study: &Study, rank: &RankOptions) -> Result<(), Error> {
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
pub fn rank_study(
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
    let runs = sensitivity::design_runs(study, rank.base_rows, rank.sampler, study.seed)?;
    let method = SensitivityMethod {
        base_rows: rank.base_rows,
        factors: runs.factors.len(),
        sampler: match rank.sampler {
            BaseSampler::Random => "random",
            BaseSampler::Sobol => "sobol",
        },
        replicates: rank.replicates,
        confidence: study.coverage,
        grouped: runs.factors.iter().any(|f| f.len() > 1),
    };
    findings.sensitivity = Some(analysis::sensitivity_finding(
        study, &findings, &runs, &samples, method, study.seed,
    ));
    Ok(findings)
}

/// Run a study on the current rayon pool and summarise it.
pub fn run_study(study: &Study, options: &RunOptions) -> Result<(Findings, Samples), Error> {
    check_memory(study, options)?;
    match study.adaptive {
        None => {
            let plan = Plan {
                keep_inputs: options.keep_inputs,
                ..Plan::new(study.trials, study.seed)
            };
            let samples = engine::simulate(study, plan)?;
            Ok((analysis::findings(study, &samples, None), samples))
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
            Ok((findings, run.samples))
        }
    }
}
