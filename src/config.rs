//! Run configuration.

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
    pub handover: HandoverOptions,
}
