//! The `radforce` command: turns arguments into library calls. The only place that touches
//! stdout and stderr.

use clap::{Parser, Subcommand, ValueEnum};
use radforce::analysis::Findings;
use radforce::analysis::planning::{Comparison, PlanFinding, TargetSpec};
use radforce::engine;
use radforce::engine::sensitivity::BaseSampler;
use radforce::error::{Error, InputError, RunError};
use radforce::report::{self, Format};
use radforce::run::output;
use radforce::run::{self, RankOptions, RunOptions};
use radforce::scenario::{self, Study};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// How precisely can you measure laser power by the force light exerts on a mirror?
/// Monte Carlo propagation of distributions (JCGM 101:2008) through radiation-pressure and
/// balance models, with the law of propagation of uncertainty (JCGM 100:2008) beside it.
#[derive(Parser)]
#[command(name = "radforce", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Propagate the input distributions of a scenario and report every measurand.
    Run(RunArgs),
    /// Rank the inputs by their Sobol sensitivity indices.
    Rank(RankArgs),
    /// Compare designs (files, and the [variants] of a file) side by side, paired.
    Compare(CompareArgs),
    /// Combine the partial results of `run --shard K/N` into the report of the whole run.
    Merge(MergeArgs),
    /// Find what must improve to reach a target uncertainty, and check it by Monte Carlo.
    Plan(PlanArgs),
    /// Write a notebook-ready bundle: JSON report, budget and samples as CSV, figures, notebook.
    Export(ExportArgs),
    /// Print a JSON Schema of the scenario file, for editors.
    Schema,
    /// Print shell completions.
    Completions {
        /// The shell.
        shell: clap_complete::Shell,
    },
    /// Print the manual page (roff).
    Manual,
    /// Validate a scenario file without running it.
    Check {
        /// The scenario file (TOML).
        file: PathBuf,
    },
    /// Write a commented starter scenario that runs as written.
    New {
        /// Name of the new scenario (".toml" is added when missing).
        name: String,
        /// Replace an existing file.
        #[arg(long)]
        force: bool,
    },
}

#[derive(Clone, Copy, ValueEnum)]
enum FormatArg {
    /// Tables for the terminal.
    Text,
    /// The JSON report (a stable contract).
    Json,
    /// A proposal-ready report: plain-words summary, tables, figures, method, cautions.
    Markdown,
    /// The summary and the budget as CSV tables (one after the other).
    Csv,
}

#[derive(Clone, Copy, ValueEnum)]
enum PlotFormatArg {
    /// Scalable vector graphics.
    Svg,
    /// Portable network graphics.
    Png,
}

#[derive(Clone, Copy, ValueEnum)]
enum UncertaintyArg {
    /// The expanded uncertainty at the scenario's coverage probability.
    Expanded,
    /// The standard uncertainty.
    Standard,
}

#[derive(Clone, Copy, ValueEnum)]
enum SamplerArg {
    /// Independent pseudo-random base samples.
    Random,
    /// A scrambled Sobol low-discrepancy sequence (at most 65536 base rows).
    Sobol,
}

/// The scenario and how to run it.
#[derive(clap::Args)]
struct StudyArgs {
    /// The scenario file (TOML).
    file: PathBuf,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    threads: Option<usize>,
    /// Override the scenario's number of trials M.
    #[arg(long)]
    trials: Option<u64>,
    /// Override the scenario's seed.
    #[arg(long)]
    seed: Option<u64>,
    /// Most memory the run may hold, e.g. 8GiB (default: half of this machine's memory); a
    /// plain run beyond it is made in more passes, with the same results.
    #[arg(long)]
    memory_budget: Option<String>,
}

