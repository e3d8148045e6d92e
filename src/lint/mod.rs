//! Documentation lint rules over the extracted model and the clinical picture.
//!
//! Each rule lives in its own module under [`rules`] and is described by a [`Rule`]: a stable
//! kebab-case id, a [`Category`], a default [`Severity`], the document kinds it applies to
//! and its documentation text (what it checks, why it matters, an invented example that fires
//! and one that does not, the source of any threshold). The same text feeds `tidemark rules`,
//! `tidemark explain ID`, `docs/rules.md` and the SARIF rule descriptors.
//!
//! Rules read only the extracted model ([`crate::model`]) and the picture
//! ([`crate::picture`]). The note text is used for document kind detection ([`kind`]), for
//! the wording of discharge instructions (not clinical content) and for fix edits.

pub mod config;
pub mod docs;
pub mod icd10cm;
pub mod kind;
pub mod rules;
#[cfg(test)]
pub(crate) mod testkit;

use serde::Serialize;

use crate::model::{Extraction, Statement, StatementKind};
use crate::picture::Picture;
use crate::span::Span;

pub use config::{LintConfig, RuleSetting};
pub use kind::DocKind;

/// Diagnostic severity, most severe first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    Error,
    Warning,
    Info,
}

impl Severity {
    pub const ALL: [Severity; 3] = [Self::Error, Self::Warning, Self::Info];

    pub fn name(self) -> &'static str {
        match self {
            Self::Error => "error",
            Self::Warning => "warning",
            Self::Info => "info",
        }
    }

    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }

    /// The SARIF 2.1.0 `level` (§3.27.10): `error`, `warning` or `note`.
    pub fn sarif_level(self) -> &'static str {
        match self {
            Self::Error => "error",
            Self::Warning => "warning",
            Self::Info => "note",
        }
    }
}

/// What kind of problem a rule reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Category {
    /// Something a heart-failure note is expected to document is absent.
    Documentation,
    /// Units missing or inconsistent.
    Units,
    /// A value outside physiological bounds.
    Plausibility,
    /// The note as written supports only an unspecified code.
    Coding,
    /// Statements that disagree with documented findings.
    Consistency,
    /// A documentation gap with a direct bearing on patient safety.
    Safety,
}

impl Category {
    pub fn name(self) -> &'static str {
        match self {
            Self::Documentation => "documentation",
            Self::Units => "units",
            Self::Plausibility => "plausibility",
            Self::Coding => "coding",
            Self::Consistency => "consistency",
            Self::Safety => "safety",
        }
    }
}

/// A safe text edit a client may apply.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fix {
    pub title: String,
    pub span: Span,
    pub replacement: String,
}

/// One finding of a lint rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diagnostic {
    pub rule: &'static str,
    pub severity: Severity,
    pub category: &'static str,
    pub message: String,
    /// A neutral question the coder can send to the clinician, when one helps.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
    pub span: Option<Span>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fix: Option<Fix>,
}

/// Everything a rule may read about one document.
#[derive(Debug, Clone, Copy)]
pub struct Ctx<'a> {
    pub text: &'a str,
    pub ex: &'a Extraction,
    pub pic: &'a Picture,
    pub kind: DocKind,
    pub cfg: &'a LintConfig,
}

/// The description and check of one rule.
#[derive(Debug, Clone, Copy)]
pub struct Rule {
    /// Stable kebab-case id.
    pub id: &'static str,
    pub category: Category,
    pub severity: Severity,
    /// One line for `tidemark rules`.
    pub summary: &'static str,
    /// The full text for `tidemark explain`, `docs/rules.md` and SARIF help (Markdown).
    pub doc: &'static str,
    /// Document kinds the rule applies to.
    pub kinds: &'static [DocKind],
    pub check: fn(&Ctx<'_>, &mut Vec<Diagnostic>),
}

impl Rule {
    /// A diagnostic of this rule at its default severity.
    pub fn diag(&self, message: String, span: Option<Span>) -> Diagnostic {
        Diagnostic {
            rule: self.id,
            severity: self.severity,
            category: self.category.name(),
            message,
            query: None,
            span,
            fix: None,
        }
    }

