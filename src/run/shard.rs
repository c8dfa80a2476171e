//! Shards: one run spread over several machines. `radforce run FILE --shard K/N` makes only the
//! chunks k with k mod N = K and writes a partial result; `radforce merge` combines the N
//! partial results into the report one machine would have given, bit for bit.
//!
//! A partial result holds what is needed to merge exactly: the scenario text (the merge loads it
//! again), every chunk summary of the shard (merged in global chunk order, as a single run does)
//! and, per measurand, the shard's k smallest and k largest values with k = M - q of the whole
//! run (the whole run's k smallest values are among the union of the shards' k smallest).
//!
//! File layout: the line `radforce-part 1`, an 8-byte little-endian length L, L bytes of JSON
//! (the header, with the chunk summaries; JSON numbers round-trip f64 exactly), then the tails as
//! little-endian f64: for each measurand its low tail then its high tail, of the lengths the
//! header gives.

use super::options::{RunArgs, command_line_error, load, parse_shard};
use super::output;
use crate::engine;
use crate::engine::MonteCarlo;
use crate::engine::{ChunkSummary, Samples, merge_chunks};
use crate::error::{Error, InputError};
use crate::scenario::Study;
use crate::stats::intervals::{intervals_from_tails, merge_tails, q_index, tails};
use crate::stats::moments::{CoMoments, Moments};
use crate::stats::summary::from_parts;
use serde::{Deserialize, Serialize};

const MAGIC: &[u8] = b"radforce-part 1\n";

/// A partial result read back.
#[derive(Clone, Debug)]
pub(crate) struct Part {
    /// The scenario text.
    pub(crate) scenario_text: String,
    /// The scenario file as named in reports.
    pub(crate) scenario_file: String,
    /// Trials of the whole run.
    pub(crate) trials: u64,
    /// Seed.
    pub(crate) seed: u64,
    /// This shard, K.
    pub(crate) shard: u64,
    /// Of N shards.
    pub(crate) shards: u64,
    /// The chunk summaries of the shard.
    pub(crate) chunks: Vec<ChunkSummary>,
    /// Per measurand: (low tail, high tail).
    pub(crate) tails: Vec<(Vec<f64>, Vec<f64>)>,
}

/// The header of a partial result (JSON, compact): the run, the shard and its chunk summaries.
#[derive(Serialize, Deserialize)]
struct Header {
    radforce_version: String,
    generator: String,
    scenario_file: String,
    scenario_text: String,
    trials: u64,
    seed: u64,
    coverage: f64,
    shard: u64,
    shards: u64,
    chunks: Vec<ChunkJson>,
    /// Per measurand: the lengths of its low and high tails.
    tail_lengths: Vec<(usize, usize)>,
}

/// Moments as [count, mean, m2].
type MomentsJson = (u64, f64, f64);
/// Joint moments as [count, mean_x, mean_y, m2x, m2y, cxy].
type CoMomentsJson = (u64, f64, f64, f64, f64, f64);

/// A chunk summary in the header.
#[derive(Serialize, Deserialize)]
struct ChunkJson {
    index: u64,
    moments: Vec<MomentsJson>,
    input_pairs: Vec<CoMomentsJson>,
    measurand_pairs: Vec<CoMomentsJson>,
}

fn co_json(c: &CoMoments) -> CoMomentsJson {
    (c.count, c.mean_x, c.mean_y, c.m2x, c.m2y, c.cxy)
}

fn co_read(c: &CoMomentsJson) -> CoMoments {
    CoMoments {
        count: c.0,
        mean_x: c.1,
        mean_y: c.2,
        m2x: c.3,
        m2y: c.4,
        cxy: c.5,
    }
}

/// The bytes of a shard's partial result.
pub(crate) fn write_part(
    study: &Study,
    scenario_text: &str,
    samples: &Samples,
    shard: u64,
    shards: u64,
) -> Vec<u8> {
    let k = study.trials as usize - q_index(study.trials as usize, study.coverage);
    let tails: Vec<(Vec<f64>, Vec<f64>)> = samples
        .measurands
        .iter()
        .map(|col| tails(col, k.min(col.len())))
        .collect();
    let header = Header {
        radforce_version: env!("CARGO_PKG_VERSION").into(),
        generator: crate::engine::generator_description(),
        scenario_file: study.file.clone(),
        scenario_text: scenario_text.into(),
        trials: study.trials,
        seed: study.seed,
        coverage: study.coverage,
        shard,
        shards,
        chunks: samples
            .chunks
            .iter()
            .map(|c| ChunkJson {
                index: c.index,
                moments: c.moments.iter().map(|m| (m.count, m.mean, m.m2)).collect(),
                input_pairs: c.input_pairs.iter().map(co_json).collect(),
                measurand_pairs: c.measurand_pairs.iter().map(co_json).collect(),
            })
            .collect(),
        tail_lengths: tails.iter().map(|(a, b)| (a.len(), b.len())).collect(),
    };
    // Serialising the header cannot fail: it has no maps with non-string keys.
    let header = serde_json::to_vec(&header).unwrap_or_default();
    let mut out = Vec::with_capacity(MAGIC.len() + 8 + header.len());
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&(header.len() as u64).to_le_bytes());
    out.extend_from_slice(&header);
    for (lo, hi) in &tails {
        for x in lo.iter().chain(hi) {
            out.extend_from_slice(&x.to_le_bytes());
        }
    }
    out
}

