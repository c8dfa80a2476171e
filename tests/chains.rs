//! The built-in chains through scenario files: the calibration and planning directions are
//! inverse to each other, and the demo scenarios load.

use radforce::scalar::Scalar;
use radforce::scenario::load_str;

fn constants(first: &str, chain: &str) -> String {
    format!(
        r#"
trials = 1000
[model]
chain = "{chain}"
{first}
[inputs.scale_distance]
value = "2 m"
[inputs.free_period]
value = "60 s"
[inputs.moment_of_inertia]
value = "3e-4 kg m^2"
[inputs.lever_arm]
value = "50 mm"
[inputs.reflectance]
value = 0.9993
[inputs.incidence]
value = "10 deg"
[inputs.beam_radius]
value = "1.5 mm"
[inputs.mirror_radius]
value = "6 mm"
[inputs.transmittance]
value = 5e-5
[inputs.diffuse_reflectance]
value = 1e-4
[inputs.bounces]
value = 3
[inputs.fold_reflectance]
value = 0.9997
[inputs.quality_factor]
value = 3000
[inputs.stray_force]
value = "0.3 nN"
"#
    )
}

// torsion-signal then torsion-power returns the power (the chains are inverse by construction;
// DESIGN "the calibration direction ... the planning direction").
#[test]
fn signal_then_power_round_trip() {
    let signal = load_str(
        &constants("[inputs.power]\nvalue = \"20 W\"", "torsion-signal"),
        "signal.toml",
    )
    .unwrap();
    let inputs: Vec<f64> = signal.inputs.iter().map(|q| q.estimate()).collect();
    let out = signal.model.evaluate_point(&inputs);
    let names: Vec<&str> = signal.measurands.iter().map(|m| m.name.as_str()).collect();
    assert_eq!(
        names,
        ["force", "torque", "deflection_angle", "readout_shift"]
    );
    let shift = out[3];
    let power = load_str(
        &constants(
            &format!("[inputs.readout_shift]\nvalue = {shift:e}"),
            "torsion-power",
        ),
        "power.toml",
    )
    .unwrap();
    let inputs: Vec<f64> = power.inputs.iter().map(|q| q.estimate()).collect();
    let back = power.model.evaluate_point(&inputs);
    assert!((back[0] - 20.0).abs() < 1e-9, "power back {}", back[0]);
    assert!(
        (back[1] - out[0]).abs() < 1e-18,
        "force back {} vs {}",
        back[1],
        out[0]
    );
    assert!(back[0].value().is_finite());
}

// Every bundled scenario loads (common practice: shipped examples must work).
#[test]
fn demo_scenarios_load() {
    for f in [
        "data/torsion-vacuum-20w.toml",
        "data/torsion-vacuum-signal.toml",
        "data/validation/jcgm101-9.2.2-normal.toml",
        "data/validation/jcgm101-9.2.3-rectangular.toml",
        "data/validation/jcgm101-9.2.4-dominant.toml",
        "data/validation/jcgm101-9.3-mass.toml",
    ] {
        let p = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(f);
        radforce::scenario::load_file(&p).unwrap_or_else(|e| panic!("{f}: {e}"));
    }
}