    pub fn applies_to(&self, kind: DocKind) -> bool {
        self.kinds.contains(&kind)
    }
}

/// Every rule, in the order `tidemark rules` lists them.
pub fn registry() -> &'static [Rule] {
    rules::ALL
}

/// The rule with this id.
pub fn find_rule(id: &str) -> Option<&'static Rule> {
    registry().iter().find(|r| r.id == id)
}

/// Run every enabled rule that applies to the document's kind.
///
/// Diagnostics come back sorted by position (those without a span last), then by rule id.
pub fn run(text: &str, ex: &Extraction, pic: &Picture, cfg: &LintConfig) -> Vec<Diagnostic> {
    run_for_kind(text, ex, pic, kind::detect(text, ex), cfg)
}

/// [`run`] for a document whose kind is already known (`kind::detect(text, ex)`), so that a
/// caller that needs the kind as well does not scan the note for it twice.
pub fn run_for_kind(
    text: &str,
    ex: &Extraction,
    pic: &Picture,
    kind: kind::DocKind,
    cfg: &LintConfig,
) -> Vec<Diagnostic> {
    let cx = Ctx {
        text,
        ex,
        pic,
        kind,
        cfg,
    };
    let mut out = Vec::new();
    for rule in registry() {
        let setting = cfg.rule(rule.id);
        if !setting.enabled || !rule.applies_to(kind) {
            continue;
        }
        let start = out.len();
        (rule.check)(&cx, &mut out);
        if let Some(sev) = setting.severity {
            for d in &mut out[start..] {
                d.severity = sev;
            }
        }
    }
    out.sort_by(|a, b| {
        let ka = a.span.map(|s| (0, s.start, s.end)).unwrap_or((1, 0, 0));
        let kb = b.span.map(|s| (0, s.start, s.end)).unwrap_or((1, 0, 0));
        ka.cmp(&kb).then(a.rule.cmp(b.rule))
    });
    out
}

// Shared helpers for the rules.

/// A statement about the patient that is affirmed (present), current or historical.
pub(crate) fn affirmed(s: &Statement) -> bool {
    use crate::model::{Assertion, Experiencer};
    s.assertion == Assertion::Present && s.experiencer == Experiencer::Patient
}

/// The statements of one kind that are affirmed for the patient, in document order.
pub(crate) fn statements(ex: &Extraction, kind: StatementKind) -> Vec<&Statement> {
    let mut v: Vec<&Statement> = ex
        .statements
        .iter()
        .filter(|s| s.kind == kind && affirmed(s))
        .collect();
    v.sort_by_key(|s| s.span.start);
    v
}

/// The first mention of heart failure (a named HF or a stated type) that is affirmed or
/// uncertain ("suspected heart failure"), if any. Uncertain diagnoses count: in inpatient
/// coding they are coded as if established (ICD-10-CM Official Guidelines, Section II.H),
/// and elsewhere the documentation still needs the type and acuity before it can be.
pub(crate) fn hf_mention(ex: &Extraction) -> Option<&Statement> {
    use crate::model::{Assertion, Experiencer};
    ex.statements
        .iter()
        .filter(|s| {
            matches!(s.kind, StatementKind::HeartFailure | StatementKind::HfType)
                && matches!(s.assertion, Assertion::Present | Assertion::Possible)
                && s.experiencer == Experiencer::Patient
        })
        .min_by_key(|s| s.span.start)
}

/// A short quotation of note text for messages, on one line and at most 60 characters.
pub(crate) fn quote(s: &str) -> String {
    let one_line: String = s.split_whitespace().collect::<Vec<_>>().join(" ");
    if one_line.chars().count() <= 60 {
        one_line
    } else {
        let cut: String = one_line.chars().take(57).collect();
        format!("{cut}...")
    }
}

