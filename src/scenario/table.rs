//! Typed, position-keeping access to the parsed TOML tree, so that every error can point at the
//! exact key or value.

use super::source::{Source, suggestion};
use crate::error::InputError;
use std::ops::Range;
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// A TOML table with where it is and its dotted path.
#[derive(Clone)]
pub(crate) struct Table<'a, 'i> {
    /// The file.
    pub(crate) src: &'a Source<'a>,
    /// Dotted path (`inputs.reflectance`); empty for the top level.
    pub(crate) path: String,
    /// The entries.
    pub(crate) map: &'a DeTable<'i>,
    /// The table's span (its header, for a `[table]`).
    pub(crate) span: Range<usize>,
}

/// One key and its value.
#[derive(Clone)]
pub(crate) struct Entry<'a, 'i> {
    /// The file.
    pub(crate) src: &'a Source<'a>,
    /// The key.
    pub(crate) key: &'a str,
    /// Dotted path of the key.
    pub(crate) path: String,
    /// The key's span.
    pub(crate) key_span: Range<usize>,
    /// The value.
    pub(crate) value: &'a Spanned<DeValue<'i>>,
}

/// Refuse a key or string anywhere in the document that holds a control character other than
/// tab and newline (written as an escape such as `\u001b`): such characters would reach the
/// terminal raw in reports and messages, and no scenario needs them. The walk keeps its own
/// stack, so a deeply nested document cannot overflow the thread's.
pub(crate) fn refuse_control_characters(
    src: &Source<'_>,
    doc: &Spanned<DeTable<'_>>,
) -> Result<(), InputError> {
    let bad = |s: &str| s.chars().any(|c| c.is_control() && c != '\t' && c != '\n');
    let refuse = |span: Range<usize>, what: &str, text: &str| {
        let shown: String = text
            .chars()
            .map(|c| match c {
                c if c.is_control() && c != '\t' && c != '\n' => {
                    format!("\\u{{{:04x}}}", c as u32)
                }
                c => c.to_string(),
            })
            .collect();
        src.error(
            &span,
            "",
            format!(
                "{what} \"{shown}\" holds a control character; remove it (reports and messages \
                 are read on terminals, where such characters act as commands)"
            ),
            "title = \"Calibration of a 20 W fibre laser\"",
        )
    };
    let mut stack: Vec<&Spanned<DeValue<'_>>> = Vec::new();
    let mut tables: Vec<&DeTable<'_>> = vec![doc.get_ref()];
    loop {
        if let Some(t) = tables.pop() {
            for (k, v) in t {
                if bad(k.get_ref()) {
                    return Err(refuse(k.span(), "the key", k.get_ref()));
                }
                stack.push(v);
            }
            continue;
        }
        let Some(v) = stack.pop() else {
            return Ok(());
        };
        match v.get_ref() {
            DeValue::String(s) if bad(s) => return Err(refuse(v.span(), "the text", s)),
            DeValue::Table(t) => tables.push(t),
            DeValue::Array(a) => stack.extend(a.iter()),
            _ => {}
        }
    }
}

