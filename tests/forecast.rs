//! Planning a meter that does not exist yet: the forecast, the noise models, the on/off
//! procedure and the plan, each checked against an analytic result, a simulation or the
//! published definitions (NIST SP 1065, IEEE Std 952), and bad records refused clearly.

use crate::common::{measurand, num, radforce, run_json, scratch};
use radforce::physics::power_law::{NoiseModel, simulate_record};
use radforce::physics::procedure::{Pattern, Procedure};
use rand::SeedableRng;

/// The estimator applied in the time domain to a record sampled every `dt`: each window's
/// integral as dt times the sum of its samples (a sample stands for the interval after it).
fn estimate(p: &Procedure, record: &[f64], dt: f64) -> f64 {
    p.windows()
        .iter()
        .map(|w| {
            let a = (w.start / dt).round() as usize;
            let b = ((w.end / dt).round() as usize).min(record.len());
            w.weight * dt * record[a..b].iter().sum::<f64>()
        })
        .sum()
}

/// The sample variance of the estimator over `n` generated records, and its standard error
/// (sqrt(2 / (n - 1)) of a variance, for normal values).
fn simulated_variance(p: &Procedure, model: &NoiseModel, dt: f64, n: usize) -> (f64, f64) {
    let samples = (p.total_time() / dt).round() as usize;
    let values: Vec<f64> = (0..n)
        .map(|k| {
            let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(k as u64 + 1);
            estimate(p, &simulate_record(model, dt, samples, &mut rng), dt)
        })
        .collect();
    let mean = values.iter().sum::<f64>() / n as f64;
    let var = values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
    (var, var * (2.0 / (n - 1) as f64).sqrt())
}

// The exact variance of the estimator under flicker and under random-walk noise (the closed-form
// window integrals of physics::procedure) against a time-domain simulation of the same
// estimator on 10^4 generated records of each (flicker by the spectral method of Timmer and
// Koenig 1995, random walk as a Wiener process): within 4 standard errors of the simulated
// variance (about 1.4 % each), for both patterns [DESIGN: variance = int S(f) |W(f)|^2 df].
#[test]
fn exact_variance_against_simulation() {
    let d = NoiseModel::default();
    for pattern in [Pattern::Alternate, Pattern::Aba] {
        let p = Procedure {
            pattern,
            cycles: 4,
            on_time: 20.0,
            off_time: 20.0,
            settle_time: 4.0,
        };
        for model in [
            NoiseModel { flicker: 1.0, ..d },
            NoiseModel {
                random_walk: 1.0,
                ..d
            },
        ] {
            let t = p.estimator_terms(&model);
            let exact = t.flicker.powi(2) + t.random_walk.powi(2);
            let (var, se) = simulated_variance(&p, &model, 0.1, 10_000);
            assert!(
                (var - exact).abs() < 4.0 * se,
                "{pattern:?} {model:?}: simulated {var} +- {se}, exact {exact}"
            );
        }
    }
}

fn forecast_text(extra: &str) -> String {
    format!(
        r#"
title = "perfect mirror"
trials = 200_000
seed = 3
[model]
chain = "weighing-power"
[forecast]
power = "1 kW"
[inputs.reflectance]
value = 1
[inputs.incidence]
value = 0
[inputs.beam_radius]
value = "1 mm"
[inputs.mirror_radius]
value = "50 mm"
{extra}
"#
    )
}

const NOISE: &str = r#"
[noise]
force_noise = "2 ug/sqrt(Hz)"
flicker = "0.5 ug"
drift = "0.1 ug/min"
[procedure]
pattern = "ABA"
cycles = 10
on_time = "60 s"
off_time = "60 s"
settle_time = "10 s"
"#;

