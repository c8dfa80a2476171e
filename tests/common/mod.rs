//! Helpers shared by the integration tests.

use assert_cmd::Command;
use serde_json::Value;
use std::path::PathBuf;

/// The radforce binary built for these tests.
pub fn radforce() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_radforce"));
    c.current_dir(env!("CARGO_MANIFEST_DIR"));
    c.env_remove("NO_COLOR");
    c
}

/// Path of a file under the crate root.
pub fn path(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Run `radforce run FILE --format json ARGS...` and parse the report.
pub fn run_json(file: &str, args: &[&str]) -> Value {
    let out = radforce()
        .args(["run", file, "--format", "json"])
        .args(args)
        .output()
        .expect("radforce runs");
    assert!(
        out.status.success(),
        "radforce run {file} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("valid JSON")
}

/// The measurand named `name` in a report.
pub fn measurand<'a>(report: &'a Value, name: &str) -> &'a Value {
    report["measurands"]
        .as_array()
        .and_then(|a| a.iter().find(|m| m["name"] == name))
        .unwrap_or_else(|| panic!("no measurand {name} in {report}"))
}

/// A number field.
pub fn num(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

/// An interval field.
pub fn interval(v: &Value, key: &str) -> (f64, f64) {
    let a = v[key].as_array().unwrap_or_else(|| panic!("{key} missing"));
    (a[0].as_f64().unwrap(), a[1].as_f64().unwrap())
}

/// A fresh empty directory for one test, removed with everything in it when the test ends
/// (when the guard is dropped, also on a failed assertion).
pub struct Scratch(PathBuf);

impl std::ops::Deref for Scratch {
    type Target = std::path::Path;
    fn deref(&self) -> &std::path::Path {
        &self.0
    }
}

impl AsRef<std::path::Path> for Scratch {
    fn as_ref(&self) -> &std::path::Path {
        &self.0
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// A fresh empty directory for one test (see [`Scratch`]).
pub fn scratch(name: &str) -> Scratch {
    let dir = std::env::temp_dir().join(format!("radforce-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    Scratch(dir)
}
