//! The `radforce` command: turns arguments into library calls. The only place that touches
//! stdout and stderr.

use clap::{Parser, Subcommand, ValueEnum};
use radforce::error::{Error, InputError};
use radforce::report::{self, Format};
use radforce::run::{RunOptions, run_study};
use radforce::scenario::{self, Study};
use radforce::{engine, output};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// How precisely can you measure laser power by the force light exerts on a mirror?
/// Monte Carlo propagation of distributions (JCGM 101:2008) through radiation-pressure and
/// balance models.
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
}

#[derive(clap::Args)]
struct RunArgs {
    /// The scenario file (TOML).
    file: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: FormatArg,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    threads: Option<usize>,
    /// Override the scenario's number of trials M.
    #[arg(long)]
    trials: Option<u64>,
    /// Override the scenario's seed.
    #[arg(long)]
    seed: Option<u64>,
    /// Most memory the samples may take, e.g. 8GiB (default: half of this machine's memory).
    #[arg(long)]
    memory_budget: Option<String>,
    /// Write the report to this file instead of stdout.
    #[arg(short, long)]
    output: Option<PathBuf>,
    /// Replace an existing output file.
    #[arg(long)]
    force: bool,
    /// Print no warnings on stderr.
    #[arg(short, long)]
    quiet: bool,
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

fn apply_overrides(study: &mut Study, args: &RunArgs) -> Result<(), Error> {
    if let Some(m) = args.trials {
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
    if let Some(s) = args.seed {
        study.seed = s;
    }
    if let Some(0) = args.threads {
        return Err(command_line_error(
            "--threads",
            "needs at least 1 thread",
            "--threads 2",
        ));
    }
    Ok(())
}

fn write_stdout(bytes: &[u8]) {
    let mut out = std::io::stdout().lock();
    // A closed pipe (`| head`) is not an error of the run.
    let _ = out.write_all(bytes).and_then(|()| out.flush());
}

fn run(args: &RunArgs) -> Result<(), Error> {
    let mut study = scenario::load_file(&args.file)?;
    apply_overrides(&mut study, args)?;
    if let Some(path) = &args.output {
        output::check_writable(path, args.force)?;
    }
    let budget = match &args.memory_budget {
        Some(text) => engine::memory::parse_bytes(text).ok_or_else(|| {
            command_line_error(
                "--memory-budget",
                format!("cannot read {text:?} as a size"),
                "--memory-budget 8GiB",
            )
        })?,
        None => engine::memory::default_budget(),
    };
    let options = RunOptions {
        memory_budget: budget,
        keep_inputs: false,
    };
    radforce::run::check_memory(&study, &options)?;
    if !args.quiet {
        for w in &study.warnings {
            eprintln!("warning: {w}");
        }
    }
    let (findings, _samples) = engine::with_threads(args.threads, || run_study(&study, &options))??;
    let format = match args.format {
        FormatArg::Text => Format::Text,
        FormatArg::Json => Format::Json,
    };
    if format == Format::Json {
        report::json::check_numbers(&report::json::report_value(&findings), "")
            .map_err(|m| Error::Run(radforce::error::RunError::Numerical(m)))?;
    }
    let bytes = report::exporter(format).render(&findings);
    match &args.output {
        Some(path) => output::write_atomic(path, &bytes, args.force)?,
        None => write_stdout(&bytes),
    }
    Ok(())
}

fn check(file: &Path) -> Result<(), Error> {
    let study = scenario::load_file(file)?;
    let names: Vec<&str> = study.measurands.iter().map(|m| m.name.as_str()).collect();
    let mut text = format!(
        "{}: valid. {} input quantities, measurands: {}{}; M = {} trials, seed {}, coverage {}\n",
        study.file,
        study.inputs.len(),
        names.join(", "),
        study
            .chain
            .map_or(String::new(), |c| format!(" (chain {})", c.spec().name)),
        study.trials,
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
    let result = match &cli.command {
        Command::Run(args) => run(args),
        Command::Check { file } => check(file),
        Command::New { name, force } => new_scenario(name, *force),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
