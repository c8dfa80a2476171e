//! The structure the contributor guide promises, checked on the sources: imports between the
//! top-level modules of `src/` point one way only (from the binary down to `units`, the order
//! of DESIGN.md's module map), `stats` imports nothing of the crate but `units`, no source file
//! is over 700 lines, and the binary (`main.rs` with `cli.rs`) stays under 400.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The layers, lowest first. A module may use modules of a lower layer only; `error` may be
/// used by any.
const LAYERS: &[&[&str]] = &[
    &["error"],
    &["units"],
    &["scalar", "stats"],
    &["dist"],
    &["physics"],
    &["model"],
    &["scenario"],
    &["engine"],
    &["analysis"],
    &["report"],
    &["run"],
    &["cli"],
    &["main"],
];

fn layer(module: &str) -> Option<usize> {
    LAYERS.iter().position(|l| l.contains(&module))
}

fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.is_dir() {
            sources(&p, out);
        } else if p.extension().is_some_and(|e| e == "rs") {
            out.push(p);
        }
    }
}

/// The top-level module a source file belongs to (`src/engine/tails.rs` -> `engine`).
fn module_of(src: &Path, file: &Path) -> String {
    let rel = file.strip_prefix(src).unwrap();
    let first = rel
        .components()
        .next()
        .unwrap()
        .as_os_str()
        .to_string_lossy();
    first.trim_end_matches(".rs").to_string()
}

/// The crate's top-level modules a file's code (its tests left out) names: `crate::x` inside
/// the library, `radforce::x` in the binary.
fn uses(text: &str) -> Vec<String> {
    let code = text.split("#[cfg(test)]").next().unwrap_or("");
    let mut out = Vec::new();
    for prefix in ["crate::", "radforce::"] {
        for (i, _) in code.match_indices(prefix) {
            let rest = &code[i + prefix.len()..];
            let name: String = rest
                .chars()
                .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                .collect();
            if !name.is_empty() {
                out.push(name);
            }
        }
    }
    out
}

// DESIGN.md, "Module map": arrows point down only, and no two modules import each other
// (a layered order is acyclic by construction) [common practice: a layered architecture].
#[test]
fn imports_point_down_only() {
    let src = crate::common::path("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let mut wrong: BTreeMap<String, Vec<String>> = BTreeMap::new();
    for file in &files {
        let module = module_of(&src, file);
        if module == "lib" {
            continue;
        }
        let own = layer(&module).unwrap_or_else(|| panic!("module `{module}` has no layer"));
        for used in uses(&std::fs::read_to_string(file).unwrap()) {
            if used == module || used == "error" {
                continue;
            }
            let Some(theirs) = layer(&used) else { continue };
            let allowed = theirs < own && !(module == "stats" && used != "units");
            if !allowed {
                wrong
                    .entry(format!("{} ({module})", file.display()))
                    .or_default()
                    .push(used);
            }
        }
    }
    assert!(
        wrong.is_empty(),
        "imports against the module map: {wrong:#?}"
    );
}

// The contributor guide's size rules: small modules with one job, a thin binary.
#[test]
fn files_stay_small_and_the_binary_thin() {
    let src = crate::common::path("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let lines = |p: &Path| std::fs::read_to_string(p).unwrap().lines().count();
    for file in &files {
        let n = lines(file);
        assert!(n <= 700, "{} has {n} lines (at most 700)", file.display());
    }
    let binary = lines(&src.join("main.rs")) + lines(&src.join("cli.rs"));
    assert!(
        binary < 400,
        "main.rs and cli.rs have {binary} lines (under 400)"
    );
}
