//! The measurands of a scenario: the chain's, bound to the input columns, and the formulas of
//! `[measurands.NAME]`, parsed, compiled and put in an order where each follows what it uses.

use super::inputs::InputQuantity;
use super::load::Loader;
use super::source::{nearest, suggestion};
use super::study::Measurand;
use super::table::Entry;
use crate::error::InputError;
use crate::model::formula::{self, topological_order};
use crate::model::formula::{Dim, infer_dimension, same_dimension};
use crate::model::{ArgSource, BoundChain, ChainContext, ChainKind, FormulaStep, Model};
use crate::units::{Dimension, DisplayUnit, parse_unit};
use std::ops::Range;

/// A formula measurand read from its table, waiting to be compiled.
struct Pending<'a, 'i> {
    /// Its index among the measurands.
    index: usize,
    /// Its `formula` entry.
    entry: Entry<'a, 'i>,
    /// The formula text.
    text: String,
    /// Where the formula's value is in the file.
    value_span: Range<usize>,
    /// The dimension of its `unit`, with the entry (to point at), if it has one.
    unit: Option<(Dimension, Entry<'a, 'i>)>,
}

impl<'a, 'i> Loader<'a, 'i> {
    /// The measurands and the compiled model of the scenario: the chain's measurands first, then
    /// the formulas in file order. Refuses a chain input the scenario leaves undefined, formula
    /// errors, cycles, and inputs nothing uses (almost always a misspelling).
    pub(super) fn model(
        &self,
        chain: Option<(ChainKind, Range<usize>)>,
        inputs: &[InputQuantity],
    ) -> Result<(Vec<Measurand>, Model), InputError> {
        let n_in = inputs.len();
        let mut measurands: Vec<Measurand> = Vec::new();
        let mut used = vec![false; n_in];
        let bound = match &chain {
            Some((kind, span)) => {
                Some(self.bind_chain(*kind, span, inputs, &mut used, &mut measurands)?)
            }
            None => None,
        };
        let pending =
            self.measurand_tables(chain.as_ref().map(|c| c.0), inputs, &mut measurands)?;
        if measurands.is_empty() {
            return Err(self.top.error(
                "the scenario defines no measurand: name a built-in chain under [model] or write a formula under [measurands.NAME]",
                "[model]\nchain = \"torsion-power\"   or   [measurands.y]\nformula = \"x1 + x2\"",
            ));
        }
        let (steps, dimensions) =
            self.compile_formulas(&pending, inputs, &measurands, &mut used)?;
        for (m, d) in measurands.iter_mut().zip(dimensions) {
            if m.dimension.is_none() {
                m.dimension = d;
            }
        }
        self.check_all_used(chain.as_ref().map(|c| c.0), inputs, &used)?;
        Ok((
            measurands.clone(),
            Model {
                inputs: n_in,
                measurands: measurands.len(),
                chain: bound,
                steps,
            },
        ))
    }

    /// Bind the chain's inputs to the scenario's columns (or the chain defaults) and add its
    /// measurands; refuse inputs the chain needs and the scenario does not define.
    fn bind_chain(
        &self,
        kind: ChainKind,
        span: &Range<usize>,
        inputs: &[InputQuantity],
        used: &mut [bool],
        measurands: &mut Vec<Measurand>,
    ) -> Result<BoundChain, InputError> {
        let n_in = inputs.len();
        let spec = kind.spec();
        let given = |n: &str| inputs.iter().any(|q| q.name == n);
        spec.check_alternatives(&given).map_err(|issue| {
            let q = issue
                .inputs
                .iter()
                .find_map(|n| inputs.iter().find(|q| q.name == *n));
            let (at, key) = match q {
                Some(q) => (q.span.clone(), format!("inputs.{}", q.name)),
                None => (span.clone(), "model.chain".to_string()),
            };
            self.src.error(&at, &key, issue.message, issue.example)
        })?;
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
                    // Replaced by inputs the scenario gives: the chain does not read it.
                    None if spec.excused(ci.name, &given) => args.push(ArgSource::Fixed(f64::NAN)),
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
                    let hint = nearest(ci.name, strangers.iter().copied())
                        .map_or(String::new(), |n| {
                            format!("; the scenario defines `{n}`: did you mean `{}`?", ci.name)
                        });
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
        let bound = BoundChain {
            context: ChainContext {
                procedure: self.procedure()?,
                given: spec.given_mask(&given),
            },
            kind,
            args,
            first_output: n_in,
        };
        for m in spec.measurands {
            measurands.push(Measurand {
                name: m.name.to_string(),
                dimension: Some(m.dimension),
                unit: None,
                formula: None,
                description: m.description.to_string(),
                label: None,
            });
        }
        Ok(bound)
    }

