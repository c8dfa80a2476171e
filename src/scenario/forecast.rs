//! `[forecast]`: plan a meter that does not exist yet. A calibration chain normally takes the
//! observed signal (`readout_shift`, `reading`); with `[forecast] power = "2 kW"` radforce
//! predicts it from the chain's signal twin at the estimates of the inputs and the forecast
//! power, and holds it as an exact constant (DESIGN, "Forecast"). A sweep point or a plan's
//! check predicts it again from its own inputs ([`super::Study::refresh`]).

use super::inputs::{InputQuantity, Law};
use super::load::Loader;
use crate::error::InputError;
use crate::model::{ChainContext, ChainKind};
use crate::units::{Dimension, parse_quantity, readable_unit};
use std::ops::Range;
use toml::de::DeValue;

/// A forecast and the signal it predicts.
#[derive(Clone, Debug, PartialEq)]
pub struct Forecast {
    /// The laser power the meter is planned for, W.
    pub(crate) power: f64,
    /// The observed input, by its index among the study's inputs.
    pub(crate) input: usize,
    /// The chain that predicts it.
    pub(crate) twin: ChainKind,
    /// The predicted value, SI.
    pub(crate) predicted: f64,
}

const EXAMPLE: &str = "[forecast]\npower = \"2 kW\"";

/// The observed signal of a calibration chain predicted by its twin at `power`, with every
/// other twin input at `estimate(name)` (the scenario's estimate, or the chain default).
pub(crate) fn predict(
    observed: &str,
    twin: ChainKind,
    context: &ChainContext,
    power: f64,
    estimate: &dyn Fn(&str) -> Option<f64>,
) -> Result<f64, String> {
    let spec = twin.spec();
    let given = |n: &str| n == "power" || estimate(n).is_some();
    let args = spec
        .inputs
        .iter()
        .map(|c| {
            if c.name == "power" {
                Ok(power)
            } else if let Some(v) = estimate(c.name).or(c.default) {
                Ok(v)
            } else if spec.excused(c.name, &given) {
                Ok(f64::NAN)
            } else {
                Err(format!("the forecast needs the input `{}`", c.name))
            }
        })
        .collect::<Result<Vec<f64>, String>>()?;
    let context = ChainContext {
        given: spec.given_mask(&given),
        ..*context
    };
    let out = twin.evaluate_point(&context, &args);
    let i = spec
        .measurands
        .iter()
        .position(|m| m.name == observed)
        .ok_or_else(|| format!("the chain {:?} does not give `{observed}`", spec.name))?;
    match out[i] {
        v if v.is_finite() => Ok(v),
        v => Err(format!(
            "the predicted `{observed}` is {v} at the input estimates"
        )),
    }
}

impl Loader<'_, '_> {
    /// `[forecast]`, if the scenario has it: the power, and the observed input it predicts
    /// (to be added to the inputs before the model is compiled).
    pub(super) fn forecast(
        &self,
        chain: Option<&(ChainKind, Range<usize>)>,
        inputs: &[InputQuantity],
    ) -> Result<Option<(Forecast, InputQuantity)>, InputError> {
        let Some(e) = self.top.get("forecast") else {
            return Ok(None);
        };
        let t = e.table(EXAMPLE)?;
        t.check_keys(&["power"], EXAMPLE)?;
        let calibration: Vec<&str> = ChainKind::ALL
            .iter()
            .filter(|c| c.forecast().is_some())
            .map(|c| c.spec().name)
            .collect();
        let Some((kind, _)) = chain else {
            return Err(t.error(
                format!("[forecast] predicts the signal of a calibration chain ({}); name one under [model]", calibration.join(", ")),
                "[model]\nchain = \"weighing-power\"",
            ));
        };
        let Some(how) = kind.forecast() else {
            return Err(t.error(
                format!(
                    "[forecast] predicts the observed signal of a calibration chain ({}); {:?} takes the power as an input already",
                    calibration.join(", "),
                    kind.spec().name
                ),
                "[model]\nchain = \"weighing-power\"",
            ));
        };
        if let Some(q) = inputs.iter().find(|q| q.name == how.observed) {
            return Err(self.src.error(
                &q.span,
                &format!("inputs.{}", how.observed),
                format!(
                    "with [forecast] the `{}` is predicted from the forecast power; remove [inputs.{}] (or remove [forecast] to calibrate from an observed signal)",
                    how.observed, how.observed
                ),
                EXAMPLE,
            ));
        }
        let pe = t.require("power", EXAMPLE)?;
        let power = match pe.value.get_ref() {
            DeValue::String(s) => {
                let q = parse_quantity(s).map_err(|err| {
                    pe.error(format!("cannot read {:?}: {err}", s.as_ref()), EXAMPLE)
                })?;
                if let Some(u) = q.unit
                    && u.dimension != Dimension::POWER
                {
                    return Err(pe.error(format!("{:?} is not a power", s.as_ref()), EXAMPLE));
                }
                q.si
            }
            _ => pe.number(EXAMPLE)?,
        };
        if !(power > 0.0 && power.is_finite()) {
            return Err(pe.error(
                format!("the forecast power must be greater than 0 (got {power} W)"),
                EXAMPLE,
            ));
        }
        let twin = ChainKind::from_name(how.twin)
            .ok_or_else(|| t.error(format!("no chain {:?}", how.twin), EXAMPLE))?;
        let estimate = |name: &str| {
            inputs
                .iter()
                .find(|q| q.name == name)
                .map(InputQuantity::estimate)
        };
        let context = ChainContext {
            procedure: self.procedure()?,
            given: 0,
        };
        let predicted = predict(how.observed, twin, &context, power, &estimate)
            .map_err(|m| t.error(m, EXAMPLE))?;
        let spec_input = kind.spec().inputs.iter().find(|c| c.name == how.observed);
        let dimension = spec_input.map_or(Dimension::NONE, |c| c.dimension);
        let subsystem = spec_input.map_or(crate::model::Subsystem::Readout, |c| c.subsystem);
        let observed = InputQuantity {
            name: how.observed.to_string(),
            law: Law::Constant(predicted),
            dof: None,
            dimension: Some(dimension),
            shown_unit: readable_unit(dimension, predicted.abs()),
            note: Some(format!(
                "predicted by [forecast] for {power} W from the chain {:?} at the input estimates",
                how.twin
            )),
            best: None,
            span: t.span.clone(),
            subsystem,
            label: None,
        };
        Ok(Some((
            Forecast {
                power,
                input: inputs.len(),
                twin,
                predicted,
            },
            observed,
        )))
    }
}
