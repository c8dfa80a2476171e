//! The `[noise]` table: the noise floor of the balance and readout, averaged over
//! `averaging_time`, turned into an input quantity `noise_force` ~ N(0, sigma_F) that the chain
//! adds to its force (so it shows in the budget and the sensitivity ranking).
//!
//! Force noise densities (one-sided, N/sqrt(Hz); physics::noise): thermal torque noise of the
//! pendulum over the lever arm, sqrt(S_tau)/L; an optical-lever angle noise theta_n as
//! kappa theta_n / L; a balance's own force noise density; photon shot noise
//! F sqrt(2 h c / (lambda P)). They add in quadrature, and averaging for t leaves
//! sigma_F = sqrt(S_F / (2 t)).

use super::inputs::{InputQuantity, Law};
use super::load::Loader;
use super::study::Measurand;
use super::table::{Entry, Table};
use crate::dist::{Distribution, Normal};
use crate::error::InputError;
use crate::model::Model;
use crate::model::{ChainKind, InputValues};
use crate::physics::noise::{
    Damping, NoiseSettings, Target, resolution_after, shot_force_psd, time_for_resolution,
};
use crate::units::{Dimension, DisplayUnit, parse_quantity};
use toml::de::DeValue;

/// The noise floor at the input estimates.
#[derive(Clone, Debug, PartialEq)]
pub struct NoiseFloor {
    /// Each contribution as (name, force noise density in N/sqrt(Hz)).
    pub components: Vec<(&'static str, f64)>,
    /// Total force noise density, N/sqrt(Hz).
    pub density: f64,
    /// Averaging time t, s.
    pub(crate) averaging_time: f64,
    /// Force resolution sigma_F = sqrt(S_F / (2 t)), N: the standard deviation of `noise_force`.
    pub resolution: f64,
    /// The radiation force at the estimates, N.
    pub(crate) force: f64,
    /// The target force resolution, N.
    pub target_resolution: f64,
    /// The averaging time that reaches it, s.
    pub time_for_target: f64,
}

const EXAMPLE: &str = "[noise]\naveraging_time = \"100 s\"\ntemperature = \"295 K\"\ndamping = \"structural\"\nsignal_frequency = \"10 mHz\"\nreadout_angle_noise = \"2 nrad\"   # per sqrt(Hz)\nwavelength = \"1064 nm\"";

fn quantity(e: &Entry<'_, '_>, dim: Dimension, what: &str) -> Result<f64, InputError> {
    let example = format!("{} = {}", e.key, dim.example());
    let v = match e.value.get_ref() {
        DeValue::String(s) => {
            let q = parse_quantity(s)
                .map_err(|err| e.error(format!("cannot read {:?}: {err}", s.as_ref()), &example))?;
            if let Some(u) = &q.unit
                && u.dimension != dim
            {
                return Err(e.error(
                    format!("{what} is {}, not {}", dim.kind(), u.dimension.kind()),
                    &example,
                ));
            }
            q.si
        }
        _ => e.number(&example)?,
    };
    if v.is_nan() || v <= 0.0 {
        return Err(e.error(format!("{what} must be greater than 0 (got {v})"), &example));
    }
    Ok(v)
}

/// Read `[noise]`.
fn read_noise(t: &Table<'_, '_>) -> Result<NoiseSettings, InputError> {
    t.check_keys(
        &[
            "averaging_time",
            "temperature",
            "damping",
            "signal_frequency",
            "readout_angle_noise",
            "force_noise",
            "wavelength",
            "target_resolution",
        ],
        EXAMPLE,
    )?;
    let get = |k: &str, dim: Dimension, what: &str| -> Result<Option<f64>, InputError> {
        t.get(k).map(|e| quantity(&e, dim, what)).transpose()
    };
    let averaging_time = quantity(
        &t.require("averaging_time", EXAMPLE)?,
        Dimension::TIME,
        "the averaging time",
    )?;
    let damping = match t.get("damping") {
        None => Damping::Structural,
        Some(e) => match e.string("damping = \"structural\"")? {
            "structural" => Damping::Structural,
            "viscous" => Damping::Viscous,
            other => {
                return Err(e.error(format!("unknown damping {other:?}: \"structural\" (internal friction of the fibre) or \"viscous\" (gas)"), "damping = \"structural\""));
            }
        },
    };
    let target = match t.get("target_resolution") {
        None => Target::Relative(1e-3),
        Some(e) => {
            let example = "target_resolution = \"0.1 %\"   (of the force)   or   \"1 nN\"";
            let text = e.string(example)?;
            let q = parse_quantity(text)
                .map_err(|err| e.error(format!("cannot read {text:?}: {err}"), example))?;
            match q.unit.as_ref().map(|u| u.dimension) {
                Some(d) if d == Dimension::FORCE => Target::Absolute(q.si),
                Some(d) if d == Dimension::NONE => Target::Relative(q.si),
                _ => return Err(e.error("a target resolution is a force (\"1 nN\") or a percentage of the force (\"0.1 %\")", example)),
            }
        }
    };
    match target {
        Target::Absolute(v) | Target::Relative(v) if v.is_nan() || v <= 0.0 => {
            return Err(t.error("the target resolution must be greater than 0", EXAMPLE));
        }
        _ => {}
    }
    Ok(NoiseSettings {
        averaging_time,
        temperature: get("temperature", Dimension::TEMPERATURE, "the temperature")?,
        damping,
        signal_frequency: get(
            "signal_frequency",
            Dimension::FREQUENCY,
            "the signal frequency",
        )?,
        readout_angle_noise: get(
            "readout_angle_noise",
            Dimension::ANGLE,
            "the angle noise density",
        )?,
        force_noise: get("force_noise", Dimension::FORCE, "the force noise density")?,
        wavelength: get("wavelength", Dimension::LENGTH, "the wavelength")?,
        target,
    })
}

/// The noise floor of a chain at the input estimates. `estimate(name)` gives an input's estimate
/// (or the chain default), `force` and `power` the radiation force and power at the estimates.
fn noise_floor(
    t: &Table<'_, '_>,
    s: &NoiseSettings,
    chain: ChainKind,
    estimate: &dyn Fn(&str) -> Option<f64>,
    force: f64,
    power: f64,
) -> Result<NoiseFloor, InputError> {
    let no_upper = |_: &str| None;
    let mut components = chain
        .instrument_noise(
            s,
            &InputValues {
                estimate,
                upper: &no_upper,
            },
        )
        .map_err(|issue| t.error(issue.message, issue.example))?;
    if let Some(f) = s.force_noise {
        components.push(("balance / force readout", f));
    }
    if let Some(lambda) = s.wavelength
        && power > 0.0
        && force.is_finite()
    {
        components.push((
            "photon shot noise",
            shot_force_psd(force.abs(), power, lambda).sqrt(),
        ));
    }
    if components.is_empty() {
        return Err(t.error("[noise] names no noise source: give temperature, readout_angle_noise, force_noise or wavelength", EXAMPLE));
    }
    let psd: f64 = components.iter().map(|(_, d)| d * d).sum();
    let resolution = resolution_after(psd, s.averaging_time);
    let target_resolution = match s.target {
        Target::Absolute(v) => v,
        Target::Relative(r) => r * force.abs(),
    };
    Ok(NoiseFloor {
        components,
        density: psd.sqrt(),
        averaging_time: s.averaging_time,
        resolution,
        force,
        target_resolution,
        time_for_target: time_for_resolution(psd, target_resolution),
    })
}

/// The input quantity `noise_force` ~ N(0, sigma_F) made from a noise floor.
fn noise_input(floor: &NoiseFloor, t: &Table<'_, '_>) -> Result<InputQuantity, InputError> {
    let normal = Normal::new(0.0, floor.resolution)
        .map_err(|e| t.error(format!("the noise floor is not usable: {e}"), EXAMPLE))?;
    Ok(InputQuantity {
        name: "noise_force".to_string(),
        law: Law::Distributed(Distribution::Normal(normal)),
        dof: None,
        dimension: Some(Dimension::FORCE),
        shown_unit: DisplayUnit::si(Dimension::FORCE),
        note: Some("force noise left after averaging, from [noise]".to_string()),
        span: t.span.clone(),
    })
}

impl Loader<'_, '_> {
    /// `[noise]`, if the scenario has it: the noise floor at the input estimates and the input
    /// quantity `noise_force` it makes (the caller adds it and compiles the model again).
    pub(super) fn noise(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
        measurands: &[Measurand],
        model: &Model,
    ) -> Result<Option<(NoiseFloor, InputQuantity)>, InputError> {
        let Some(e) = self.top.get("noise") else {
            return Ok(None);
        };
        let t = e.table("[noise]\naveraging_time = \"100 s\"")?;
        let Some(kind) = chain else {
            return Err(t.error(
                "[noise] describes the balance of a built-in chain; with formulas only, model the noise as an input quantity",
                "[model]\nchain = \"torsion-power\"",
            ));
        };
        if let Some(q) = inputs.iter().find(|q| q.name == "noise_force") {
            return Err(self.src.error(
                &q.span,
                "inputs.noise_force",
                "`noise_force` is made from [noise]; remove one of the two",
                "[noise]\naveraging_time = \"100 s\"",
            ));
        }
        let settings = read_noise(&t)?;
        let estimates: Vec<f64> = inputs.iter().map(InputQuantity::estimate).collect();
        let values = model.evaluate_point::<f64>(&estimates);
        let spec = kind.spec();
        let value_of = |name: &str| -> Option<f64> {
            if let Some(q) = inputs.iter().find(|q| q.name == name) {
                return Some(q.estimate());
            }
            spec.inputs
                .iter()
                .find(|c| c.name == name)
                .and_then(|c| c.default)
        };
        let measurand = |name: &str| {
            measurands
                .iter()
                .position(|m| m.name == name)
                .map(|i| values[i])
        };
        let force = measurand("force").unwrap_or(f64::NAN);
        let power = measurand("power")
            .or_else(|| value_of("power"))
            .unwrap_or(f64::NAN);
        let floor = noise_floor(&t, &settings, kind, &value_of, force, power)?;
        let input = noise_input(&floor, &t)?;
        Ok(Some((floor, input)))
    }
}
