//! A JSON Schema (draft 2020-12) of the scenario file, printed by `radforce schema`, so that
//! editors can check and complete scenario files (TOML editors that understand JSON Schema, such
//! as Taplo, map TOML tables to JSON objects). The loader stays the authority: the schema
//! describes the keys and their types; ranges that depend on other keys are checked at load.

use super::inputs::input_schema;
use crate::model::ChainKind;
use serde_json::{Value, json};

/// The schema.
pub(crate) fn scenario_schema() -> Value {
    let chains: Vec<&str> = ChainKind::ALL.iter().map(|c| c.spec().name).collect();
    let quantity = json!({"$ref": "#/$defs/quantity"});
    let top = json!({
        "title": {"type": "string", "description": "shown on every report"},
        "trials": {"type": "integer", "minimum": super::MIN_TRIALS, "maximum": super::MAX_TRIALS, "description": "Monte Carlo trials M"},
        "seed": {"type": "integer", "minimum": 0, "maximum": i64::MAX},
        "coverage": {"anyOf": [{"type": "number", "exclusiveMinimum": 0, "exclusiveMaximum": 1}, {"type": "string"}], "description": "coverage probability p, 0.95 or \"95 %\""},
        "digits": {"type": "integer", "minimum": 1, "maximum": 6, "description": "ndig of the numerical tolerance (JCGM 101 7.9.2)"},
        "laser": {"type": "boolean"},
        "model": {
            "type": "object",
            "properties": {"chain": {"enum": chains}},
            "required": ["chain"],
            "additionalProperties": false,
        },
        "inputs": {"type": "object", "additionalProperties": {"$ref": "#/$defs/input"}},
        "measurands": {
            "type": "object",
            "additionalProperties": {
                "type": "object",
                "properties": {"formula": {"type": "string"}, "unit": {"type": "string"}, "note": {"type": "string"}, "label": {"type": "string"}},
                "additionalProperties": false,
            },
        },
        "correlation": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["between", "coefficient"],
                "properties": {
                    "between": {"type": "array", "items": {"type": "string"}, "minItems": 2, "maxItems": 2},
                    "coefficient": {"type": "number", "minimum": -1, "maximum": 1},
                },
                "additionalProperties": false,
            },
        },
        "adaptive": {
            "type": "object",
            "required": ["digits"],
            "properties": {"digits": {"type": "integer", "minimum": 1, "maximum": 6}, "max_trials": {"type": "integer", "minimum": super::MIN_TRIALS}},
            "additionalProperties": false,
        },
        "noise": {"$ref": "#/$defs/noise"},
        "forecast": {"$ref": "#/$defs/forecast"},
        "procedure": {"$ref": "#/$defs/procedure"},
        "sweep": {
            "type": "object",
            "required": ["input", "from", "to", "steps"],
            "properties": {
                "input": {"type": "string"},
                "from": quantity,
                "to": quantity,
                "steps": {"type": "integer", "minimum": 2, "maximum": 1000},
                "scale": {"enum": ["linear", "log"]},
                "measurand": {"type": "string"},
            },
            "additionalProperties": false,
        },
        "variants": {
            "type": "object",
            "additionalProperties": {
                "type": "object",
                "properties": {
                    "title": {"type": "string"},
                    "model": {"type": "object", "properties": {"chain": {"enum": chains}}, "additionalProperties": false},
                    "inputs": {"type": "object", "additionalProperties": {"$ref": "#/$defs/input"}},
                    "drop": {"type": "array", "items": {"type": "string"}},
                    "noise": {"$ref": "#/$defs/noise"},
                    "forecast": {"$ref": "#/$defs/forecast"},
                    "procedure": {"$ref": "#/$defs/procedure"},
                },
                "additionalProperties": false,
            },
        },
    });
    json!({
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "radforce scenario",
        "description": "A radforce scenario file (TOML): input quantities and their distributions, the measurement model, and how to run it.",
        "type": "object",
        "properties": top,
        "additionalProperties": false,
        "$defs": {
            "quantity": {"anyOf": [{"type": "number"}, {"type": "string", "description": "a number with a unit, e.g. \"2.5 mm\", \"45 deg\", \"3 mW\""}]},
            "input": input_schema(),
            "noise": {
                "type": "object",
                "properties": {
                    "averaging_time": quantity,
                    "temperature": quantity,
                    "damping": {"enum": ["structural", "viscous"]},
                    "signal_frequency": quantity,
                    "readout_angle_noise": quantity,
                    "force_noise": quantity,
                    "flicker": quantity,
                    "random_walk": quantity,
                    "drift": quantity,
                    "wavelength": quantity,
                    "target_resolution": {"type": "string"},
                    "allan": {
                        "type": "object",
                        "required": ["tau", "deviation"],
                        "properties": {
                            "tau": {"type": "array", "items": quantity, "minItems": 3},
                            "deviation": {"type": "array", "items": quantity, "minItems": 3},
                        },
                        "additionalProperties": false,
                    },
                    "record": {
                        "type": "object",
                        "required": ["file", "time", "value", "unit"],
                        "properties": {
                            "file": {"type": "string"},
                            "time": {"type": "string"},
                            "value": {"type": "string"},
                            "unit": {"type": "string"},
                            "time_unit": {"type": "string"},
                        },
                        "additionalProperties": false,
                    },
                },
                "additionalProperties": false,
            },
            "forecast": {
                "type": "object",
                "required": ["power"],
                "properties": {"power": quantity},
                "additionalProperties": false,
            },
            "procedure": {
                "type": "object",
                "required": ["pattern", "cycles", "on_time", "off_time"],
                "properties": {
                    "pattern": {"enum": ["alternate", "ABA", "aba"]},
                    "cycles": {"type": "integer", "minimum": 1},
                    "on_time": quantity,
                    "off_time": quantity,
                    "settle_time": quantity,
                    "response_time": quantity,
                },
                "additionalProperties": false,
            },
        },
    })
}
