//! The commands of the `radforce` binary, from parsed arguments to the bytes for stdout.
//! Warnings go through `warn` (the binary prints them on stderr, unless `--quiet`); the report
//! goes to its file, or back to the caller.

use super::deliver::{check_outputs, deliver};
use super::options::{
    self, CompareArgs, ExportArgs, MergeArgs, PlanArgs, RankArgs, RunArgs, UncertaintyKind,
    command_line_error, load,
};
use super::progress::Progress;
use super::{RankOptions, RunOptions, output, part, shard};
use crate::analysis::Findings;
use crate::engine;
use crate::error::{Error, InputError, RunError};
use crate::report::{self, Report};
use crate::scenario::{self, Study};
use std::path::{Path, PathBuf};

/// Pass a study's warnings on, unless quiet.
fn warn_all(study: &Study, quiet: bool, warn: &dyn Fn(&str)) {
    if !quiet {
        for w in &study.warnings {
            warn(w);
        }
    }
}

fn numerical(m: String) -> Error {
    Error::Run(RunError::Numerical(m))
}

/// `radforce run`: propagate and report (or one shard of the run, with `--shard`).
pub fn run(args: &RunArgs, warn: &dyn Fn(&str)) -> Result<Vec<u8>, Error> {
    if let Some(text) = &args.shard {
        return shard::run_shard(args, text, warn);
    }
    let (study, mut options) = load(&args.study)?;
    check_outputs(
        &args.out,
        &[&args.study.file],
        &args
            .samples
            .iter()
            .map(PathBuf::as_path)
            .collect::<Vec<_>>(),
    )?;
    // Input columns are kept for the input figures and the samples file.
    // The HTML report draws the figures into the page.
    options.keep_inputs = args.out.plots.is_some()
        || args.samples.is_some()
        || args.out.format == crate::report::Format::Html;
    if args.samples.is_some() && !super::fits_in_memory(&study, &options) {
        return Err(command_line_error(
            "--samples",
            "the trials do not fit the memory budget, so they cannot be written out; lower --trials or raise --memory-budget",
            "--samples trials.csv --samples-max 100000",
        ));
    }
    if !super::fits_in_memory(&study, &options) && args.samples.is_none() {
        // Figures of the inputs need their columns; without room, draw the others only.
        options.keep_inputs = false;
    }
    super::check_memory(&study, &options)?;
    warn_all(&study, args.out.quiet, warn);
    let progress = Progress::start(args.out.quiet, super::expected_trials(&study, &options));
    let result = engine::with_threads(args.study.settings.threads, || {
        super::sweep_study(&study, &options)
    });
    progress.finish();
    let (findings, samples) = result??;
    if let (Some(path), Some(samples)) = (&args.samples, &samples) {
        let bytes = report::csv::samples(&findings, samples, args.samples_max);
        output::write_atomic(path, &bytes, args.out.force)?;
    }
    deliver(Report::Run(&findings), &args.out)
}

/// `radforce rank`: the Sobol sensitivity ranking beside an ordinary run.
pub fn rank(args: &RankArgs, warn: &dyn Fn(&str)) -> Result<Vec<u8>, Error> {
    let (study, options) = load(&args.study)?;
    check_outputs(&args.out, &[&args.study.file], &[])?;
    let rank = RankOptions {
        base_rows: args.base_trials,
        sampler: args.sampler,
        replicates: args.replicates,
    };
    super::check_rank(&study, &rank)?;
    super::check_memory(
        &study,
        &RunOptions {
            keep_inputs: true,
            ..options
        },
    )?;
    warn_all(&study, args.out.quiet, warn);
    let progress = Progress::start(args.out.quiet, None);
    let findings = engine::with_threads(args.study.settings.threads, || {
        super::rank_study(&study, &options, &rank)
    });
    progress.finish();
    let findings = findings??;
    deliver(Report::Run(&findings), &args.out)
}

/// `radforce compare`: designs side by side, paired.
pub fn compare(args: &CompareArgs, warn: &dyn Fn(&str)) -> Result<Vec<u8>, Error> {
    let settings = &args.settings;
    options::check_threads(settings.threads)?;
    check_outputs(
        &args.out,
        &args.files.iter().map(PathBuf::as_path).collect::<Vec<_>>(),
        &[],
    )?;
    let mut designs = Vec::new();
    for file in &args.files {
        designs.extend(scenario::load_designs(file)?);
    }
    if let Some((_, first)) = designs.first_mut() {
        options::override_study(first, settings.trials.as_deref(), settings.seed.as_deref())?;
    }
    let options = RunOptions {
        memory_budget: options::parse_budget(&settings.memory_budget)?,
        keep_inputs: false,
    };
    for (_, s) in &designs {
        warn_all(s, args.out.quiet, warn);
    }
    let progress = Progress::start(args.out.quiet, None);
    let comparison = engine::with_threads(settings.threads, || {
        super::compare_designs(&designs, &options, args.measurand.as_deref())
    });
    progress.finish();
    let comparison = comparison??;
    deliver(Report::Compare(&comparison), &args.out)
}

