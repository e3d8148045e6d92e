//! Run configuration, and the `tidemark.toml` file that sets it.
//!
//! ```toml
//! [locale]
//! date-order = "dmy"      # auto | dmy | mdy
//! unit-system = "si"      # auto | si | us
//!
//! [lint]                  # see crate::lint::config for every key
//! fail-on = "warning"
//! ```
//!
//! The file is given with `--config PATH` or found by looking for `tidemark.toml` in the
//! current directory and then each parent directory in turn. Unknown keys are errors that
//! name the nearest valid key.

use std::path::{Path, PathBuf};

pub use crate::lint::config::ConfigError;
use crate::lint::config::{err, join, unknown};
use crate::lint::LintConfig;

/// The configuration file name searched for.
pub const CONFIG_FILE: &str = "tidemark.toml";

/// Day/month order for numeric dates such as `03/04/2026`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum DateOrder {
    /// Day first unless the document's unambiguous dates or US units say month first.
    #[default]
    Auto,
    /// Day first (`03/04/2026` is 3 April).
    Dmy,
    /// Month first (`03/04/2026` is March 4).
    Mdy,
}

/// Which unit system a bare number is read in when nothing else decides.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum UnitSystem {
    /// Decide from the document's own units and wording (the default).
    #[default]
    Auto,
    /// SI units (kg, °C, µmol/L, mmol/L urea, g/L haemoglobin).
    Si,
    /// US conventional units (lb, °F, mg/dL, BUN, g/dL).
    Us,
}

/// Options of the extraction stage.
#[derive(Debug, Clone, Default)]
pub struct ExtractOptions {
    pub date_order: DateOrder,
    pub unit_system: UnitSystem,
}

/// Options of `tidemark handover` (the `[handover]` table of `tidemark.toml`).
#[derive(Debug, Clone, Default, PartialEq, Eq, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct HandoverOptions {
    /// A regular expression that finds the patient identifier in a note (`patient_id`). Its
    /// first capture group, or else the whole match, is the key notes are grouped by; it is
    /// tried before the built-in hospital-number and bed patterns.
    pub patient_id: Option<String>,
}

/// The whole run configuration.
#[derive(Debug, Clone, Default)]
pub struct Config {
    pub extract: ExtractOptions,
    /// Lint rule settings (the `[lint]` table of `tidemark.toml`).
    pub lint: LintConfig,
    /// Handover sheet settings (the `[handover]` table).
    pub handover: HandoverOptions,
}

impl Config {
    /// Parse the text of a `tidemark.toml`.
    pub fn from_toml_str(text: &str) -> Result<Config, ConfigError> {
        let table: toml::Table = text
            .parse()
            .map_err(|e: toml::de::Error| err("", e.to_string().trim_end().to_string()))?;
        let mut config = Config::default();
        for key in table.keys() {
            if !["locale", "lint", "handover"].contains(&key.as_str()) {
                return Err(unknown(key, "key", key, &["locale", "lint", "handover"]));
            }
        }
        if let Some(v) = table.get("locale") {
            let t = v
                .as_table()
                .ok_or_else(|| err("locale", "expected a table"))?;
            for key in t.keys() {
                if !["date-order", "unit-system"].contains(&key.as_str()) {
                    return Err(unknown(
                        &join("locale", key),
                        "key",
                        key,
                        &["date-order", "unit-system"],
                    ));
                }
            }
            if let Some(v) = t.get("date-order") {
                let k = "locale.date-order";
                let s = v.as_str().ok_or_else(|| err(k, "expected a string"))?;
                config.extract.date_order = match s {
                    "auto" => DateOrder::Auto,
                    "dmy" => DateOrder::Dmy,
                    "mdy" => DateOrder::Mdy,
                    other => return Err(unknown(k, "value", other, &["auto", "dmy", "mdy"])),
                };
            }
            if let Some(v) = t.get("unit-system") {
                let k = "locale.unit-system";
                let s = v.as_str().ok_or_else(|| err(k, "expected a string"))?;
                config.extract.unit_system = match s {
                    "auto" => UnitSystem::Auto,
                    "si" => UnitSystem::Si,
                    "us" => UnitSystem::Us,
                    other => return Err(unknown(k, "value", other, &["auto", "si", "us"])),
                };
            }
        }
        if let Some(v) = table.get("lint") {
            let t = v
                .as_table()
                .ok_or_else(|| err("lint", "expected a table"))?;
            config.lint = LintConfig::from_table(t, "lint")?;
        }
        if let Some(v) = table.get("handover") {
            config.handover = v.clone().try_into().map_err(|e: toml::de::Error| {
                err("handover", e.to_string().trim_end().to_string())
            })?;
        }
        Ok(config)
    }

