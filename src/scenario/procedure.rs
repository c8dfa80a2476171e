//! `[procedure]`: the planned on/off measurement (physics::procedure): pattern, cycles, phase
//! lengths and the settling discarded at the start of every phase.

use super::inputs::{InputQuantity, Law};
use super::load::Loader;
use super::source::suggestion;
use super::table::Entry;
use crate::dist::{Distribution, Rectangular};
use crate::error::InputError;
use crate::model::ChainKind;
use crate::physics::procedure::{MAX_CYCLES, Pattern, Procedure};
use crate::units::{Dimension, DisplayUnit, parse_quantity};
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
            &[
                "pattern",
                "cycles",
                "on_time",
                "off_time",
                "settle_time",
                "response_time",
            ],
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

impl Loader<'_, '_> {
    /// `[procedure] response_time`: the balance's first-order time constant, as the input
    /// quantity `response_time` (a constant; an input table of that name may give it a
    /// distribution instead). A pendulum responds by its own free period and quality factor.
    pub(super) fn response_time_input(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
    ) -> Result<Option<InputQuantity>, InputError> {
        let Some(t) = self
            .top
            .get("procedure")
            .map(|e| e.table(EXAMPLE))
            .transpose()?
        else {
            return Ok(None);
        };
        let Some(e) = t.get("response_time") else {
            return Ok(None);
        };
        let takes = chain.is_some_and(|c| c.spec().input_index("response_time").is_some());
        if !takes {
            return Err(e.error(
                "`response_time` is a force balance's first-order time constant; a torsion pendulum responds by its own free_period and quality_factor (and formulas take none)",
                "[model]\nchain = \"weighing-power\"",
            ));
        }
        if let Some(q) = inputs.iter().find(|q| q.name == "response_time") {
            return Err(self.src.error(
                &q.span,
                "inputs.response_time",
                "the response time is given twice: in [procedure] and as [inputs.response_time]; keep one (the input table may give it a distribution)",
                "response_time = \"3 s\"",
            ));
        }
        let v = time(&e)?;
        Ok(Some(InputQuantity {
            name: "response_time".into(),
            law: Law::Constant(v),
            dof: None,
            dimension: Some(Dimension::TIME),
            shown_unit: DisplayUnit::si(Dimension::TIME),
            note: Some("the balance's first-order time constant, from [procedure]".into()),
            best: None,
            span: e.span(),
            subsystem: crate::model::Subsystem::Balance,
            label: None,
        }))
    }

    /// The fibre's anelasticity: with structural damping (the default) and a finite quality
    /// factor Q, the static torsion constant is below the one the period gives by about
    /// delta = 1/(pi Q) (K. Kuroda, Phys. Rev. Lett. 75, 2796, 1995: with a
    /// frequency-independent loss the real part of the spring constant depends on frequency;
    /// the size 1/(pi Q) from memory). Unless the scenario gives `anelastic_correction` itself,
    /// it enters as the input quantity `anelastic_correction` ~ R(delta / 2, 3 delta / 2): the
    /// correction with half of it as a rectangular uncertainty. Not when the torsion constant is
    /// given directly (calibrated statically).
    pub(super) fn anelastic_input(
        &self,
        chain: Option<ChainKind>,
        inputs: &[InputQuantity],
    ) -> Result<Option<InputQuantity>, InputError> {
        let takes = chain.is_some_and(|c| c.spec().input_index("anelastic_correction").is_some());
        // A torsion constant calibrated statically needs no correction from the dynamic one.
        let given = |n: &str| inputs.iter().any(|q| q.name == n);
        if !takes || given("anelastic_correction") || given("torsion_constant") {
            return Ok(None);
        }
        let viscous = self
            .top
            .get("noise")
            .and_then(|n| n.table("").ok())
            .and_then(|t| t.get("damping"))
            .is_some_and(|d| d.string("").ok() == Some("viscous"));
        let Some(q) = inputs.iter().find(|q| q.name == "quality_factor") else {
            return Ok(None);
        };
        let quality = q.estimate();
        if viscous || !quality.is_finite() {
            return Ok(None);
        }
        let delta = 1.0 / (std::f64::consts::PI * quality);
        let law = Rectangular::new(0.5 * delta, 1.5 * delta).map_err(|e| {
            self.src
                .error(&q.span, "inputs.quality_factor", e.reason, "value = 3000")
        })?;
        Ok(Some(InputQuantity {
            name: "anelastic_correction".into(),
            law: Law::Distributed(Distribution::Rectangular(law)),
            dof: None,
            dimension: Some(Dimension::NONE),
            shown_unit: DisplayUnit::si(Dimension::NONE),
            note: Some(format!(
                "static torsion constant below the dynamic one by 1/(pi Q) = {delta:.3e} for structural damping (Kuroda 1995), half of it as a rectangular uncertainty"
            )),
            best: None,
            span: q.span.clone(),
            subsystem: crate::model::Subsystem::Balance,
            label: None,
        }))
    }
}