/// Where and how the report goes.
#[derive(clap::Args)]
struct OutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: FormatArg,
    /// Write the report to this file instead of stdout.
    #[arg(short, long)]
    output: Option<PathBuf>,
    /// Write the figures into this folder.
    #[arg(long)]
    plots: Option<PathBuf>,
    /// Format of the figures.
    #[arg(long, value_enum, default_value = "svg")]
    plot_format: PlotFormatArg,
    /// Replace existing output files.
    #[arg(long)]
    force: bool,
    /// Print no warnings on stderr.
    #[arg(short, long)]
    quiet: bool,
}

#[derive(clap::Args)]
struct RunArgs {
    #[command(flatten)]
    study: StudyArgs,
    #[command(flatten)]
    out: OutputArgs,
    /// Write the trials (inputs and measurands) to this CSV file.
    #[arg(long)]
    samples: Option<PathBuf>,
    /// Write at most this many trials to --samples, evenly thinned.
    #[arg(long, requires = "samples")]
    samples_max: Option<usize>,
    /// Run only shard K of N (chunks k with k mod N = K) and write a partial result to --output.
    #[arg(long, value_name = "K/N")]
    shard: Option<String>,
}

#[derive(clap::Args)]
struct ExportArgs {
    #[command(flatten)]
    study: StudyArgs,
    /// The folder to write the bundle into (created if missing).
    dir: PathBuf,
    /// Trials written to samples.csv, evenly thinned.
    #[arg(long, default_value_t = report::bundle::DEFAULT_SAMPLE_ROWS)]
    samples_max: usize,
    /// Replace existing files in the folder.
    #[arg(long)]
    force: bool,
    /// Print no warnings and no progress on stderr.
    #[arg(short, long)]
    quiet: bool,
}

#[derive(clap::Args)]
struct MergeArgs {
    /// The partial results of every shard of one run.
    #[arg(required = true)]
    parts: Vec<PathBuf>,
    #[command(flatten)]
    out: OutputArgs,
}

#[derive(clap::Args)]
struct RankArgs {
    #[command(flatten)]
    study: StudyArgs,
    #[command(flatten)]
    out: OutputArgs,
    /// Base rows N of the sensitivity design (N (k + 2) model runs).
    #[arg(long, default_value_t = run::DEFAULT_BASE_ROWS)]
    base_trials: usize,
    /// How the base samples are drawn.
    #[arg(long, value_enum, default_value = "random")]
    sampler: SamplerArg,
    /// Bootstrap resamples for the confidence intervals.
    #[arg(long, default_value_t = run::DEFAULT_REPLICATES)]
    replicates: usize,
}

#[derive(clap::Args)]
struct CompareArgs {
    /// Scenario files; a file with [variants.NAME] tables adds one design per variant.
    #[arg(required = true)]
    files: Vec<PathBuf>,
    /// The measurand to compare (default: the first of the first design).
    #[arg(long)]
    measurand: Option<String>,
    /// Worker threads (default: all cores).
    #[arg(long)]
    threads: Option<usize>,
    /// Trials for every design (default: the first design's).
    #[arg(long)]
    trials: Option<u64>,
    /// Seed for every design (default: the first design's).
    #[arg(long)]
    seed: Option<u64>,
    /// Most memory the run of one design may hold, e.g. 8GiB.
    #[arg(long)]
    memory_budget: Option<String>,
    #[command(flatten)]
    out: OutputArgs,
}

#[derive(clap::Args)]
struct PlanArgs {
    #[command(flatten)]
    study: StudyArgs,
    #[command(flatten)]
    out: OutputArgs,
    /// The target: relative ("0.1%", "500 ppm") or absolute in the measurand's unit ("0.02 W").
    #[arg(long)]
    target: String,
    /// Whether the target is an expanded or a standard uncertainty.
    #[arg(long, value_enum, default_value = "expanded")]
    uncertainty: UncertaintyArg,
    /// The measurand (required when the scenario has several).
    #[arg(long)]
    measurand: Option<String>,
}