/// `radforce plan`: what must improve to reach a target, checked by Monte Carlo.
pub fn plan(args: &PlanArgs, warn: &dyn Fn(&str)) -> Result<Vec<u8>, Error> {
    let (study, options) = load(&args.study)?;
    check_outputs(&args.out, &[&args.study.file], &[])?;
    let m = options::measurand_index(&study, args.measurand.as_deref())?;
    let spec = options::parse_target(
        &study,
        m,
        &args.target,
        args.uncertainty == UncertaintyKind::Expanded,
    )?;
    super::check_memory(&study, &options)?;
    warn_all(&study, args.out.quiet, warn);
    let progress = Progress::start(args.out.quiet, None);
    let plan = engine::with_threads(args.study.settings.threads, || {
        super::plan_study(&study, &options, spec, m)
    });
    progress.finish();
    let plan = plan??;
    deliver(Report::Plan(&plan), &args.out)
}

/// `radforce merge`: the report of a whole run from its shards' partial results.
pub fn merge(args: &MergeArgs) -> Result<Vec<u8>, Error> {
    if args.out.plots.is_some() {
        return Err(options::command_line_error(
            "--plots",
            "a merged run keeps no values in memory to draw (the shards keep only their tails); draw the figures from a single run",
            "radforce merge part-0.rfp part-1.rfp --output study.json",
        ));
    }
    check_outputs(
        &args.out,
        &args.parts.iter().map(PathBuf::as_path).collect::<Vec<_>>(),
        &[],
    )?;
    let mut parts = Vec::new();
    for p in &args.parts {
        parts.push((p.display().to_string(), part::read_part_file(p)?));
    }
    let findings = engine::with_threads(None, || -> Result<Findings, Error> {
        let (study, mc) = shard::merge_parts(&parts)?;
        Ok(crate::analysis::findings_from(&study, &mc, None))
    })??;
    deliver(Report::Run(&findings), &args.out)
}

/// `radforce export`: the notebook-ready bundle.
pub fn export(args: &ExportArgs, warn: &dyn Fn(&str)) -> Result<Vec<u8>, Error> {
    let (study, mut options) = load(&args.study)?;
    if args.dir.exists() && !args.dir.is_dir() {
        return Err(
            InputError::file(args.dir.display().to_string(), "exists and is not a folder")
                .with_example("radforce export data/torsion-vacuum-20w.toml notebooks-export")
                .into(),
        );
    }
    output::check_folder(&args.dir)?;
    output::check_distinct(&[&args.dir], &[&args.study.file])?;
    options.keep_inputs = true;
    if !super::fits_in_memory(&study, &options) {
        return Err(command_line_error(
            "--trials",
            "the bundle needs the trials in memory, and they do not fit the memory budget",
            "--trials 1000000",
        ));
    }
    warn_all(&study, args.quiet, warn);
    let progress = Progress::start(args.quiet, super::expected_trials(&study, &options));
    let (findings, samples) = engine::with_threads(args.study.settings.threads, || {
        super::run_study(&study, &options)
    })??;
    progress.finish();
    let samples =
        samples.ok_or_else(|| numerical("the bundle needs the trials in memory".into()))?;
    let files = report::bundle::bundle(&findings, &samples, args.samples_max).map_err(numerical)?;
    output::write_folder(&args.dir, &files, args.force)?;
    Ok(format!("wrote {} files into {}\n", files.len(), args.dir.display()).into_bytes())
}

/// `radforce check`: validate a scenario and say what it holds.
pub fn check(file: &Path) -> Result<Vec<u8>, Error> {
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
    Ok(text.into_bytes())
}

/// The commented starter scenarios of `radforce new --chain`: one per chain, and a forecast.
const STARTERS: &[(&str, &str)] = &[
    (
        "torsion-power",
        include_str!("../starters/torsion-power.toml"),
    ),
    (
        "torsion-signal",
        include_str!("../starters/torsion-signal.toml"),
    ),
    (
        "weighing-power",
        include_str!("../starters/weighing-power.toml"),
    ),
    (
        "weighing-signal",
        include_str!("../starters/weighing-signal.toml"),
    ),
    ("forecast", include_str!("../starters/forecast.toml")),
];

/// `radforce new NAME --chain CHAIN`: write a commented starter scenario that runs as written.
pub fn new_scenario(name: &str, chain: &str, force: bool) -> Result<Vec<u8>, Error> {
    let Some((_, starter)) = STARTERS.iter().find(|(c, _)| *c == chain) else {
        let known: Vec<&str> = STARTERS.iter().map(|(c, _)| *c).collect();
        return Err(command_line_error(
            "--chain",
            format!("no starter for {chain:?}; starters: {}", known.join(", ")),
            "radforce new study --chain weighing-power",
        ));
    };
    let path = if name.ends_with(".toml") {
        PathBuf::from(name)
    } else {
        PathBuf::from(format!("{name}.toml"))
    };
    let title = path
        .file_stem()
        .map_or("new study".into(), |s| s.to_string_lossy().into_owned());
    let text = starter.replacen("Starter study", &title.replace('"', "'"), 1);
    output::write_atomic(&path, text.as_bytes(), force)?;
    Ok(format!(
        "wrote {}; run it with: radforce run {}\n",
        path.display(),
        path.display()
    )
    .into_bytes())
}

/// `radforce schema`: the JSON Schema of the scenario file.
pub fn schema() -> Vec<u8> {
    let mut text =
        serde_json::to_string_pretty(&scenario::schema::scenario_schema()).unwrap_or_default();
    text.push('\n');
    text.into_bytes()
}
