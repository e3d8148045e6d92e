//! Lint settings: which rules run, at what severity, with which thresholds.
//!
//! Read from the `[lint]` table of `tidemark.toml` (see [`crate::config`]):
//!
//! ```toml
//! [lint]
//! fail-on = "warning"                  # default for --fail-on
//!
//! [lint.rules]
//! nyha-missing = "off"                 # shorthand: off | on | error | warning | info
//!
//! [lint.rules.weight-missing]
//! enabled = true
//! severity = "error"
//!
//! [lint.thresholds]
//! weight-gain-kg = 2.0                 # fires when a rise is greater than this ...
//! weight-gain-days = 3                 # ... within this many days
//! potassium-high = 5.5                 # mmol/L; fires when potassium is greater than this
//!
//! [lint.discharge]
//! elements = ["activity", "diet-fluid", "weight-monitoring", "follow-up",
//!             "worsening-symptoms", "medications"]
//!
//! [lint.discharge.words]
//! activity = ["cardiac rehabilitation"]   # extra wording that counts for an element
//! ```
//!
//! Unknown keys, rule ids, element names and values are errors that name the nearest valid
//! spelling.

use std::collections::BTreeMap;

use super::Severity;

/// Threshold used by `fail-on`: the lowest severity that makes the run fail.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FailOn {
    Error,
    #[default]
    Warning,
    Info,
    Never,
}

impl FailOn {
    pub const NAMES: [&'static str; 4] = ["error", "warning", "info", "never"];

    pub fn from_name(name: &str) -> Option<Self> {
        match name {
            "error" => Some(Self::Error),
            "warning" => Some(Self::Warning),
            "info" => Some(Self::Info),
            "never" => Some(Self::Never),
            _ => None,
        }
    }

    /// Whether a diagnostic of this severity makes the run fail.
    pub fn fails(self, sev: Severity) -> bool {
        match self {
            Self::Never => false,
            Self::Error => sev == Severity::Error,
            Self::Warning => sev <= Severity::Warning,
            Self::Info => true,
        }
    }
}

/// The setting of one rule after configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RuleSetting {
    pub enabled: bool,
    /// Replaces the rule's own severity when set.
    pub severity: Option<Severity>,
}

impl Default for RuleSetting {
    fn default() -> Self {
        RuleSetting {
            enabled: true,
            severity: None,
        }
    }
}

/// Numeric thresholds of the rules that use one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thresholds {
    /// Weight rise (kg) that must be exceeded ... (HFA of the ESC patient advice: > 2 kg in
    /// 3 days).
    pub weight_gain_kg: f64,
    /// ... within this many days.
    pub weight_gain_days: u32,
    /// Potassium (mmol/L) above which a potassium-raising drug continued without comment is
    /// reported.
    pub potassium_high: f64,
}

impl Default for Thresholds {
    fn default() -> Self {
        Thresholds {
            weight_gain_kg: 2.0,
            weight_gain_days: 3,
            potassium_high: 5.5,
        }
    }
}

/// The heart-failure discharge-instruction elements (The Joint Commission HF-1 measure).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum DischargeElement {
    Activity,
    DietFluid,
    WeightMonitoring,
    FollowUp,
    WorseningSymptoms,
    Medications,
}

impl DischargeElement {
    pub const ALL: [DischargeElement; 6] = [
        Self::Activity,
        Self::DietFluid,
        Self::WeightMonitoring,
        Self::FollowUp,
        Self::WorseningSymptoms,
        Self::Medications,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Self::Activity => "activity",
            Self::DietFluid => "diet-fluid",
            Self::WeightMonitoring => "weight-monitoring",
            Self::FollowUp => "follow-up",
            Self::WorseningSymptoms => "worsening-symptoms",
            Self::Medications => "medications",
        }
    }

    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|e| e.name() == name)
    }

    /// Plain-English label for messages.
    pub fn label(self) -> &'static str {
        match self {
            Self::Activity => "activity level",
            Self::DietFluid => "diet and fluid advice",
            Self::WeightMonitoring => "daily weight monitoring",
            Self::FollowUp => "follow-up arrangements",
            Self::WorseningSymptoms => "what to do if symptoms worsen",
            Self::Medications => "discharge medications",
        }
    }
}

/// Which discharge elements are required, and extra wording that counts for each.
#[derive(Debug, Clone, PartialEq)]
pub struct DischargeConfig {
    pub elements: Vec<DischargeElement>,
    pub extra_words: BTreeMap<DischargeElement, Vec<String>>,
}

