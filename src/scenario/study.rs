//! The study a scenario file describes, validated and in SI: what the engine runs and the
//! analysis reads.

use super::forecast::{Forecast, predict};
use super::noise::{FloorInputs, noise_floor};
use super::{Correlations, InputQuantity, Law, NoiseFloor};
use crate::dist::{Distribution, Normal};
use crate::model::{ChainKind, Model};
use crate::physics::procedure::Procedure;
use crate::units::{Dimension, DisplayUnit};

/// Default number of Monte Carlo trials M (JCGM 101 7.2.2 recommends 10^6 for a 95 % interval).
pub const DEFAULT_TRIALS: u64 = 1_000_000;
/// Most trials a scenario may ask for.
pub const MAX_TRIALS: u64 = 10_000_000_000;
/// Fewest trials a scenario may ask for.
pub const MIN_TRIALS: u64 = 100;
/// Largest scenario file read, far above any real one (a guard against feeding in a wrong file).
pub const MAX_SCENARIO_BYTES: u64 = 4 * 1024 * 1024;
/// Most input quantities in one scenario.
pub const MAX_INPUTS: usize = 1000;

/// A measurand of a study.
#[derive(Clone, Debug, PartialEq)]
pub struct Measurand {
    /// Its name.
    pub name: String,
    /// Its dimension, when known (chain measurands).
    pub(crate) dimension: Option<Dimension>,
    /// The unit the scenario asked to show it in (`unit = "mg"`), if any.
    pub(crate) unit: Option<DisplayUnit>,
    /// The formula text, for formula measurands.
    pub(crate) formula: Option<String>,
    /// What it is.
    pub(crate) description: String,
    /// Words for it in prose, tables and figures (`label = "..."`), when given.
    pub(crate) label: Option<String>,
}

/// A validated scenario, ready to run.
#[derive(Clone, Debug)]
pub struct Study {
    /// The scenario file, as named in messages.
    pub(crate) file: String,
    /// Its title.
    pub(crate) title: String,
    /// Number of Monte Carlo trials M.
    pub(crate) trials: u64,
    /// Seed of the random streams.
    pub seed: u64,
    /// Coverage probability p.
    pub(crate) coverage: f64,
    /// Significant digits `ndig` for the numerical tolerance (JCGM 101 7.9.2).
    pub(crate) digits: u32,
    /// Whether the study involves a laser (the report then carries the laser caution).
    pub(crate) laser: bool,
    /// Input quantities, in file order (their column order).
    pub inputs: Vec<InputQuantity>,
    /// Measurands in report order: chain measurands first, then formulas in file order.
    pub measurands: Vec<Measurand>,
    /// The built-in chain, if any.
    pub(crate) chain: Option<ChainKind>,
    /// The compiled model.
    pub model: Model,
    /// Correlated inputs.
    pub(crate) correlations: Correlations,
    /// The adaptive procedure of JCGM 101 7.9, when asked for (then `trials` is the batch size).
    pub adaptive: Option<Adaptive>,
    /// The forecast, when `[forecast]` asks for one (then the observed input is a predicted
    /// constant among the inputs).
    pub forecast: Option<Forecast>,
    /// The planned on/off measurement, when `[procedure]` describes one.
    pub procedure: Option<Procedure>,
    /// The noise floor, when `[noise]` asks for one (then `noise_force` is among the inputs).
    pub noise: Option<NoiseFloor>,
    /// A sweep of one input, when `[sweep]` asks for one.
    pub(crate) sweep: Option<Sweep>,
    /// Names of the `[variants.NAME]` of the file (compared by `radforce compare`).
    pub(crate) variants: Vec<String>,
    /// Things worth knowing that do not stop the run.
    pub(crate) warnings: Vec<String>,
}

/// A sweep of one input quantity over a range of estimates, each point a full run.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// The input swept.
    pub(crate) input: usize,
    /// The estimates it takes, SI.
    pub(crate) values: Vec<f64>,
    /// The measurand followed.
    pub(crate) measurand: usize,
}

impl Study {
    /// The study with input `i` moved to the estimate `value` (a constant takes the value; a
    /// distribution is moved, see `Distribution::with_mean`).
    pub(crate) fn with_input_estimate(&self, i: usize, value: f64) -> Result<Study, String> {
        let mut s = self.clone();
        s.inputs[i].law = match &self.inputs[i].law {
            Law::Constant(_) => Law::Constant(value),
            Law::Distributed(d) => Law::Distributed(d.with_mean(value).map_err(|e| e.to_string())?),
        };
        s.sweep = None;
        s.refresh()?;
        Ok(s)
    }

