//! The catalogue of bad inputs: one small file each under tests/bad-inputs/, its first lines
//! giving the expected message fragment and key. Every one must exit with code 2, name the file,
//! the line and column, the key and a valid example, and write nothing.

use crate::common::{radforce, scratch};
use predicates::prelude::*;
use std::path::PathBuf;

fn catalogue() -> Vec<(PathBuf, String, String)> {
    let dir = crate::common::path("tests/bad-inputs");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    files.sort();
    files
        .into_iter()
        .map(|p| {
            let bytes = std::fs::read(&p).unwrap();
            let head = String::from_utf8_lossy(&bytes);
            let mut lines = head.lines();
            let expect = lines
                .next()
                .unwrap()
                .strip_prefix("# expect: ")
                .unwrap()
                .to_string();
            let key = lines
                .next()
                .unwrap()
                .strip_prefix("# key:")
                .unwrap()
                .trim()
                .to_string();
            (p, expect, key)
        })
        .collect()
}

// The catalogue keeps at least 40 distinct cases (the project's trust requirement; common practice).
#[test]
fn the_catalogue_has_at_least_forty_cases() {
    assert!(catalogue().len() >= 40, "{} cases", catalogue().len());
}

// Each catalogued file exits 2 with its expected message and key, and writes nothing (common
// practice: refuse, never clamp or half-write).
#[test]
fn every_bad_input_is_refused_clearly() {
    let out_dir = scratch("catalogue");
    for (path, expect, key) in catalogue() {
        let rel = path
            .strip_prefix(env!("CARGO_MANIFEST_DIR"))
            .unwrap()
            .to_string_lossy()
            .into_owned();
        let out = out_dir.join("report.json");
        let result = radforce()
            .args([
                "run",
                &rel,
                "--format",
                "json",
                "--output",
                out.to_str().unwrap(),
            ])
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&result.stderr);
        assert_eq!(
            result.status.code(),
            Some(2),
            "{rel}: exit {:?}\n{stderr}",
            result.status.code()
        );
        assert!(
            stderr.contains(&expect),
            "{rel}: expected {expect:?} in\n{stderr}"
        );
        assert!(
            stderr.contains(&format!("error: {rel}")),
            "{rel}: the message must name the file\n{stderr}"
        );
        let file_level = expect.contains("UTF-8");
        if !file_level {
            let located = stderr.contains(&format!("{rel}:"))
                && stderr
                    .lines()
                    .next()
                    .unwrap()
                    .split(':')
                    .nth(2)
                    .is_some_and(|l| l.trim().parse::<usize>().is_ok());
            assert!(
                located,
                "{rel}: the message must give line and column\n{stderr}"
            );
            assert!(
                stderr.contains("valid example"),
                "{rel}: the message must show a valid example\n{stderr}"
            );
        }
        if !key.is_empty() {
            assert!(
                stderr.contains(&format!("`{key}`")),
                "{rel}: the message must name the key `{key}`\n{stderr}"
            );
        }
        assert!(!out.exists(), "{rel}: a refused run wrote its output");
        assert_eq!(
            std::fs::read_dir(&out_dir).unwrap().count(),
            0,
            "{rel}: files left behind"
        );
        // `check` refuses it the same way.
        radforce()
            .args(["check", &rel])
            .assert()
            .code(2)
            .stderr(predicate::str::contains(expect.as_str()));
    }
}

// A missing file, a directory and a file far larger than any scenario are refused with exit 2
// (common practice).
#[test]
fn files_that_are_not_scenarios() {
    radforce()
        .args(["run", "tests/bad-inputs/no-such-file.toml"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "tests/bad-inputs/no-such-file.toml: cannot read the scenario file",
        ));
    radforce()
        .args(["check", "tests/bad-inputs"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("is a directory"));
    // A file far larger than any scenario (4 MiB limit).
    let dir = scratch("huge");
    let big = dir.join("huge.toml");
    let mut text = String::from("title = \"huge\"\n");
    while text.len() < 5 * 1024 * 1024 {
        text.push_str("# padding padding padding padding padding padding padding padding\n");
    }
    std::fs::write(&big, text).unwrap();
    radforce()
        .args(["check", big.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("larger than any scenario"));
    // An unreadable file (permissions), unless the tests run as a user who reads everything.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let locked = dir.join("locked.toml");
        std::fs::write(&locked, "title = \"x\"\n").unwrap();
        std::fs::set_permissions(&locked, std::fs::Permissions::from_mode(0o000)).unwrap();
        if std::fs::read(&locked).is_err() {
            radforce()
                .args(["check", locked.to_str().unwrap()])
                .assert()
                .code(2)
                .stderr(predicate::str::contains("cannot read"));
        }
        std::fs::set_permissions(&locked, std::fs::Permissions::from_mode(0o644)).unwrap();
    }
}

// More than 1 % of the beam missing the mirror is a warning, not an error (common practice:
// the clipping is corrected, the edge diffraction is not modelled).
#[test]
fn a_beam_larger_than_the_mirror_warns() {
    let text =
        std::fs::read_to_string(crate::common::path("data/torsion-vacuum-20w.toml")).unwrap();
    let text = text.replace(
        "[inputs.mirror_radius]\nvalue = \"6 mm\"",
        "[inputs.mirror_radius]\nvalue = \"2 mm\"",
    );
    let dir = scratch("clipped");
    let f = dir.join("clipped.toml");
    std::fs::write(&f, text).unwrap();
    radforce()
        .args(["run", f.to_str().unwrap(), "--trials", "20000"])
        .assert()
        .success()
        .stderr(predicate::str::contains("of the beam falls on the mirror"));
}

// Command-line values are bad input too.
#[test]
fn bad_command_line_values() {
    let f = "data/validation/jcgm101-9.3-mass.toml";
    radforce()
        .args(["run", f, "--threads", "0"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--threads"));
    radforce()
        .args(["run", f, "--trials", "5"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--trials"));
    radforce()
        .args(["run", f, "--memory-budget", "lots"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--memory-budget"));
    radforce()
        .args(["run", f, "--format", "yaml"])
        .assert()
        .code(2);
    radforce()
        .args(["rank", f, "--base-trials", "10"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--base-trials"));
    radforce()
        .args(["rank", f, "--sampler", "sobol", "--base-trials", "100000"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("at most 65536"));
}