impl Default for DischargeConfig {
    fn default() -> Self {
        DischargeConfig {
            elements: DischargeElement::ALL.to_vec(),
            extra_words: BTreeMap::new(),
        }
    }
}

/// All lint settings.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LintConfig {
    /// Per-rule settings; rules not named here run at their defaults.
    pub rules: BTreeMap<String, RuleSetting>,
    pub thresholds: Thresholds,
    pub discharge: DischargeConfig,
    /// The `fail-on` default from the file, when given (the command line wins).
    pub fail_on: Option<FailOn>,
}

/// A configuration error, with the dotted key it concerns.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ConfigError {
    pub key: String,
    pub message: String,
}

impl std::fmt::Display for ConfigError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.key.is_empty() {
            write!(f, "{}", self.message)
        } else {
            write!(f, "`{}`: {}", self.key, self.message)
        }
    }
}

impl std::error::Error for ConfigError {}

pub(crate) fn err(key: &str, message: impl Into<String>) -> ConfigError {
    ConfigError {
        key: key.to_string(),
        message: message.into(),
    }
}

/// `unknown X "name"`, with the nearest valid name when one is close.
pub(crate) fn unknown(key: &str, what: &str, name: &str, valid: &[&str]) -> ConfigError {
    let mut msg = format!("unknown {what} \"{name}\"");
    match nearest(name, valid) {
        Some(s) => msg.push_str(&format!("; did you mean \"{s}\"?")),
        None => msg.push_str(&format!("; expected one of: {}", valid.join(", "))),
    }
    err(key, msg)
}

/// The valid name closest to `name` by edit distance, if it is close enough to be a typo.
pub fn nearest<'a>(name: &str, valid: &[&'a str]) -> Option<&'a str> {
    if name.len() >= 3 {
        if let Some(v) = valid.iter().find(|v| v.starts_with(name)) {
            return Some(v);
        }
    }
    let (best, d) = valid
        .iter()
        .map(|v| (*v, edit_distance(name, v)))
        .min_by_key(|(_, d)| *d)?;
    let limit = (name.chars().count().max(best.chars().count()) / 3).max(2);
    (d <= limit).then_some(best)
}

/// Levenshtein distance over Unicode scalar values.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.iter().enumerate() {
        cur[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

fn check_keys(table: &toml::Table, prefix: &str, valid: &[&str]) -> Result<(), ConfigError> {
    for k in table.keys() {
        if !valid.contains(&k.as_str()) {
            return Err(unknown(&join(prefix, k), "key", k, valid));
        }
    }
    Ok(())
}

pub(crate) fn join(prefix: &str, k: &str) -> String {
    if prefix.is_empty() {
        k.to_string()
    } else {
        format!("{prefix}.{k}")
    }
}

fn as_table<'a>(v: &'a toml::Value, key: &str) -> Result<&'a toml::Table, ConfigError> {
    v.as_table().ok_or_else(|| err(key, "expected a table"))
}

fn as_str<'a>(v: &'a toml::Value, key: &str) -> Result<&'a str, ConfigError> {
    v.as_str().ok_or_else(|| err(key, "expected a string"))
}

fn as_number(v: &toml::Value, key: &str) -> Result<f64, ConfigError> {
    match v {
        toml::Value::Float(f) => Ok(*f),
        toml::Value::Integer(i) => Ok(*i as f64),
        _ => Err(err(key, "expected a number")),
    }
}

fn parse_severity(v: &toml::Value, key: &str) -> Result<Severity, ConfigError> {
    let s = as_str(v, key)?;
    Severity::from_name(s).ok_or_else(|| unknown(key, "severity", s, &["error", "warning", "info"]))
}

impl LintConfig {
    /// Parse the contents of a `[lint]` table given as TOML text (keys at top level).
    pub fn from_toml_str(s: &str) -> Result<LintConfig, ConfigError> {
        let table: toml::Table = s
            .parse()
            .map_err(|e: toml::de::Error| err("", e.to_string()))?;
        Self::from_table(&table, "")
    }

