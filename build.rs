//! Records the versions of the crates that define the random streams (from Cargo.lock), so that
//! every report can name them: a change of any of them may change the streams.

use std::collections::HashMap;

fn main() {
    println!("cargo:rerun-if-changed=Cargo.lock");
    let lock = std::fs::read_to_string("Cargo.lock").unwrap_or_default();
    let mut packages: Vec<(String, String, Vec<String>)> = Vec::new();
    for block in lock.split("[[package]]").skip(1) {
        let mut name = String::new();
        let mut version = String::new();
        let mut deps = Vec::new();
        let mut in_deps = false;
        for line in block.lines() {
            let line = line.trim();
            if let Some(v) = line.strip_prefix("name = ") {
                name = v.trim_matches('"').to_string();
            } else if let Some(v) = line.strip_prefix("version = ") {
                version = v.trim_matches('"').to_string();
            } else if line.starts_with("dependencies = [") {
                in_deps = true;
            } else if in_deps {
                if line.starts_with(']') {
                    in_deps = false;
                } else {
                    deps.push(line.trim_matches(|c| c == '"' || c == ',').to_string());
                }
            }
        }
        packages.push((name, version, deps));
    }
    let mut by_name: HashMap<&str, Vec<&str>> = HashMap::new();
    for (n, v, _) in &packages {
        by_name.entry(n.as_str()).or_default().push(v.as_str());
    }
    let own = packages.iter().find(|p| p.0 == "radforce");
    for krate in ["rand", "rand_distr", "rand_xoshiro", "statrs"] {
        let mut version = "unknown".to_string();
        if let Some((_, _, deps)) = own {
            for d in deps {
                let mut parts = d.split(' ');
                if parts.next() == Some(krate) {
                    version = match parts.next() {
                        Some(v) => v.to_string(),
                        None => by_name
                            .get(krate)
                            .and_then(|v| v.first())
                            .map_or("unknown".into(), |v| v.to_string()),
                    };
                }
            }
        }
        println!(
            "cargo:rustc-env=RADFORCE_DEP_{}={version}",
            krate.to_ascii_uppercase()
        );
    }
}
