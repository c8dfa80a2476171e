//! `[procedure]`: the planned on/off measurement (physics::procedure): pattern, cycles, phase
//! lengths and the settling discarded at the start of every phase.

use super::load::Loader;
use super::source::suggestion;
use super::table::Entry;
use crate::error::InputError;
use crate::physics::procedure::{MAX_CYCLES, Pattern, Procedure};
use crate::units::{Dimension, parse_quantity};
use toml::de::DeValue;

const EXAMPLE: &str = "[procedure]\npattern = \"ABA\"\ncycles = 10\non_time = \"60 s\"\noff_time = \"60 s\"\nsettle_time = \"10 s\"";

/// A time written as a number of seconds or a string with a unit; at least 0.
fn time(e: &Entry<'_, '_>) -> Result<f64, InputError> {
    let example = format!("{} = \"60 s\"", e.key);
    let v = match e.value.get_ref() {
        DeValue::String(s) => {
            let q = parse_quantity(s)
                .map_err(|err| e.error(format!("cannot read {:?}: {err}", s.as_ref()), &example))?;
            if let Some(u) = q.unit
                && u.dimension != Dimension::TIME
            {
                return Err(e.error(
                    format!("`{}` is a time, not {}", e.key, u.dimension.kind()),
                    &example,
                ));
            }
            q.si
        }
        _ => e.number(&example)?,
    };
    if !(v >= 0.0 && v.is_finite()) {
        return Err(e.error(
            format!("`{}` must be a time of 0 or more (got {v} s)", e.key),
            &example,
        ));
    }
    Ok(v)
}

impl Loader<'_, '_> {
    /// `[procedure]`, if the scenario has it.
    pub(super) fn procedure(&self) -> Result<Option<Procedure>, InputError> {
        let Some(e) = self.top.get("procedure") else {
            return Ok(None);
        };
        let t = e.table(EXAMPLE)?;
        t.check_keys(
            &["pattern", "cycles", "on_time", "off_time", "settle_time"],
            EXAMPLE,
        )?;
        let pe = t.require("pattern", EXAMPLE)?;
        let written = pe.string("pattern = \"ABA\"")?;
        let pattern = match written.to_ascii_lowercase().as_str() {
            "alternate" => Pattern::Alternate,
            "aba" => Pattern::Aba,
            _ => {
                return Err(pe.error(
                    format!(
                        "unknown pattern {written:?}{}: \"alternate\" (off, on, off, on ...) or \"ABA\" (off, on, off, ..., on, off)",
                        suggestion(written, ["alternate", "ABA"])
                    ),
                    "pattern = \"ABA\"",
                ));
            }
        };
        let cycles = t
            .require("cycles", EXAMPLE)?
            .whole(1, MAX_CYCLES, "cycles = 10")?;
        let on = t.require("on_time", EXAMPLE)?;
        let off = t.require("off_time", EXAMPLE)?;
        let (on_time, off_time) = (time(&on)?, time(&off)?);
        for (e, v) in [(&on, on_time), (&off, off_time)] {
            if v <= 0.0 {
                return Err(e.error(format!("`{}` must be longer than 0", e.key), EXAMPLE));
            }
        }
        let settle_time = match t.get("settle_time") {
            Some(s) => {
                let v = time(&s)?;
                if v >= on_time.min(off_time) {
                    return Err(s.error(
                        format!(
                            "a settling time of {v} s leaves nothing of a phase of {} s: it must be shorter than both on_time and off_time",
                            on_time.min(off_time)
                        ),
                        "settle_time = \"10 s\"",
                    ));
                }
                v
            }
            None => 0.0,
        };
        Ok(Some(Procedure {
            pattern,
            cycles,
            on_time,
            off_time,
            settle_time,
        }))
    }
}