    /// Parse a `[lint]` table; `prefix` is its dotted key, for error messages.
    pub fn from_table(table: &toml::Table, prefix: &str) -> Result<LintConfig, ConfigError> {
        check_keys(
            table,
            prefix,
            &["fail-on", "rules", "thresholds", "discharge"],
        )?;
        let mut cfg = LintConfig::default();
        if let Some(v) = table.get("fail-on") {
            let key = join(prefix, "fail-on");
            let s = as_str(v, &key)?;
            cfg.fail_on = Some(
                FailOn::from_name(s).ok_or_else(|| unknown(&key, "value", s, &FailOn::NAMES))?,
            );
        }
        if let Some(v) = table.get("rules") {
            let key = join(prefix, "rules");
            let ids: Vec<&str> = super::registry().iter().map(|r| r.id).collect();
            for (id, setting) in as_table(v, &key)? {
                let rkey = join(&key, id);
                if !ids.contains(&id.as_str()) {
                    return Err(unknown(&rkey, "rule id", id, &ids));
                }
                let parsed = match setting {
                    toml::Value::String(s) => match s.as_str() {
                        "off" => RuleSetting {
                            enabled: false,
                            severity: None,
                        },
                        "on" => RuleSetting::default(),
                        other => RuleSetting {
                            enabled: true,
                            severity: Some(Severity::from_name(other).ok_or_else(|| {
                                unknown(
                                    &rkey,
                                    "setting",
                                    other,
                                    &["off", "on", "error", "warning", "info"],
                                )
                            })?),
                        },
                    },
                    toml::Value::Boolean(b) => RuleSetting {
                        enabled: *b,
                        severity: None,
                    },
                    toml::Value::Table(t) => {
                        check_keys(t, &rkey, &["enabled", "severity"])?;
                        let enabled = match t.get("enabled") {
                            Some(v) => v.as_bool().ok_or_else(|| {
                                err(&join(&rkey, "enabled"), "expected true or false")
                            })?,
                            None => true,
                        };
                        let severity = match t.get("severity") {
                            Some(v) => Some(parse_severity(v, &join(&rkey, "severity"))?),
                            None => None,
                        };
                        RuleSetting { enabled, severity }
                    }
                    _ => return Err(err(&rkey, "expected a string, a boolean or a table")),
                };
                cfg.rules.insert(id.clone(), parsed);
            }
        }
        if let Some(v) = table.get("thresholds") {
            let key = join(prefix, "thresholds");
            let t = as_table(v, &key)?;
            check_keys(
                t,
                &key,
                &["weight-gain-kg", "weight-gain-days", "potassium-high"],
            )?;
            if let Some(v) = t.get("weight-gain-kg") {
                let k = join(&key, "weight-gain-kg");
                let x = as_number(v, &k)?;
                if !(x > 0.0 && x < 50.0) {
                    return Err(err(&k, "expected a number of kilograms between 0 and 50"));
                }
                cfg.thresholds.weight_gain_kg = x;
            }
            if let Some(v) = t.get("weight-gain-days") {
                let k = join(&key, "weight-gain-days");
                let x = v
                    .as_integer()
                    .filter(|d| (1..=60).contains(d))
                    .ok_or_else(|| err(&k, "expected a whole number of days from 1 to 60"))?;
                cfg.thresholds.weight_gain_days = x as u32;
            }
            if let Some(v) = t.get("potassium-high") {
                let k = join(&key, "potassium-high");
                let x = as_number(v, &k)?;
                if !(3.0..=10.0).contains(&x) {
                    return Err(err(&k, "expected mmol/L between 3 and 10"));
                }
                cfg.thresholds.potassium_high = x;
            }
        }
        if let Some(v) = table.get("discharge") {
            let key = join(prefix, "discharge");
            let t = as_table(v, &key)?;
            check_keys(t, &key, &["elements", "words"])?;
            let names: Vec<&str> = DischargeElement::ALL.iter().map(|e| e.name()).collect();
            let element = |s: &str, k: &str| {
                DischargeElement::from_name(s)
                    .ok_or_else(|| unknown(k, "discharge element", s, &names))
            };
            if let Some(v) = t.get("elements") {
                let k = join(&key, "elements");
                let arr = v.as_array().ok_or_else(|| err(&k, "expected a list"))?;
                let mut els = Vec::new();
                for item in arr {
                    let e = element(as_str(item, &k)?, &k)?;
                    if !els.contains(&e) {
                        els.push(e);
                    }
                }
                cfg.discharge.elements = els;
            }
            if let Some(v) = t.get("words") {
                let k = join(&key, "words");
                for (name, words) in as_table(v, &k)? {
                    let wk = join(&k, name);
                    let e = element(name, &wk)?;
                    let arr = words
                        .as_array()
                        .ok_or_else(|| err(&wk, "expected a list"))?;
                    let mut list = Vec::new();
                    for w in arr {
                        let w = as_str(w, &wk)?.trim().to_lowercase();
                        if w.is_empty() {
                            return Err(err(&wk, "empty wording"));
                        }
                        list.push(w);
                    }
                    cfg.discharge.extra_words.insert(e, list);
                }
            }
        }
        Ok(cfg)
    }

