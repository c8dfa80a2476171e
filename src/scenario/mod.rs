//! The scenario file (TOML): parse, validate, convert every quantity to SI, and compile the
//! model, producing a [`Study`] the engine can run. Every error names the file, line, column and
//! key and shows a valid example; nothing is clamped silently.

mod correlation;
mod inputs;
mod noise;
pub mod schema;
mod source;
mod table;

pub use crate::physics::noise::{NoiseSettings, PSD_CONVENTION, Target};
pub use correlation::{CorrelatedGroup, CorrelatedPair, Correlations};
pub use inputs::{InputQuantity, Law, OUTSIDE_TOLERANCE, family_example, family_names};
pub use noise::NoiseFloor;
pub use source::{Source, edit_distance, nearest};

use crate::error::InputError;
use crate::model::formula::{self, Func, RESERVED};
use crate::model::{ArgSource, BoundChain, ChainKind, FormulaStep, InputValues, Model};
use crate::units::{Dimension, DisplayUnit, parse_quantity, parse_unit};
use source::suggestion;
use std::ops::Range;
use std::path::Path;
use table::{Entry, Table};
use toml::de::{DeTable, DeValue};

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
    pub dimension: Option<Dimension>,
    /// The unit the scenario asked to show it in (`unit = "mg"`), if any.
    pub unit: Option<DisplayUnit>,
    /// The formula text, for formula measurands.
    pub formula: Option<String>,
    /// What it is.
    pub description: String,
}

/// A validated scenario, ready to run.
#[derive(Clone, Debug)]
pub struct Study {
    /// The scenario file, as named in messages.
    pub file: String,
    /// Its title.
    pub title: String,
    /// Number of Monte Carlo trials M.
    pub trials: u64,
    /// Seed of the random streams.
    pub seed: u64,
    /// Coverage probability p.
    pub coverage: f64,
    /// Significant digits `ndig` for the numerical tolerance (JCGM 101 7.9.2).
    pub digits: u32,
    /// Whether the study involves a laser (the report then carries the laser caution).
    pub laser: bool,
    /// Input quantities, in file order (their column order).
    pub inputs: Vec<InputQuantity>,
    /// Measurands in report order: chain measurands first, then formulas in file order.
    pub measurands: Vec<Measurand>,
    /// The built-in chain, if any.
    pub chain: Option<ChainKind>,
    /// The compiled model.
    pub model: Model,
    /// Correlated inputs.
    pub correlations: Correlations,
    /// The adaptive procedure of JCGM 101 7.9, when asked for (then `trials` is the batch size).
    pub adaptive: Option<Adaptive>,
    /// The noise floor, when `[noise]` asks for one (then `noise_force` is among the inputs).
    pub noise: Option<NoiseFloor>,
    /// A sweep of one input, when `[sweep]` asks for one.
    pub sweep: Option<Sweep>,
    /// Names of the `[variants.NAME]` of the file (compared by `radforce compare`).
    pub variants: Vec<String>,
    /// Things worth knowing that do not stop the run.
    pub warnings: Vec<String>,
}

/// A sweep of one input quantity over a range of estimates, each point a full run.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// The input swept.
    pub input: usize,
    /// The estimates it takes, SI.
    pub values: Vec<f64>,
    /// The measurand followed.
    pub measurand: usize,
}

impl Study {
    /// The study with input `i` moved to the estimate `value` (a constant takes the value; a
    /// distribution is moved, see `Distribution::with_mean`).
    pub fn with_input_estimate(
        &self,
        i: usize,
        value: f64,
    ) -> Result<Study, crate::dist::ParameterError> {
        let mut s = self.clone();
        s.inputs[i].law = match &self.inputs[i].law {
            Law::Constant(_) => Law::Constant(value),
            Law::Distributed(d) => Law::Distributed(d.with_mean(value)?),
        };
        s.sweep = None;
        Ok(s)
    }

