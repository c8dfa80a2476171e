//! Beyond memory and beyond one machine: a run streamed in two passes under a small memory
//! budget gives the results of the same run held in memory, and shards merged give the report
//! of the single run byte for byte.

use crate::common::{radforce, scratch};
use predicates::prelude::*;
use serde_json::Value;

fn json_run(args: &[&str]) -> Vec<u8> {
    let out = radforce().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

// A long plain run keeps only the tails of its values, in one pass after a pilot; a run with
// figures holds every value; under a small budget the run takes two passes. All three give the
// same estimate, u, intervals and correlations, bit for bit.
#[test]
fn one_pass_tails_equal_the_values_held_in_memory() {
    let dir = scratch("one-pass");
    let file = "data/torsion-vacuum-20w.toml";
    let base = ["run", file, "--format", "json", "--trials", "600000"];
    let plots = dir.join("figures");
    let held = json_run(&[&base[..], &["--plots", plots.to_str().unwrap()]].concat());
    let one = json_run(&base);
    let two = json_run(&[&base[..], &["--memory-budget", "1MB"]].concat());
    let parse = |b: &[u8]| serde_json::from_slice::<Value>(b).unwrap();
    let (held, one, two) = (parse(&held), parse(&one), parse(&two));
    assert!(
        plots.join("distribution-power.svg").exists(),
        "the figures need every value"
    );
    assert_eq!(held["measurands"], one["measurands"]);
    assert_eq!(held["measurands"], two["measurands"]);
    assert_eq!(held["correlation"], one["correlation"]);
    let passes = |v: &Value| {
        v["warnings"].as_array().unwrap().iter().any(|w| {
            w.as_str()
                .unwrap()
                .contains("passes over the same random streams")
        })
    };
    assert!(!passes(&one), "one pass needs no warning");
    assert!(passes(&two), "the passes are said");
}

// The chunked streams are reproducible, so a second pass regenerates exactly the trials in the
// tails: estimate, u and both intervals equal the in-memory run's bit for bit.
#[test]
fn a_streamed_run_equals_the_in_memory_run() {
    for file in [
        "data/torsion-vacuum-20w.toml",
        "data/validation/jcgm101-9.3-mass.toml",
    ] {
        // Figures need every value, so this run holds them.
        let plots = scratch("streamed").join("figures");
        let memory = json_run(&[
            "run",
            file,
            "--format",
            "json",
            "--trials",
            "400000",
            "--plots",
            plots.to_str().unwrap(),
        ]);
        let streamed = json_run(&[
            "run",
            file,
            "--format",
            "json",
            "--trials",
            "400000",
            "--memory-budget",
            "1MB",
        ]);
        let (a, b): (Value, Value) = (
            serde_json::from_slice(&memory).unwrap(),
            serde_json::from_slice(&streamed).unwrap(),
        );
        assert_eq!(a["measurands"], b["measurands"], "{file}");
        assert_eq!(a["correlation"], b["correlation"], "{file}");
        assert!(b["warnings"].as_array().unwrap().iter().any(|w| {
            w.as_str()
                .unwrap()
                .contains("passes over the same random streams")
        }));
        assert!(a["warnings"].as_array().unwrap().iter().all(|w| {
            !w.as_str()
                .unwrap()
                .contains("passes over the same random streams")
        }));
    }
    // A budget too small even for the tails is refused like bad input (exit 2), said plainly.
    radforce()
        .args([
            "run",
            "data/torsion-vacuum-20w.toml",
            "--trials",
            "400000",
            "--memory-budget",
            "100kB",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("memory budget"));
}

// Shards 0/3, 1/3, 2/3 merged (in any order) equal the single run byte for byte.
#[test]
fn shards_merged_equal_the_single_run() {
    let dir = scratch("shards");
    for file in [
        "data/torsion-vacuum-20w.toml",
        "data/validation/jcgm101-9.2.4-dominant.toml",
    ] {
        let single = json_run(&["run", file, "--format", "json", "--trials", "250000"]);
        let mut parts = Vec::new();
        for k in 0..3 {
            let part = dir.join(format!("part-{k}.rfp"));
            radforce()
                .args([
                    "run",
                    file,
                    "--trials",
                    "250000",
                    "--shard",
                    &format!("{k}/3"),
                    "--output",
                    part.to_str().unwrap(),
                    "--force",
                ])
                .assert()
                .success();
            parts.push(part.to_str().unwrap().to_string());
        }
        let merged = json_run(&["merge", &parts[2], &parts[0], &parts[1], "--format", "json"]);
        assert!(
            single == merged,
            "{file}: merged report differs from the single run"
        );
        // The text report too.
        let single_text = json_run(&["run", file, "--trials", "250000"]);
        let merged_text = json_run(&["merge", &parts[0], &parts[1], &parts[2]]);
        assert!(single_text == merged_text, "{file}: text reports differ");
    }
}

// Bad --shard values and mismatched, doubled or missing parts exit 2 (common practice).
#[test]
fn bad_shards_and_merges_are_refused() {
    let dir = scratch("bad-shards");
    let f = "data/validation/jcgm101-9.3-mass.toml";
    radforce()
        .args(["run", f, "--shard", "3/3", "--output", "x.rfp"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--shard"));
    radforce()
        .args(["run", f, "--shard", "0/2"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--output"));
    let p0 = dir.join("p0.rfp");
    let p1 = dir.join("p1.rfp");
    let other = dir.join("other.rfp");
    for (k, p, seed) in [(0, &p0, "1"), (1, &p1, "1"), (1, &other, "2")] {
        radforce()
            .args([
                "run",
                f,
                "--trials",
                "20000",
                "--seed",
                seed,
                "--shard",
                &format!("{k}/2"),
                "--output",
                p.to_str().unwrap(),
            ])
            .assert()
            .success();
    }
    radforce()
        .args(["merge", p0.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "made in 2 shards but 1 partial results were given",
        ));
    radforce()
        .args(["merge", p0.to_str().unwrap(), p0.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("given twice"));
    radforce()
        .args(["merge", p0.to_str().unwrap(), other.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("another run"));
    std::fs::write(dir.join("junk.rfp"), "not a part").unwrap();
    radforce()
        .args(["merge", dir.join("junk.rfp").to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("not a radforce partial result"));
    radforce()
        .args(["merge", p0.to_str().unwrap(), p1.to_str().unwrap()])
        .assert()
        .success();
}