    /// The estimate of an input by name, or the chain's default for one the scenario leaves
    /// out.
    pub(crate) fn estimate_of(&self, name: &str) -> Option<f64> {
        match self.inputs.iter().find(|q| q.name == name) {
            Some(q) => Some(q.estimate()),
            None => self
                .chain?
                .spec()
                .inputs
                .iter()
                .find(|c| c.name == name)
                .and_then(|c| c.default),
        }
    }

    /// Derive again what the loader derived from the inputs, after they were moved or
    /// narrowed: the forecast's predicted signal, and the noise floor with the standard
    /// deviation of `noise_force` (the thermal noise depends on the balance, the target and the
    /// shot noise on the force).
    pub(crate) fn refresh(&mut self) -> Result<(), String> {
        let Some(kind) = self.chain else {
            return Ok(());
        };
        if let Some(c) = self.model.chain.as_mut() {
            c.context.procedure = self.procedure;
        }
        let context = crate::model::ChainContext {
            procedure: self.procedure,
            given: 0,
        };
        let spec = kind.spec();
        if let (Some(f), Some(how)) = (&self.forecast, kind.forecast()) {
            let inputs = &self.inputs;
            let estimate = |name: &str| {
                inputs
                    .iter()
                    .find(|q| q.name == name && q.name != how.observed)
                    .map(InputQuantity::estimate)
            };
            let predicted = predict(how.observed, f.twin, &context, f.power, &estimate)?;
            let input = f.input;
            self.inputs[input].law = Law::Constant(predicted);
            if let Some(f) = self.forecast.as_mut() {
                f.predicted = predicted;
            }
        }
        if let Some(floor) = &self.noise {
            let estimates: Vec<f64> = self.inputs.iter().map(InputQuantity::estimate).collect();
            let values = self.model.evaluate_point::<f64>(&estimates);
            let inputs = &self.inputs;
            let value_of = |name: &str| -> Option<f64> {
                match inputs.iter().find(|q| q.name == name) {
                    Some(q) => Some(q.estimate()),
                    None => spec
                        .inputs
                        .iter()
                        .find(|c| c.name == name)
                        .and_then(|c| c.default),
                }
            };
            let measurand = |name: &str| {
                self.measurands
                    .iter()
                    .position(|m| m.name == name)
                    .map(|i| values[i])
            };
            let force = measurand("force").unwrap_or(f64::NAN);
            let power = measurand("power")
                .or_else(|| value_of("power"))
                .unwrap_or(f64::NAN);
            let new = noise_floor(
                &floor.settings,
                floor.measured.as_ref(),
                &FloorInputs {
                    chain: kind,
                    estimate: &value_of,
                    force,
                    power,
                    procedure: self.procedure.as_ref(),
                },
            )
            .map_err(|(message, _)| message)?;
            let normal = Normal::new(0.0, new.resolution).map_err(|e| e.to_string())?;
            if let Some(q) = self.inputs.iter_mut().find(|q| q.name == "noise_force") {
                q.law = Law::Distributed(Distribution::Normal(normal));
            }
            self.noise = Some(new);
        }
        Ok(())
    }

    /// The measurands' names, comma-separated, for messages that list the valid ones.
    pub(crate) fn measurand_names(&self) -> String {
        self.measurands
            .iter()
            .map(|x| x.name.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// Settings of the adaptive Monte Carlo procedure (JCGM 101:2008 7.9.4).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Adaptive {
    /// Significant digits `ndig` the results must be stable to.
    pub(crate) digits: u32,
    /// Most trials before giving up.
    pub(crate) max_trials: u64,
}

/// Batch size of the adaptive procedure: M = max(J, 10^4) with J the smallest whole number
/// >= 100 / (1 - p) (JCGM 101 7.9.4 b).
pub fn adaptive_batch_trials(coverage: f64) -> u64 {
    let j = (100.0 / (1.0 - coverage)).ceil() as u64;
    j.max(10_000)
}

impl Study {
    /// The factor from SI to the unit a measurand is reported in (its `unit`, else 1).
    pub(crate) fn reporting_factor(&self, measurand: usize) -> f64 {
        self.measurands[measurand]
            .unit
            .as_ref()
            .map_or(1.0, |u| u.factor)
    }
}

/// Default cap on the trials of an adaptive run.
pub const DEFAULT_ADAPTIVE_MAX_TRIALS: u64 = 100_000_000;
