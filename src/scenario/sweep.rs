//! `[sweep]`: one input moved over a range of estimates, each point a full run.

use super::inputs::{self, InputQuantity, Law};
use super::load::Loader;
use super::source::suggestion;
use super::study::{Measurand, Sweep};
use super::table::Entry;
use crate::error::InputError;
use crate::model::ChainKind;
use crate::units::parse_quantity;
use toml::de::DeValue;

impl Loader<'_, '_> {
    pub(super) fn sweep(
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
}