/// A short name for the type of a TOML value.
pub(crate) fn type_name(v: &DeValue<'_>) -> &'static str {
    match v {
        DeValue::String(_) => "a string",
        DeValue::Integer(_) => "an integer",
        DeValue::Float(_) => "a float",
        DeValue::Boolean(_) => "a boolean",
        DeValue::Datetime(_) => "a date-time",
        DeValue::Array(_) => "an array",
        DeValue::Table(_) => "a table",
    }
}

impl<'a, 'i> Table<'a, 'i> {
    /// Dotted path of a key in this table.
    pub(crate) fn key_path(&self, key: &str) -> String {
        if self.path.is_empty() {
            key.to_string()
        } else {
            format!("{}.{key}", self.path)
        }
    }

    /// All entries in file order.
    pub(crate) fn entries(&self) -> Vec<Entry<'a, 'i>> {
        self.map
            .iter()
            .map(|(k, v)| Entry {
                src: self.src,
                key: k.get_ref().as_ref(),
                path: self.key_path(k.get_ref()),
                key_span: k.span(),
                value: v,
            })
            .collect()
    }

    /// The entry for `key`, if present.
    pub(crate) fn get(&self, key: &str) -> Option<Entry<'a, 'i>> {
        self.map
            .iter()
            .find(|(k, _)| k.get_ref().as_ref() == key)
            .map(|(k, v)| Entry {
                src: self.src,
                key: k.get_ref().as_ref(),
                path: self.key_path(key),
                key_span: k.span(),
                value: v,
            })
    }

    /// An error about the table itself.
    pub(crate) fn error(
        &self,
        message: impl Into<String>,
        example: impl Into<String>,
    ) -> InputError {
        self.src.error(&self.span, &self.path, message, example)
    }

    /// Refuse keys not in `allowed`, suggesting the nearest valid one.
    pub(crate) fn check_keys(&self, allowed: &[&str], example: &str) -> Result<(), InputError> {
        for e in self.entries() {
            if !allowed.contains(&e.key) {
                let where_ = if self.path.is_empty() {
                    "at the top level".to_string()
                } else {
                    format!("in [{}]", self.path)
                };
                return Err(self.src.error(
                    &e.key_span,
                    &e.path,
                    format!(
                        "unknown key `{}` {where_}{}; valid keys here: {}",
                        e.key,
                        suggestion(e.key, allowed.iter().copied()),
                        allowed.join(", ")
                    ),
                    example,
                ));
            }
        }
        Ok(())
    }

    /// A required entry.
    pub(crate) fn require(&self, key: &str, example: &str) -> Result<Entry<'a, 'i>, InputError> {
        self.get(key).ok_or_else(|| {
            self.src.error(
                &self.span,
                &self.key_path(key),
                format!(
                    "missing key `{key}`{}",
                    if self.path.is_empty() {
                        String::new()
                    } else {
                        format!(" in [{}]", self.path)
                    }
                ),
                example,
            )
        })
    }
}

impl<'a, 'i> Entry<'a, 'i> {
    /// The value's span.
    pub(crate) fn span(&self) -> Range<usize> {
        self.value.span()
    }

    /// An error at the value.
    pub(crate) fn error(
        &self,
        message: impl Into<String>,
        example: impl Into<String>,
    ) -> InputError {
        self.src
            .error(&self.value.span(), &self.path, message, example)
    }

    fn wrong_type(&self, wanted: &str, example: &str) -> InputError {
        self.error(
            format!(
                "expected {wanted}, found {}",
                type_name(self.value.get_ref())
            ),
            example,
        )
    }

    /// The value as a string.
    pub(crate) fn string(&self, example: &str) -> Result<&'a str, InputError> {
        match self.value.get_ref() {
            DeValue::String(s) => Ok(s.as_ref()),
            _ => Err(self.wrong_type("a string", example)),
        }
    }

    /// The value as a table.
    pub(crate) fn table(&self, example: &str) -> Result<Table<'a, 'i>, InputError> {
        match self.value.get_ref() {
            DeValue::Table(t) => Ok(Table {
                src: self.src,
                path: self.path.clone(),
                map: t,
                span: self.value.span(),
            }),
            _ => Err(self.wrong_type("a table", example)),
        }
    }

    /// The value as an array of values.
    pub(crate) fn array(&self, example: &str) -> Result<&'a [Spanned<DeValue<'i>>], InputError> {
        match self.value.get_ref() {
            DeValue::Array(a) => Ok(&a[..]),
            _ => Err(self.wrong_type("an array", example)),
        }
    }

    /// The value as a boolean.
    pub(crate) fn boolean(&self, example: &str) -> Result<bool, InputError> {
        match self.value.get_ref() {
            DeValue::Boolean(b) => Ok(*b),
            _ => Err(self.wrong_type("true or false", example)),
        }
    }

    /// The value as a whole number in [min, max]; integral floats such as 1e6 are accepted.
    pub(crate) fn whole(&self, min: u64, max: u64, example: &str) -> Result<u64, InputError> {
        let v: Option<f64> = match self.value.get_ref() {
            DeValue::Integer(i) => match i128::from_str_radix(i.as_str(), i.radix()) {
                Ok(n) if n < min as i128 || n > max as i128 => {
                    return Err(self.error(
                        format!("{n} is out of range: expected a whole number from {min} to {max}"),
                        example,
                    ));
                }
                Ok(n) => return Ok(n as u64),
                Err(_) => None,
            },
            DeValue::Float(f) => f.as_str().parse::<f64>().ok(),
            _ => return Err(self.wrong_type("a whole number", example)),
        };
        match v {
            Some(x) if x.is_finite() && x.fract() == 0.0 && x >= min as f64 && x <= max as f64 => {
                Ok(x as u64)
            }
            Some(x) if x.is_finite() && x.fract() == 0.0 => Err(self.error(
                format!("{x} is out of range: expected a whole number from {min} to {max}"),
                example,
            )),
            Some(x) => Err(self.error(
                format!("{x} is not a whole number from {min} to {max}"),
                example,
            )),
            None => Err(self.error(
                format!("expected a whole number from {min} to {max}"),
                example,
            )),
        }
    }

    /// The value as a finite number (integer or float).
    pub(crate) fn number(&self, example: &str) -> Result<f64, InputError> {
        number_value(self.value, &self.path, self.src, example)
    }
}

/// A TOML integer or float as f64; NaN and infinities are refused.
pub(crate) fn number_value(
    v: &Spanned<DeValue<'_>>,
    path: &str,
    src: &Source<'_>,
    example: &str,
) -> Result<f64, InputError> {
    let x = match v.get_ref() {
        DeValue::Integer(i) => i128::from_str_radix(i.as_str(), i.radix())
            .ok()
            .map(|n| n as f64),
        DeValue::Float(f) => f.as_str().parse::<f64>().ok(),
        other => {
            return Err(src.error(
                &v.span(),
                path,
                format!("expected a number, found {}", type_name(other)),
                example,
            ));
        }
    };
    match x {
        Some(x) if x.is_finite() => Ok(x),
        _ => Err(src.error(
            &v.span(),
            path,
            "NaN and infinite values are not allowed here",
            example,
        )),
    }
}