    /// The measurands' names, comma-separated, for messages that list the valid ones.
    pub fn measurand_names(&self) -> String {
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
    pub digits: u32,
    /// Most trials before giving up.
    pub max_trials: u64,
}

/// Batch size of the adaptive procedure: M = max(J, 10^4) with J the smallest whole number
/// >= 100 / (1 - p) (JCGM 101 7.9.4 b).
pub fn adaptive_batch_trials(coverage: f64) -> u64 {
    let j = (100.0 / (1.0 - coverage)).ceil() as u64;
    j.max(10_000)
}

impl Study {
    /// The factor from SI to the unit a measurand is reported in (its `unit`, else 1).
    pub fn reporting_factor(&self, measurand: usize) -> f64 {
        self.measurands[measurand]
            .unit
            .as_ref()
            .map_or(1.0, |u| u.factor)
    }
}

const TOP_KEYS: &[&str] = &[
    "title",
    "trials",
    "seed",
    "coverage",
    "digits",
    "laser",
    "model",
    "inputs",
    "measurands",
    "correlation",
    "adaptive",
    "noise",
    "sweep",
    "variants",
];

/// Default cap on the trials of an adaptive run.
pub const DEFAULT_ADAPTIVE_MAX_TRIALS: u64 = 100_000_000;

const TOP_EXAMPLE: &str = "title = \"...\", trials = 1_000_000, seed = 7, coverage = 0.95, [model], [inputs.NAME], [measurands.NAME]";

/// Read and validate a scenario file.
pub fn load_file(path: &Path) -> Result<Study, InputError> {
    let shown = path.display().to_string();
    let meta = std::fs::metadata(path).map_err(|e| {
        InputError::file(&shown, format!("cannot read the scenario file: {e}"))
            .with_example("radforce run data/torsion-vacuum-25w.toml")
    })?;
    if meta.is_dir() {
        return Err(
            InputError::file(&shown, "is a directory, not a scenario file")
                .with_example("radforce run data/torsion-vacuum-25w.toml"),
        );
    }
    if meta.len() > MAX_SCENARIO_BYTES {
        return Err(InputError::file(
            &shown,
            format!(
                "is {} bytes, far larger than any scenario (limit {MAX_SCENARIO_BYTES} bytes); is it the right file?",
                meta.len()
            ),
        ));
    }
    let bytes = std::fs::read(path)
        .map_err(|e| InputError::file(&shown, format!("cannot read the scenario file: {e}")))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let offset = e.utf8_error().valid_up_to();
        InputError::file(
            &shown,
            format!("is not UTF-8 text (invalid byte at offset {offset}); save it as UTF-8"),
        )
    })?;
    load_str(&text, &shown)
}

/// Read a scenario file and its `[variants.NAME]`: the base study first, then one study per
/// variant (each named by its key), all validated.
pub fn load_designs(path: &Path) -> Result<Vec<(String, Study)>, InputError> {
    let base = load_file(path)?;
    if base.variants.is_empty() {
        return Ok(vec![(base.title.clone(), base)]);
    }
    let shown = path.display().to_string();
    let text = std::fs::read_to_string(path)
        .map_err(|e| InputError::file(&shown, format!("cannot read the scenario file: {e}")))?;
    let mut out = vec![(base.title.clone(), base)];
    out.extend(load_variants_str(&text, &shown)?);
    Ok(out)
}

const VARIANT_KEYS: &[&str] = &["title", "model", "inputs", "drop", "noise"];
const VARIANT_EXAMPLE: &str = "[variants.heavier_bob]\ntitle = \"Heavier bob\"\ndrop = [\"stray_force\"]\n[variants.heavier_bob.inputs.moment_of_inertia]\nvalue = \"6e-4 kg m^2\"";

/// The variants of scenario text: each is the base scenario with its `model`, `noise`, `title`
/// and the named input tables replaced (or added), and the inputs listed in `drop` removed.
pub fn load_variants_str(text: &str, file: &str) -> Result<Vec<(String, Study)>, InputError> {
    let src = Source { file, text };
    let doc = DeTable::parse(text).map_err(|e| {
        src.error(
            &e.span().unwrap_or(0..0),
            "",
            format!("TOML syntax: {}", e.message().trim_end()),
            "",
        )
    })?;
    let base = doc.get_ref();
    let top = Table {
        src: &src,
        path: String::new(),
        map: base,
        span: 0..0,
    };
    let Some(ve) = top.get("variants") else {
        return Ok(Vec::new());
    };
    let variants = ve.table(VARIANT_EXAMPLE)?;
    let mut out = Vec::new();
    for v in variants.entries() {
        let vt = v.table(VARIANT_EXAMPLE)?;
        vt.check_keys(VARIANT_KEYS, VARIANT_EXAMPLE)?;
        let mut map = base.clone();
        map.remove("variants");
        for key in ["title", "model", "noise"] {
            if let Some((k, val)) = vt.map.get_key_value(key) {
                map.insert(k.clone(), val.clone());
            }
        }
        if vt.get("title").is_none() {
            let base_title = top
                .get("title")
                .and_then(|t| t.string("").ok().map(str::to_string))
                .unwrap_or_default();
            let title = format!("{base_title} [{}]", v.key);
            let span = v.key_span.clone();
            map.insert(
                toml::Spanned::new(span.clone(), std::borrow::Cow::Borrowed("title")),
                toml::Spanned::new(span, DeValue::String(std::borrow::Cow::Owned(title))),
            );
        }
        let mut inputs = match map.get("inputs").map(|x| x.get_ref()) {
            Some(DeValue::Table(t)) => t.clone(),
            _ => DeTable::new(),
        };
        if let Some(d) = vt.get("drop") {
            for item in d.array("drop = [\"stray_force\"]")? {
                let DeValue::String(name) = item.get_ref() else {
                    return Err(d.error(
                        "`drop` lists input names as strings",
                        "drop = [\"stray_force\"]",
                    ));
                };
                if inputs.remove(name.as_ref()).is_none() {
                    return Err(src.error(
                        &item.span(),
                        &d.path,
                        format!("the base scenario has no input `{name}` to drop"),
                        "drop = [\"stray_force\"]",
                    ));
                }
            }
        }
        if let Some(ie) = vt.get("inputs") {
            let it = ie.table(VARIANT_EXAMPLE)?;
            for (k, val) in it.map.iter() {
                match inputs.get_mut(k.get_ref().as_ref()) {
                    Some(slot) => *slot = val.clone(),
                    None => {
                        inputs.insert(k.clone(), val.clone());
                    }
                }
            }
        }
        let inputs_span = map.get("inputs").map_or(0..0, |x| x.span());
        let key = map
            .get_key_value("inputs")
            .map(|(k, _)| k.clone())
            .unwrap_or_else(|| toml::Spanned::new(0..0, std::borrow::Cow::Borrowed("inputs")));
        map.insert(key, toml::Spanned::new(inputs_span, DeValue::Table(inputs)));
        let study = Loader {
            src: &src,
            top: Table {
                src: &src,
                path: String::new(),
                map: &map,
                span: 0..0,
            },
        }
        .load()?;
        out.push((study.title.clone(), study));
    }
    Ok(out)
}

