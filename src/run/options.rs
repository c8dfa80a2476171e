//! What the commands take: the scenario and how to run it, where the report goes, and the
//! command-line values that need reading (`--trials`, `--seed`, `--memory-budget`, `--target`,
//! `--measurand`, `--shard`). The argument structs derive clap's `Args`, so the binary only
//! composes them; their doc comments are the help text.

use super::RunOptions;
use crate::analysis::planning::TargetSpec;
use crate::engine;
use crate::engine::sensitivity::BaseSampler;
use crate::error::{Error, InputError};
use crate::report::{Format, PlotFormat};
use crate::scenario::{self, Study};
use crate::units::{Dimension, parse_quantity};
use std::path::PathBuf;

/// An error in a command-line value (exit code 2), naming the option and a valid example.
pub(crate) fn command_line_error(key: &str, message: impl Into<String>, example: &str) -> Error {
    InputError {
        file: "command line".into(),
        location: None,
        key: Some(key.into()),
        message: message.into(),
        example: Some(example.into()),
    }
    .into()
}

/// The scenario and how to run it.
#[derive(clap::Args, Clone, Debug)]
pub(crate) struct StudyArgs {
    /// The scenario file (TOML).
    pub(crate) file: PathBuf,
    #[command(flatten)]
    pub(crate) settings: RunSettings,
}

/// How to run: threads, and trials, seed and memory budget in place of the scenario's.
#[derive(clap::Args, Clone, Debug)]
pub(crate) struct RunSettings {
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub(crate) threads: Option<usize>,
    /// Override the scenario's number of trials M (compare: every design's), written as in
    /// the scenario file (1000000, 1_000_000 or 1e6).
    #[arg(long)]
    pub(crate) trials: Option<String>,
    /// Override the scenario's seed (compare: every design's), written as in the scenario
    /// file (a whole number from 0 to 2^63 - 1).
    #[arg(long)]
    pub(crate) seed: Option<String>,
    /// Most memory the run (of one design) may hold, e.g. 8GiB (default: half of this
    /// machine's memory); a plain run beyond it is made in more passes, with the same results.
    #[arg(long)]
    pub(crate) memory_budget: Option<String>,
}

/// Where and how the report goes.
#[derive(clap::Args, Clone, Debug)]
pub(crate) struct OutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    pub(crate) format: Format,
    /// Write the report to this file instead of stdout.
    #[arg(short, long)]
    pub(crate) output: Option<PathBuf>,
    /// Write the figures into this folder.
    #[arg(long)]
    pub(crate) plots: Option<PathBuf>,
    /// Format of the figures.
    #[arg(long, value_enum, default_value = "svg")]
    pub(crate) plot_format: PlotFormat,
    /// Replace existing output files.
    #[arg(long)]
    pub(crate) force: bool,
    /// Print no warnings on stderr.
    #[arg(short, long)]
    pub(crate) quiet: bool,
}

/// `radforce run`.
#[derive(clap::Args, Clone, Debug)]
pub struct RunArgs {
    #[command(flatten)]
    pub(crate) study: StudyArgs,
    #[command(flatten)]
    pub(crate) out: OutputArgs,
    /// Write the trials (inputs and measurands) to this CSV file.
    #[arg(long)]
    pub(crate) samples: Option<PathBuf>,
    /// Write at most this many trials to --samples, evenly thinned.
    #[arg(long, requires = "samples")]
    pub(crate) samples_max: Option<usize>,
    /// Run only shard K of N (chunks k with k mod N = K) and write a partial result to --output.
    #[arg(long, value_name = "K/N")]
    pub(crate) shard: Option<String>,
}

/// `radforce export`.
#[derive(clap::Args, Clone, Debug)]
pub struct ExportArgs {
    #[command(flatten)]
    pub(crate) study: StudyArgs,
    /// The folder to write the bundle into (created if missing).
    pub(crate) dir: PathBuf,
    /// Trials written to samples.csv, evenly thinned.
    #[arg(long, default_value_t = crate::report::bundle::DEFAULT_SAMPLE_ROWS)]
    pub(crate) samples_max: usize,
    /// Replace existing files in the folder.
    #[arg(long)]
    pub(crate) force: bool,
    /// Print no warnings and no progress on stderr.
    #[arg(short, long)]
    pub(crate) quiet: bool,
}

/// `radforce merge`.
#[derive(clap::Args, Clone, Debug)]
pub struct MergeArgs {
    /// The partial results of every shard of one run.
    #[arg(required = true)]
    pub(crate) parts: Vec<PathBuf>,
    #[command(flatten)]
    pub(crate) out: OutputArgs,
}

