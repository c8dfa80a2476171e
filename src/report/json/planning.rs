//! The JSON of the noise, the forecast and the planned measurement (DESIGN, "Forecast").

use crate::analysis::Findings;
use serde::Serialize;

#[derive(Serialize)]
pub(super) struct NoiseJson<'a> {
    components: Vec<NoiseComponentJson>,
    force_density: f64,
    averaging_time: Option<f64>,
    force_resolution: f64,
    radiation_force: f64,
    target_resolution: f64,
    time_for_target: Option<f64>,
    convention: &'a str,
    /// The four terms used (fitted when the noise was measured), SI.
    fit: FitJson,
    /// Where a measured Allan deviation came from.
    measured: Option<&'a str>,
    /// The measured Allan deviation, SI, with the fitted model and the 68.3 % interval.
    allan: Vec<AllanJson>,
}

#[derive(Serialize)]
struct FitJson {
    white: f64,
    flicker: f64,
    random_walk: f64,
    drift: f64,
}

#[derive(Serialize)]
struct AllanJson {
    tau: f64,
    deviation: f64,
    fitted: f64,
    relative_residual: f64,
    interval: Option<[f64; 2]>,
}

#[derive(Serialize)]
pub(super) struct ForecastJson<'a> {
    power: f64,
    predicted: PredictedJson<'a>,
}

#[derive(Serialize)]
struct PredictedJson<'a> {
    input: &'a str,
    value: f64,
    unit: String,
}

#[derive(Serialize)]
pub(super) struct ProcedureJson {
    pattern: &'static str,
    cycles: u64,
    on_time: f64,
    off_time: f64,
    settle_time: f64,
    total_time: f64,
    estimator_sd: f64,
    terms: TermsJson,
    settling_factor: f64,
    heating_settling_factor: f64,
    target_resolution: f64,
    cycles_for_target: Option<u64>,
    best_phase: Option<BestPhaseJson>,
}

#[derive(Serialize)]
struct TermsJson {
    white: f64,
    flicker: f64,
    random_walk: f64,
    drift_bias: f64,
}

#[derive(Serialize)]
struct BestPhaseJson {
    on_time: f64,
    off_time: f64,
    cycles: u64,
    total_time: f64,
    estimator_sd: f64,
}

#[derive(Serialize)]
struct NoiseComponentJson {
    source: &'static str,
    force_density: f64,
}

/// The `noise` object.
pub(super) fn noise_json(f: &Findings) -> Option<NoiseJson<'_>> {
    f.noise.as_ref().map(|n| NoiseJson {
        components: n
            .components
            .iter()
            .map(|(source, d)| NoiseComponentJson {
                source,
                force_density: *d,
            })
            .collect(),
        force_density: n.density,
        averaging_time: n.averaging_time,
        force_resolution: n.resolution,
        radiation_force: n.force,
        target_resolution: n.target_resolution,
        time_for_target: n.time_for_target,
        convention: crate::physics::noise::PSD_CONVENTION,
        fit: FitJson {
            white: n.model.white,
            flicker: n.model.flicker,
            random_walk: n.model.random_walk,
            drift: n.model.drift,
        },
        measured: n.measured.as_ref().map(|m| m.source.as_str()),
        allan: n.measured.as_ref().map_or_else(Vec::new, |m| {
            m.points
                .iter()
                .zip(&m.fit.residuals)
                .map(|(p, r)| AllanJson {
                    tau: p.0,
                    deviation: p.1,
                    fitted: r.2,
                    relative_residual: r.3,
                    interval: p.2.map(|(a, b)| [a, b]),
                })
                .collect()
        }),
    })
}

/// The `forecast` object.
pub(super) fn forecast_json(f: &Findings) -> Option<ForecastJson<'_>> {
    f.forecast.as_ref().map(|x| ForecastJson {
        power: x.power,
        predicted: PredictedJson {
            input: &x.input,
            value: x.value,
            unit: x.unit.symbol.clone(),
        },
    })
}

/// The `procedure` object.
pub(super) fn procedure_json(f: &Findings) -> Option<ProcedureJson> {
    f.procedure.as_ref().map(|p| {
        let pr = &p.procedure;
        ProcedureJson {
            pattern: pr.pattern.name(),
            cycles: pr.cycles,
            on_time: pr.on_time,
            off_time: pr.off_time,
            settle_time: pr.settle_time,
            total_time: p.total_time,
            estimator_sd: p.estimator_sd,
            terms: TermsJson {
                white: p.terms.white,
                flicker: p.terms.flicker,
                random_walk: p.terms.random_walk,
                drift_bias: p.terms.drift_bias,
            },
            settling_factor: p.settling_factor,
            heating_settling_factor: p.heating_settling_factor,
            target_resolution: p.target_resolution,
            cycles_for_target: p.cycles_for_target,
            best_phase: p.best.as_ref().map(|(b, t)| BestPhaseJson {
                on_time: b.on_time,
                off_time: b.off_time,
                cycles: b.cycles,
                total_time: b.total_time(),
                estimator_sd: t.standard_uncertainty(),
            }),
        }
    })
}
