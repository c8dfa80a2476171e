//! Reading a scenario file: the top level of the TOML walk, from the text to a [`Study`].

use super::inputs::{self, InputQuantity, Law, OUTSIDE_TOLERANCE};
use super::source::{Source, suggestion};
use super::study::{
    Adaptive, DEFAULT_ADAPTIVE_MAX_TRIALS, DEFAULT_TRIALS, MAX_INPUTS, MAX_SCENARIO_BYTES,
    MAX_TRIALS, MIN_TRIALS, Study, adaptive_batch_trials,
};
use super::table::{Entry, Table};
use super::{Correlations, correlation};
use crate::error::InputError;
use crate::model::formula::{Func, constant, reserved};
use crate::model::{ChainKind, InputValues};
use crate::units::{Dimension, parse_quantity};
use std::ops::Range;
use std::path::Path;
use toml::de::{DeTable, DeValue};

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
    "forecast",
    "procedure",
];

const TOP_EXAMPLE: &str = "title = \"...\", trials = 1_000_000, seed = 7, coverage = 0.95, [model], [inputs.NAME], [measurands.NAME]";

/// Read at most `limit` bytes of `path`: `Ok(None)` when it holds more. The limit applies
/// while reading, so an endless stream (`/dev/zero`, a pipe) costs at most `limit + 1` bytes.
pub(crate) fn read_at_most(path: &Path, limit: u64) -> std::io::Result<Option<Vec<u8>>> {
    use std::io::Read;
    let mut bytes = Vec::new();
    std::fs::File::open(path)?
        .take(limit + 1)
        .read_to_end(&mut bytes)?;
    Ok((bytes.len() as u64 <= limit).then_some(bytes))
}

/// The text of a scenario file, at most [`MAX_SCENARIO_BYTES`] of UTF-8.
pub(crate) fn read_scenario_text(path: &Path) -> Result<String, InputError> {
    let shown = path.display().to_string();
    if std::fs::metadata(path).is_ok_and(|m| m.is_dir()) {
        return Err(
            InputError::file(&shown, "is a directory, not a scenario file")
                .with_example("radforce run data/torsion-vacuum-25w.toml"),
        );
    }
    let bytes = read_at_most(path, MAX_SCENARIO_BYTES)
        .map_err(|e| {
            InputError::file(&shown, format!("cannot read the scenario file: {e}"))
                .with_example("radforce run data/torsion-vacuum-25w.toml")
        })?
        .ok_or_else(|| {
            InputError::file(
                &shown,
                format!(
                    "is larger than any scenario (limit {MAX_SCENARIO_BYTES} bytes, read no further); is it the right file?"
                ),
            )
        })?;
    String::from_utf8(bytes).map_err(|e| {
        let offset = e.utf8_error().valid_up_to();
        InputError::file(
            &shown,
            format!("is not UTF-8 text (invalid byte at offset {offset}); save it as UTF-8"),
        )
    })
}

/// Read and validate a scenario file.
pub fn load_file(path: &Path) -> Result<Study, InputError> {
    let text = read_scenario_text(path)?;
    load_str(&text, &path.display().to_string())
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
    super::table::refuse_control_characters(&src, &doc)?;
    let top = Table {
        src: &src,
        path: String::new(),
        map: doc.get_ref(),
        span: 0..0,
    };
    Loader { src: &src, top }.load()
}

/// The walk over one scenario's TOML tree.
pub(super) struct Loader<'a, 'i> {
    /// The file.
    pub(super) src: &'a Source<'a>,
    /// Its top-level table.
    pub(super) top: Table<'a, 'i>,
}

/// Whether a name can be used in formulas.
fn is_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    matches!(chars.next(), Some(c) if c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
}

