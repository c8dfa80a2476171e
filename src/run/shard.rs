//! Shards: one run spread over several machines. `radforce run FILE --shard K/N` makes only the
//! chunks k with k mod N = K and writes a partial result; `radforce merge` combines the N
//! partial results into the report one machine would have given, bit for bit.
//!
//! A partial result holds what is needed to merge exactly: the scenario text (the merge loads it
//! again), every chunk summary of the shard (merged in global chunk order, as a single run does)
//! and, per measurand, the shard's k smallest and k largest values with k = M - q of the whole
//! run (the whole run's k smallest values are among the union of the shards' k smallest).
//!
//! File layout: the line `radforce-part 2`, an 8-byte little-endian length L, L bytes of JSON
//! (the header, with the chunk summaries; JSON numbers round-trip f64 exactly), the tails as
//! little-endian f64 (for each measurand its low tail then its high tail, of the lengths the
//! header gives), and last the SHA-256 digest (FIPS 180-4) of everything before it.
//!
//! `merge` trusts nothing in a part: the digest must match (a flipped bit or an edit anywhere is
//! refused), then every part must be of the same run (the scenario by its content, seed, trials,
//! coverage, number of shards), each shard exactly once, each holding exactly its chunks with
//! their trial counts, tails of the lengths the run implies, sorted and finite. The file is read
//! with its size bounded by what its header announces, itself checked first.

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
use sha2::{Digest, Sha256};
use std::io::Read;
use std::path::Path;

const MAGIC: &[u8] = b"radforce-part 2\n";
/// The first line of a part written by an earlier version (no digest).
const MAGIC_1: &[u8] = b"radforce-part 1\n";
/// Bytes of the SHA-256 digest that ends a part.
const DIGEST: usize = 32;
/// Largest header accepted: the scenario (at most 4 MiB) and the chunk summaries of a shard.
const MAX_HEADER_BYTES: u64 = 1 << 30;

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
    /// Coverage probability.
    pub(crate) coverage: f64,
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
    let digest = Sha256::digest(&out);
    out.extend_from_slice(&digest);
    out
}

fn bad(file: &str, message: impl Into<String>) -> Error {
    InputError::file(file, message)
        .with_example("radforce merge part-0.rfp part-1.rfp part-2.rfp")
        .into()
}

/// Read a partial result from a file: the first line and the header length first, so that
/// what is read is bounded by the size the header announces (an endless stream or a wrong file
/// stops after a few bytes), then the rest, checked by [`read_part`].
pub(crate) fn read_part_file(path: &Path) -> Result<Part, Error> {
    let shown = path.display().to_string();
    let io = |e: std::io::Error| {
        Error::from(InputError::file(
            &shown,
            format!("cannot read the partial result: {e}"),
        ))
    };
    let mut file = std::fs::File::open(path).map_err(io)?;
    let mut start = vec![0u8; MAGIC.len() + 8];
    let got = (&mut file)
        .take(start.len() as u64)
        .read(&mut start)
        .map_err(io)?;
    let mut bytes = start[..got].to_vec();
    // A short read (a pipe) is completed here; the announced size bounds the rest.
    while bytes.len() < start.len() {
        let mut more = vec![0u8; start.len() - bytes.len()];
        let n = file.read(&mut more).map_err(io)?;
        if n == 0 {
            break;
        }
        bytes.extend_from_slice(&more[..n]);
    }
    check_magic(&bytes, &shown)?;
    if bytes.len() < MAGIC.len() + 8 {
        return Err(damaged(&shown, "it ends before its header"));
    }
    let len = u64::from_le_bytes(bytes[MAGIC.len()..].try_into().unwrap_or([0; 8]));
    if len > MAX_HEADER_BYTES {
        return Err(damaged(&shown, "its header length is absurd"));
    }
    let mut header = Vec::new();
    (&mut file).take(len).read_to_end(&mut header).map_err(io)?;
    if (header.len() as u64) < len {
        return Err(damaged(&shown, "it ends inside its header"));
    }
    let lengths: TailLengths =
        serde_json::from_slice(&header).map_err(|_| damaged(&shown, "its header is not valid"))?;
    let values: u64 = lengths
        .tail_lengths
        .iter()
        .try_fold(0u64, |t, &(a, b)| {
            t.checked_add(a as u64)?.checked_add(b as u64)
        })
        .filter(|v| *v <= u64::MAX / 16)
        .ok_or_else(|| damaged(&shown, "its tail lengths are absurd"))?;
    let rest_len = 8 * values + DIGEST as u64;
    // Check the lengths against the run before reading them (the header's claims are verified
    // again, with the digest, in read_part).
    check_tail_lengths(&lengths, &shown)?;
    bytes.extend_from_slice(&header);
    let before = bytes.len();
    (&mut file)
        .take(rest_len + 1)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if (bytes.len() - before) as u64 != rest_len {
        return Err(damaged(
            &shown,
            "its length differs from what its header announces (cut short or extended)",
        ));
    }
    read_part(&bytes, &shown)
}

/// The tail lengths and run size of a header, read before the tails.
#[derive(Deserialize)]
struct TailLengths {
    trials: u64,
    coverage: f64,
    shard: u64,
    shards: u64,
    tail_lengths: Vec<(usize, usize)>,
}

