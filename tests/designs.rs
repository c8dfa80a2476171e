//! Designs and plans: the weighing chains, noise floors, `compare`, `plan`, sweeps and the
//! Markdown report.

use crate::common::{measurand, num, radforce, run_json, scratch};
use predicates::prelude::*;
use radforce::scenario::load_str;

fn json_of(args: &[&str]) -> serde_json::Value {
    let out = radforce().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

const IDEAL_BALANCE: &str = r#"
trials = 1000
[model]
chain = "weighing-signal"
[inputs.power]
value = "1 kW"
[inputs.local_gravity]
value = 9.80665
[inputs.reflectance]
value = 1
[inputs.incidence]
value = 0
[inputs.beam_radius]
value = "1 mm"
[inputs.mirror_radius]
value = "1 m"
"#;

// REFERENCES 5 [calc]: 1 kW at normal incidence on a perfect mirror reads as 0.680 mg on a
// balance (2P/(c g_n)); 10 W with 33 ideal bounces on the sensed body gives 2.20 uN.
#[test]
fn weighing_chain_reference_values() {
    let s = load_str(IDEAL_BALANCE, "ideal.toml").unwrap();
    let x: Vec<f64> = s.inputs.iter().map(|q| q.estimate()).collect();
    let out = s.model.evaluate_point(&x);
    assert!(
        (out[0] - 0.680e-6).abs() < 0.0005e-6,
        "reading {} kg",
        out[0]
    );
    let text = IDEAL_BALANCE.replace("value = \"1 kW\"", "value = \"10 W\"")
        + "[inputs.bounces]\nvalue = 33\n[inputs.fold_reflectance]\nvalue = 1\n";
    let s = load_str(&text, "bounces.toml").unwrap();
    let x: Vec<f64> = s.inputs.iter().map(|q| q.estimate()).collect();
    let out = s.model.evaluate_point(&x);
    assert!((out[1] - 2.20e-6).abs() < 0.005e-6, "force {} N", out[1]);
}

// The demo weighing forecast: the power comes back at the forecast 2 kW, the predicted reading
// is the force along the sensing axis over the local gravity (m = F cos(beta) / g, DESIGN), the
// noise enters as an input of its own with the procedure's estimator standard deviation; and
// the 1 kW planning twin predicts its reading [calc from the demo's numbers].
#[test]
fn weighing_forecast_demo() {
    let cal = run_json("data/forecast-2kw-comparator.toml", &["--trials", "200000"]);
    let p = measurand(&cal, "power");
    assert_eq!(p["unit"], "W");
    assert!((num(p, "estimate") - 2000.0).abs() < 3.0 * num(p, "standard_uncertainty"));
    let predicted = &cal["forecast"]["predicted"];
    assert_eq!(predicted["input"], "reading");
    let force = num(measurand(&cal, "force"), "estimate") * 1e-6;
    let reading = predicted["value"].as_f64().unwrap();
    assert!((reading * 9.80943 / force - 1.0).abs() < 1e-4, "{reading}");
    assert!(
        cal["noise"]["convention"]
            .as_str()
            .unwrap()
            .contains("one-sided")
    );
    let budget = p["budget"].as_array().unwrap();
    assert!(budget.iter().any(|b| b["input"] == "noise_force"));
    let sd = cal["procedure"]["estimator_sd"].as_f64().unwrap();
    let noise_input = cal["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "noise_force")
        .unwrap();
    assert!((num(noise_input, "standard_uncertainty") - sd).abs() < 1e-20);
    let twin = run_json("data/weighing-1kw-signal.toml", &["--trials", "200000"]);
    let reading = measurand(&twin, "reading");
    assert_eq!(reading["unit"], "mg");
    assert!((num(reading, "estimate") - 4.7532).abs() < 3.0 * num(reading, "standard_uncertainty"));
}

// REFERENCES 5: kappa = 1e-8 N m/rad, Q = 1e4 structural, 10 mHz, 295 K gives a thermal torque
// noise of 5.1e-16 N m/sqrt(Hz); over a 0.05 m lever arm that is a force density of 1.02e-14
// N/sqrt(Hz), and averaging for 100 s leaves sqrt(S/(2t)) = 7.2e-16 N [calc].
#[test]
fn torsion_noise_floor_from_the_scenario() {
    let text = r#"
trials = 1000
[model]
chain = "torsion-signal"
[inputs.power]
value = "1 W"
[inputs.scale_distance]
value = "1 m"
[inputs.free_period]
value = "100 s"
[inputs.moment_of_inertia]
value = 2.533029591e-6
[inputs.lever_arm]
value = 0.05
[inputs.reflectance]
value = 1
[inputs.incidence]
value = 0
[inputs.beam_radius]
value = "1 mm"
[inputs.mirror_radius]
value = "10 mm"
[inputs.quality_factor]
value = 1e4
[noise]
averaging_time = "100 s"
temperature = "295 K"
damping = "structural"
signal_frequency = "10 mHz"
"#;
    let s = load_str(text, "noise.toml").unwrap();
    let n = s.noise.as_ref().unwrap();
    // I = kappa (T0 / 2 pi)^2 with kappa = 1e-8 N m/rad (damping correction 1 + 2.5e-9).
    assert!(
        (n.components[0].1 - 5.1e-16 / 0.05).abs() < 0.02e-14,
        "{}",
        n.components[0].1
    );
    assert!((n.resolution - n.density / 200f64.sqrt()).abs() < 1e-30);
    assert!(s.inputs.iter().any(|q| q.name == "noise_force"));
    // The inverse: the time for the target resolution reproduces it.
    let t =
        radforce::physics::noise::time_for_resolution(n.density * n.density, n.target_resolution);
    assert!((t - n.time_for_target.unwrap()).abs() < 1e-9 * t);
}

// `compare` on one design twice gives two identical rows (a paired comparison: same seed, same
// trials).
#[test]
fn comparing_a_design_with_itself_gives_identical_rows() {
    let r = json_of(&[
        "compare",
        "data/torsion-vacuum-20w.toml",
        "data/torsion-vacuum-20w.toml",
        "--format",
        "json",
        "--trials",
        "50000",
    ]);
    let rows = r["comparison"].as_array().unwrap();
    assert_eq!(rows.len(), 2);
    for key in [
        "estimate",
        "standard_uncertainty",
        "relative_expanded_uncertainty",
    ] {
        assert_eq!(rows[0][key], rows[1][key], "{key}");
    }
    assert_eq!(r["trials"], 50000);
}

// The comparison file of the demo: both designs, ranked, with the fields other programs read.
#[test]
fn the_demo_comparison_ranks_both_designs() {
    let dir = scratch("compare");
    let r = json_of(&[
        "compare",
        "data/compare-1kw-torsion-vs-balance.toml",
        "--format",
        "json",
        "--trials",
        "100000",
        "--plots",
        dir.to_str().unwrap(),
    ]);
    let rows = r["comparison"].as_array().unwrap();
    assert_eq!(rows.len(), 2);
    let mut ranks: Vec<u64> = rows.iter().map(|x| x["rank"].as_u64().unwrap()).collect();
    ranks.sort();
    assert_eq!(ranks, [1, 2]);
    for row in rows {
        for key in [
            "name",
            "measurand",
            "estimate",
            "standard_uncertainty",
            "relative_expanded_uncertainty",
            "rank",
        ] {
            assert!(!row[key].is_null(), "{key} missing");
        }
        assert_eq!(row["measurand"], "power");
    }
    let best = rows.iter().find(|x| x["rank"] == 1).unwrap();
    let other = rows.iter().find(|x| x["rank"] == 2).unwrap();
    assert!(
        best["relative_expanded_uncertainty"].as_f64().unwrap()
            <= other["relative_expanded_uncertainty"].as_f64().unwrap()
    );
    let svg = std::fs::read_to_string(dir.join("comparison.svg")).unwrap();
    assert!(svg.contains("coverage intervals of power"));
    assert!(svg.contains("(rank 1)"));
}

// The plan's achieved uncertainty meets the target in the verifying Monte Carlo run.
#[test]
fn a_plan_meets_its_target_in_the_checking_run() {
    for target in ["0.5%", "0.2%"] {
        let r = json_of(&[
            "plan",
            "data/torsion-vacuum-20w.toml",
            "--target",
            target,
            "--format",
            "json",
            "--trials",
            "100000",
        ]);
        let plan = &r["plan"];
        assert_eq!(plan["measurand"], "power");
        assert_eq!(plan["relative"], true);
        assert_eq!(plan["expanded"], true);
        let (t, a) = (
            plan["target"].as_f64().unwrap(),
            plan["achieved"].as_f64().unwrap(),
        );
        assert!(a <= t, "{target}: achieved {a} above target {t}");
        assert_eq!(plan["met"], true);
        let changes = plan["changes"].as_array().unwrap();
        assert!(!changes.is_empty());
        for c in changes {
            assert!(c["to"].as_f64().unwrap() < c["from"].as_f64().unwrap());
        }
        assert!(plan["alone"].as_array().unwrap().len() >= changes.len());
    }
}

// A target the design already meets changes nothing; an absolute standard target is read in the
// measurand's unit.
#[test]
fn plan_targets_in_the_users_terms() {
    let r = json_of(&[
        "plan",
        "data/torsion-vacuum-20w.toml",
        "--target",
        "5%",
        "--format",
        "json",
        "--trials",
        "50000",
    ]);
    assert_eq!(r["plan"]["met"], true);
    assert!(r["plan"]["changes"].as_array().unwrap().is_empty());
    let r = json_of(&[
        "plan",
        "data/torsion-vacuum-20w.toml",
        "--target",
        "0.08 W",
        "--uncertainty",
        "standard",
        "--format",
        "json",
        "--trials",
        "50000",
    ]);
    let plan = &r["plan"];
    assert_eq!(plan["relative"], false);
    assert_eq!(plan["unit"], "W");
    assert!((plan["target"].as_f64().unwrap() - 0.08).abs() < 1e-12);
    assert!(plan["achieved"].as_f64().unwrap() <= 0.08);
    radforce()
        .args(["plan", "data/torsion-vacuum-20w.toml", "--target", "3 mm"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("--target"));
}

// A sweep's point equals a plain run of that scenario with the input moved there.
#[test]
fn a_sweep_point_equals_a_plain_run() {
    let r = run_json("data/sweep-beam-radius.toml", &["--trials", "50000"]);
    let points = r["sweep"]["points"].as_array().unwrap();
    assert_eq!(points.len(), 9);
    let p = &points[6];
    let value = p["value"].as_f64().unwrap();
    assert!((value - 4.0e-3).abs() < 1e-12);
    let text = std::fs::read_to_string(crate::common::path("data/sweep-beam-radius.toml")).unwrap();
    let start = text.find("[sweep]").unwrap();
    let end = text[start..].find("\n\n").unwrap() + start;
    let plain = text[..start].to_string() + &text[end..];
    let plain = plain.replace("mean = \"1.5 mm\"", &format!("mean = {value:e}"));
    let dir = scratch("sweep");
    let f = dir.join("plain.toml");
    std::fs::write(&f, plain).unwrap();
    let plain = run_json(f.to_str().unwrap(), &["--trials", "50000"]);
    let m = measurand(&plain, "power");
    assert_eq!(p["estimate"].as_f64(), m["estimate"].as_f64());
    assert_eq!(
        p["standard_uncertainty"].as_f64(),
        m["standard_uncertainty"].as_f64()
    );
    assert_eq!(p["symmetric_interval"], m["symmetric_interval"]);
}

// The proposal-ready Markdown: a plain-words paragraph, the tables, the method with JCGM
// 100/101 cited, and the cautions.
#[test]
fn markdown_reports() {
    let out = radforce()
        .args([
            "run",
            "data/torsion-vacuum-20w.toml",
            "--format",
            "markdown",
            "--trials",
            "50000",
        ])
        .output()
        .unwrap();
    let md = String::from_utf8(out.stdout).unwrap();
    assert!(md.starts_with("# Calibration: 20 W"));
    // The demo labels its measurand and inputs: the prose uses the labels.
    assert!(
        md.contains(
            "the laser power is estimated as 20.01 W with a relative expanded uncertainty of"
        ),
        "{md}"
    );
    assert!(md.contains("of the variance comes from stray force (gas, patch potentials)"));
    assert!(md.contains("| measurand |"));
    assert!(md.contains("JCGM 101:2008") && md.contains("JCGM 100:2008"));
    assert!(md.contains("IEC 60825-1") && md.contains("ISO/IEC 17025"));
    let out = radforce()
        .args([
            "compare",
            "data/compare-1kw-torsion-vs-balance.toml",
            "--format",
            "markdown",
            "--trials",
            "20000",
        ])
        .output()
        .unwrap();
    let md = String::from_utf8(out.stdout).unwrap();
    assert!(
        md.contains("reaches the smallest relative expanded uncertainty"),
        "{md}"
    );
    let out = radforce()
        .args([
            "plan",
            "data/torsion-vacuum-20w.toml",
            "--target",
            "0.5%",
            "--format",
            "markdown",
            "--trials",
            "20000",
        ])
        .output()
        .unwrap();
    let md = String::from_utf8(out.stdout).unwrap();
    assert!(
        md.contains("# Plan:") && md.contains("the target is met"),
        "{md}"
    );
}

// Misspelled variant inputs and impossible sweeps are refused with exit 2 (common practice).
#[test]
fn bad_variants_and_sweeps_are_refused() {
    let base = std::fs::read_to_string(crate::common::path(
        "data/compare-1kw-torsion-vs-balance.toml",
    ))
    .unwrap();
    let dir = scratch("bad-variants");
    let f = dir.join("v.toml");
    std::fs::write(
        &f,
        base.replace("\"quality_factor\"]", "\"quality_factr\"]"),
    )
    .unwrap();
    radforce()
        .args(["compare", f.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no input `quality_factr` to drop"));
    std::fs::write(
        &f,
        base.replace(
            "[variants.mass_comparator]\n",
            "[variants.mass_comparator]\nseed = 4\n",
        ),
    )
    .unwrap();
    radforce()
        .args(["compare", f.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("unknown key `seed`"));
    let sweep =
        std::fs::read_to_string(crate::common::path("data/sweep-beam-radius.toml")).unwrap();
    std::fs::write(&f, sweep.replace("from = \"1.0 mm\"", "from = \"-1.0 mm\"")).unwrap();
    radforce()
        .args(["run", f.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("greater than 0"));
    std::fs::write(
        &f,
        sweep.replace("input = \"beam_radius\"", "input = \"beam_radios\""),
    )
    .unwrap();
    radforce()
        .args(["run", f.to_str().unwrap()])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("did you mean `beam_radius`"));
}
