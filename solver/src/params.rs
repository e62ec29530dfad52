//! Method parameters read from text: the plumbing that lets a parameter struct be set key by
//! key (`--params KEY=VALUE`, a sweep file, a Python dictionary) through serde, with one range check
//! per struct and messages that list the known keys. A leaf: it knows no parameter struct.

use serde::de::{DeserializeOwned, Error as _, Visitor};
use serde::{Deserializer, Serialize, Serializer};
use std::str::FromStr;

// ---- method parameters: one check per struct, one way of reading a key from text ----

/// One range rule of a parameter struct: its key, whether the current value keeps it, what it
/// expects, and the value as shown in a message.
pub(crate) struct Rule {
    pub(crate) key: &'static str,
    pub(crate) ok: bool,
    pub(crate) expected: &'static str,
    /// Text after the quoted value (`evaporation` names `auto` there).
    pub(crate) after: &'static str,
    pub(crate) shown: String,
}

/// A parameter struct read from text and checked by its rules.
pub(crate) trait Params: Serialize + DeserializeOwned {
    /// What the parameters tune, for "unknown ... parameter".
    const WHAT: &'static str;
    /// Quote around keys and values in messages.
    const QUOTE: char;
    /// The keys, with a one-line meaning each.
    fn keys() -> &'static [(&'static str, &'static str)];
    /// Every range rule, with the current values.
    fn rules(&self) -> Vec<Rule>;
}

fn rule_message<P: Params>(r: &Rule, shown: &str) -> String {
    let q = P::QUOTE;
    format!(
        "{}: expected {}, got {q}{shown}{q}{}",
        r.key, r.expected, r.after
    )
}

/// The first rule `p` breaks, as a message; `given` shows the user's text for its key.
pub(crate) fn check_rules<P: Params>(p: &P, given: Option<(&str, &str)>) -> Result<(), String> {
    match p.rules().into_iter().find(|r| !r.ok) {
        None => Ok(()),
        Some(r) => {
            let shown = match given {
                Some((key, text)) if key == r.key => text.to_string(),
                _ => r.shown.clone(),
            };
            Err(rule_message::<P>(&r, &shown))
        }
    }
}

/// Sets `key` of `p` from its text `value`: the current parameters with that key replaced are
/// deserialised anew and checked; on error `p` is unchanged.
pub(crate) fn set_by_key<P: Params>(p: &mut P, key: &str, value: &str) -> Result<(), String> {
    let value = value.trim();
    let q = P::QUOTE;
    if !P::keys().iter().any(|(k, _)| *k == key) {
        let known: Vec<&str> = P::keys().iter().map(|(k, _)| *k).collect();
        return Err(format!(
            "unknown {} parameter {q}{key}{q}; known: {}",
            P::WHAT,
            known.join(", ")
        ));
    }
    let mut fields = serde_json::to_value(&*p).map_err(|e| e.to_string())?;
    if let Some(map) = fields.as_object_mut() {
        map.insert(key.to_string(), value.into());
    }
    let parsed: P = serde_json::from_value(fields).map_err(|e| {
        match p.rules().into_iter().find(|r| r.key == key) {
            Some(r) => rule_message::<P>(&r, value),
            None => format!("{key}: {e}"),
        }
    })?;
    check_rules(&parsed, Some((key, value)))?;
    *p = parsed;
    Ok(())
}

/// `x` in `lo..=hi`, finite; `open` excludes the low and high end.
pub(crate) fn within(x: f64, (lo, hi): (f64, f64), (open_lo, open_hi): (bool, bool)) -> bool {
    let above = if open_lo { x > lo } else { x >= lo };
    let below = if open_hi { x < hi } else { x <= hi };
    x.is_finite() && above && below
}

pub(crate) fn shown_or<T: ToString>(v: Option<T>, word: &str) -> String {
    v.map_or_else(|| word.to_string(), |v| v.to_string())
}

// ---- serde adapters of the parameter fields ----

/// A scalar of any kind (number, string, switch) as text; `None` for a null.
struct ScalarText;

impl<'de> Visitor<'de> for ScalarText {
    type Value = Option<String>;

    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("a number, a word or a switch")
    }
    fn visit_bool<E: serde::de::Error>(self, v: bool) -> Result<Self::Value, E> {
        Ok(Some(v.to_string()))
    }
    fn visit_i64<E: serde::de::Error>(self, v: i64) -> Result<Self::Value, E> {
        Ok(Some(v.to_string()))
    }
    fn visit_u64<E: serde::de::Error>(self, v: u64) -> Result<Self::Value, E> {
        Ok(Some(v.to_string()))
    }
    fn visit_f64<E: serde::de::Error>(self, v: f64) -> Result<Self::Value, E> {
        Ok(Some(v.to_string()))
    }
    fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<Self::Value, E> {
        Ok(Some(v.trim().to_string()))
    }
    fn visit_none<E: serde::de::Error>(self) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_unit<E: serde::de::Error>(self) -> Result<Self::Value, E> {
        Ok(None)
    }
}

fn parsed<T: FromStr, E: serde::de::Error>(text: &str) -> Result<T, E> {
    text.parse()
        .map_err(|_| E::custom(format!("cannot read `{text}` here")))
}

/// A field given as its own type or as text (`"0.5"`).
pub(crate) fn text<'de, D: Deserializer<'de>, T: FromStr>(d: D) -> Result<T, D::Error> {
    match d.deserialize_any(ScalarText)? {
        Some(s) => parsed(&s),
        None => Err(D::Error::custom("a value is needed here")),
    }
}

/// A switch: `true`/`false`, `on`/`off`, `yes`/`no` or `1`/`0`.
pub(crate) fn switch<'de, D: Deserializer<'de>>(d: D) -> Result<bool, D::Error> {
    match d.deserialize_any(ScalarText)?.as_deref() {
        Some("on" | "true" | "yes" | "1") => Ok(true),
        Some("off" | "false" | "no" | "0") => Ok(false),
        other => Err(D::Error::custom(format!(
            "expected on or off, got `{}`",
            other.unwrap_or("null")
        ))),
    }
}

fn word_or<'de, D: Deserializer<'de>, T: FromStr>(d: D, word: &str) -> Result<Option<T>, D::Error> {
    match d.deserialize_any(ScalarText)? {
        Some(s) if s != word => parsed(&s).map(Some),
        _ => Ok(None),
    }
}

fn word_or_value<S: Serializer, T: Serialize>(
    v: &Option<T>,
    word: &str,
    s: S,
) -> Result<S::Ok, S::Error> {
    match v {
        Some(v) => v.serialize(s),
        None => s.serialize_str(word),
    }
}

/// An optional field whose `None` is written `auto`.
pub(crate) mod auto {
    use super::*;

    pub(crate) fn serialize<S: Serializer, T: Serialize>(
        v: &Option<T>,
        s: S,
    ) -> Result<S::Ok, S::Error> {
        word_or_value(v, "auto", s)
    }

    pub(crate) fn deserialize<'de, D: Deserializer<'de>, T: FromStr>(
        d: D,
    ) -> Result<Option<T>, D::Error> {
        word_or(d, "auto")
    }
}

/// An optional field whose `None` is written `never`.
pub(crate) mod never {
    use super::*;

    pub(crate) fn serialize<S: Serializer, T: Serialize>(
        v: &Option<T>,
        s: S,
    ) -> Result<S::Ok, S::Error> {
        word_or_value(v, "never", s)
    }

    pub(crate) fn deserialize<'de, D: Deserializer<'de>, T: FromStr>(
        d: D,
    ) -> Result<Option<T>, D::Error> {
        word_or(d, "never")
    }
}
