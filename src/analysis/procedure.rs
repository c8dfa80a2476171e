//! What the report says of a forecast and of the planned measurement: the predicted signal, the
//! procedure with its estimator's noise by term, the cycles a target needs, the best phases for
//! the same time, and one simulated record of the sequence for a figure.

use crate::model::InputValues;
use crate::physics::power_law::simulate_record;
use crate::physics::procedure::{EstimatorTerms, Procedure};
use crate::physics::response::{
    Instrument, settling_factor as settling_factor_of, window_transients,
};
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
    /// follows the force at once), at the estimates.
    pub(crate) settling_factor: f64,
    /// The same for the heating force, after its lag.
    pub(crate) heating_settling_factor: f64,
    /// A pendulum's ring-down: the largest mean of the transient over a kept window, N (the
    /// radiation force times the unit pattern's transient), when it is above a tenth of the
    /// estimator's noise; with what would help.
    pub(crate) ring_down: Option<RingDown>,
    /// The target force resolution, N.
    pub(crate) target_resolution: f64,
    /// The fewest cycles of the same phases that reach it.
    pub(crate) cycles_for_target: Option<u64>,
    /// For the same total time, the phases with the smallest uncertainty.
    pub(crate) best: Option<(Procedure, EstimatorTerms)>,
    /// One simulated record, for the figure.
    pub(crate) record: Option<SimulatedRecord>,
}

/// A pendulum that still rings in the kept windows, and what would help.
#[derive(Clone, Debug, PartialEq)]
pub struct RingDown {
    /// The largest window mean of the transient, N.
    pub(crate) residual: f64,
    /// The estimator's noise it is compared with, N.
    pub(crate) noise: f64,
    /// The settling time that brings it below a tenth of the noise, s.
    pub(crate) settle_needed: f64,
    /// The free period, s (phases of a whole number of periods average a ringing out).
    pub(crate) period: f64,
    /// The quality factor that would damp it below a tenth of the noise within the settling.
    pub(crate) quality_needed: f64,
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
    let no_upper = |_: &str| None;
    let estimate = |n: &str| study.estimate_of(n);
    let inputs = InputValues {
        estimate: &estimate,
        upper: &no_upper,
        lower: &no_upper,
        procedure: true,
    };
    let instrument = study
        .chain
        .map_or(Instrument::Immediate, |c| c.instrument(&inputs));
    let heating_time = study.estimate_of("heating_time").unwrap_or(0.0);
    let modes = instrument.modes();
    let settling_factor = settling_factor_of(&p, &modes);
    let heating_settling_factor = settling_factor_of(&p, &instrument.modes_after_lag(heating_time));
    let ring_down = ring_down(&p, &instrument, floor.force, terms.standard_uncertainty());
    // The phase search respects the pendulum: no candidate whose ring-down the windows see.
    let best = p.best_phases_where(&floor.model, &|c: &Procedure| {
        let noise = c.estimator_terms(&floor.model).standard_uncertainty();
        self::ring_down(c, &instrument, floor.force, noise).is_none()
    });
    Some(ProcedureFinding {
        procedure: p,
        total_time: p.total_time(),
        terms,
        estimator_sd: terms.standard_uncertainty(),
        settling_factor,
        heating_settling_factor,
        ring_down,
        target_resolution: floor.target_resolution,
        cycles_for_target,
        best,
        record: simulated_record(&p, floor, study.seed),
    })
}

/// A pendulum's ring-down in the kept windows, when its largest window mean is above a tenth of
/// the estimator's noise: the residual, and the settling time, the phase length (a whole number
/// of periods) and the quality factor that would bring it below.
fn ring_down(
    p: &Procedure,
    instrument: &Instrument<f64>,
    force: f64,
    noise: f64,
) -> Option<RingDown> {
    let Instrument::Oscillator {
        period,
        quality_factor,
    } = *instrument
    else {
        return None;
    };
    let modes = instrument.modes();
    let residual = window_transients(p, &modes)
        .iter()
        .fold(0.0f64, |m, t| m.max(t.abs()))
        * force.abs();
    if residual.is_nan() || residual <= 0.1 * noise {
        return None;
    }
    let gamma = -modes[0].pole.re;
    let ratio = residual / (0.1 * noise);
    let settle_needed = if gamma > 0.0 {
        p.settle_time + ratio.ln() / gamma
    } else {
        f64::INFINITY
    };
    // The damping rate that makes e^{-gamma settle} small enough for the same amplitude.
    let amplitude = 2.0 * force.abs();
    let w0 = 2.0 * std::f64::consts::PI / period;
    let gamma_needed = (amplitude / (0.1 * noise)).ln() / p.settle_time.max(f64::MIN_POSITIVE);
    let quality_needed = (w0 / (2.0 * gamma_needed)).min(quality_factor);
    Some(RingDown {
        residual,
        noise,
        settle_needed,
        period,
        quality_needed,
    })
}

/// The warning of a ring-down, in words (forces in readable units).
pub(crate) fn ring_down_warning(r: &RingDown) -> String {
    let force = |x: f64| {
        let u = crate::units::readable_unit(crate::units::Dimension::FORCE, x.abs());
        format!("{:.3} {}", x / u.factor, u.symbol)
    };
    let settle = if r.settle_needed.is_finite() {
        let t = r.settle_needed;
        let (v, unit) = if t > 7200.0 {
            (t / 3600.0, "h")
        } else if t > 120.0 {
            (t / 60.0, "min")
        } else {
            (t, "s")
        };
        format!(
            "a settle_time of about {v:.3} {unit} (the transient then falls below a tenth of the noise)"
        )
    } else {
        "a settle_time long enough for the swing to die out (undamped, it never does)".into()
    };
    let damping = if r.quality_needed < 0.5 {
        format!(
            "or damping the pendulum beyond critical (Q of about {:.2}, below 1/2), so that it creeps instead of swinging",
            r.quality_needed
        )
    } else {
        format!(
            "or damping the pendulum to Q of about {:.3} or less",
            r.quality_needed
        )
    };
    format!(
        "the pendulum still rings in the kept windows: up to {} of transient in a window's mean, more than a tenth of the estimator's noise ({}); the settling factor corrects it only as well as the free period and the quality factor are known. What helps: {settle}; phases a whole number of periods long (T0 = {:.4} s), whose windows average a swing out; {damping}",
        force(r.residual),
        force(r.noise),
        r.period
    )
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