/// Read and validate scenario text; `file` names it in messages.
pub fn load_str(text: &str, file: &str) -> Result<Study, InputError> {
    let src = Source { file, text };
    let doc = DeTable::parse(text).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        let message = e.message().trim_end_matches('\n').to_string();
        src.error(
            &span,
            "",
            format!("TOML syntax: {message}"),
            "key = \"value\"   or   [inputs.name]",
        )
    })?;
    let top = Table {
        src: &src,
        path: String::new(),
        map: doc.get_ref(),
        span: 0..0,
    };
    Loader { src: &src, top }.load()
}

struct Loader<'a, 'i> {
    src: &'a Source<'a>,
    top: Table<'a, 'i>,
}

/// Whether a name can be used in formulas.
fn is_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    matches!(chars.next(), Some(c) if c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
}

impl<'a, 'i> Loader<'a, 'i> {
    fn load(&self) -> Result<Study, InputError> {
        let top = &self.top;
        top.check_keys(TOP_KEYS, TOP_EXAMPLE)?;
        let title = match top.get("title") {
            Some(e) => e
                .string("title = \"25 W fibre laser on a vacuum torsion balance\"")?
                .to_string(),
            None => Path::new(self.src.file).file_stem().map_or_else(
                || "untitled".to_string(),
                |s| s.to_string_lossy().into_owned(),
            ),
        };
        let coverage = self.coverage()?;
        let trials = match top.get("trials") {
            Some(e) => {
                let m = e.whole(MIN_TRIALS, MAX_TRIALS, "trials = 1_000_000")?;
                check_trials_for_coverage(&e, m, coverage)?;
                m
            }
            None => DEFAULT_TRIALS,
        };
        let seed = match top.get("seed") {
            Some(e) => e.whole(0, i64::MAX as u64, "seed = 7")?,
            None => 1,
        };
        let mut digits = match top.get("digits") {
            Some(e) => e.whole(1, 6, "digits = 2")? as u32,
            None => 2,
        };
        let adaptive = self.adaptive()?;
        if let Some(a) = &adaptive {
            digits = a.digits;
        }
        let laser = match top.get("laser") {
            Some(e) => e.boolean("laser = false   (for a study with no laser in it)")?,
            None => true,
        };

        let chain = self.chain()?;
        let mut warnings = Vec::new();
        if let Some(e) = top.get("trials") {
            let m = e.whole(MIN_TRIALS, MAX_TRIALS, "")?;
            let j = (100.0 / (1.0 - coverage)).ceil() as u64;
            if m < j {
                warnings.push(format!(
                    "trials = {m} is below 100/(1 - p) = {j} (JCGM 101 7.9.2): the coverage interval ends will be poorly determined"
                ));
            }
        }

        let inputs = self.inputs(chain.as_ref().map(|c| c.0))?;
        let correlations = match top.get("correlation") {
            Some(e) => correlation::read_correlations(&e, &inputs)?,
            None => Correlations::default(),
        };
        let (mut measurands, mut model) = self.model(chain.clone(), &inputs)?;
        let mut inputs = inputs;
        let noise = match top.get("noise") {
            None => None,
            Some(e) => {
                let t = e.table("[noise]\naveraging_time = \"100 s\"")?;
                let Some((kind, _)) = chain.clone() else {
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
                let settings = noise::read_noise(&t)?;
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
                let floor = noise::noise_floor(&t, &settings, kind, &value_of, force, power)?;
                inputs.push(noise::noise_input(&floor, &t)?);
                (measurands, model) = self.model(chain.clone(), &inputs)?;
                Some(floor)
            }
        };
        let sweep = match top.get("sweep") {
            None => None,
            Some(e) => Some(self.sweep(&e, &inputs, &measurands, chain.as_ref().map(|c| c.0))?),
        };
        let variants = match top.get("variants") {
            None => Vec::new(),
            Some(e) => {
                let t = e.table(
                    "[variants.lighter_bob.inputs.moment_of_inertia]\nvalue = \"1e-4 kg m^2\"",
                )?;
                t.entries().iter().map(|v| v.key.to_string()).collect()
            }
        };
        if let Some((kind, _)) = chain.clone() {
            self.chain_cross_checks(kind, &inputs, &mut warnings)?;
        }
        let trials = if adaptive.is_some() {
            adaptive_batch_trials(coverage)
        } else {
            trials
        };
        Ok(Study {
            file: self.src.file.to_string(),
            title,
            trials,
            seed,
            coverage,
            digits,
            laser,
            inputs,
            measurands,
            chain: chain.map(|c| c.0),
            model,
            correlations,
            adaptive,
            noise,
            sweep,
            variants,
            warnings,
        })
    }

    fn sweep(
        &self,
        e: &Entry<'_, '_>,
        inputs: &[InputQuantity],
        measurands: &[Measurand],
        chain: Option<ChainKind>,
    ) -> Result<Sweep, InputError> {
        let example =
            "[sweep]\ninput = \"beam_radius\"\nfrom = \"0.5 mm\"\nto = \"3 mm\"\nsteps = 11";
        let t = e.table(example)?;
        t.check_keys(
            &["input", "from", "to", "steps", "scale", "measurand"],
            example,
        )?;
        let ie = t.require("input", example)?;
        let name = ie.string(example)?;
        let Some(index) = inputs.iter().position(|q| q.name == name) else {
            return Err(ie.error(
                format!(
                    "no input quantity `{name}`{}",
                    suggestion(name, inputs.iter().map(|q| q.name.as_str()))
                ),
                example,
            ));
        };
        let q = &inputs[index];
        let read = |key: &str| -> Result<f64, InputError> {
            let v = t.require(key, example)?;
            match v.value.get_ref() {
                DeValue::String(text) => {
                    let parsed = parse_quantity(text).map_err(|err| {
                        v.error(format!("cannot read {:?}: {err}", text.as_ref()), example)
                    })?;
                    if let (Some(u), Some(d)) = (&parsed.unit, q.dimension)
                        && u.dimension != d
                    {
                        return Err(v.error(
                            format!("`{name}` is {}, not {}", d.kind(), u.dimension.kind()),
                            example,
                        ));
                    }
                    Ok(parsed.si)
                }
                _ => v.number(example),
            }
        };
        let (from, to) = (read("from")?, read("to")?);
        let steps = t.require("steps", example)?.whole(2, 1000, "steps = 11")? as usize;
        let log = match t.get("scale") {
            None => false,
            Some(s) => match s.string("scale = \"log\"")? {
                "linear" => false,
                "log" => true,
                other => {
                    return Err(s.error(
                        format!("unknown scale {other:?}: \"linear\" or \"log\""),
                        "scale = \"log\"",
                    ));
                }
            },
        };
        if from == to {
            return Err(t.error("`from` and `to` must differ", example));
        }
        if log && !(from > 0.0 && to > 0.0) {
            return Err(t.error(
                "a logarithmic sweep needs positive `from` and `to`",
                example,
            ));
        }
        let values: Vec<f64> = (0..steps)
            .map(|k| {
                let x = k as f64 / (steps - 1) as f64;
                if log {
                    from * (to / from).powf(x)
                } else {
                    from + (to - from) * x
                }
            })
            .collect();
        let measurand = match t.get("measurand") {
            None => 0,
            Some(m) => {
                let n = m.string("measurand = \"power\"")?;
                measurands.iter().position(|x| x.name == n).ok_or_else(|| {
                    m.error(
                        format!(
                            "no measurand `{n}`{}",
                            suggestion(n, measurands.iter().map(|x| x.name.as_str()))
                        ),
                        "measurand = \"power\"",
                    )
                })?
            }
        };
        // Every point must be physically possible.
        if let Some(ci) = chain.and_then(|k| k.spec().inputs.iter().find(|c| c.name == q.name)) {
            for v in &values {
                let moved = match &q.law {
                    Law::Constant(_) => Law::Constant(*v),
                    Law::Distributed(d) => Law::Distributed(
                        d.with_mean(*v)
                            .map_err(|err| t.error(format!("at {name} = {v}: {err}"), example))?,
                    ),
                };
                let point = InputQuantity {
                    law: moved,
                    ..q.clone()
                };
                inputs::check_domain(&t, &point, ci)?;
            }
        }
        Ok(Sweep {
            input: index,
            values,
            measurand,
        })
    }

    fn adaptive(&self) -> Result<Option<Adaptive>, InputError> {
        let Some(e) = self.top.get("adaptive") else {
            return Ok(None);
        };
        let example = "[adaptive]\ndigits = 2";
        let t = e.table(example)?;
        t.check_keys(&["digits", "max_trials"], example)?;
        if let Some(tr) = self.top.get("trials") {
            return Err(tr.error(
                "an adaptive run chooses its own number of trials: remove `trials` or remove [adaptive]",
                example,
            ));
        }
        if let Some(d) = self.top.get("digits") {
            return Err(d.error(
                "with [adaptive], give `digits` once, inside [adaptive]",
                example,
            ));
        }
        let digits = t.require("digits", example)?.whole(1, 6, "digits = 2")? as u32;
        let max_trials = match t.get("max_trials") {
            Some(m) => m.whole(MIN_TRIALS, MAX_TRIALS, "max_trials = 100_000_000")?,
            None => DEFAULT_ADAPTIVE_MAX_TRIALS,
        };
        Ok(Some(Adaptive { digits, max_trials }))
    }

    fn coverage(&self) -> Result<f64, InputError> {
        let Some(e) = self.top.get("coverage") else {
            return Ok(0.95);
        };
        let example = "coverage = 0.95   (or \"95 %\")";
        let p = match e.value.get_ref() {
            DeValue::String(s) => {
                let q = parse_quantity(s).map_err(|err| {
                    e.error(format!("cannot read {:?}: {err}", s.as_ref()), example)
                })?;
                match q.unit {
                    Some(u) if u.dimension != Dimension::NONE => {
                        return Err(e.error("a coverage probability is a pure number", example));
                    }
                    _ => q.si,
                }
            }
            _ => e.number(example)?,
        };
        if !(p > 0.0 && p < 1.0) {
            return Err(e.error(
                format!("the coverage probability must lie strictly between 0 and 1 (got {p})"),
                example,
            ));
        }
        Ok(p)
    }

    fn chain(&self) -> Result<Option<(ChainKind, Range<usize>)>, InputError> {
        let Some(e) = self.top.get("model") else {
            return Ok(None);
        };
        let t = e.table("[model]\nchain = \"torsion-power\"")?;
        if let Some(f) = t.get("formula") {
            return Err(f.error(
                "formulas are written as measurands: [measurands.NAME] formula = \"...\"",
                "[measurands.dm]\nformula = \"m1 - m2\"\nunit = \"mg\"",
            ));
        }
        t.check_keys(&["chain"], "chain = \"torsion-power\"")?;
        let c = t.require("chain", "chain = \"torsion-power\"")?;
        let name = c.string("chain = \"torsion-power\"")?;
        let names: Vec<&str> = ChainKind::ALL.iter().map(|k| k.spec().name).collect();
        match ChainKind::from_name(name) {
            Some(kind) => Ok(Some((kind, c.span()))),
            None => Err(c.error(
                format!(
                    "unknown chain {name:?}{}; built-in chains: {}",
                    suggestion(name, names.iter().copied()),
                    names.join(", ")
                ),
                "chain = \"torsion-power\"",
            )),
        }
    }

    fn inputs(&self, chain: Option<ChainKind>) -> Result<Vec<InputQuantity>, InputError> {
        let Some(e) = self.top.get("inputs") else {
            return Ok(Vec::new());
        };
        let t =
            e.table("[inputs.reflectance]\ndist = \"rectangular\"\nmin = 0.999\nmax = 0.9999")?;
        let entries = t.entries();
        if entries.len() > MAX_INPUTS {
            return Err(t.error(
                format!(
                    "{} input quantities, more than the limit of {MAX_INPUTS}",
                    entries.len()
                ),
                "",
            ));
        }
        let mut out = Vec::with_capacity(entries.len());
        for entry in entries {
            self.check_name(&entry, "input")?;
            let table = entry.table(&format!("[inputs.{}]\nvalue = 1.0", entry.key))?;
            let chain_input =
                chain.and_then(|k| k.spec().inputs.iter().find(|i| i.name == entry.key));
            out.push(inputs::read_input(&table, entry.key, chain_input)?);
        }
        Ok(out)
    }

    fn check_name(&self, entry: &Entry<'_, '_>, what: &str) -> Result<(), InputError> {
        let name = entry.key;
        let example = format!("[{what}s.beam_radius]");
        if !is_identifier(name) {
            return Err(self.src.error(
                &entry.key_span,
                &entry.path,
                format!("{what} name `{name}` cannot be used in formulas: use letters, digits and `_`, starting with a letter"),
                example,
            ));
        }
        if RESERVED.contains(&name) || Func::from_name(name).is_some() {
            return Err(self.src.error(
                &entry.key_span,
                &entry.path,
                format!("`{name}` is reserved in formulas (a constant or function); choose another {what} name"),
                example,
            ));
        }
        Ok(())
    }

    fn model(
        &self,
        chain: Option<(ChainKind, Range<usize>)>,
        inputs: &[InputQuantity],
    ) -> Result<(Vec<Measurand>, Model), InputError> {
        let n_in = inputs.len();
        let mut measurands: Vec<Measurand> = Vec::new();
        let mut bound = None;
        let mut used = vec![false; n_in];

        if let Some((kind, span)) = &chain {
            let spec = kind.spec();
            let mut args = Vec::new();
            let mut missing = Vec::new();
            for ci in spec.inputs {
                match inputs.iter().position(|q| q.name == ci.name) {
                    Some(i) => {
                        used[i] = true;
                        args.push(ArgSource::Column(i));
                    }
                    None => match ci.default {
                        Some(v) => args.push(ArgSource::Fixed(v)),
                        None => {
                            missing.push(ci);
                            args.push(ArgSource::Fixed(f64::NAN));
                        }
                    },
                }
            }
            if !missing.is_empty() {
                let strangers: Vec<&str> = inputs
                    .iter()
                    .map(|q| q.name.as_str())
                    .filter(|n| spec.input_index(n).is_none())
                    .collect();
                let list: Vec<String> = missing
                    .iter()
                    .map(|ci| {
                        let hint = nearest(ci.name, strangers.iter().copied()).map_or(
                            String::new(),
                            |n| {
                                format!("; the scenario defines `{n}`: did you mean `{}`?", ci.name)
                            },
                        );
                        format!(
                            "  {} ({}; {}){hint}",
                            ci.name,
                            ci.description,
                            ci.dimension.kind()
                        )
                    })
                    .collect();
                return Err(self.src.error(
                    span,
                    "model.chain",
                    format!(
                        "chain {:?} needs these inputs, which the scenario does not define:\n{}",
                        spec.name,
                        list.join("\n")
                    ),
                    format!(
                        "[inputs.{}]\nvalue = {}",
                        missing[0].name,
                        missing[0].dimension.example()
                    ),
                ));
            }
            bound = Some(BoundChain {
                kind: *kind,
                args,
                first_output: n_in,
            });
            for m in spec.measurands {
                measurands.push(Measurand {
                    name: m.name.to_string(),
                    dimension: Some(m.dimension),
                    unit: None,
                    formula: None,
                    description: m.description.to_string(),
                });
            }
        }

        // Formula measurands and display units.
        struct Pending<'x, 'y> {
            index: usize,
            entry: Entry<'x, 'y>,
            text: String,
            value_span: Range<usize>,
        }
        let mut pending: Vec<Pending<'a, 'i>> = Vec::new();
        if let Some(e) = self.top.get("measurands") {
            let t = e.table("[measurands.dm]\nformula = \"m1 - m2\"")?;
            for entry in t.entries() {
                self.check_name(&entry, "measurand")?;
                let mt = entry.table("[measurands.dm]\nformula = \"m1 - m2\"\nunit = \"mg\"")?;
                mt.check_keys(
                    &["formula", "unit", "note"],
                    "formula = \"m1 - m2\", unit = \"mg\"",
                )?;
                if inputs.iter().any(|q| q.name == entry.key) {
                    return Err(self.src.error(
                        &entry.key_span,
                        &entry.path,
                        format!("`{}` is already an input quantity; a measurand needs a name of its own", entry.key),
                        "[measurands.power_corrected]",
                    ));
                }
                let note = match mt.get("note") {
                    Some(n) => Some(n.string("note = \"...\"")?.to_string()),
                    None => None,
                };
                let existing = measurands.iter().position(|m| m.name == entry.key);
                let index = match existing {
                    Some(i) => {
                        if let Some(f) = mt.get("formula") {
                            return Err(f.error(
                                format!(
                                    "`{}` is computed by the chain {:?}; remove `formula` (only `unit` and `note` may be set for it) or give the formula another name",
                                    entry.key,
                                    chain.as_ref().map_or("", |c| c.0.spec().name)
                                ),
                                format!("[measurands.{}]\nunit = \"mW\"", entry.key),
                            ));
                        }
                        i
                    }
                    None => {
                        let f = mt.require("formula", "formula = \"(m1 + m2) / 2\"")?;
                        let text = f.string("formula = \"(m1 + m2) / 2\"")?.to_string();
                        measurands.push(Measurand {
                            name: entry.key.to_string(),
                            dimension: None,
                            unit: None,
                            formula: Some(text.clone()),
                            description: note.clone().unwrap_or_default(),
                        });
                        let index = measurands.len() - 1;
                        pending.push(Pending {
                            index,
                            value_span: f.span(),
                            entry: f,
                            text,
                        });
                        index
                    }
                };
                if let Some(n) = note {
                    measurands[index].description = n;
                }
                if let Some(u) = mt.get("unit") {
                    let text = u.string("unit = \"mg\"")?;
                    let unit = parse_unit(text).map_err(|err| {
                        u.error(format!("cannot read unit {text:?}: {err}"), "unit = \"mg\"")
                    })?;
                    if let Some(dim) = measurands[index].dimension
                        && dim != unit.dimension
                    {
                        return Err(u.error(
                            format!(
                                "`{}` is {}; {text:?} is {}",
                                entry.key,
                                dim.kind(),
                                unit.dimension.kind()
                            ),
                            format!("unit = \"{}\"", dim.si_symbol()),
                        ));
                    }
                    measurands[index].unit = Some(DisplayUnit {
                        symbol: unit.text.clone(),
                        factor: unit.factor,
                    });
                }
            }
        }
        if measurands.is_empty() {
            return Err(self.top.error(
                "the scenario defines no measurand: name a built-in chain under [model] or write a formula under [measurands.NAME]",
                "[model]\nchain = \"torsion-power\"   or   [measurands.y]\nformula = \"x1 + x2\"",
            ));
        }

        // Compile formulas; collect dependencies between formula measurands.
        let names_in: Vec<&str> = inputs.iter().map(|q| q.name.as_str()).collect();
        let names_m: Vec<String> = measurands.iter().map(|m| m.name.clone()).collect();
        let mut compiled: Vec<(usize, formula::Program, Vec<formula::Reference>)> = Vec::new();
        for p in &pending {
            let own = &measurands[p.index].name;
            let resolve = |name: &str| -> Result<usize, String> {
                if let Some(i) = names_in.iter().position(|n| *n == name) {
                    return Ok(i);
                }
                if let Some(m) = names_m.iter().position(|n| n == name) {
                    if n_in + m == n_in + p.index {
                        return Err(format!("the formula of `{own}` refers to itself"));
                    }
                    return Ok(n_in + m);
                }
                let all = names_in
                    .iter()
                    .copied()
                    .chain(names_m.iter().map(String::as_str));
                Err(format!(
                    "unknown name `{name}`{}: a formula may use input quantities, measurands, `pi` and functions",
                    suggestion(name, all)
                ))
            };
            let parsed = formula::parse(&p.text)
                .map_err(|e| self.formula_error(p.entry.clone(), &p.value_span, &p.text, e))?;
            let (program, refs) = formula::compile(&parsed, &resolve)
                .map_err(|e| self.formula_error(p.entry.clone(), &p.value_span, &p.text, e))?;
            for r in &refs {
                if r.column < n_in {
                    used[r.column] = true;
                }
            }
            compiled.push((p.index, program, refs));
        }

        // Order formula steps so each follows what it uses; refuse cycles.
        let order = self.order_formulas(
            &compiled,
            &pending
                .iter()
                .map(|p| (p.entry.clone(), p.value_span.clone(), p.text.clone()))
                .collect::<Vec<_>>(),
            n_in,
            &measurands,
        )?;
        let steps: Vec<FormulaStep> = order
            .into_iter()
            .map(|k| FormulaStep {
                column: n_in + compiled[k].0,
                program: compiled[k].1.clone(),
            })
            .collect();

        // Inputs nobody uses are almost always typos.
        if let Some(i) = used.iter().position(|u| !u) {
            let q = &inputs[i];
            let (hint, takes) = match &chain {
                Some((kind, _)) => {
                    let spec = kind.spec();
                    let names: Vec<&str> = spec.inputs.iter().map(|c| c.name).collect();
                    (
                        suggestion(&q.name, names.iter().copied()),
                        format!(
                            " and is not an input of chain {:?} (it takes: {})",
                            spec.name,
                            names.join(", ")
                        ),
                    )
                }
                None => (String::new(), String::new()),
            };
            return Err(self.src.error(
                &q.span,
                &format!("inputs.{}", q.name),
                format!("input `{}` is used by no formula{takes}{hint}", q.name),
                "remove it, rename it, or use it in a [measurands.NAME] formula",
            ));
        }

        Ok((
            measurands,
            Model {
                inputs: n_in,
                measurands: names_m.len(),
                chain: bound,
                steps,
            },
        ))
    }

    fn order_formulas(
        &self,
        compiled: &[(usize, formula::Program, Vec<formula::Reference>)],
        texts: &[(Entry<'a, 'i>, Range<usize>, String)],
        n_in: usize,
        measurands: &[Measurand],
    ) -> Result<Vec<usize>, InputError> {
        // Map measurand index -> compiled position.
        let pos_of = |m: usize| compiled.iter().position(|c| c.0 == m);
        let mut state = vec![0u8; compiled.len()]; // 0 new, 1 on path, 2 done
        let mut order = Vec::new();
        fn visit(
            k: usize,
            compiled: &[(usize, formula::Program, Vec<formula::Reference>)],
            pos_of: &dyn Fn(usize) -> Option<usize>,
            n_in: usize,
            state: &mut [u8],
            order: &mut Vec<usize>,
            path: &mut Vec<usize>,
        ) -> Result<(), (usize, usize, Vec<usize>)> {
            state[k] = 1;
            path.push(k);
            for (ri, r) in compiled[k].2.iter().enumerate() {
                if r.column < n_in {
                    continue;
                }
                let Some(dep) = pos_of(r.column - n_in) else {
                    continue;
                };
                match state[dep] {
                    1 => {
                        let start = path.iter().position(|p| *p == dep).unwrap_or(0);
                        let mut cycle = path[start..].to_vec();
                        cycle.push(dep);
                        return Err((k, ri, cycle));
                    }
                    0 => visit(dep, compiled, pos_of, n_in, state, order, path)?,
                    _ => {}
                }
            }
            path.pop();
            state[k] = 2;
            order.push(k);
            Ok(())
        }
        for k in 0..compiled.len() {
            if state[k] == 0 {
                let mut path = Vec::new();
                if let Err((at, ri, cycle)) = visit(
                    k, compiled, &pos_of, n_in, &mut state, &mut order, &mut path,
                ) {
                    let names: Vec<&str> = cycle
                        .iter()
                        .map(|c| measurands[compiled[*c].0].name.as_str())
                        .collect();
                    let r = &compiled[at].2[ri];
                    let e = formula::FormulaError {
                        position: r.position,
                        length: r.length,
                        message: format!(
                            "formulas refer to each other in a cycle: {}",
                            names.join(" -> ")
                        ),
                    };
                    let (entry, span, text) = &texts[at];
                    return Err(self.formula_error(entry.clone(), span, text, e));
                }
            }
        }
        Ok(order)
    }

    /// Turn a formula error into a file error that marks the column inside the formula.
    fn formula_error(
        &self,
        entry: Entry<'_, '_>,
        span: &Range<usize>,
        text: &str,
        e: formula::FormulaError,
    ) -> InputError {
        let raw = &self.src.text[span.clone()];
        let open = if raw.starts_with("\"\"\"") || raw.starts_with("'''") {
            3
        } else {
            1
        };
        let inner_start = span.start + open;
        let inner = self.src.text.get(inner_start..).unwrap_or("");
        let file_span = if inner.starts_with(text) {
            let byte = |chars: usize| {
                text.char_indices()
                    .nth(chars)
                    .map_or(text.len(), |(b, _)| b)
            };
            let a = inner_start + byte(e.position);
            let b = inner_start + byte(e.position + e.length);
            a..b.max(a + 1)
        } else {
            span.clone()
        };
        self.src.error(
            &file_span,
            &entry.path,
            format!(
                "in formula {text:?}, at character {}: {}",
                e.position + 1,
                e.message
            ),
            "formula = \"(mRc + dmRc) * (1 + (rho_a - rho_a0) * (1/rho_W - 1/rho_R)) - m_nom\"",
        )
    }

    fn chain_cross_checks(
        &self,
        kind: ChainKind,
        inputs: &[InputQuantity],
        warnings: &mut Vec<String>,
    ) -> Result<(), InputError> {
        let find = |n: &str| inputs.iter().find(|q| q.name == n);
        let spec = kind.spec();
        let estimate = |n: &str| -> Option<f64> {
            match find(n) {
                Some(q) => Some(q.estimate()),
                None => spec
                    .inputs
                    .iter()
                    .find(|c| c.name == n)
                    .and_then(|c| c.default),
            }
        };
        let upper = |n: &str| -> Option<f64> {
            find(n).map(|q| match &q.law {
                Law::Constant(v) => *v,
                Law::Distributed(d) => d.quantile(1.0 - OUTSIDE_TOLERANCE),
            })
        };
        let found = kind
            .cross_checks(&InputValues {
                estimate: &estimate,
                upper: &upper,
            })
            .map_err(|issue| {
                let span = issue
                    .inputs
                    .iter()
                    .find_map(|n| find(n))
                    .map_or(0..0, |q| q.span.clone());
                self.src
                    .error(&span, issue.key, issue.message, issue.example)
            })?;
        warnings.extend(found);
        Ok(())
    }
}

/// JCGM 101 7.7: with q = floor(pM + 1/2), a coverage interval needs M - q >= 1 trials outside it.
fn check_trials_for_coverage(e: &Entry<'_, '_>, m: u64, p: f64) -> Result<(), InputError> {
    let q = (p * m as f64 + 0.5).floor() as u64;
    if m <= q {
        let need = (1.0 / (1.0 - p)).ceil() as u64 * 100;
        return Err(e.error(
            format!("{m} trials leave no trial outside a {p} coverage interval (JCGM 101 7.7); use at least {need}"),
            format!("trials = {}", need.max(DEFAULT_TRIALS)),
        ));
    }
    Ok(())
}