/// The tail lengths a shard of the run must have: min(k, its trials), k = M - q.
fn check_tail_lengths(h: &TailLengths, file: &str) -> Result<(), Error> {
    let plausible = (crate::scenario::MIN_TRIALS..=crate::scenario::MAX_TRIALS).contains(&h.trials)
        && h.coverage > 0.0
        && h.coverage < 1.0;
    if !plausible
        || h.shards == 0
        || h.shard >= h.shards
        || h.shards > h.trials.div_ceil(engine::CHUNK_TRIALS as u64)
    {
        return Err(damaged(
            file,
            "its header's trials, coverage or shard numbers are impossible",
        ));
    }
    let plan = engine::Plan {
        shard: Some((h.shard, h.shards)),
        ..engine::Plan::new(h.trials, 0)
    };
    let shard_trials: u64 = plan.chunks().iter().map(|c| c.1 as u64).sum();
    let m = h.trials as usize;
    let k = (m - q_index(m, h.coverage)).min(shard_trials as usize);
    if h.tail_lengths.iter().any(|&(a, b)| a != k || b != k) {
        return Err(damaged(
            file,
            format!("its tails are not of the {k} values a shard of this run keeps"),
        ));
    }
    Ok(())
}

fn damaged(file: &str, why: impl std::fmt::Display) -> Error {
    bad(
        file,
        format!("is damaged or was edited ({why}); make this shard again"),
    )
}

fn check_magic(bytes: &[u8], file: &str) -> Result<(), Error> {
    let n = bytes.len().min(MAGIC.len());
    if bytes[..n] == MAGIC_1[..n] && n == MAGIC.len() {
        return Err(bad(
            file,
            "was written by an earlier radforce (part format 1, without a digest); make the shards again with this version",
        ));
    }
    if bytes[..n] != MAGIC[..n] || n < MAGIC.len() {
        return Err(bad(
            file,
            "is not a radforce partial result: it does not start with `radforce-part 2`",
        ));
    }
    Ok(())
}

/// Read a partial result; `file` names it in messages. The digest is checked first, then the
/// layout and every value.
pub(crate) fn read_part(bytes: &[u8], file: &str) -> Result<Part, Error> {
    check_magic(bytes, file)?;
    if bytes.len() < MAGIC.len() + 8 + DIGEST {
        return Err(damaged(file, "it is too short"));
    }
    let (body, digest) = bytes.split_at(bytes.len() - DIGEST);
    if Sha256::digest(body).as_slice() != digest {
        return Err(damaged(
            file,
            "its SHA-256 digest does not match its content",
        ));
    }
    let broken = || damaged(file, "its layout is not that of a partial result");
    let rest = &body[MAGIC.len()..];
    let mut len = [0u8; 8];
    len.copy_from_slice(&rest[..8]);
    let len = usize::try_from(u64::from_le_bytes(len)).map_err(|_| broken())?;
    let body = &rest[8..];
    if body.len() < len {
        return Err(broken());
    }
    let header: Header = serde_json::from_slice(&body[..len]).map_err(|_| broken())?;
    check_tail_lengths(
        &TailLengths {
            trials: header.trials,
            coverage: header.coverage,
            shard: header.shard,
            shards: header.shards,
            tail_lengths: header.tail_lengths.clone(),
        },
        file,
    )?;
    let chunks: Vec<ChunkSummary> = header
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
        let sorted = |v: &[f64]| v.iter().all(|x| x.is_finite()) && v.is_sorted();
        if !sorted(&lo) || !sorted(&hi) {
            return Err(damaged(
                file,
                "a tail holds a value that is not finite or not in order",
            ));
        }
        tails.push((lo, hi));
    }
    if !data.is_empty() {
        return Err(broken());
    }
    // Exactly the shard's chunks, each with its number of trials and finite statistics.
    let plan = engine::Plan {
        shard: Some((header.shard, header.shards)),
        ..engine::Plan::new(header.trials, header.seed)
    };
    let expected = plan.chunks();
    let finite = |c: &ChunkSummary| {
        c.moments
            .iter()
            .all(|m| m.mean.is_finite() && m.m2.is_finite() && m.m2 >= 0.0)
            && c.input_pairs.iter().chain(&c.measurand_pairs).all(|p| {
                [p.mean_x, p.mean_y, p.m2x, p.m2y, p.cxy]
                    .iter()
                    .all(|v| v.is_finite())
            })
    };
    let counted = |c: &ChunkSummary, n: usize| {
        c.moments.len() == header.tail_lengths.len()
            && c.moments.iter().all(|m| m.count == n as u64)
            && c.input_pairs
                .iter()
                .chain(&c.measurand_pairs)
                .all(|p| p.count == n as u64)
    };
    if chunks.len() != expected.len()
        || chunks
            .iter()
            .zip(&expected)
            .any(|(c, &(k, n))| c.index != k || !counted(c, n) || !finite(c))
    {
        return Err(damaged(
            file,
            "its chunks are not exactly those of its shard, with their trials and finite statistics",
        ));
    }
    Ok(Part {
        scenario_text: header.scenario_text,
        scenario_file: header.scenario_file,
        trials: header.trials,
        seed: header.seed,
        coverage: header.coverage,
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
