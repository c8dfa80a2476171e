//! Budgets by subsystem (DESIGN "Budgets by subsystem"): every budget row carries the part of
//! the apparatus its input belongs to, and each measurand the shares summed by part; labels
//! replace names in prose.

use crate::common::{measurand, num, radforce, run_json, scratch};
use serde_json::Value;

fn rows(m: &Value) -> &Vec<Value> {
    m["budget"].as_array().expect("budget rows")
}

// The torsion demo: each input sits in the subsystem its chain gives it, and the subsystem
// shares are the sums of their rows' shares (and contributions their root sum of squares),
// largest first.
#[test]
fn torsion_budget_sums_by_subsystem() {
    let r = run_json("data/torsion-vacuum-20w.toml", &["--trials", "20000", "-q"]);
    let p = measurand(&r, "power");
    let expected = [
        ("stray_force", "environment"),
        ("moment_of_inertia", "balance"),
        ("free_period", "balance"),
        ("lever_arm", "balance"),
        ("readout_shift", "readout"),
        ("scale_distance", "readout"),
        ("incidence", "beam"),
        ("beam_radius", "beam"),
        ("reflectance", "mirror"),
    ];
    for (input, part) in expected {
        let row = rows(p)
            .iter()
            .find(|b| b["input"] == input)
            .unwrap_or_else(|| panic!("no budget row for {input}"));
        assert_eq!(row["subsystem"], part, "{input}");
    }
    let parts = p["budget_by_subsystem"]
        .as_array()
        .expect("budget_by_subsystem");
    assert!(!parts.is_empty());
    let mut last = f64::INFINITY;
    let mut total = 0.0;
    for part in parts {
        let name = part["subsystem"].as_str().unwrap();
        let mine: Vec<&Value> = rows(p).iter().filter(|b| b["subsystem"] == name).collect();
        let share: f64 = mine.iter().map(|b| num(b, "share")).sum();
        let c2: f64 = mine.iter().map(|b| num(b, "contribution").powi(2)).sum();
        assert!((num(part, "share") - share).abs() < 1e-12, "{name}");
        assert!(
            (num(part, "contribution") - c2.sqrt()).abs() <= 1e-12 * c2.sqrt(),
            "{name}"
        );
        assert_eq!(part["inputs"].as_u64().unwrap() as usize, mine.len());
        assert!(num(part, "share") <= last, "largest share first");
        last = num(part, "share");
        total += num(part, "share");
    }
    // Uncorrelated inputs: the first-order shares sum to 1 (JCGM 100 5.1.2).
    assert!((total - 1.0).abs() < 1e-9, "shares sum to {total}");
}

