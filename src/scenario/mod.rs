//! The scenario file (TOML): parse, validate, convert every quantity to SI, and compile the
//! model, producing a [`Study`] the engine can run. Every error names the file, line, column and
//! key and shows a valid example; nothing is clamped silently.
//!
//! One job a file: `study` (the validated study and its parts), `load` (the top level of the
//! walk), `inputs` (one `[inputs.NAME]` table), `measurands` (the chain and the formulas),
//! `correlation`, `noise`, `sweep`, `variants`, `schema`; `table` and `source` keep positions
//! for messages.

mod correlation;
mod forecast;
mod inputs;
mod load;
mod measurands;
mod noise;
mod procedure;
mod record;
pub(crate) mod schema;
mod source;
mod study;
mod sweep;
mod table;
mod variants;

pub use crate::physics::noise::{NoiseSettings, PSD_CONVENTION, Target};
pub use correlation::{CorrelatedGroup, CorrelatedPair, Correlations};
pub use forecast::Forecast;
pub use inputs::{InputQuantity, Law, OUTSIDE_TOLERANCE, family_example, family_names};
pub(crate) use load::read_scenario_text;
pub use load::{load_file, load_str};
pub use noise::{MeasuredNoise, NoiseFloor};
pub use source::{Source, edit_distance, nearest};
pub use study::{
    Adaptive, DEFAULT_ADAPTIVE_MAX_TRIALS, DEFAULT_TRIALS, MAX_INPUTS, MAX_SCENARIO_BYTES,
    MAX_TRIALS, MIN_TRIALS, Measurand, Study, Sweep, adaptive_batch_trials,
};
pub(crate) use variants::load_designs;
