//! `[variants.NAME]`: designs that differ from the base scenario in some tables.

use super::load::Loader;
use super::source::Source;
use super::table::Table;
use super::{Study, load_file};
use crate::error::InputError;
use std::path::Path;
use toml::de::{DeTable, DeValue};

/// Read a scenario file and its `[variants.NAME]`: the base study first, then one study per
/// variant (each named by its key), all validated.
pub(crate) fn load_designs(path: &Path) -> Result<Vec<(String, Study)>, InputError> {
    let base = load_file(path)?;
    if base.variants.is_empty() {
        return Ok(vec![(base.title.clone(), base)]);
    }
    let shown = path.display().to_string();
    let text = super::load::read_scenario_text(path)?;
    let mut out = vec![(base.title.clone(), base)];
    out.extend(load_variants_str(&text, &shown)?);
    Ok(out)
}

const VARIANT_KEYS: &[&str] = &[
    "title",
    "model",
    "inputs",
    "drop",
    "noise",
    "forecast",
    "procedure",
];
const VARIANT_EXAMPLE: &str = "[variants.heavier_bob]\ntitle = \"Heavier bob\"\ndrop = [\"stray_force\"]\n[variants.heavier_bob.inputs.moment_of_inertia]\nvalue = \"6e-4 kg m^2\"";

/// The variants of scenario text: each is the base scenario with its `model`, `noise`, `title`
/// and the named input tables replaced (or added), and the inputs listed in `drop` removed.
pub(crate) fn load_variants_str(
    text: &str,
    file: &str,
) -> Result<Vec<(String, Study)>, InputError> {
    let src = Source { file, text };
    let doc = DeTable::parse(text).map_err(|e| {
        src.error(
            &e.span().unwrap_or(0..0),
            "",
            format!("TOML syntax: {}", e.message().trim_end()),
            "",
        )
    })?;
    super::table::refuse_control_characters(&src, &doc)?;
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
        for key in ["title", "model", "noise", "forecast", "procedure"] {
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
