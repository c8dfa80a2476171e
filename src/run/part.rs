//! The partial result of a shard: its file format, written by `run --shard` and read back,
//! checked, by `merge`.
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

use crate::engine;
use crate::engine::{ChunkSummary, Samples};
use crate::error::{Error, InputError};
use crate::scenario::Study;
use crate::stats::intervals::{q_index, tails};
use crate::stats::moments::{CoMoments, Moments};
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::io::Read;
use std::path::Path;

pub(crate) const MAGIC: &[u8] = b"radforce-part 2\n";
/// The first line of a part written by an earlier version (no digest).
const MAGIC_1: &[u8] = b"radforce-part 1\n";
/// Bytes of the SHA-256 digest that ends a part.
pub(crate) const DIGEST: usize = 32;
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

pub(crate) fn bad(file: &str, message: impl Into<String>) -> Error {
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
    // The first line and the header length (`read_to_end` completes short reads of a pipe).
    let mut bytes = Vec::new();
    (&mut file)
        .take(MAGIC.len() as u64 + 8)
        .read_to_end(&mut bytes)
        .map_err(io)?;
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

pub(crate) fn damaged(file: &str, why: impl std::fmt::Display) -> Error {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::MonteCarlo;
    use crate::run::shard::merge_parts;
    use rand::{RngExt, SeedableRng};

    const SCENARIO: &str = "trials = 70000\nseed = 11\nlaser = false\n[inputs.a]\ndist = \"normal\"\nmean = 1\nsd = 0.1\n[inputs.b]\ndist = \"rectangular\"\nmin = 0\nmax = 1\n[measurands.y]\nformula = \"a + b\"\n[measurands.z]\nformula = \"a * b\"\n";

    /// The three parts of a small run (5 chunks over 3 shards).
    fn parts() -> Vec<Vec<u8>> {
        let study = crate::scenario::load_str(SCENARIO, "s.toml").unwrap();
        (0..3)
            .map(|k| {
                let plan = engine::Plan {
                    shard: Some((k, 3)),
                    ..engine::Plan::new(study.trials, study.seed)
                };
                let samples = engine::simulate(&study, plan).unwrap();
                write_part(&study, SCENARIO, &samples, k, 3)
            })
            .collect()
    }

    fn merge(bytes: &[Vec<u8>]) -> Result<MonteCarlo, Error> {
        let parts = bytes
            .iter()
            .enumerate()
            .map(|(i, b)| Ok((format!("p{i}"), read_part(b, &format!("p{i}"))?)))
            .collect::<Result<Vec<_>, Error>>()?;
        merge_parts(&parts).map(|(_, mc)| mc)
    }

    /// Re-seal a part edited on purpose (a valid digest over the edited bytes), to show the
    /// consistency checks catch what a digest cannot: an edit by someone who recomputes it.
    fn reseal(mut body: Vec<u8>) -> Vec<u8> {
        body.truncate(body.len() - DIGEST);
        let d = Sha256::digest(&body);
        body.extend_from_slice(&d);
        body
    }

    fn edit_header(part: &[u8], edit: impl Fn(&mut serde_json::Value)) -> Vec<u8> {
        let len = u64::from_le_bytes(part[MAGIC.len()..MAGIC.len() + 8].try_into().unwrap());
        let start = MAGIC.len() + 8;
        let mut header: serde_json::Value =
            serde_json::from_slice(&part[start..start + len as usize]).unwrap();
        edit(&mut header);
        let new = serde_json::to_vec(&header).unwrap();
        let mut out = MAGIC.to_vec();
        out.extend_from_slice(&(new.len() as u64).to_le_bytes());
        out.extend_from_slice(&new);
        out.extend_from_slice(&part[start + len as usize..]);
        reseal(out)
    }

    #[test]
    fn every_single_bit_flip_is_refused() {
        let good = parts();
        assert!(merge(&good).is_ok());
        // 2000 random single-bit flips anywhere in a part (header, tails, digest).
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(17);
        for _ in 0..2000 {
            let mut bad = good.clone();
            let which = rng.random_range(0..3);
            let at = rng.random_range(0..bad[which].len());
            bad[which][at] ^= 1 << rng.random_range(0..8);
            assert!(
                merge(&bad).is_err(),
                "flip at byte {at} of part {which} merged"
            );
        }
        // Cut short, extended, emptied.
        for cut in [1usize, 8, 100] {
            let mut bad = good.clone();
            let n = bad[1].len();
            bad[1].truncate(n - cut);
            assert!(merge(&bad).is_err());
        }
        let mut longer = good.clone();
        longer[2].extend_from_slice(&[0; 8]);
        assert!(merge(&longer).is_err());
        assert!(read_part(&[], "empty").is_err());
    }

    #[test]
    fn resealed_edits_are_refused_by_the_consistency_checks() {
        let good = parts();
        type Edit = Box<dyn Fn(&mut serde_json::Value)>;
        let edits: Vec<(&str, Edit)> = vec![
            ("trials", Box::new(|h| h["trials"] = 80000.into())),
            (
                "chunk dropped",
                Box::new(|h| {
                    h["chunks"].as_array_mut().unwrap().pop();
                }),
            ),
            (
                "chunk doubled",
                Box::new(|h| {
                    let c = h["chunks"][0].clone();
                    h["chunks"].as_array_mut().unwrap().push(c);
                }),
            ),
            (
                "chunk renumbered",
                Box::new(|h| h["chunks"][0]["index"] = 4.into()),
            ),
            (
                "count",
                Box::new(|h| h["chunks"][0]["moments"][0][0] = 1.into()),
            ),
            (
                "shard count",
                Box::new(|h| h["shards"] = 1_000_000_000_000u64.into()),
            ),
            (
                "tail length",
                Box::new(|h| h["tail_lengths"][0][0] = 5.into()),
            ),
            (
                "scenario",
                Box::new(|h| h["scenario_text"] = "title = [".into()),
            ),
            ("coverage", Box::new(|h| h["coverage"] = 0.9.into())),
        ];
        for (what, edit) in &edits {
            let mut bad = good.clone();
            bad[1] = edit_header(&good[1], edit);
            assert!(merge(&bad).is_err(), "{what} was merged");
        }
        // A forged seed in one part: another run than the others.
        let mut bad = good.clone();
        bad[0] = edit_header(&good[0], |h| h["seed"] = 12.into());
        assert!(merge(&bad).is_err());
        // A NaN in a tail, resealed.
        let mut bad = good.clone();
        let n = bad[2].len();
        bad[2][n - DIGEST - 8..n - DIGEST].copy_from_slice(&f64::NAN.to_le_bytes());
        bad[2] = reseal(bad[2].clone());
        assert!(merge(&bad).is_err());
    }
}
