//! What the report says of a forecast and of the planned measurement: the predicted signal, the
//! procedure with its estimator's noise by term, the cycles a target needs, the best phases for
//! the same time, and one simulated record of the sequence for a figure.

use crate::physics::power_law::simulate_record;
use crate::physics::procedure::{EstimatorTerms, Procedure};
use crate::scenario::Study;
use crate::units::DisplayUnit;

/// A forecast's power and the signal it predicts.
#[derive(Clone, Debug, PartialEq)]
pub struct ForecastFinding {
    /// The forecast power, W.
    pub(crate) power: f64,
    /// The observed input it predicts.
    pub(crate) input: String,
    /// Its predicted value, SI.
    pub(crate) value: f64,
    /// The unit it is shown in.
    pub(crate) unit: DisplayUnit,
}

/// One simulated record of the planned sequence: the signal through the procedure with noise
/// drawn from the noise model, for a figure.
#[derive(Clone, Debug, PartialEq)]
pub struct SimulatedRecord {
    /// Sampling interval, s.
    pub(crate) dt: f64,
    /// The force at the instrument's output, N, every dt from t = 0.
    pub(crate) values: Vec<f64>,
    /// The noise-free signal, N, every dt.
    pub(crate) signal: Vec<f64>,
    /// The kept windows: start, end (s) and whether the laser is on.
    pub(crate) windows: Vec<(f64, f64, bool)>,
}

/// The planned measurement as the report shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct ProcedureFinding {
    /// The procedure.
    pub(crate) procedure: Procedure,
    /// Its total length, s.
    pub(crate) total_time: f64,
    /// The estimator's standard deviation by term and the drift bias, N.
    pub(crate) terms: EstimatorTerms,
    /// The standard deviation of `noise_force`, N (the terms in quadrature with the drift bias
    /// as a rectangular bound).
    pub(crate) estimator_sd: f64,
    /// The fraction of a unit force step that the windows see (1 for an instrument that
    /// follows the force at once).
    pub(crate) settling_factor: f64,
    /// The target force resolution, N.
    pub(crate) target_resolution: f64,
    /// The fewest cycles of the same phases that reach it.
    pub(crate) cycles_for_target: Option<u64>,
    /// For the same total time, the phases with the smallest uncertainty.
    pub(crate) best: Option<(Procedure, EstimatorTerms)>,
    /// One simulated record, for the figure.
    pub(crate) record: Option<SimulatedRecord>,
}

/// Most samples of a simulated record (enough for a figure).
const RECORD_SAMPLES: usize = 4000;

/// The forecast of a study, if it has one.
pub fn forecast_finding(study: &Study) -> Option<ForecastFinding> {
    let f = study.forecast.as_ref()?;
    let q = &study.inputs[f.input];
    Some(ForecastFinding {
        power: f.power,
        input: q.name.clone(),
        value: f.predicted,
        unit: q.shown_unit.clone(),
    })
}

/// The procedure of a study under its noise, if it has both; `force` is the radiation force at
/// the estimates, the step the record shows.
pub fn procedure_finding(study: &Study) -> Option<ProcedureFinding> {
    let p = study.procedure?;
    let floor = study.noise.as_ref()?;
    let terms = floor.estimator?;
    let cycles_for_target = p.cycles_for(&floor.model, floor.target_resolution);
    let best = p.best_phases(&floor.model);
    Some(ProcedureFinding {
        procedure: p,
        total_time: p.total_time(),
        terms,
        estimator_sd: terms.standard_uncertainty(),
        settling_factor: 1.0,
        target_resolution: floor.target_resolution,
        cycles_for_target,
        best,
        record: simulated_record(&p, floor, study.seed),
    })
}

/// One record of the sequence: the force step (the radiation force at the estimates while the
/// laser is on) plus noise drawn from the noise model with a stream of the study's seed (so
/// the figure is the same every run).
fn simulated_record(
    p: &Procedure,
    floor: &crate::scenario::NoiseFloor,
    seed: u64,
) -> Option<SimulatedRecord> {
    use rand::SeedableRng;
    let total = p.total_time();
    let dt = (total / RECORD_SAMPLES as f64).max(1e-3);
    let n = (total / dt).ceil() as usize;
    if n < 2 || !floor.force.is_finite() {
        return None;
    }
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(seed ^ 0x5eed_0f5e_c04d);
    let noise = simulate_record(&floor.model, dt, n, &mut rng);
    let phases = p.phases();
    let signal: Vec<f64> = (0..n)
        .map(|k| {
            let t = k as f64 * dt;
            let on = phases.iter().any(|ph| ph.on && t >= ph.start && t < ph.end);
            if on { floor.force } else { 0.0 }
        })
        .collect();
    let values = signal.iter().zip(&noise).map(|(s, e)| s + e).collect();
    let windows = phases
        .iter()
        .map(|ph| (ph.start + p.settle_time, ph.end, ph.on))
        .collect();
    Some(SimulatedRecord {
        dt,
        values,
        signal,
        windows,
    })
}
