//! The command line: clap types only. The argument structs are the library's
//! (`radforce::run::options`); this file composes them into commands.

use clap::{Parser, Subcommand};
use radforce::run::options::{CompareArgs, ExportArgs, MergeArgs, PlanArgs, RankArgs, RunArgs};
use std::path::PathBuf;

/// How precisely can you measure laser power by the force light exerts on a mirror?
/// Monte Carlo propagation of distributions (JCGM 101:2008) through radiation-pressure and
/// balance models, with the law of propagation of uncertainty (JCGM 100:2008) beside it.
#[derive(Parser)]
#[command(name = "radforce", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand)]
pub enum Command {
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
        /// The chain of the starter (torsion-power, torsion-signal, weighing-power,
        /// weighing-signal), or "forecast" for a planned meter with its noise and procedure.
        #[arg(long, default_value = "torsion-power")]
        chain: String,
        /// Replace an existing file.
        #[arg(long)]
        force: bool,
    },
}
