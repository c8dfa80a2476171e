//! One study from start to finish: the trials (a fixed number, or the adaptive procedure), then
//! the findings. Shared by the command line and by programs that use the library.

use crate::analysis::{self, Findings};
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