/// `radforce rank`.
#[derive(clap::Args, Clone, Debug)]
pub struct RankArgs {
    #[command(flatten)]
    pub(crate) study: StudyArgs,
    #[command(flatten)]
    pub(crate) out: OutputArgs,
    /// Base rows N of the sensitivity design (N (k + 2) model runs).
    #[arg(long, default_value_t = super::DEFAULT_BASE_ROWS)]
    pub(crate) base_trials: usize,
    /// How the base samples are drawn.
    #[arg(long, value_enum, default_value = "random")]
    pub(crate) sampler: BaseSampler,
    /// Bootstrap resamples for the confidence intervals.
    #[arg(long, default_value_t = super::DEFAULT_REPLICATES)]
    pub(crate) replicates: usize,
}

/// `radforce compare`.
#[derive(clap::Args, Clone, Debug)]
pub struct CompareArgs {
    /// Scenario files; a file with [variants.NAME] tables adds one design per variant.
    #[arg(required = true)]
    pub(crate) files: Vec<PathBuf>,
    /// The measurand to compare (default: the first of the first design).
    #[arg(long)]
    pub(crate) measurand: Option<String>,
    /// Every design runs with the first design's trials and seed, or these.
    #[command(flatten)]
    pub(crate) settings: RunSettings,
    #[command(flatten)]
    pub(crate) out: OutputArgs,
}

/// Whether a plan's target is an expanded or a standard uncertainty.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub(crate) enum UncertaintyKind {
    /// The expanded uncertainty at the scenario's coverage probability.
    Expanded,
    /// The standard uncertainty.
    Standard,
}

/// `radforce plan`.
#[derive(clap::Args, Clone, Debug)]
pub struct PlanArgs {
    #[command(flatten)]
    pub(crate) study: StudyArgs,
    #[command(flatten)]
    pub(crate) out: OutputArgs,
    /// The target: relative ("0.1%", "500 ppm") or absolute in the measurand's unit ("0.02 W").
    #[arg(long)]
    pub(crate) target: String,
    /// Whether the target is an expanded or a standard uncertainty.
    #[arg(long, value_enum, default_value = "expanded")]
    pub(crate) uncertainty: UncertaintyKind,
    /// The measurand (required when the scenario has several).
    #[arg(long)]
    pub(crate) measurand: Option<String>,
}

/// Read `--memory-budget` (default: half of this machine's memory).
pub(crate) fn parse_budget(text: &Option<String>) -> Result<u64, Error> {
    match text {
        Some(text) => engine::memory::parse_bytes(text).ok_or_else(|| {
            command_line_error(
                "--memory-budget",
                format!("cannot read {text:?} as a size"),
                "--memory-budget 8GiB",
            )
        }),
        None => Ok(engine::memory::default_budget()),
    }
}

/// Apply `--trials` and `--seed` to a study (with the checks the scenario's own values get).
/// A whole number written on the command line as the scenario file would write it (a TOML
/// integer, with `_`, `0x`, `0o` or `0b`, or a float with no fraction such as 1e6), from `min`
/// to `max`: `--trials` and `--seed` accept exactly what `trials` and `seed` accept.
pub(crate) fn whole_number(
    option: &str,
    text: &str,
    min: u64,
    max: u64,
    example: &str,
) -> Result<u64, Error> {
    let fail = |why: String| command_line_error(option, why, example);
    let value = format!("v = {}", text.trim())
        .parse::<toml::Table>()
        .ok()
        .filter(|t| t.len() == 1)
        .and_then(|t| t.get("v").cloned());
    let x: f64 = match value {
        Some(toml::Value::Integer(n)) => {
            return if n >= 0 && (min..=max).contains(&(n as u64)) {
                Ok(n as u64)
            } else {
                Err(fail(format!(
                    "{n} is out of range: expected {min} to {max}"
                )))
            };
        }
        Some(toml::Value::Float(x)) => x,
        _ => return Err(fail(format!("{text:?} is not a whole number"))),
    };
    if !(x.is_finite() && x.fract() == 0.0) {
        return Err(fail(format!("{text} is not a whole number")));
    }
    if x < min as f64 || x > max as f64 {
        return Err(fail(format!(
            "{text} is out of range: expected {min} to {max}"
        )));
    }
    Ok(x as u64)
}

