//! Run configuration given as JSON, by an editor (`check --stdin-json`'s `config`, the
//! language server's `initializationOptions`).
//!
//! Layers are applied in order, later ones winning: the defaults, then a project file
//! (`tidemark.toml`, once the lint configuration reads it), then what the client sends.
//! Unknown keys are not an error: they are returned so the caller can report them, which
//! keeps old clients working when keys are added.

use serde_json::Value;

use crate::config::{Config, DateOrder, UnitSystem};

/// The outcome of reading one JSON configuration object.
#[derive(Debug, Clone, Default)]
pub struct Applied {
    /// Keys that were not recognised and were ignored.
    pub unknown: Vec<String>,
}

/// Apply a JSON configuration object on top of `config`.
///
/// Recognised keys: `date_order` (`auto`, `dmy`, `mdy`), `unit_system` (`auto`, `si`, `us`).
/// A wrong type or value is an error naming the key; `null` leaves the setting as it was.
pub fn apply_json(config: &mut Config, value: &Value) -> Result<Applied, String> {
    let mut applied = Applied::default();
    let map = match value {
        Value::Null => return Ok(applied),
        Value::Object(m) => m,
        _ => return Err("config must be a JSON object".into()),
    };
    for (key, v) in map {
        if v.is_null() {
            continue;
        }
        match key.as_str() {
            "date_order" | "dateOrder" => {
                config.extract.date_order = match v.as_str() {
                    Some("auto") => DateOrder::Auto,
                    Some("dmy") => DateOrder::Dmy,
                    Some("mdy") => DateOrder::Mdy,
                    _ => return Err(format!("{key}: expected \"auto\", \"dmy\" or \"mdy\"")),
                }
            }
            "unit_system" | "unitSystem" => {
                config.extract.unit_system = match v.as_str() {
                    Some("auto") => UnitSystem::Auto,
                    Some("si") => UnitSystem::Si,
                    Some("us") => UnitSystem::Us,
                    _ => return Err(format!("{key}: expected \"auto\", \"si\" or \"us\"")),
                }
            }
            _ => applied.unknown.push(key.clone()),
        }
    }
    Ok(applied)
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn known_keys_apply_and_unknown_keys_are_reported() {
        let mut c = Config::default();
        let a = apply_json(
            &mut c,
            &json!({"date_order": "mdy", "unitSystem": "us", "rules": {}}),
        )
        .unwrap();
        assert_eq!(c.extract.date_order, DateOrder::Mdy);
        assert_eq!(c.extract.unit_system, UnitSystem::Us);
        assert_eq!(a.unknown, vec!["rules".to_string()]);
    }

    #[test]
    fn bad_values_name_the_key() {
        let mut c = Config::default();
        let e = apply_json(&mut c, &json!({"date_order": 3})).unwrap_err();
        assert!(e.starts_with("date_order"), "{e}");
        assert!(apply_json(&mut c, &json!([1])).is_err());
        assert!(apply_json(&mut c, &Value::Null).unwrap().unknown.is_empty());
    }
}