/// A neutral query, led by the note's clinical indicators when there are any.
pub(crate) fn query_with_indicators(query: &str, indicators: &[String]) -> String {
    if indicators.is_empty() {
        query.to_string()
    } else {
        format!(
            "Clinical indicators in this note: {}. {query}",
            indicators.join("; ")
        )
    }
}

/// `line N` for a span, for messages that point at supporting items.
pub(crate) fn at_line(span: &Span) -> String {
    format!("line {}", span.line)
}

/// How a picture evidence concept is named in messages (`raised JVP`, `peripheral oedema`).
pub(crate) fn concept_label(concept: &str) -> String {
    use crate::model::{FindingConcept, MeasureConcept};
    if let Some(f) = FindingConcept::from_name(concept) {
        return f.label().to_string();
    }
    if let Some(m) = MeasureConcept::ALL
        .into_iter()
        .find(|m| m.name() == concept)
    {
        return m.label().to_string();
    }
    concept.replace('_', " ")
}

/// A number written compactly (`71.2`, `5`, `0.35`).
pub(crate) fn num(v: f64) -> String {
    if v.fract() == 0.0 && v.abs() < 1e9 {
        format!("{}", v as i64)
    } else {
        let s = format!("{v:.2}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

/// How a UCUM code is written for people.
pub(crate) fn unit_display(ucum: &str) -> &str {
    match ucum {
        "Cel" => "°C",
        "[degF]" => "°F",
        "[lb_av]" => "lb",
        "[in_i]" => "in",
        "umol/L" => "µmol/L",
        "mm[Hg]" => "mmHg",
        "cm[H2O]" => "cmH2O",
        "/min" => "/min",
        "meq/L" => "mEq/L",
        other => other,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_ids_are_unique_kebab_case_and_documented() {
        let mut seen = std::collections::HashSet::new();
        for r in registry() {
            assert!(seen.insert(r.id), "duplicate rule id {}", r.id);
            assert!(
                r.id.chars().all(|c| c.is_ascii_lowercase() || c == '-'),
                "{} is not kebab-case",
                r.id
            );
            for heading in ["## What", "## Why", "## Fires", "## Does not fire"] {
                assert!(r.doc.contains(heading), "{} doc lacks {heading}", r.id);
            }
            assert!(!r.kinds.is_empty(), "{} applies to no kind", r.id);
            assert!(
                !r.summary.contains('\n'),
                "{} summary is not one line",
                r.id
            );
        }
    }

    #[test]
    fn required_rule_ids_exist() {
        for id in [
            "weight-missing",
            "volume-status-missing",
            "unit-missing",
            "unit-mixed",
            "value-implausible",
            "hf-type-unspecified",
            "hf-acuity-unspecified",
            "lvef-missing",
            "volume-status-contradiction",
        ] {
            assert!(find_rule(id).is_some(), "missing rule {id}");
        }
    }

    #[test]
    fn numbers_print_compactly() {
        assert_eq!(num(71.2), "71.2");
        assert_eq!(num(5.0), "5");
        assert_eq!(num(0.35), "0.35");
        assert_eq!(num(37.777), "37.78");
    }

    #[test]
    fn severity_override_and_disable_apply() {
        use testkit::Note;
        // An invented ward-round line: heart failure named, nothing else documented.
        let note = Note::new("Ward round\nImp: heart failure\n").stmt(
            StatementKind::HeartFailure,
            "",
            "heart failure",
        );
        let base = run(
            note.text(),
            &note.ex,
            &Picture::default(),
            &LintConfig::default(),
        );
        assert!(base.iter().any(|d| d.rule == "weight-missing"));
        let cfg = LintConfig::from_toml_str(
            "[rules.weight-missing]\nseverity = \"error\"\n[rules.hf-type-unspecified]\nenabled = false\n",
        )
        .unwrap();
        let tuned = run(note.text(), &note.ex, &Picture::default(), &cfg);
        let w = tuned.iter().find(|d| d.rule == "weight-missing").unwrap();
        assert_eq!(w.severity, Severity::Error);
        assert!(!tuned.iter().any(|d| d.rule == "hf-type-unspecified"));
    }
}

#[cfg(test)]
mod prop {
    use super::*;
    use crate::model::*;
    use proptest::prelude::*;

    const UNITS: [Option<&str>; 8] = [
        None,
        Some("kg"),
        Some("[lb_av]"),
        Some("Cel"),
        Some("[degF]"),
        Some("mg/dL"),
        Some("umol/L"),
        Some("%"),
    ];
    const KINDS: [StatementKind; 6] = [
        StatementKind::HeartFailure,
        StatementKind::HfType,
        StatementKind::Acuity,
        StatementKind::VolumeStatus,
        StatementKind::Nyha,
        StatementKind::LvFunction,
    ];

    fn span(start: usize, len: usize) -> crate::span::Span {
        crate::span::Span {
            start,
            end: start + len,
            line: (start % 7) as u32,
            column: 1,
            end_line: (start % 5) as u32,
            end_column: 2,
        }
    }

    proptest! {
        // Arbitrary, inconsistent hand-built models (NaN values, spans outside the text,
        // nonsense dates) never make a rule panic.
        #[test]
        fn rules_never_panic(
            text in "(\\PC|\n){0,60}",
            ms in proptest::collection::vec(
                (0usize..20, proptest::num::f64::ANY, 0usize..8, any::<bool>(), 0usize..90,
                 0usize..10, "[0-9-]{0,12}"),
                0..12),
            ss in proptest::collection::vec((0usize..6, "[a-z_]{0,10}", 0usize..90), 0..6),
            meds in proptest::collection::vec((0usize..12, any::<bool>(), 0usize..90), 0..4),
        ) {
            let mut ex = Extraction::default();
            for (c, v, u, inferred, start, len, date) in ms {
                let concept = MeasureConcept::ALL[c];
                let unit = UNITS[u];
                ex.measurements.push(Measurement {
                    concept, value: v, unit,
                    normalized: unit.map(|_| Quantity { value: v, unit: concept.canonical_unit() }),
                    unit_inferred: inferred, date: Some(date), time: None,
                    assertion: Assertion::Present, temporality: Temporality::Current,
                    experiencer: Experiencer::Patient, time_ref: None, range: None,
                    qualifier: None, unit_text: None, text: "x1".into(), span: span(start, len),
                    section: None, episode: Some(start % 3),
                });
            }
            for (k, value, start) in ss {
                ex.statements.push(Statement {
                    kind: KINDS[k], value, assertion: Assertion::Present,
                    temporality: Temporality::Current, experiencer: Experiencer::Patient,
                    text: "s".into(), span: span(start, 3), section: Some(start % 4), episode: None,
                });
            }
            let classes = [DrugClass::LoopDiuretic, DrugClass::ThiazideDiuretic, DrugClass::Mra,
                DrugClass::AceInhibitor, DrugClass::Arb, DrugClass::Arni, DrugClass::BetaBlocker,
                DrugClass::Sglt2Inhibitor, DrugClass::Digoxin, DrugClass::Anticoagulant,
                DrugClass::PotassiumSupplement, DrugClass::Other];
            for (c, changed, start) in meds {
                ex.medications.push(Medication {
                    drug: "d".into(), class: classes[c], dose: None, unit: None, route: None,
                    frequency: None, per_day: None, daily_dose: None, note: None,
                    change: changed.then_some(MedChange::Continued),
                    starts: None,
                    assertion: Assertion::Present, text: "d".into(), span: span(start, 1),
                    section: Some(start % 5),
                });
            }
            ex.sections.push(Section {
                kind: SectionKind::Plan, title: "Plan".into(), header: span(3, 4),
                span: span(50, 200),
            });
            let mut pic = Picture::default();
            pic.profile.congestion = crate::picture::Congestion::Wet;
            let _ = run(&text, &ex, &pic, &LintConfig::default());
        }
    }
}