// A forecast of a perfect mirror at normal incidence with only the instrument's noise uncertain:
// P = F c / 2, so u(P) = u(noise_force) c / 2 (momentum transfer 2P/c, REFERENCES 5), here
// within 1 % (the Monte Carlo standard deviation of 2e5 normal trials is good to 0.16 %); the
// estimate is the forecast power; the predicted reading is 2P/(c g_n).
#[test]
fn perfect_mirror_forecast() {
    let dir = scratch("perfect-mirror");
    let file = dir.join("mirror.toml");
    std::fs::write(&file, forecast_text(NOISE)).unwrap();
    let r = run_json(file.to_str().unwrap(), &[]);
    let p = measurand(&r, "power");
    let sd = r["procedure"]["estimator_sd"].as_f64().unwrap();
    let c = 299_792_458.0;
    assert!((num(p, "standard_uncertainty") / (sd * c / 2.0) - 1.0).abs() < 0.01);
    assert!((num(p, "estimate") - 1000.0).abs() < 4.0 * num(p, "standard_uncertainty") / 447.0);
    let reading = r["forecast"]["predicted"]["value"].as_f64().unwrap();
    assert!((reading / (2.0 * 1000.0 / (c * 9.80665)) - 1.0).abs() < 1e-12);
    assert_eq!(r["forecast"]["power"].as_f64().unwrap(), 1000.0);
    // ABA cancels a linear drift exactly; the alternate pattern keeps D period / 2 [calc].
    assert_eq!(r["procedure"]["terms"]["drift_bias"].as_f64().unwrap(), 0.0);
    let alternate = NOISE.replace("\"ABA\"", "\"alternate\"");
    std::fs::write(&file, forecast_text(&alternate)).unwrap();
    let r = run_json(file.to_str().unwrap(), &[]);
    let bias = r["procedure"]["terms"]["drift_bias"].as_f64().unwrap();
    let drift = 0.1e-9 * 9.80665 / 60.0;
    assert!((bias / (drift * 60.0) - 1.0).abs() < 1e-9, "{bias}");
}

// A sweep of the number of bounces in a forecast: every point is the same 1 kW meter, so the
// estimate stays at the forecast power while the relative uncertainty falls (more force for
// the same noise) [common practice of multi-reflection meters].
#[test]
fn bounce_sweep_in_a_forecast() {
    let dir = scratch("bounce-sweep");
    let file = dir.join("bounces.toml");
    let text = forecast_text(&format!(
        "{NOISE}\n[sweep]\ninput = \"bounces\"\nfrom = 1\nto = 19\nsteps = 10\n[inputs.bounces]\nvalue = 1\n"
    ));
    std::fs::write(&file, text).unwrap();
    let r = run_json(file.to_str().unwrap(), &["--trials", "50000"]);
    let points = r["sweep"]["points"].as_array().unwrap();
    assert_eq!(points.len(), 10);
    let mut last = f64::INFINITY;
    for pt in points {
        let (y, u) = (num(pt, "estimate"), num(pt, "standard_uncertainty"));
        assert!((y - 1000.0).abs() < 4.0 * u / 223.0 + 1e-9, "{pt}");
        let rel = num(pt, "relative_standard_uncertainty");
        assert!(rel < last, "relative u must fall: {rel} after {last}");
        last = rel;
    }
}

/// Write a record CSV of `model` noise (N, written as nN) sampled every second.
fn write_record(path: &std::path::Path, model: &NoiseModel, n: usize, seed: u64) {
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(seed);
    let values = simulate_record(model, 1.0, n, &mut rng);
    let mut text = String::from("time,force\n");
    for (k, v) in values.iter().enumerate() {
        text.push_str(&format!("{k},{}\n", v * 1e9));
    }
    std::fs::write(path, text).unwrap();
}

fn record_scenario(extra: &str) -> String {
    forecast_text(&format!(
        "[noise]\n[noise.record]\nfile = \"zero.csv\"\ntime = \"time\"\nvalue = \"force\"\nunit = \"nN\"\n{extra}\n[procedure]\npattern = \"ABA\"\ncycles = 10\non_time = \"60 s\"\noff_time = \"60 s\"\nsettle_time = \"10 s\"\n"
    ))
}