    /// The setting of one rule (defaults when not configured).
    pub fn rule(&self, id: &str) -> RuleSetting {
        self.rules.get(id).copied().unwrap_or_default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_every_section() {
        let cfg = LintConfig::from_toml_str(
            r#"
fail-on = "error"
[rules]
nyha-missing = "off"
unit-missing = "error"
lvef-missing = false
[rules.weight-missing]
severity = "info"
[thresholds]
weight-gain-kg = 1.5
weight-gain-days = 2
potassium-high = 6
[discharge]
elements = ["activity", "follow-up"]
[discharge.words]
activity = ["Cardiac Rehabilitation"]
"#,
        )
        .unwrap();
        assert_eq!(cfg.fail_on, Some(FailOn::Error));
        assert!(!cfg.rule("nyha-missing").enabled);
        assert!(!cfg.rule("lvef-missing").enabled);
        assert_eq!(cfg.rule("unit-missing").severity, Some(Severity::Error));
        assert_eq!(cfg.rule("weight-missing").severity, Some(Severity::Info));
        assert!(cfg.rule("weight-missing").enabled);
        assert_eq!(cfg.rule("unit-mixed"), RuleSetting::default());
        assert_eq!(cfg.thresholds.weight_gain_kg, 1.5);
        assert_eq!(cfg.thresholds.weight_gain_days, 2);
        assert_eq!(cfg.thresholds.potassium_high, 6.0);
        assert_eq!(
            cfg.discharge.elements,
            vec![DischargeElement::Activity, DischargeElement::FollowUp]
        );
        assert_eq!(
            cfg.discharge.extra_words[&DischargeElement::Activity],
            vec!["cardiac rehabilitation".to_string()]
        );
    }

    #[test]
    fn unknown_names_suggest_the_nearest() {
        let e = LintConfig::from_toml_str("[rules]\nweight-mising = \"off\"\n").unwrap_err();
        assert_eq!(e.key, "rules.weight-mising");
        assert!(e.message.contains("did you mean \"weight-missing\""), "{e}");
        let e = LintConfig::from_toml_str("[thresholds]\npotasium-high = 6\n").unwrap_err();
        assert!(e.message.contains("\"potassium-high\""), "{e}");
        let e =
            LintConfig::from_toml_str("[rules.unit-missing]\nseverty = \"info\"\n").unwrap_err();
        assert!(e.message.contains("\"severity\""), "{e}");
        let e =
            LintConfig::from_toml_str("[rules.unit-missing]\nseverity = \"warn\"\n").unwrap_err();
        assert!(e.message.contains("\"warning\""), "{e}");
        let e = LintConfig::from_toml_str("[discharge]\nelements = [\"diet\"]\n").unwrap_err();
        assert!(e.message.contains("discharge element"), "{e}");
        let e = LintConfig::from_toml_str("fail_on = \"never\"\n").unwrap_err();
        assert!(e.message.contains("\"fail-on\""), "{e}");
    }

    #[test]
    fn bad_values_are_errors_not_panics() {
        for src in [
            "[thresholds]\nweight-gain-kg = \"two\"\n",
            "[thresholds]\nweight-gain-days = 0\n",
            "[thresholds]\npotassium-high = 55\n",
            "rules = 3\n",
            "[rules]\nunit-missing = 3\n",
            "this is not toml",
        ] {
            assert!(LintConfig::from_toml_str(src).is_err(), "{src}");
        }
    }

    #[test]
    fn fail_on_thresholds() {
        assert!(FailOn::Warning.fails(Severity::Error));
        assert!(FailOn::Warning.fails(Severity::Warning));
        assert!(!FailOn::Warning.fails(Severity::Info));
        assert!(!FailOn::Error.fails(Severity::Warning));
        assert!(FailOn::Info.fails(Severity::Info));
        assert!(!FailOn::Never.fails(Severity::Error));
    }

    #[test]
    fn edit_distance_examples() {
        // Classic textbook example: kitten -> sitting is 3 edits.
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(
            nearest("lvef-mising", &["lvef-missing", "unit-mixed"]),
            Some("lvef-missing")
        );
        assert_eq!(nearest("zzzzzz", &["lvef-missing"]), None);
    }
}