    /// Read `[measurands.NAME]`: display units and notes of chain measurands, and the formula
    /// measurands (added in file order), to be compiled.
    fn measurand_tables(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
        measurands: &mut Vec<Measurand>,
    ) -> Result<Vec<Pending<'a, 'i>>, InputError> {
        let mut pending: Vec<Pending<'a, 'i>> = Vec::new();
        if let Some(e) = self.top.get("measurands") {
            let t = e.table("[measurands.dm]\nformula = \"m1 - m2\"")?;
            for entry in t.entries() {
                self.check_name(&entry, "measurand")?;
                let mt = entry.table("[measurands.dm]\nformula = \"m1 - m2\"\nunit = \"mg\"")?;
                mt.check_keys(
                    &["formula", "unit", "note", "label"],
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
                                    chain.map_or("", |c| c.spec().name)
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
                            label: None,
                        });
                        let index = measurands.len() - 1;
                        pending.push(Pending {
                            index,
                            value_span: f.span(),
                            entry: f,
                            text,
                            unit: None,
                        });
                        index
                    }
                };
                if let Some(n) = note {
                    measurands[index].description = n;
                }
                if let Some(l) =
                    super::inputs::read_label(&mt, "label = \"laser power at the first mirror\"")?
                {
                    measurands[index].label = Some(l);
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
                    if let Some(p) = pending.iter_mut().find(|p| p.index == index) {
                        p.unit = Some((unit.dimension, u));
                    }
                }
            }
        }
        Ok(pending)
    }

    /// Parse and compile every pending formula, and order them so each follows what it uses;
    /// with the dimension of every measurand where it can be told (the chain's, a formula's
    /// from its names, or its `unit`), refusing a `unit` of another dimension than its formula.
    #[allow(clippy::type_complexity)]
    fn compile_formulas(
        &self,
        pending: &[Pending<'a, 'i>],
        inputs: &[InputQuantity],
        measurands: &[Measurand],
        used: &mut [bool],
    ) -> Result<(Vec<FormulaStep>, Vec<Option<Dimension>>), InputError> {
        let n_in = inputs.len();
        let names_in: Vec<&str> = inputs.iter().map(|q| q.name.as_str()).collect();
        let names_m: Vec<String> = measurands.iter().map(|m| m.name.clone()).collect();
        let mut compiled: Vec<(usize, formula::Program, Vec<formula::Reference>)> = Vec::new();
        let mut parsed_all = Vec::new();
        for p in pending {
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
                    "unknown name `{name}`{}: a formula may use input quantities, measurands, `pi`, the constants c, h, k_B, g_n, epsilon_0, mu_0 and functions",
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
            parsed_all.push(parsed);
        }

        // Order formula steps so each follows what it uses; refuse cycles.
        let position_of = |m: usize| compiled.iter().position(|c| c.0 == m);
        let uses: Vec<Vec<Option<usize>>> = compiled
            .iter()
            .map(|c| {
                c.2.iter()
                    .map(|r| {
                        (r.column >= n_in)
                            .then(|| position_of(r.column - n_in))
                            .flatten()
                    })
                    .collect()
            })
            .collect();
        let order = topological_order(&uses).map_err(|cycle| {
            let names: Vec<&str> = cycle
                .path
                .iter()
                .map(|c| measurands[compiled[*c].0].name.as_str())
                .collect();
            let r = &compiled[cycle.at].2[cycle.edge];
            let e = formula::FormulaError {
                position: r.position,
                length: r.length,
                message: format!(
                    "formulas refer to each other in a cycle: {}",
                    names.join(" -> ")
                ),
            };
            let p = &pending[cycle.at];
            self.formula_error(p.entry.clone(), &p.value_span, &p.text, e)
        })?;
        // Dimensions, each formula after what it uses.
        let mut dims: Vec<Dim> = measurands
            .iter()
            .map(|m| m.dimension.map_or(Dim::Unknown, Dim::Of))
            .collect();
        for &k in &order {
            let p = &pending[k];
            let of = |name: &str| -> Dim {
                if let Some(q) = inputs.iter().find(|q| q.name == name) {
                    return q.dimension.map_or(Dim::Unknown, Dim::Of);
                }
                names_m
                    .iter()
                    .position(|n| n == name)
                    .map_or(Dim::Unknown, |m| dims[m])
            };
            let found = infer_dimension(&parsed_all[k], &of)
                .map_err(|e| self.formula_error(p.entry.clone(), &p.value_span, &p.text, e))?;
            dims[p.index] = match (found, &p.unit) {
                (Dim::Of(d), Some((u, entry))) if !same_dimension(d, *u) => {
                    return Err(entry.error(
                        format!(
                            "`{}` is {} by its formula {:?}, not {}: its unit must be of that dimension",
                            measurands[p.index].name,
                            d.kind(),
                            p.text,
                            u.kind()
                        ),
                        format!("unit = \"{}\"", d.si_symbol()),
                    ));
                }
                (Dim::Of(d), _) => Dim::Of(d),
                (_, Some((u, _))) => Dim::Of(*u),
                (other, None) => other,
            };
        }
        let steps = order
            .into_iter()
            .map(|k| FormulaStep {
                column: n_in + compiled[k].0,
                program: compiled[k].1.clone(),
            })
            .collect();
        let dimensions = dims
            .into_iter()
            .map(|d| match d {
                Dim::Of(x) => Some(x),
                _ => None,
            })
            .collect();
        Ok((steps, dimensions))
    }

    /// Refuse an input that neither the chain nor any formula uses.
    fn check_all_used(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
        used: &[bool],
    ) -> Result<(), InputError> {
        if let Some(i) = used.iter().position(|u| !u) {
            let q = &inputs[i];
            let (hint, takes) = match chain {
                Some(kind) => {
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
        Ok(())
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
                "in formula {}, at character {}: {}",
                formula_excerpt(text, e.position),
                e.position + 1,
                e.message
            ),
            "formula = \"(mRc + dmRc) * (1 + (rho_a - rho_a0) * (1/rho_W - 1/rho_R)) - m_nom\"",
        )
    }
}

/// A formula as quoted in a message: whole when short, else the 60 characters around `at`
/// with "..." for the rest and the full length.
fn formula_excerpt(text: &str, at: usize) -> String {
    let n = text.chars().count();
    if n <= 120 {
        return format!("{text:?}");
    }
    let start = at.saturating_sub(30).min(n - 60);
    let part: String = text.chars().skip(start).take(60).collect();
    let lead = if start > 0 { "..." } else { "" };
    let tail = if start + 60 < n { "..." } else { "" };
    format!("{:?} ({n} characters)", format!("{lead}{part}{tail}"))
}