// A linear formula y = a + 2 b with u(a) = 3, u(b) = 2 (so |c| u = 3 and 4): the shares by
// subsystem are exactly 9/25 and 16/25 (analytic: u_c^2 = 9 + 16). The subsystem of a formula
// input is the one it states, or "other"; labels appear in the JSON and in the Markdown prose.
#[test]
fn formula_inputs_state_their_subsystem_and_label() {
    let dir = scratch("subsystems");
    let file = dir.join("s.toml");
    std::fs::write(
        &file,
        r#"title = "Two parts"
trials = 20_000
laser = false
[inputs.a]
dist = "normal"
mean = 10
sd = 3
subsystem = "balance"
label = "zero offset of the balance"
[inputs.b]
dist = "normal"
mean = 1
sd = 2
label = "buoyancy correction"
[measurands.y]
formula = "a + 2 * b"
label = "corrected reading"
"#,
    )
    .unwrap();
    let f = file.to_str().unwrap();
    let r = run_json(f, &["-q"]);
    let y = measurand(&r, "y");
    assert_eq!(y["label"], "corrected reading");
    let parts = y["budget_by_subsystem"].as_array().unwrap();
    assert_eq!(parts.len(), 2);
    assert_eq!(parts[0]["subsystem"], "other");
    assert!((num(&parts[0], "share") - 16.0 / 25.0).abs() < 1e-12);
    assert_eq!(parts[1]["subsystem"], "balance");
    assert!((num(&parts[1], "share") - 9.0 / 25.0).abs() < 1e-12);
    let a = r["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "a")
        .unwrap();
    assert_eq!(a["label"], "zero offset of the balance");
    assert_eq!(a["subsystem"], "balance");
    let md = radforce()
        .args(["run", f, "--format", "markdown", "-q"])
        .output()
        .unwrap();
    assert!(md.status.success());
    let text = String::from_utf8(md.stdout).unwrap();
    assert!(
        text.contains("64 % of the variance comes from buoyancy correction"),
        "{text}"
    );
    assert!(
        text.contains("By part of the apparatus: other 64 %, balance 36 %."),
        "{text}"
    );
    assert!(
        text.contains("the corrected reading is estimated as"),
        "{text}"
    );
    assert!(text.contains("**balance** (1)"), "{text}");
}

// The terminal budget groups rows under their subsystem with its subtotal, and says "nil (1st
// order)" for an input whose share is below 1e-6 (the beam radius of the torsion demo, whose
// mirror catches all but 1e-13 of the beam).
#[test]
fn text_budget_groups_rows_under_subtotals() {
    let out = radforce()
        .args([
            "run",
            "data/torsion-vacuum-20w.toml",
            "--trials",
            "20000",
            "-q",
        ])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    let budget = text
        .split("uncertainty budget of power")
        .nth(1)
        .expect("a budget of power");
    let lines: Vec<&str> = budget.lines().collect();
    let part = lines
        .iter()
        .position(|l| l.starts_with("balance (4 inputs)"))
        .unwrap();
    assert!(
        lines[part + 1].starts_with("  "),
        "inputs indented under their part"
    );
    let beam = lines
        .iter()
        .find(|l| l.starts_with("  beam_radius"))
        .unwrap();
    assert!(beam.contains("nil (1st order)"), "{beam}");
}

// The Markdown report links its figures relative to its own folder (common practice for
// relative links), so the links resolve from there whatever the working folder was (checked by opening every linked file from the
// report's folder).
#[test]
fn markdown_links_resolve_from_the_report_folder() {
    let dir = scratch("md-links");
    let scenario = crate::common::path("data/torsion-vacuum-20w.toml");
    // A report into a folder that does not exist is refused before the run (exit 2).
    let missing = radforce()
        .current_dir(&*dir)
        .args(["run", scenario.to_str().unwrap(), "--trials", "20000", "-q"])
        .args(["--format", "markdown", "-o", "out/report/c.md"])
        .output()
        .unwrap();
    assert_eq!(missing.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("does not exist"));
    std::fs::create_dir_all(dir.join("out/report")).unwrap();
    let out = radforce()
        .current_dir(&*dir)
        .args(["run", scenario.to_str().unwrap(), "--trials", "20000", "-q"])
        .args([
            "--format",
            "markdown",
            "-o",
            "out/report/c.md",
            "--plots",
            "out/figs",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report_dir = dir.join("out/report");
    let text = std::fs::read_to_string(report_dir.join("c.md")).unwrap();
    let links: Vec<&str> = text
        .split("](")
        .skip(1)
        .map(|rest| rest.split(')').next().unwrap())
        .collect();
    assert!(links.len() >= 3, "figure links in {text}");
    for link in links {
        assert!(link.starts_with("../figs/"), "{link}");
        assert!(report_dir.join(link).is_file(), "{link} does not resolve");
    }
}

// compare numbers the designs (D1, D2 in file order) with a key of their titles, and its tables
// stay narrow enough for a terminal (common practice: 120 columns; one table was 226 wide).
#[test]
fn compare_tables_fit_a_terminal() {
    let out = radforce()
        .args(["compare", "data/compare-1kw-torsion-vs-balance.toml"])
        .args(["--trials", "20000", "-q"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("D1  1 kW: torsion pendulum"), "{text}");
    for line in text.lines().filter(|l| {
        l.starts_with("rank") || l.starts_with("design") || l.trim_start().starts_with(['1', '2'])
    }) {
        assert!(
            line.chars().count() <= 120,
            "{} wide: {line}",
            line.chars().count()
        );
    }
}

// A plan says "no effect" for an input whose share of u_c^2 is below 1e-6 (the torsion demo's
// beam radius: its mirror catches all but 1e-13 of the beam) instead of a meaningless u.
#[test]
fn plan_says_no_effect() {
    let r = run_json_plan();
    let alone = r["plan"]["alone"].as_array().expect("alone rows");
    let beam = alone.iter().find(|a| a["input"] == "beam_radius").unwrap();
    assert_eq!(beam["no_effect"], true);
    assert!(beam["needed"].is_null());
    let stray = alone.iter().find(|a| a["input"] == "stray_force").unwrap();
    assert_eq!(stray["no_effect"], false);
    assert!(num(stray, "needed") > 0.0);
}

fn run_json_plan() -> Value {
    let out = radforce()
        .args(["plan", "data/torsion-vacuum-20w.toml", "--target", "2%"])
        .args(["--trials", "20000", "-q", "--format", "json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

// A correlation that does not exist (a measurand that does not vary) is null in JSON and "-" in
// the text, never a number (common practice: Pearson's r needs two variances).
#[test]
fn undefined_correlation_is_not_a_number() {
    let dir = scratch("corr-const");
    let file = dir.join("c.toml");
    std::fs::write(
        &file,
        "title = \"Constant and varying\"\ntrials = 2000\nlaser = false\n[inputs.x]\n\
         dist = \"normal\"\nmean = 1\nsd = 0.1\n[inputs.k]\nvalue = 3\n\
         [measurands.y]\nformula = \"2 * x\"\n[measurands.z]\nformula = \"k * 2\"\n",
    )
    .unwrap();
    let r = run_json(file.to_str().unwrap(), &["-q"]);
    assert!(
        r["correlation"]["matrix"][0][1].is_null(),
        "{}",
        r["correlation"]
    );
    assert!(r["correlation"]["matrix"][1][0].is_null());
    let out = radforce()
        .args(["run", file.to_str().unwrap(), "-q"])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let section = text.split("correlation of the measurands").nth(1).unwrap();
    let row = section.lines().find(|l| l.starts_with("y ")).unwrap();
    assert!(row.contains("- / -"), "{row}");
}
