//! Statistics on the samples: the Monte Carlo summary of each measurand, gathered with what the
//! report needs to say about the inputs into [`Findings`]. Reports only format these.

pub mod intervals;
pub mod moments;
pub mod summary;

use crate::engine::{self, Samples};
use crate::scenario::{InputQuantity, Study};
use crate::units::{Dimension, DisplayUnit};
pub use summary::{Summary, summarize};

/// What the report says about one measurand.
#[derive(Clone, Debug)]
pub struct MeasurandFinding {
    /// Name.
    pub name: String,
    /// What it is.
    pub description: String,
    /// The unit it is reported in (declared in the scenario, or SI).
    pub unit: DisplayUnit,
    /// Whether the unit was declared by the scenario (else the report may pick a prefix).
    pub unit_declared: bool,
    /// Its dimension, when known.
    pub dimension: Option<Dimension>,
    /// The Monte Carlo result in SI.
    pub monte_carlo: Summary,
}

/// What the report says about one input quantity.
#[derive(Clone, Debug)]
pub struct InputFinding {
    /// Name.
    pub name: String,
    /// Distribution family or "constant".
    pub distribution: String,
    /// Estimate (expectation), SI.
    pub estimate: f64,
    /// Standard deviation of its distribution, SI; `None` when infinite.
    pub standard_uncertainty: Option<f64>,
    /// Degrees of freedom, when finite and known.
    pub dof: Option<f64>,
    /// SI unit symbol.
    pub si_unit: String,
    /// Its dimension, when known.
    pub dimension: Option<Dimension>,
    /// The unit the scenario wrote it in.
    pub shown_unit: DisplayUnit,
}

/// Everything a report shows.
#[derive(Clone, Debug)]
pub struct Findings {
    /// Scenario file.
    pub file: String,
    /// Title.
    pub title: String,
    /// Trials used.
    pub trials: u64,
    /// Seed.
    pub seed: u64,
    /// Coverage probability.
    pub coverage: f64,
    /// Generator description.
    pub generator: String,
    /// Crate versions that define the streams.
    pub stream_crates: Vec<(&'static str, &'static str)>,
    /// The chain's name, if any.
    pub chain: Option<&'static str>,
    /// Whether the laser caution applies.
    pub laser: bool,
    /// Measurands.
    pub measurands: Vec<MeasurandFinding>,
    /// Inputs.
    pub inputs: Vec<InputFinding>,
    /// Warnings from loading and running.
    pub warnings: Vec<String>,
}

fn input_finding(q: &InputQuantity) -> InputFinding {
    let sd = q.standard_deviation();
    InputFinding {
        name: q.name.clone(),
        distribution: q.family().to_string(),
        estimate: q.estimate(),
        standard_uncertainty: sd.is_finite().then_some(sd),
        dof: q.dof.filter(|d| d.is_finite()),
        si_unit: q.dimension.map_or(String::new(), Dimension::si_symbol),
        dimension: q.dimension,
        shown_unit: q.shown_unit.clone(),
    }
}

/// Summarise a run.
pub fn findings(study: &Study, samples: &Samples) -> Findings {
    let measurands = study
        .measurands
        .iter()
        .enumerate()
        .map(|(i, m)| MeasurandFinding {
            name: m.name.clone(),
            description: m.description.clone(),
            unit: m
                .unit
                .clone()
                .unwrap_or_else(|| DisplayUnit::si(m.dimension.unwrap_or(Dimension::NONE))),
            unit_declared: m.unit.is_some(),
            dimension: m.dimension,
            monte_carlo: summarize(&samples.measurands[i], &samples.moments[i], study.coverage),
        })
        .collect();
    Findings {
        file: study.file.clone(),
        title: study.title.clone(),
        trials: samples.trials as u64,
        seed: study.seed,
        coverage: study.coverage,
        generator: engine::generator_description(),
        stream_crates: engine::stream_crates(),
        chain: study.chain.map(|c| c.spec().name),
        laser: study.laser,
        measurands,
        inputs: study.inputs.iter().map(input_finding).collect(),
        warnings: study.warnings.clone(),
    }
}
