//! What a built-in measurement chain is: the [`Chain`] trait (its spec, its evaluation over the
//! model's number type, its own noise terms and cross-checks), the description of its inputs and
//! measurands, the inputs a scenario may give instead of others, and the pieces every chain
//! shares (heating, the noise force). The mirror, beam and optical path are in `model/optics.rs`;
//! the chains themselves live in their own files and are listed once in `model/mod.rs`.

use crate::physics::noise::NoiseSettings;
use crate::physics::procedure::Procedure;
use crate::physics::response::{Instrument, settling_factor};
use crate::scalar::Scalar;
use crate::units::Dimension;

/// The physical range an input of a chain must stay in; a distribution with more than a
/// negligible probability outside it is refused at load.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Domain {
    /// Any real value.
    Any,
    /// Greater than zero.
    Positive,
    /// Zero or more.
    NonNegative,
    /// A fraction in [0, 1] (reflectance, transmittance).
    UnitInterval,
    /// An angle of incidence strictly between -90 deg and 90 deg.
    Incidence,
    /// A quality factor above 1/2 (an oscillator that still oscillates).
    QualityFactor,
    /// A whole count of at least 1, given as a constant.
    Count,
    /// A refractive index of 1 or more (a gas or a liquid at optical frequencies).
    RefractiveIndex,
}

/// The part of the apparatus an input belongs to, for the budget by subsystem.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Subsystem {
    /// The laser beam: its power, size, polarisation, alignment.
    Beam,
    /// The mirror (and the fold mirror): coatings, size, tilt, bounces.
    Mirror,
    /// The balance or pendulum: its constants, geometry, response.
    Balance,
    /// What turns the motion into a number: the optical lever, the balance indication.
    Readout,
    /// The surroundings: gravity, the medium, stray and heating forces.
    Environment,
    /// The noise left after averaging.
    Noise,
    /// An input of a formula scenario that names no subsystem.
    Other,
}

impl Subsystem {
    /// Every subsystem, in the order reports list them.
    pub const ALL: [Subsystem; 7] = [
        Subsystem::Beam,
        Subsystem::Mirror,
        Subsystem::Balance,
        Subsystem::Readout,
        Subsystem::Environment,
        Subsystem::Noise,
        Subsystem::Other,
    ];

    /// Its name in scenarios and reports.
    pub fn name(self) -> &'static str {
        match self {
            Subsystem::Beam => "beam",
            Subsystem::Mirror => "mirror",
            Subsystem::Balance => "balance",
            Subsystem::Readout => "readout",
            Subsystem::Environment => "environment",
            Subsystem::Noise => "noise",
            Subsystem::Other => "other",
        }
    }

    /// The subsystem of a name (as a scenario writes it in `subsystem = "..."`).
    pub fn from_name(name: &str) -> Option<Subsystem> {
        Subsystem::ALL.into_iter().find(|s| s.name() == name)
    }
}

/// One input quantity of a chain.
#[derive(Clone, Copy, Debug)]
pub struct ChainInput {
    /// Name as written in `[inputs.NAME]`.
    pub name: &'static str,
    /// Its dimension; quantities with another dimension are refused.
    pub dimension: Dimension,
    /// The value used when the scenario leaves it out; `None` when it is required.
    pub default: Option<f64>,
    /// Where its values must lie.
    pub domain: Domain,
    /// The part of the apparatus it belongs to.
    pub subsystem: Subsystem,
    /// What it is, in the trade's words.
    pub description: &'static str,
}

/// A chain input, written compactly in the chain files' tables.
pub(crate) const fn input(
    name: &'static str,
    dimension: Dimension,
    default: Option<f64>,
    domain: Domain,
    subsystem: Subsystem,
    description: &'static str,
) -> ChainInput {
    ChainInput {
        name,
        dimension,
        default,
        domain,
        subsystem,
        description,
    }
}