pub(crate) fn override_study(
    study: &mut Study,
    trials: Option<&str>,
    seed: Option<&str>,
) -> Result<(), Error> {
    let trials = trials
        .map(|t| whole_number("--trials", t, 0, u64::MAX, "--trials 1000000"))
        .transpose()?;
    let seed = seed
        .map(|t| whole_number("--seed", t, 0, i64::MAX as u64, "--seed 7"))
        .transpose()?;
    if let Some(m) = trials {
        if !(scenario::MIN_TRIALS..=scenario::MAX_TRIALS).contains(&m) {
            return Err(command_line_error(
                "--trials",
                format!(
                    "{m} is out of range: expected {} to {}",
                    scenario::MIN_TRIALS,
                    scenario::MAX_TRIALS
                ),
                "--trials 1000000",
            ));
        }
        let q = (study.coverage * m as f64 + 0.5).floor() as u64;
        if m <= q {
            return Err(command_line_error(
                "--trials",
                format!("{m} trials leave no trial outside the coverage interval (JCGM 101 7.7)"),
                "--trials 1000000",
            ));
        }
        study.trials = m;
        study.adaptive = None;
    }
    if let Some(s) = seed {
        study.seed = s;
    }
    Ok(())
}

/// Refuse `--threads 0`.
pub(crate) fn check_threads(threads: Option<usize>) -> Result<(), Error> {
    if let Some(0) = threads {
        return Err(command_line_error(
            "--threads",
            "needs at least 1 thread",
            "--threads 2",
        ));
    }
    // The results do not depend on the thread count; far more threads than cores only cost
    // time (10 000 threads turned a 0.1 s run into minutes).
    let cores = std::thread::available_parallelism().map_or(1, usize::from);
    let most = (8 * cores).max(64);
    if let Some(n) = threads.filter(|&n| n > most) {
        return Err(command_line_error(
            "--threads",
            format!(
                "{n} threads is far more than this machine's {cores} cores (at most {most}); the results are the same on any number of threads"
            ),
            "--threads 4",
        ));
    }
    Ok(())
}

/// Load the scenario and apply the command-line overrides.
pub(crate) fn load(args: &StudyArgs) -> Result<(Study, RunOptions), Error> {
    let mut study = scenario::load_file(&args.file)?;
    let s = &args.settings;
    override_study(&mut study, s.trials.as_deref(), s.seed.as_deref())?;
    check_threads(s.threads)?;
    let options = RunOptions {
        memory_budget: parse_budget(&s.memory_budget)?,
        keep_inputs: false,
    };
    Ok((study, options))
}

/// The measurand `--measurand` names, or the only (or the chain's first) one.
pub(crate) fn measurand_index(study: &Study, name: Option<&str>) -> Result<usize, Error> {
    match name {
        Some(name) => study
            .measurands
            .iter()
            .position(|x| x.name == name)
            .ok_or_else(|| {
                command_line_error(
                    "--measurand",
                    format!(
                        "no measurand `{name}` (the scenario has: {})",
                        study.measurand_names()
                    ),
                    "--measurand power",
                )
            }),
        None if study.chain.is_some() || study.measurands.len() == 1 => Ok(0),
        None => Err(command_line_error(
            "--measurand",
            "the scenario has several measurands: name the one to plan for",
            "--measurand power",
        )),
    }
}

/// Read `--target`: a percentage or ppm is relative; a quantity needs the measurand's dimension;
/// a bare number is in the measurand's reporting unit.
pub(crate) fn parse_target(
    study: &Study,
    m: usize,
    text: &str,
    expanded: bool,
) -> Result<TargetSpec, Error> {
    let example = "--target 0.1%   or   --target \"0.02 W\"";
    let q = parse_quantity(text).map_err(|e| {
        command_line_error("--target", format!("cannot read {text:?}: {e}"), example)
    })?;
    let meas = &study.measurands[m];
    let (value, relative) = match &q.unit {
        Some(u) if u.dimension == Dimension::NONE && (u.text == "%" || u.text == "ppm") => {
            (q.si, true)
        }
        Some(u) => {
            if let Some(d) = meas.dimension
                && d != u.dimension
            {
                return Err(command_line_error(
                    "--target",
                    format!(
                        "`{}` is {}, but {text:?} is {}",
                        meas.name,
                        d.kind(),
                        u.dimension.kind()
                    ),
                    example,
                ));
            }
            (q.si, false)
        }
        None => (q.si * study.reporting_factor(m), false),
    };
    if value.is_nan() || value <= 0.0 {
        return Err(command_line_error(
            "--target",
            "the target must be greater than 0",
            example,
        ));
    }
    Ok(TargetSpec {
        value,
        relative,
        expanded,
    })
}

/// Read `--shard K/N`.
pub(crate) fn parse_shard(text: &str) -> Result<(u64, u64), Error> {
    let example = "--shard 0/3";
    let parsed = text
        .split_once('/')
        .and_then(|(k, n)| Some((k.trim().parse::<u64>().ok()?, n.trim().parse::<u64>().ok()?)));
    match parsed {
        Some((k, n)) if n >= 1 && k < n && n <= 100_000 => Ok((k, n)),
        _ => Err(command_line_error(
            "--shard",
            format!("{text:?} is not a shard K/N with 0 <= K < N"),
            example,
        )),
    }
}