// The fit of a recorded zero series recovers the coefficients the record was drawn with: white
// within 5 %, flicker and drift within 30 % (the long-tau points that set them have few terms)
// [weighted least squares on the overlapping Allan deviation, NIST SP 1065 5.2.4].
#[test]
fn record_fit_recovers_known_coefficients() {
    let dir = scratch("record-fit");
    let truth = NoiseModel {
        white: 20e-9,
        flicker: 4e-9,
        random_walk: 0.0,
        drift: 2e-12,
    };
    write_record(&dir.join("zero.csv"), &truth, 1 << 15, 7);
    let file = dir.join("fit.toml");
    std::fs::write(&file, record_scenario("")).unwrap();
    let r = run_json(file.to_str().unwrap(), &["--trials", "10000"]);
    let fit = &r["noise"]["fit"];
    let rel = |k: &str, t: f64| (fit[k].as_f64().unwrap() / t - 1.0).abs();
    assert!(rel("white", truth.white) < 0.05, "{fit}");
    assert!(rel("flicker", truth.flicker) < 0.30, "{fit}");
    assert!(rel("drift", truth.drift) < 0.30, "{fit}");
    let allan = r["noise"]["allan"].as_array().unwrap();
    assert!(allan.len() >= 10);
    assert!(allan.iter().all(|p| p["interval"].is_array()));
}

// A damaged record is refused with exit code 2, naming the record file, the row and the column:
// a gap in time, a cell that is not a number, a column that is not there, a time that does not
// increase, too few values [common practice: refuse, never guess].
#[test]
fn bad_records_are_refused() {
    let dir = scratch("bad-records");
    let scenario = dir.join("s.toml");
    std::fs::write(&scenario, record_scenario("")).unwrap();
    let rows = |skip: Option<usize>, bad: Option<(usize, &str)>| {
        let mut text = String::from("time,force\n");
        for k in 0..200usize {
            if Some(k) == skip {
                continue;
            }
            let v = match bad {
                Some((row, cell)) if row == k => cell.to_string(),
                _ => format!("{}", (k % 7) as f64 - 3.0),
            };
            text.push_str(&format!("{k},{v}\n"));
        }
        text
    };
    let cases: Vec<(String, &str, &str)> = vec![
        (rows(Some(50), None), "row 52", "a gap"),
        (rows(None, Some((80, "abc"))), "row 82", "not a number"),
        (
            rows(None, Some((90, "nan"))),
            "row 92",
            "not a finite number",
        ),
        (
            "time,force\n0,1\n0,2\n".to_string() + &rows(None, None)[11..],
            "does not increase",
            "time",
        ),
        (
            "t,force\n0,1\n1,2\n".to_string(),
            "no column `time`",
            "its columns: t, force",
        ),
        (
            "time,force\n0,1\n1,2\n2,3\n".to_string(),
            "needs at least 64",
            "3 values",
        ),
    ];
    for (csv, fragment, also) in cases {
        std::fs::write(dir.join("zero.csv"), &csv).unwrap();
        let out = radforce()
            .args(["check", scenario.to_str().unwrap()])
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains(fragment),
            "expected {fragment:?} in {stderr}"
        );
        assert!(stderr.contains(also), "expected {also:?} in {stderr}");
        assert!(
            stderr.contains("zero.csv"),
            "the record must be named: {stderr}"
        );
    }
}

// plan states an improvement of the noise as cycles and total time of the procedure, and
// reaches its target in the checking run [the procedure's exact variance; JCGM 101 for the
// check].
#[test]
fn plan_states_the_noise_in_cycles() {
    let out = radforce()
        .args([
            "plan",
            "data/forecast-2kw-comparator.toml",
            "--target",
            "0.1%",
            "--trials",
            "100000",
            "--format",
            "json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let r: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let changes = r["plan"]["changes"].as_array().unwrap();
    let noise = changes
        .iter()
        .find(|c| c["input"] == "noise_force")
        .expect("the plan improves the noise");
    let cycles = noise["cycles"].as_u64().unwrap();
    assert!(cycles > 10);
    // ABA: N (on + off) + off [the procedure's definition].
    let t = noise["total_time"].as_f64().unwrap();
    assert!((t - (cycles as f64 * 120.0 + 60.0)).abs() < 1e-9);
    assert_eq!(r["plan"]["met"], true);
}
