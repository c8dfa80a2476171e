//! Shards: one run spread over several machines. `radforce run FILE --shard K/N` makes only the
//! chunks k with k mod N = K and writes a partial result; `radforce merge` combines the N
//! partial results into the report one machine would have given, bit for bit.
//!
//! A partial result holds what is needed to merge exactly: the scenario text (the merge loads it
//! again), every chunk summary of the shard (merged in global chunk order, as a single run does)
//! and, per measurand, the shard's k smallest and k largest values with k = M - q of the whole
//! run (the whole run's k smallest values are among the union of the shards' k smallest).
//!
//!
//! The partial result's file format and its checks are in `run::part`.

use super::options::{RunArgs, command_line_error, load, parse_shard};
use super::output;
use super::part::{Part, bad, damaged, write_part};
use crate::engine;
use crate::engine::MonteCarlo;
use crate::engine::{ChunkSummary, merge_chunks};
use crate::error::Error;
use crate::scenario::Study;
use crate::stats::intervals::{intervals_from_tails, merge_tails, q_index};
use crate::stats::summary::from_parts;

/// Check that the parts are the N shards of one run, load the study from the scenario text they
/// carry, and combine them into the Monte Carlo result of the whole run.
pub(crate) fn merge_parts(parts: &[(String, Part)]) -> Result<(Study, MonteCarlo), Error> {
    let (first_file, first) = parts
        .first()
        .ok_or_else(|| bad("command line", "no partial results to merge"))?;
    // The same run: the scenario by its content (not the name it was given), seed, trials,
    // coverage and number of shards.
    for (file, p) in parts {
        if p.scenario_text != first.scenario_text
            || p.seed != first.seed
            || p.trials != first.trials
            || p.coverage.to_bits() != first.coverage.to_bits()
            || p.shards != first.shards
        {
            return Err(bad(
                file,
                format!(
                    "is a shard of another run than {first_file} (scenario content, seed, trials, coverage or number of shards differ)"
                ),
            ));
        }
    }
    let n = first.shards;
    if n != parts.len() as u64 {
        return Err(bad(
            first_file,
            format!(
                "the run was made in {n} shards but {} partial results were given; merge needs each shard exactly once",
                parts.len()
            ),
        ));
    }
    let mut seen = vec![false; parts.len()];
    for (file, p) in parts {
        if p.shard >= n || seen[p.shard as usize] {
            return Err(bad(
                file,
                format!("shard {}/{n} is given twice or does not exist", p.shard),
            ));
        }
        seen[p.shard as usize] = true;
    }
    if let Some(missing) = seen.iter().position(|s| !s) {
        return Err(bad(
            first_file,
            format!("shard {missing}/{n} is missing; merge needs all {n}"),
        ));
    }
    let mut study = crate::scenario::load_str(&first.scenario_text, &first.scenario_file)?;
    study.seed = first.seed;
    study.trials = first.trials;
    study.coverage = first.coverage;
    study.adaptive = None;
    let fits = |p: &Part| {
        p.tails.len() == study.model.measurands
            && p.chunks.iter().all(|c| {
                c.moments.len() == study.model.measurands
                    && c.input_pairs.len() == study.correlations.pairs.len()
                    && c.measurand_pairs.len()
                        == engine::measurand_pair_order(study.model.measurands).len()
            })
    };
    if let Some((file, _)) = parts.iter().find(|(_, p)| !fits(p)) {
        return Err(damaged(
            file,
            "its statistics do not match the measurands and correlations of its scenario",
        ));
    }
    let chunks: Vec<ChunkSummary> = parts
        .iter()
        .flat_map(|(_, p)| p.chunks.iter().cloned())
        .collect();
    let nm = study.model.measurands;
    let (moments, input_pairs, measurand_pairs) = merge_chunks(&study, &chunks)?;
    let m = study.trials as usize;
    let k = m - q_index(m, study.coverage);
    let summaries = (0..nm)
        .map(|i| {
            let lows = parts.iter().map(|(_, p)| p.tails[i].0.clone()).collect();
            let highs = parts.iter().map(|(_, p)| p.tails[i].1.clone()).collect();
            let (lo, hi) = merge_tails(lows, highs, k);
            let ci = intervals_from_tails(&lo, &hi, m, study.coverage);
            from_parts(&moments[i], &ci)
        })
        .collect();
    let shapes = vec![None; nm];
    let input_shapes = vec![None; study.inputs.len()];
    Ok((
        study,
        MonteCarlo {
            trials: m as u64,
            summaries,
            measurand_pairs,
            input_pairs,
            shapes,
            input_shapes,
        },
    ))
}

/// `radforce run FILE --shard K/N -o PART`: make only the shard's chunks and write the partial
/// result.
pub(crate) fn run_shard(
    args: &RunArgs,
    shard: &str,
    warn: &dyn Fn(&str),
) -> Result<Vec<u8>, Error> {
    let (k, n) = parse_shard(shard)?;
    let (study, options) = load(&args.study)?;
    if study.adaptive.is_some() {
        return Err(command_line_error(
            "--shard",
            "an adaptive run cannot be split into shards; give --trials",
            "--trials 100000000 --shard 0/4",
        ));
    }
    // Options a shard cannot honour are refused, never ignored: it keeps no values to draw or
    // to list, and it writes a partial result, not a report.
    for (given, option) in [
        (args.out.plots.is_some(), "--plots"),
        (args.samples.is_some(), "--samples"),
    ] {
        if given {
            return Err(command_line_error(
                option,
                "a shard writes only a partial result; draw figures and list trials from a single run",
                "radforce run study.toml --shard 0/4 --output part-0.rfp",
            ));
        }
    }
    let Some(path) = &args.out.output else {
        return Err(command_line_error(
            "--output",
            "a shard writes its partial result to a file",
            "--shard 0/4 --output part-0.rfp",
        ));
    };
    output::check_writable(path, args.out.force)?;
    output::check_folder(path)?;
    output::check_distinct(&[path], &[&args.study.file])?;
    let text = crate::scenario::read_scenario_text(&args.study.file)?;
    if !args.out.quiet {
        for w in &study.warnings {
            warn(w);
        }
    }
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
    let bytes =
        engine::with_threads(args.study.settings.threads, || -> Result<Vec<u8>, Error> {
            let samples = engine::simulate(&study, plan)?;
            Ok(write_part(&study, &text, &samples, k, n))
        })??;
    output::write_atomic(path, &bytes, args.out.force)?;
    Ok(Vec::new())
}