fn bad(file: &str, message: impl Into<String>) -> Error {
    InputError::file(file, message)
        .with_example("radforce merge part-0.rfp part-1.rfp part-2.rfp")
        .into()
}

/// Read a partial result; `file` names it in messages.
pub(crate) fn read_part(bytes: &[u8], file: &str) -> Result<Part, Error> {
    let broken = || bad(file, "is not a radforce partial result (or is damaged)");
    let rest = bytes.strip_prefix(MAGIC).ok_or_else(|| {
        bad(
            file,
            "is not a radforce partial result: it does not start with `radforce-part 1`",
        )
    })?;
    if rest.len() < 8 {
        return Err(broken());
    }
    let mut len = [0u8; 8];
    len.copy_from_slice(&rest[..8]);
    let len = u64::from_le_bytes(len) as usize;
    let body = &rest[8..];
    if body.len() < len {
        return Err(broken());
    }
    let header: Header = serde_json::from_slice(&body[..len]).map_err(|_| broken())?;
    let chunks = header
        .chunks
        .iter()
        .map(|c| ChunkSummary {
            index: c.index,
            moments: c
                .moments
                .iter()
                .map(|m| Moments {
                    count: m.0,
                    mean: m.1,
                    m2: m.2,
                })
                .collect(),
            input_pairs: c.input_pairs.iter().map(co_read).collect(),
            measurand_pairs: c.measurand_pairs.iter().map(co_read).collect(),
        })
        .collect();
    let mut data = &body[len..];
    let mut tails = Vec::with_capacity(header.tail_lengths.len());
    let mut take = |n: usize| -> Option<Vec<f64>> {
        if data.len() / 8 < n {
            return None;
        }
        let (head, tail) = data.split_at(8 * n);
        data = tail;
        Some(
            head.chunks_exact(8)
                .map(|b| f64::from_le_bytes(b.try_into().unwrap_or([0; 8])))
                .collect(),
        )
    };
    for &(a, b) in &header.tail_lengths {
        let lo = take(a).ok_or_else(broken)?;
        let hi = take(b).ok_or_else(broken)?;
        tails.push((lo, hi));
    }
    if !data.is_empty() {
        return Err(broken());
    }
    Ok(Part {
        scenario_text: header.scenario_text,
        scenario_file: header.scenario_file,
        trials: header.trials,
        seed: header.seed,
        shard: header.shard,
        shards: header.shards,
        chunks,
        tails,
    })
}

/// Check that the parts are the N shards of one run, load the study from the scenario text they
/// carry, and combine them into the Monte Carlo result of the whole run.
pub(crate) fn merge_parts(parts: &[(String, Part)]) -> Result<(Study, MonteCarlo), Error> {
    let (first_file, first) = parts
        .first()
        .ok_or_else(|| bad("command line", "no partial results to merge"))?;
    for (file, p) in parts {
        if p.scenario_text != first.scenario_text
            || p.seed != first.seed
            || p.trials != first.trials
            || p.shards != first.shards
            || p.scenario_file != first.scenario_file
        {
            return Err(bad(
                file,
                format!(
                    "is a shard of another run than {first_file} (scenario, seed, trials or number of shards differ)"
                ),
            ));
        }
    }
    let n = first.shards;
    let mut seen = vec![false; n as usize];
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
    study.adaptive = None;
    let chunks: Vec<ChunkSummary> = parts
        .iter()
        .flat_map(|(_, p)| p.chunks.iter().cloned())
        .collect();
    let nm = study.model.measurands;
    let (moments, input_pairs, measurand_pairs) =
        merge_chunks(&chunks, nm, study.correlations.pairs.len());
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
    let Some(path) = &args.out.output else {
        return Err(command_line_error(
            "--output",
            "a shard writes its partial result to a file",
            "--shard 0/4 --output part-0.rfp",
        ));
    };
    output::check_writable(path, args.out.force)?;
    output::check_folder(path)?;
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
