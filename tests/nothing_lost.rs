//! Nothing lost: outputs are written through a temporary file and a rename, replaced only with
//! --force, and a run killed midway leaves the previous output untouched.

use crate::common::scratch;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

// A model slow enough (many transcendental functions per trial, 4x10^6 trials) to be killed
// while it computes.
const SLOW: &str = r#"
trials = 4_000_000
seed = 2
laser = false
[inputs.a]
dist = "normal"
mean = 1
sd = 0.1
[measurands.y]
formula = "sin(a)*cos(a)*exp(a)*atan(a)*sqrt(a*a+1) + ln(a*a+1)*tan(a/3)*asin(a/3)*acos(a/4) + sin(a)*cos(a)*exp(a)*atan(a)*sqrt(a*a+1) + ln(a*a+1)*tan(a/3)*asin(a/3)*acos(a/4)"
"#;

// A run killed midway leaves the previous output file as it was (common practice: write to a
// temporary file, then rename).
#[test]
fn a_killed_run_leaves_the_previous_output_intact() {
    let dir = scratch("killed");
    let scenario = dir.join("slow.toml");
    std::fs::write(&scenario, SLOW).unwrap();
    let out = dir.join("report.json");
    std::fs::write(&out, "previous report\n").unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_radforce"))
        .args([
            "run",
            scenario.to_str().unwrap(),
            "--format",
            "json",
            "--output",
            out.to_str().unwrap(),
            "--force",
            "--threads",
            "1",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    std::thread::sleep(Duration::from_millis(300));
    let still_running = child.try_wait().unwrap().is_none();
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(
        still_running,
        "the run finished before it could be killed; make the model slower"
    );
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "previous report\n");
    let names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(
        names.len(),
        2,
        "only the scenario and the previous report remain: {names:?}"
    );
}

// Without --force an existing file is never replaced, and the refusal comes before the run.
#[test]
fn an_existing_file_is_replaced_only_with_force() {
    let dir = scratch("force");
    let scenario = dir.join("slow.toml");
    std::fs::write(&scenario, SLOW).unwrap();
    let out = dir.join("report.json");
    std::fs::write(&out, "keep me\n").unwrap();
    let start = Instant::now();
    let status = Command::new(env!("CARGO_BIN_EXE_radforce"))
        .args([
            "run",
            scenario.to_str().unwrap(),
            "--output",
            out.to_str().unwrap(),
        ])
        .stderr(Stdio::null())
        .status()
        .unwrap();
    assert_eq!(status.code(), Some(2));
    assert!(
        start.elapsed() < Duration::from_secs(2),
        "refused before the trials, not after"
    );
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "keep me\n");
}