/// Inputs a scenario may give instead of others: `instead` all together replace `usual` (of
/// which at most `usual_kept` may still be given, for what else they tell). The inputs of both
/// lists have no default; the chain reads which were given from [`ChainContext::given`].
#[derive(Clone, Copy, Debug)]
pub struct Alternative {
    /// The inputs the chain takes unless the alternative is given.
    pub usual: &'static [&'static str],
    /// The inputs that replace them, all of them together.
    pub instead: &'static [&'static str],
    /// How many of `usual` may be given beside `instead`.
    pub usual_kept: usize,
    /// Why they exclude each other, for the message that refuses both.
    pub why: &'static str,
}

/// The heating of the sensed mirror, which every chain takes after the noise: the force the
/// balance shows per watt absorbed on the sensed mirror, and its first-order time constant.
pub const HEATING_INPUTS: [ChainInput; 2] = [
    input(
        "heating_force",
        Dimension::FORCE_PER_POWER,
        Some(0.0),
        Domain::Any,
        Subsystem::Environment,
        "force on the balance per watt absorbed on the sensed mirror (warm air and mount), default 0",
    ),
    input(
        "heating_time",
        Dimension::TIME,
        Some(0.0),
        Domain::Positive,
        Subsystem::Environment,
        "first-order time constant of the heating force (default: none, it follows at once)",
    ),
];

/// What a chain's evaluation needs besides its inputs: the planned measurement, whose
/// estimator sees the instrument's response (the settling factor), and which of its inputs the
/// scenario gives (for the inputs that replace others, [`Alternative`]).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ChainContext {
    /// The on/off procedure, if the scenario plans one.
    pub procedure: Option<Procedure>,
    /// Bit i set when the scenario gives the chain's input i (in spec order).
    pub given: u64,
}

impl ChainContext {
    /// Whether the scenario gives the chain's input at `index` (spec order).
    #[inline(always)]
    pub fn given(&self, index: usize) -> bool {
        self.given >> index & 1 == 1
    }

    /// The same context with every input in `names` of `spec` marked as given (for tests and
    /// for chains evaluated outside a scenario).
    pub fn giving(mut self, spec: &ChainSpec, names: &[&str]) -> ChainContext {
        for n in names {
            if let Some(i) = spec.input_index(n) {
                self.given |= 1 << i;
            }
        }
        self
    }

    /// The settling factors of the radiation force and of the heating force (after its lag)
    /// for an instrument: the estimator applied to their responses to a unit on/off pattern
    /// (physics::response); both 1 without a procedure (a static reading).
    #[inline]
    pub fn settling<T: Scalar>(&self, instrument: Instrument<T>, heating_time: T) -> (T, T) {
        match &self.procedure {
            None => (T::cst(1.0), T::cst(1.0)),
            Some(p) => (
                settling_factor(p, &instrument.modes()),
                settling_factor(p, &instrument.modes_after_lag(heating_time)),
            ),
        }
    }
}

/// The input `[noise]` makes, which every chain adds to its force.
pub(crate) const NOISE_FORCE_INPUT: ChainInput = input(
    "noise_force",
    Dimension::FORCE,
    Some(0.0),
    Domain::Any,
    Subsystem::Noise,
    "zero-mean force noise left after averaging (made from [noise]), default 0",
);

/// The inputs of `parts` one after the other, as one table of N (checked when the table is
/// built, at compile time).
pub(crate) const fn join<const N: usize>(parts: &[&[ChainInput]]) -> [ChainInput; N] {
    let mut all = [NOISE_FORCE_INPUT; N];
    let (mut p, mut n) = (0, 0);
    while p < parts.len() {
        let mut i = 0;
        while i < parts[p].len() {
            all[n] = parts[p][i];
            n += 1;
            i += 1;
        }
        p += 1;
    }
    assert!(n == N, "join: the parts do not make N inputs");
    all
}

/// One measurand a chain gives.
#[derive(Clone, Copy, Debug)]
pub struct ChainMeasurand {
    /// Name in the report.
    pub name: &'static str,
    /// Its dimension (its SI unit is shown).
    pub dimension: Dimension,
    /// What it is.
    pub description: &'static str,
}