impl<'a, 'i> Loader<'a, 'i> {
    pub(super) fn load(&self) -> Result<Study, InputError> {
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

        let mut inputs = self.inputs(chain.as_ref().map(|c| c.0))?;
        let correlations = match top.get("correlation") {
            Some(e) => correlation::read_correlations(&e, &inputs)?,
            None => Correlations::default(),
        };
        let kind = chain.as_ref().map(|c| c.0);
        if let Some(q) = self.response_time_input(kind, &inputs)? {
            inputs.push(q);
        }
        if let Some(q) = self.anelastic_input(kind, &inputs)? {
            inputs.push(q);
        }
        let forecast = match self.forecast(chain.as_ref(), &inputs)? {
            None => None,
            Some((forecast, observed)) => {
                inputs.push(observed);
                Some(forecast)
            }
        };
        let procedure = self.procedure()?;
        let (mut measurands, mut model) = self.model(chain.clone(), &inputs)?;
        let noise = match self.noise(kind, &inputs, &measurands, &model, procedure.as_ref())? {
            None => None,
            Some((floor, noise_force)) => {
                inputs.push(noise_force);
                (measurands, model) = self.model(chain.clone(), &inputs)?;
                Some(floor)
            }
        };
        let sweep = match top.get("sweep") {
            None => None,
            Some(e) => Some(self.sweep(&e, &inputs, &measurands, kind)?),
        };
        warnings.extend(planning_warnings(
            kind,
            &inputs,
            forecast.as_ref(),
            sweep.as_ref(),
            noise.is_some(),
            procedure.is_some(),
        ));
        if let (Some(k), Some(p)) = (kind, procedure.as_ref()) {
            warnings.extend(settling_warning(k, &inputs, p));
        }
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
            forecast,
            procedure,
            sweep,
            variants,
            warnings,
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

    pub(super) fn check_name(&self, entry: &Entry<'_, '_>, what: &str) -> Result<(), InputError> {
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
        if let Some(c) = constant(name) {
            return Err(self.src.error(
                &entry.key_span,
                &entry.path,
                format!(
                    "`{name}` is reserved: in formulas it is the {}; choose another {what} name",
                    c.what
                ),
                example,
            ));
        }
        if reserved(name) || Func::from_name(name).is_some() {
            return Err(self.src.error(
                &entry.key_span,
                &entry.path,
                format!("`{name}` is reserved in formulas (a constant or function); choose another {what} name"),
                example,
            ));
        }
        Ok(())
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
        let end = |n: &str, p: f64| -> Option<f64> {
            find(n).map(|q| match &q.law {
                Law::Constant(v) => *v,
                Law::Distributed(d) => d.quantile(p),
            })
        };
        let upper = |n: &str| end(n, 1.0 - OUTSIDE_TOLERANCE);
        let lower = |n: &str| end(n, OUTSIDE_TOLERANCE);
        let found = kind
            .cross_checks(&InputValues {
                estimate: &estimate,
                upper: &upper,
                lower: &lower,
                procedure: self.procedure()?.is_some(),
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

/// What a planner should know about how the scenario's parts go together: a swept design input
/// with an observed signal held fixed, a readings input and a noise model counting the same
/// scatter twice, a procedure without a noise model.
fn planning_warnings(
    chain: Option<ChainKind>,
    inputs: &[InputQuantity],
    forecast: Option<&super::forecast::Forecast>,
    sweep: Option<&super::Sweep>,
    noise: bool,
    procedure: bool,
) -> Vec<String> {
    let mut out = Vec::new();
    if let (Some(how), Some(sw), None) = (chain.and_then(|c| c.forecast()), sweep, forecast) {
        let swept = &inputs[sw.input].name;
        if swept != how.observed {
            out.push(format!(
                "the sweep moves `{swept}` while the observed `{}` is held at its given value, so each point is a different meter read with the same signal, not the same power: to see how `{swept}` changes the uncertainty of a planned meter, give [forecast] power = ... instead of [inputs.{}]",
                how.observed, how.observed
            ));
        }
    }
    if noise && let Some(q) = inputs.iter().find(|q| q.family() == "readings") {
        out.push(format!(
            "`{}` is given as repeated readings, whose scatter already holds the instrument's noise, and [noise] adds that noise again as `noise_force`: the noise is counted twice unless the readings are of something else",
            q.name
        ));
    }
    if procedure && !noise {
        out.push("[procedure] is given without [noise]: the procedure's noise is not part of the result; describe the instrument's noise in [noise]".into());
    }
    out
}

/// A warning when the windows see mostly transient: the settling factor at the estimates below
/// 1/2 (the model divides by it, so its uncertainty is what the windows leave of the signal).
fn settling_warning(
    chain: ChainKind,
    inputs: &[InputQuantity],
    p: &crate::physics::procedure::Procedure,
) -> Option<String> {
    let spec = chain.spec();
    let estimate = |n: &str| {
        inputs
            .iter()
            .find(|q| q.name == n)
            .map(InputQuantity::estimate)
            .or_else(|| {
                spec.inputs
                    .iter()
                    .find(|c| c.name == n)
                    .and_then(|c| c.default)
            })
    };
    let no_upper = |_: &str| None;
    let instrument = chain.instrument(&InputValues {
        estimate: &estimate,
        upper: &no_upper,
        lower: &no_upper,
        procedure: true,
    });
    let s = crate::physics::response::settling_factor(p, &instrument.modes());
    (s < 0.5).then(|| {
        format!(
            "`procedure.settle_time`: the settling factor is {s:.3}: the kept windows see mostly the instrument's transient, not its settled response; discard more of each phase (a longer settle_time) or lengthen the phases"
        )
    })
}
