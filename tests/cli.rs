//! The command line: exit codes (0 success, 1 failed run, 2 bad input), messages that name the
//! key, nothing written on failure, and the starter scenario running as written.

use crate::common::{radforce, scratch};
use predicates::prelude::*;

const GOOD: &str = r#"
title = "small"
trials = 20_000
seed = 3
laser = false

[inputs.a]
dist = "normal"
mean = "2 mm"
sd = "0.1 mm"

[inputs.b]
value = "3 mm"

[measurands.y]
formula = "a * b"
"#;

fn write(dir: &std::path::Path, name: &str, text: &str) -> std::path::PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

// A valid scenario runs (exit 0) and `check` accepts it (common practice).
#[test]
fn a_good_file_runs_and_checks() {
    let dir = scratch("good");
    let f = write(&dir, "good.toml", GOOD);
    radforce()
        .args(["check", f.to_str().unwrap()])
        .assert()
        .success()
        .stdout(predicate::str::contains("valid"));
    radforce()
        .args(["run", f.to_str().unwrap()])
        .assert()
        .success()
        .stdout(predicate::str::contains("planning estimate"))
        .stdout(predicate::str::contains("Laser safety").not());
}

/// Bad input: exit code 2, the key named in the message, no output file left behind.
fn assert_refused(text: &str, key: &str, fragment: &str) {
    let dir = scratch(&format!("bad-{}", key.replace('.', "-")));
    let f = write(&dir, "bad.toml", text);
    let out = dir.join("report.json");
    radforce()
        .args([
            "run",
            f.to_str().unwrap(),
            "--format",
            "json",
            "--output",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(key))
        .stderr(predicate::str::contains(fragment))
        .stderr(predicate::str::contains("bad.toml:"));
    assert!(!out.exists(), "a refused run must write nothing");
    let leftovers: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(Result::ok)
        .map(|e| e.file_name())
        .collect();
    assert_eq!(
        leftovers.len(),
        1,
        "only the scenario remains: {leftovers:?}"
    );
}

// Bad files exit 2 naming the key, with nothing written (common practice).
#[test]
fn bad_files_exit_2_naming_the_key_and_write_nothing() {
    assert_refused(
        &GOOD.replace("sd = \"0.1 mm\"", "sd = \"-0.1 mm\""),
        "inputs.a.sd",
        "greater than 0",
    );
    assert_refused(
        &GOOD.replace("dist = \"normal\"", "dist = \"normla\""),
        "inputs.a.dist",
        "did you mean `normal`",
    );
    assert_refused(
        &GOOD.replace("a * b", "a * q"),
        "measurands.y.formula",
        "unknown name `q`",
    );
    assert_refused(
        &GOOD.replace("trials = 20_000", "trials = 0"),
        "trials",
        "out of range",
    );
    assert_refused(
        &GOOD.replace("seed = 3", "sed = 3"),
        "sed",
        "did you mean `seed`",
    );
    assert_refused(
        &GOOD.replace("sd = \"0.1 mm\"", "sd = \"0.1 kg\""),
        "inputs.a.sd",
        "share a dimension",
    );
    assert_refused(
        &format!("{GOOD}\ncoverage = 1.5\n").replace("[inputs.a]", "coverage2 = 1\n[inputs.a]"),
        "coverage2",
        "unknown key",
    );
}

// A reflectance above 1 and an incidence of 90 deg are physically impossible and refused, not
// clamped; a missing required chain input is named (common practice).
#[test]
fn a_torsion_input_outside_its_physical_range_is_refused() {
    let text =
        std::fs::read_to_string(crate::common::path("data/torsion-vacuum-20w.toml")).unwrap();
    let bad = text.replace("min = 0.9990\nmax = 0.9995", "min = 0.9990\nmax = 1.0005");
    assert_refused(&bad, "inputs.reflectance", "fraction in [0, 1]");
    let bad = text.replace("mean = \"10 deg\"", "mean = \"90 deg\"");
    assert_refused(&bad, "inputs.incidence", "between -90 deg and 90 deg");
    let bad = text.replace("[inputs.mirror_radius]\nvalue = \"6 mm\"", "");
    assert_refused(&bad, "model.chain", "mirror_radius");
}

// A missing file, a directory or no file at all is bad input, exit 2 (common practice).
#[test]
fn missing_file_and_directory_are_bad_input() {
    radforce()
        .args(["run", "no/such/file.toml"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read"));
    radforce()
        .args(["run", "data"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("is a directory"));
    radforce().args(["run"]).assert().code(2);
}

// ln of a negative value is not finite (IEEE 754 gives NaN): the run fails with exit 1 and
// names the inputs of the first such trial.
#[test]
fn a_non_finite_model_value_fails_the_run_naming_the_trial_inputs() {
    let dir = scratch("nonfinite");
    // ln of a quantity that is negative in about half of the trials.
    let text = GOOD
        .replace(
            "dist = \"normal\"\nmean = \"2 mm\"\nsd = \"0.1 mm\"",
            "dist = \"rectangular\"\nmin = \"1 mm\"\nmax = \"3 mm\"",
        )
        .replace("a * b", "ln(a - 2e-3) * b");
    assert!(text.contains("ln(a - 2e-3) * b") && text.contains("rectangular"));
    let f = write(&dir, "ln.toml", &text);
    radforce()
        .args(["run", f.to_str().unwrap()])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("not finite"))
        .stderr(predicate::str::contains("a = "));
}

// `radforce new` writes a scenario that runs unchanged (common practice).
#[test]
fn the_starter_scenario_runs_as_written() {
    let dir = scratch("starter");
    let name = dir.join("first-study");
    radforce()
        .args(["new", name.to_str().unwrap()])
        .assert()
        .success();
    let file = dir.join("first-study.toml");
    assert!(file.exists());
    radforce()
        .args(["run", file.to_str().unwrap()])
        .assert()
        .success()
        .stdout(predicate::str::contains("power"))
        .stdout(predicate::str::contains("Laser safety"));
    // Never overwritten by surprise.
    radforce()
        .args(["new", name.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--force"));
    radforce()
        .args(["new", name.to_str().unwrap(), "--force"])
        .assert()
        .success();
}

// `radforce new --chain` writes a starter of every built-in chain and a forecast, each running
// unchanged with its chain's measurands and no warning; an unknown starter is refused (exit 2).
#[test]
fn every_chain_has_a_starter_that_runs() {
    let dir = scratch("starters");
    for (chain, measurand) in [
        ("torsion-power", "power"),
        ("torsion-signal", "readout_shift"),
        ("weighing-power", "power"),
        ("weighing-signal", "reading"),
        ("forecast", "power"),
    ] {
        let name = dir.join(chain);
        radforce()
            .args(["new", name.to_str().unwrap(), "--chain", chain])
            .assert()
            .success();
        let file = dir.join(format!("{chain}.toml"));
        let out = radforce()
            .args([
                "run",
                file.to_str().unwrap(),
                "--trials",
                "20000",
                "--format",
                "json",
            ])
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{chain}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let r: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert!(
            r["measurands"]
                .as_array()
                .unwrap()
                .iter()
                .any(|m| m["name"] == measurand),
            "{chain}"
        );
        let warnings = r["warnings"].as_array().unwrap();
        assert!(
            warnings
                .iter()
                .all(|w| w.as_str().unwrap().contains("trials")),
            "{chain}: {warnings:?}"
        );
        if chain == "forecast" {
            assert!(r.get("forecast").is_some() && r.get("procedure").is_some());
        }
    }
    radforce()
        .args([
            "new",
            dir.join("x").to_str().unwrap(),
            "--chain",
            "cantilever",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("starters: torsion-power"));
}

// An output file is replaced only with --force, and then whole (common practice).
#[test]
fn output_file_is_written_whole_and_not_replaced_without_force() {
    let dir = scratch("output");
    let f = write(&dir, "good.toml", GOOD);
    let out = dir.join("r.json");
    radforce()
        .args([
            "run",
            f.to_str().unwrap(),
            "--format",
            "json",
            "-o",
            out.to_str().unwrap(),
        ])
        .assert()
        .success();
    let first = std::fs::read(&out).unwrap();
    serde_json::from_slice::<serde_json::Value>(&first).unwrap();
    radforce()
        .args([
            "run",
            f.to_str().unwrap(),
            "--format",
            "json",
            "-o",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(2);
    assert_eq!(std::fs::read(&out).unwrap(), first);
    radforce()
        .args([
            "run",
            f.to_str().unwrap(),
            "--format",
            "json",
            "-o",
            out.to_str().unwrap(),
            "--force",
            "--seed",
            "9",
        ])
        .assert()
        .success();
    assert_ne!(std::fs::read(&out).unwrap(), first);
}

// A run whose tails do not fit the budget even one measurand a pass is refused before it starts,
// exit 2 (common practice).
#[test]
fn memory_budget_refuses_an_oversized_run() {
    radforce()
        .args([
            "run",
            "data/validation/jcgm101-9.3-mass.toml",
            "--memory-budget",
            "1MB",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("memory budget"));
}