/// The inputs and measurands of a chain.
#[derive(Clone, Copy, Debug)]
pub struct ChainSpec {
    /// The name in `[model] chain = "..."`.
    pub name: &'static str,
    /// One line on what the chain computes.
    pub summary: &'static str,
    /// Inputs in the order [`Chain::evaluate`] takes them.
    pub inputs: &'static [ChainInput],
    /// Measurands in the order [`Chain::evaluate`] writes them.
    pub measurands: &'static [ChainMeasurand],
    /// Inputs a scenario may give instead of others.
    pub alternatives: &'static [Alternative],
}

impl ChainSpec {
    /// Position of an input by name.
    pub(crate) fn input_index(&self, name: &str) -> Option<usize> {
        self.inputs.iter().position(|i| i.name == name)
    }

    /// The inputs a scenario gives, as the mask of [`ChainContext::given`].
    pub(crate) fn given_mask(&self, given: &dyn Fn(&str) -> bool) -> u64 {
        self.inputs
            .iter()
            .enumerate()
            .filter(|(_, c)| given(c.name))
            .fold(0, |m, (i, _)| m | 1 << i)
    }

    /// Whether an input with no default may be left out: it replaces others and none of its
    /// group is given, or it is replaced by a group that is given.
    pub(crate) fn excused(&self, name: &str, given: &dyn Fn(&str) -> bool) -> bool {
        self.alternatives.iter().any(|alt| {
            let instead_given = alt.instead.iter().any(|n| given(n));
            (alt.instead.contains(&name) && !instead_given)
                || (alt.usual.contains(&name) && instead_given)
        })
    }

    /// Refuse a group given in part, or given beside more of what it replaces than it keeps.
    pub(crate) fn check_alternatives(
        &self,
        given: &dyn Fn(&str) -> bool,
    ) -> Result<(), ChainIssue> {
        for alt in self.alternatives {
            let have: Vec<&'static str> =
                alt.instead.iter().copied().filter(|n| given(n)).collect();
            if have.is_empty() {
                continue;
            }
            if have.len() < alt.instead.len() {
                let lacking: Vec<&str> =
                    alt.instead.iter().copied().filter(|n| !given(n)).collect();
                return Err(ChainIssue {
                    key: "",
                    inputs: alt.instead,
                    message: format!(
                        "{} go together: the scenario gives {} but not {}",
                        names(alt.instead),
                        names(&have),
                        names(&lacking)
                    ),
                    example: format!(
                        "[inputs.{}]\nvalue = {}",
                        lacking[0],
                        self.inputs
                            .iter()
                            .find(|c| c.name == lacking[0])
                            .map_or("1", |c| c.dimension.example())
                    ),
                });
            }
            let kept: Vec<&'static str> = alt.usual.iter().copied().filter(|n| given(n)).collect();
            if kept.len() > alt.usual_kept {
                return Err(ChainIssue {
                    key: "",
                    inputs: alt.usual,
                    message: format!(
                        "give {} or {}, not both: {}",
                        names(alt.usual),
                        names(alt.instead),
                        alt.why
                    ),
                    example: format!("remove [inputs.{}]", kept[0]),
                });
            }
        }
        Ok(())
    }
}

/// `a`, `a` and `b`, `a`, `b` and `c`: input names for messages.
fn names(list: &[&str]) -> String {
    let quoted: Vec<String> = list.iter().map(|n| format!("`{n}`")).collect();
    match quoted.len() {
        0 => String::new(),
        1 => quoted[0].clone(),
        n => format!("{} and {}", quoted[..n - 1].join(", "), quoted[n - 1]),
    }
}