    /// Read and parse a configuration file (read-only).
    pub fn load(path: &Path) -> Result<Config, ConfigError> {
        let text = std::fs::read_to_string(path)
            .map_err(|e| err("", format!("cannot read {}: {e}", path.display())))?;
        Self::from_toml_str(&text).map_err(|e| ConfigError {
            key: String::new(),
            message: format!("{}: {e}", path.display()),
        })
    }
}

/// The nearest `tidemark.toml` in `start` or one of its parents.
pub fn find_config_file(start: &Path) -> Option<PathBuf> {
    let mut dir = Some(start);
    while let Some(d) = dir {
        let candidate = d.join(CONFIG_FILE);
        if candidate.is_file() {
            return Some(candidate);
        }
        dir = d.parent();
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_locale_and_lint() {
        let c = Config::from_toml_str(
            "[locale]\ndate-order = \"mdy\"\nunit-system = \"us\"\n\
             [lint.rules]\nnyha-missing = \"off\"\n",
        )
        .unwrap();
        assert_eq!(c.extract.date_order, DateOrder::Mdy);
        assert_eq!(c.extract.unit_system, UnitSystem::Us);
        assert!(!c.lint.rule("nyha-missing").enabled);
    }

    #[test]
    fn parses_the_handover_table() {
        let c = Config::from_toml_str("[handover]\npatient_id = \"Bed (\\\\d+)\"\n").unwrap();
        assert_eq!(c.handover.patient_id.as_deref(), Some("Bed (\\d+)"));
        assert!(Config::from_toml_str("[handover]\npatient = \"x\"\n").is_err());
    }

    #[test]
    fn unknown_keys_name_the_nearest() {
        let e = Config::from_toml_str("[lnit]\n").unwrap_err();
        assert!(e.to_string().contains("did you mean \"lint\""), "{e}");
        let e = Config::from_toml_str("[locale]\ndate_order = \"dmy\"\n").unwrap_err();
        assert!(e.to_string().contains("\"date-order\""), "{e}");
        let e = Config::from_toml_str("[lint.rules]\nunit-mised = \"off\"\n").unwrap_err();
        assert_eq!(e.key, "lint.rules.unit-mised");
        assert!(e.message.contains("\"unit-mixed\""), "{e}");
        let e = Config::from_toml_str("[locale]\nunit-system = \"metric\"\n").unwrap_err();
        assert!(e.message.contains("unknown value"), "{e}");
    }

    #[test]
    fn finds_the_file_in_a_parent_directory() {
        let base = std::env::temp_dir().join(format!("tidemark-cfg-{}", std::process::id()));
        let deep = base.join("a").join("b");
        std::fs::create_dir_all(&deep).unwrap();
        std::fs::write(base.join(CONFIG_FILE), "[lint]\n").unwrap();
        assert_eq!(find_config_file(&deep), Some(base.join(CONFIG_FILE)));
        std::fs::remove_dir_all(&base).unwrap();
    }
}

#[cfg(test)]
mod example_tests {
    use super::*;

    #[test]
    fn the_documented_example_file_parses() {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/docs/tidemark.example.toml");
        let c = Config::load(Path::new(path)).unwrap();
        assert_eq!(
            c.lint.rule("weight-missing").severity,
            Some(crate::lint::Severity::Error)
        );
        assert_eq!(c.lint.thresholds.weight_gain_days, 3);
    }
}