fn command_line_error(key: &str, message: impl Into<String>, example: &str) -> Error {
    InputError {
        file: "command line".into(),
        location: None,
        key: Some(key.into()),
        message: message.into(),
        example: Some(example.into()),
    }
    .into()
}

fn parse_budget(text: &Option<String>) -> Result<u64, Error> {
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

/// Apply `--trials` and `--seed` to a study.
fn override_study(study: &mut Study, trials: Option<u64>, seed: Option<u64>) -> Result<(), Error> {
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

fn check_threads(threads: Option<usize>) -> Result<(), Error> {
    if let Some(0) = threads {
        return Err(command_line_error(
            "--threads",
            "needs at least 1 thread",
            "--threads 2",
        ));
    }
    Ok(())
}

/// Load the scenario and apply the command-line overrides.
fn load(args: &StudyArgs) -> Result<(Study, RunOptions), Error> {
    let mut study = scenario::load_file(&args.file)?;
    override_study(&mut study, args.trials, args.seed)?;
    check_threads(args.threads)?;
    let options = RunOptions {
        memory_budget: parse_budget(&args.memory_budget)?,
        keep_inputs: false,
    };
    Ok((study, options))
}

fn write_stdout(bytes: &[u8]) {
    let mut out = std::io::stdout().lock();
    // A closed pipe (`| head`) is not an error of the run.
    let _ = out.write_all(bytes).and_then(|()| out.flush());
}

/// Refuse before any work what could not be written afterwards.
fn check_outputs(out: &OutputArgs) -> Result<(), Error> {
    if let Some(path) = &out.output {
        output::check_writable(path, out.force)?;
    }
    if let Some(dir) = &out.plots
        && dir.exists()
        && !dir.is_dir()
    {
        return Err(
            InputError::file(dir.display().to_string(), "exists and is not a folder")
                .with_example("--plots figures")
                .into(),
        );
    }
    Ok(())
}

fn plot_format(out: &OutputArgs) -> report::plots::PlotFormat {
    match out.plot_format {
        PlotFormatArg::Svg => report::plots::PlotFormat::Svg,
        PlotFormatArg::Png => report::plots::PlotFormat::Png,
    }
}

/// What a command reports.
enum Report<'a> {
    Run(&'a Findings),
    Compare(&'a Comparison),
    Plan(&'a PlanFinding),
}

fn numerical(m: String) -> Error {
    Error::Run(RunError::Numerical(m))
}

/// Write the report and the figures.
fn deliver(report: Report<'_>, out: &OutputArgs) -> Result<(), Error> {
    let format = match out.format {
        FormatArg::Text => Format::Text,
        FormatArg::Json => Format::Json,
        FormatArg::Markdown => Format::Markdown,
        FormatArg::Csv => Format::Csv,
    };
    let plot_format = plot_format(out);
    if format == Format::Json {
        let value = match &report {
            Report::Run(f) => report::json::report_value(f),
            Report::Compare(c) => report::json::comparison_value(c),
            Report::Plan(p) => report::json::plan_value(p),
        };
        report::json::check_numbers(&value, "").map_err(numerical)?;
    }
    if let Some(dir) = &out.plots {
        let figures = match &report {
            Report::Run(f) => report::plots::figures(f, plot_format),
            Report::Compare(c) => report::plots::comparison_figures(c, plot_format),
            Report::Plan(p) => report::plots::figures(&p.verification, plot_format),
        }
        .map_err(numerical)?;
        std::fs::create_dir_all(dir).map_err(|e| RunError::Output {
            path: dir.display().to_string(),
            message: e.to_string(),
        })?;
        for figure in &figures {
            output::write_atomic(&dir.join(&figure.file), &figure.bytes, out.force)?;
        }
    }
    let exporter = report::exporter(
        format,
        out.plots.as_ref().map(|d| d.display().to_string()),
        plot_format,
    );
    let bytes = match report {
        Report::Run(f) => exporter.render(f),
        Report::Compare(c) => exporter.comparison(c),
        Report::Plan(p) => exporter.plan(p),
    };
    match &out.output {
        Some(path) => output::write_atomic(path, &bytes, out.force)?,
        None => write_stdout(&bytes),
    }
    Ok(())
}

fn warn(study: &Study, quiet: bool) {
    if !quiet {
        for w in &study.warnings {
            eprintln!("warning: {w}");
        }
    }
}

fn parse_shard(text: &str) -> Result<(u64, u64), Error> {
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

fn shard_command(args: &RunArgs, shard: &str) -> Result<(), Error> {
    let (k, n) = parse_shard(shard)?;
    let (study, options) = load(&args.study)?;
    if study.adaptive.is_some() {
        return Err(command_line_error(
            "--shard",
            "an adaptive run cannot be split into shards; give --trials",
            "--trials 100000000 --shard 0/4",
        ));
    }
    let Some(path) = &args.out.output else {
        return Err(command_line_error(
            "--output",
            "a shard writes its partial result to a file",
            "--shard 0/4 --output part-0.rfp",
        ));
    };
    output::check_writable(path, args.out.force)?;
    let text = std::fs::read_to_string(&args.study.file).map_err(|e| {
        InputError::file(
            study.file.clone(),
            format!("cannot read the scenario file: {e}"),
        )
    })?;
    warn(&study, args.out.quiet);
    let plan = engine::Plan {
        shard: Some((k, n)),
        ..engine::Plan::new(study.trials, study.seed)
    };
    let needed = engine::memory::sample_bytes(
        plan.chunks().iter().map(|c| c.1 as u64).sum(),
        study.model.measurands,
        study.coverage,
    );
    if needed > options.memory_budget {
        return Err(command_line_error(
            "--shard",
            format!(
                "the shard's values would take {}, more than the memory budget of {}; use more shards",
                engine::memory::format_bytes(needed),
                engine::memory::format_bytes(options.memory_budget)
            ),
            "--shard 0/16",
        ));
    }
    let bytes = engine::with_threads(args.study.threads, || -> Result<Vec<u8>, Error> {
        let samples = engine::simulate(&study, plan)?;
        Ok(radforce::run::shard::write_part(
            &study, &text, &samples, k, n,
        ))
    })??;
    output::write_atomic(path, &bytes, args.out.force)
}

fn merge_command(args: &MergeArgs) -> Result<(), Error> {
    check_outputs(&args.out)?;
    let mut parts = Vec::new();
    for p in &args.parts {
        let shown = p.display().to_string();
        let bytes = std::fs::read(p).map_err(|e| {
            InputError::file(&shown, format!("cannot read the partial result: {e}"))
        })?;
        parts.push((
            shown.clone(),
            radforce::run::shard::read_part(&bytes, &shown)?,
        ));
    }
    let findings = engine::with_threads(None, || -> Result<Findings, Error> {
        let (study, mc) = radforce::run::shard::merge_parts(&parts)?;
        Ok(radforce::analysis::findings_from(&study, &mc, None))
    })??;
    deliver(Report::Run(&findings), &args.out)
}

fn run_command(args: &RunArgs) -> Result<(), Error> {
    if let Some(shard) = &args.shard {
        return shard_command(args, shard);
    }
    let (study, mut options) = load(&args.study)?;
    check_outputs(&args.out)?;
    if let Some(path) = &args.samples {
        output::check_writable(path, args.out.force)?;
    }
    // Input columns are kept for the input figures and the samples file.
    options.keep_inputs = args.out.plots.is_some() || args.samples.is_some();
    if args.samples.is_some() && !run::fits_in_memory(&study, &options) {
        return Err(command_line_error(
            "--samples",
            "the trials do not fit the memory budget, so they cannot be written out; lower --trials or raise --memory-budget",
            "--samples trials.csv --samples-max 100000",
        ));
    }
    if !run::fits_in_memory(&study, &options) && args.samples.is_none() {
        // Figures of the inputs need their columns; without room, draw the others only.
        options.keep_inputs = false;
    }
    run::check_memory(&study, &options)?;
    warn(&study, args.out.quiet);
    let progress = Progress::start(args.out.quiet, run::expected_trials(&study, &options));
    let result = engine::with_threads(args.study.threads, || run::sweep_study(&study, &options));
    progress.finish();
    let (findings, samples) = result??;
    if let (Some(path), Some(samples)) = (&args.samples, &samples) {
        let bytes = report::csv::samples(&findings, samples, args.samples_max);
        output::write_atomic(path, &bytes, args.out.force)?;
    }
    deliver(Report::Run(&findings), &args.out)
}

fn rank_command(args: &RankArgs) -> Result<(), Error> {
    let (study, options) = load(&args.study)?;
    check_outputs(&args.out)?;
    let rank = RankOptions {
        base_rows: args.base_trials,
        sampler: match args.sampler {
            SamplerArg::Random => BaseSampler::Random,
            SamplerArg::Sobol => BaseSampler::Sobol,
        },
        replicates: args.replicates,
    };
    run::check_rank(&study, &rank)?;
    run::check_memory(
        &study,
        &RunOptions {
            keep_inputs: true,
            ..options
        },
    )?;
    warn(&study, args.out.quiet);
    let progress = Progress::start(args.out.quiet, None);
    let findings = engine::with_threads(args.study.threads, || {
        run::rank_study(&study, &options, &rank)
    });
    progress.finish();
    let findings = findings??;
    deliver(Report::Run(&findings), &args.out)
}

fn compare_command(args: &CompareArgs) -> Result<(), Error> {
    check_threads(args.threads)?;
    check_outputs(&args.out)?;
    let mut designs = Vec::new();
    for file in &args.files {
        designs.extend(scenario::load_designs(file)?);
    }
    if let Some((_, first)) = designs.first_mut() {
        override_study(first, args.trials, args.seed)?;
    }
    let options = RunOptions {
        memory_budget: parse_budget(&args.memory_budget)?,
        keep_inputs: false,
    };
    for (_, s) in &designs {
        warn(s, args.out.quiet);
    }
    let progress = Progress::start(args.out.quiet, None);
    let comparison = engine::with_threads(args.threads, || {
        run::compare_designs(&designs, &options, args.measurand.as_deref())
    });
    progress.finish();
    let comparison = comparison??;
    deliver(Report::Compare(&comparison), &args.out)
}

/// Read `--target`: a percentage or ppm is relative; a quantity needs the measurand's dimension;
/// a bare number is in the measurand's reporting unit.
fn parse_target(study: &Study, m: usize, text: &str, expanded: bool) -> Result<TargetSpec, Error> {
    let example = "--target 0.1%   or   --target \"0.02 W\"";
    let q = radforce::units::parse_quantity(text).map_err(|e| {
        command_line_error("--target", format!("cannot read {text:?}: {e}"), example)
    })?;
    let meas = &study.measurands[m];
    let (value, relative) = match &q.unit {
        Some(u)
            if u.dimension == radforce::units::Dimension::NONE
                && (u.text == "%" || u.text == "ppm") =>
        {
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

fn plan_command(args: &PlanArgs) -> Result<(), Error> {
    let (study, options) = load(&args.study)?;
    check_outputs(&args.out)?;
    let m = match &args.measurand {
        Some(name) => study
            .measurands
            .iter()
            .position(|x| &x.name == name)
            .ok_or_else(|| {
                command_line_error(
                    "--measurand",
                    format!(
                        "no measurand `{name}` (the scenario has: {})",
                        study.measurand_names()
                    ),
                    "--measurand power",
                )
            })?,
        None if study.chain.is_some() || study.measurands.len() == 1 => 0,
        None => {
            return Err(command_line_error(
                "--measurand",
                "the scenario has several measurands: name the one to plan for",
                "--measurand power",
            ));
        }
    };
    let spec = parse_target(
        &study,
        m,
        &args.target,
        matches!(args.uncertainty, UncertaintyArg::Expanded),
    )?;
    run::check_memory(&study, &options)?;
    warn(&study, args.out.quiet);
    let progress = Progress::start(args.out.quiet, None);
    let plan = engine::with_threads(args.study.threads, || {
        run::plan_study(&study, &options, spec, m)
    });
    progress.finish();
    let plan = plan??;
    deliver(Report::Plan(&plan), &args.out)
}

fn export_command(args: &ExportArgs) -> Result<(), Error> {
    let (study, mut options) = load(&args.study)?;
    if args.dir.exists() && !args.dir.is_dir() {
        return Err(
            InputError::file(args.dir.display().to_string(), "exists and is not a folder")
                .with_example("radforce export data/torsion-vacuum-20w.toml notebooks-export")
                .into(),
        );
    }
    options.keep_inputs = true;
    if !run::fits_in_memory(&study, &options) {
        return Err(command_line_error(
            "--trials",
            "the bundle needs the trials in memory, and they do not fit the memory budget",
            "--trials 1000000",
        ));
    }
    warn(&study, args.quiet);
    let progress = Progress::start(args.quiet, run::expected_trials(&study, &options));
    let (findings, samples) =
        engine::with_threads(args.study.threads, || run::run_study(&study, &options))??;
    progress.finish();
    let samples =
        samples.ok_or_else(|| numerical("the bundle needs the trials in memory".into()))?;
    let files = report::bundle::bundle(&findings, &samples, args.samples_max).map_err(numerical)?;
    // Refuse before writing anything if any file would be replaced without --force.
    for (name, _) in &files {
        output::check_writable(&args.dir.join(name), args.force)?;
    }
    for (name, bytes) in &files {
        let path = args.dir.join(name);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).map_err(|e| RunError::Output {
                path: parent.display().to_string(),
                message: e.to_string(),
            })?;
        }
        output::write_atomic(&path, bytes, args.force)?;
    }
    write_stdout(format!("wrote {} files into {}\n", files.len(), args.dir.display()).as_bytes());
    Ok(())
}

/// A progress bar on stderr for runs that last more than about a second (a bar with the trials
/// made and the time left when their number is known, else a spinner with the count); hidden
/// when stderr is not a terminal (indicatif's check) or with --quiet.
struct Progress {
    stop: std::sync::Arc<std::sync::atomic::AtomicBool>,
    handle: Option<std::thread::JoinHandle<()>>,
}

impl Progress {
    fn start(quiet: bool, expected: Option<u64>) -> Progress {
        let stop = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
        let handle = (!quiet).then(|| {
            let stop = stop.clone();
            std::thread::spawn(move || {
                let start = std::time::Instant::now();
                let base = engine::progress::trials_done();
                let mut bar: Option<indicatif::ProgressBar> = None;
                while !stop.load(std::sync::atomic::Ordering::Relaxed) {
                    std::thread::sleep(std::time::Duration::from_millis(100));
                    if bar.is_none() && start.elapsed() > std::time::Duration::from_secs(1) {
                        let (b, template) = match expected {
                            Some(total) => (
                                indicatif::ProgressBar::new(total),
                                "{elapsed} [{bar:30}] {msg} ({eta} left)",
                            ),
                            None => (
                                indicatif::ProgressBar::new_spinner(),
                                "{spinner} {elapsed} {msg}",
                            ),
                        };
                        b.set_style(
                            indicatif::ProgressStyle::with_template(template)
                                .map(|s| s.progress_chars("=> "))
                                .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner()),
                        );
                        bar = Some(b);
                    }
                    if let Some(b) = &bar {
                        let done = engine::progress::trials_done() - base;
                        b.set_position(done);
                        b.set_message(match expected {
                            Some(total) => format!(
                                "{} of {} trials",
                                report::text::grouped(done.min(total)),
                                report::text::grouped(total)
                            ),
                            None => format!("{} trials", report::text::grouped(done)),
                        });
                        b.tick();
                    }
                }
                if let Some(b) = bar {
                    b.finish_and_clear();
                }
            })
        });
        Progress { stop, handle }
    }

    fn finish(mut self) {
        self.stop.store(true, std::sync::atomic::Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

fn check(file: &Path) -> Result<(), Error> {
    let study = scenario::load_file(file)?;
    let names: Vec<&str> = study.measurands.iter().map(|m| m.name.as_str()).collect();
    let mut text = format!(
        "{}: valid. {} input quantities, measurands: {}{}; {}, seed {}, coverage {}\n",
        study.file,
        study.inputs.len(),
        names.join(", "),
        study
            .chain
            .map_or(String::new(), |c| format!(" (chain {})", c.spec().name)),
        match study.adaptive {
            Some(a) => format!("adaptive to {} significant digits", a.digits),
            None => format!("M = {} trials", study.trials),
        },
        study.seed,
        study.coverage
    );
    for w in &study.warnings {
        text.push_str(&format!("warning: {w}\n"));
    }
    write_stdout(text.as_bytes());
    Ok(())
}

/// The commented starter scenario of `radforce new`.
const STARTER: &str = include_str!("starter.toml");

fn new_scenario(name: &str, force: bool) -> Result<(), Error> {
    let path = if name.ends_with(".toml") {
        PathBuf::from(name)
    } else {
        PathBuf::from(format!("{name}.toml"))
    };
    let title = path
        .file_stem()
        .map_or("new study".into(), |s| s.to_string_lossy().into_owned());
    let text = STARTER.replacen("Starter study", &title.replace('"', "'"), 1);
    output::write_atomic(&path, text.as_bytes(), force)?;
    write_stdout(
        format!(
            "wrote {}; run it with: radforce run {}\n",
            path.display(),
            path.display()
        )
        .as_bytes(),
    );
    Ok(())
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    // Ctrl-C asks the trials to stop; nothing is written for a stopped run. A second Ctrl-C
    // leaves at once.
    let _ = ctrlc::set_handler(|| {
        if engine::progress::interrupted() {
            std::process::exit(130);
        }
        engine::progress::interrupt();
    });
    let result = match &cli.command {
        Command::Run(args) => run_command(args),
        Command::Rank(args) => rank_command(args),
        Command::Compare(args) => compare_command(args),
        Command::Merge(args) => merge_command(args),
        Command::Export(args) => export_command(args),
        Command::Schema => {
            let mut text = serde_json::to_string_pretty(&scenario::schema::scenario_schema())
                .unwrap_or_default();
            text.push('\n');
            write_stdout(text.as_bytes());
            Ok(())
        }
        Command::Completions { shell } => {
            let mut out = Vec::new();
            clap_complete::generate(
                *shell,
                &mut <Cli as clap::CommandFactory>::command(),
                "radforce",
                &mut out,
            );
            write_stdout(&out);
            Ok(())
        }
        Command::Manual => {
            let mut out = Vec::new();
            let _ =
                clap_mangen::Man::new(<Cli as clap::CommandFactory>::command()).render(&mut out);
            write_stdout(&out);
            Ok(())
        }
        Command::Plan(args) => plan_command(args),
        Command::Check { file } => check(file),
        Command::New { name, force } => new_scenario(name, *force),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            // Colour only on a terminal, and never with NO_COLOR (https://no-color.org).
            use std::io::IsTerminal;
            let colour = std::io::stderr().is_terminal()
                && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
            if colour {
                eprintln!("\x1b[1;31merror:\x1b[0m {e}");
            } else {
                eprintln!("error: {e}");
            }
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