/// A problem a chain finds with a scenario, in plain data: the scenario reader turns it into an
/// error that points at the place in the file.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct ChainIssue {
    /// The dotted key the message is about (`inputs.reflectance`), or empty for the table asked
    /// about (`[noise]` for noise terms).
    pub(crate) key: &'static str,
    /// The inputs whose table to point at, the first one the scenario defines (empty: the table).
    pub(crate) inputs: &'static [&'static str],
    /// What is wrong.
    pub(crate) message: String,
    /// A valid way to write it.
    pub(crate) example: String,
}

impl ChainIssue {
    /// An issue with the table asked about (e.g. `[noise]`).
    pub(crate) fn table(message: impl Into<String>, example: impl Into<String>) -> ChainIssue {
        ChainIssue {
            key: "",
            inputs: &[],
            message: message.into(),
            example: example.into(),
        }
    }
}

/// What a chain can know of the scenario's inputs before a run: an input's estimate (or the
/// chain's default when the scenario leaves it out), the ends of its distribution (the
/// quantiles at 1e-12 and 1 - 1e-12, the value itself for a constant), by name, and whether an
/// on/off procedure is planned.
pub(crate) struct InputValues<'a> {
    /// The estimate of an input by name (the chain default when the scenario leaves it out).
    pub(crate) estimate: &'a dyn Fn(&str) -> Option<f64>,
    /// The upper end of an input the scenario defines, by name.
    pub(crate) upper: &'a dyn Fn(&str) -> Option<f64>,
    /// The lower end of an input the scenario defines, by name.
    pub(crate) lower: &'a dyn Fn(&str) -> Option<f64>,
    /// Whether the scenario plans an on/off procedure (`[procedure]`).
    pub(crate) procedure: bool,
}

impl InputValues<'_> {
    /// Whether the scenario defines the input `name`.
    pub(crate) fn given(&self, name: &str) -> bool {
        (self.upper)(name).is_some()
    }
}

/// How a calibration chain forecasts its observed signal for a meter that does not exist yet:
/// the input it observes (`readout_shift`, `reading`) and the chain that predicts it from a
/// power (its signal twin, which gives a measurand of the same name).
#[derive(Clone, Copy, Debug)]
pub struct Forecastable {
    /// The observed input of this chain.
    pub observed: &'static str,
    /// The name of the signal twin.
    pub twin: &'static str,
}

/// A built-in measurement chain: a named model over `physics` functions.
pub(crate) trait Chain {
    /// Its name, inputs and measurands.
    const SPEC: ChainSpec;

    /// For a calibration chain, its observed input and signal twin (`[forecast]`).
    const FORECAST: Option<Forecastable> = None;

    /// Evaluate one trial: `args` in the order of `SPEC.inputs`, results into `out` in the order
    /// of `SPEC.measurands`, under the scenario's `context` (its procedure). A pure function,
    /// generic over the model's number type so that the law of propagation differentiates it
    /// exactly.
    fn evaluate<T: Scalar>(context: &ChainContext, args: &[T], out: &mut [T]);

    /// How the instrument follows a force, at the inputs' estimates (for the report's settling
    /// factor and ring-down check); by default at once.
    fn instrument(_inputs: &InputValues<'_>) -> Instrument<f64> {
        Instrument::Immediate
    }

    /// The white force-noise densities (N/sqrt(Hz)) of the chain's own instrument that `[noise]`
    /// describes (thermal noise of a pendulum, its readout), at the input estimates, each with
    /// its name. By default a chain has none of its own, and pendulum keys are refused.
    fn instrument_noise(
        settings: &NoiseSettings,
        _inputs: &InputValues<'_>,
    ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
        if settings.temperature.is_some() || settings.readout_angle_noise.is_some() {
            return Err(ChainIssue::table(
                "`temperature` and `readout_angle_noise` describe a torsion pendulum; for a balance give its `force_noise` density",
                "force_noise = \"2 nN\"   # per sqrt(Hz)",
            ));
        }
        Ok(Vec::new())
    }

    /// Checks across inputs at load (each input alone is checked against its `Domain`):
    /// warnings, or an issue that refuses the scenario. By default the optics checks.
    fn cross_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
        super::optics::optics_checks(inputs)
    }
}
