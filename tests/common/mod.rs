//! A small builder of hand-made analyses for the handover tests: invented note text plus
//! the extraction, picture and diagnostics the stages before the handover would give.
//! Medications come from the project's own medication extractor; everything owned by
//! other stages (measurements, statements, profile, lint) is written by hand.

#![allow(dead_code)]

use tidemark::handover::Input;
use tidemark::lint::{Diagnostic, Severity};
use tidemark::model::*;
use tidemark::picture::{Evidence, Picture, Profile};
use tidemark::span::{LineIndex, Span};
use tidemark::Analysis;

pub struct NoteBuilder {
    pub source: String,
    pub text: String,
    pub ex: Extraction,
    pub picture: Picture,
    pub diagnostics: Vec<Diagnostic>,
}

impl NoteBuilder {
    pub fn new(source: &str, text: &str) -> NoteBuilder {
        let idx = LineIndex::new(text);
        let sections = tidemark::text::sections::find(text, &idx);
        let medications = tidemark::extract::meds::medications(text, &sections);
        NoteBuilder {
            source: source.into(),
            text: text.into(),
            ex: Extraction {
                sections,
                medications,
                ..Extraction::default()
            },
            picture: Picture {
                profile: Profile {
                    label: "unknown".into(),
                    ..Profile::default()
                },
                ..Picture::default()
            },
            diagnostics: Vec::new(),
        }
    }

    /// The span of the `nth` (0-based) occurrence of `needle`.
    pub fn span(&self, needle: &str, nth: usize) -> Span {
        let mut from = 0;
        let mut at = None;
        for _ in 0..=nth {
            let p = self.text[from..]
                .find(needle)
                .unwrap_or_else(|| panic!("{needle:?} not in note"));
            at = Some(from + p);
            from = from + p + needle.len();
        }
        let s = at.expect("found");
        LineIndex::new(&self.text).span(s, s + needle.len())
    }

    /// A measurement in canonical units at the `nth` occurrence of `needle`.
    pub fn m(
        mut self,
        needle: &str,
        nth: usize,
        concept: MeasureConcept,
        value: f64,
        time_ref: Option<TimeRef>,
        date: Option<&str>,
    ) -> Self {
        let span = self.span(needle, nth);
        self.ex.measurements.push(Measurement {
            concept,
            value,
            unit: Some(concept.canonical_unit()),
            normalized: Some(Quantity {
                value,
                unit: concept.canonical_unit(),
            }),
            unit_inferred: false,
            date: date.map(str::to_string),
            time: None,
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            time_ref,
            range: None,
            qualifier: None,
            unit_text: None,
            text: needle.into(),
            span,
            section: None,
            episode: None,
        });
        self
    }

    pub fn st(mut self, needle: &str, kind: StatementKind, value: &str) -> Self {
        let span = self.span(needle, 0);
        self.ex.statements.push(Statement {
            kind,
            value: value.into(),
            assertion: Assertion::Present,
            temporality: Temporality::Current,
            experiencer: Experiencer::Patient,
            text: needle.into(),
            span,
            section: None,
            episode: None,
        });
        self
    }

    pub fn profile(mut self, label: &str, evidence: &[(&str, &str, &'static str)]) -> Self {
        let ev = evidence
            .iter()
            .map(|(needle, concept, supports)| Evidence {
                concept: (*concept).into(),
                supports,
                span: self.span(needle, 0),
                note: String::new(),
                item: "finding",
                text: (*needle).into(),
                episode: None,
            })
            .collect();
        self.picture.profile = Profile {
            label: label.into(),
            evidence: ev,
            ..Profile::default()
        };
        self
    }

    pub fn diag(mut self, rule: &'static str, needle: &str, message: &str) -> Self {
        let span = self.span(needle, 0);
        self.diagnostics.push(Diagnostic {
            rule,
            severity: Severity::Warning,
            category: "documentation",
            message: message.into(),
            query: None,
            span: Some(span),
            fix: None,
        });
        self
    }

    pub fn build(self) -> Input {
        Input {
            source: self.source,
            text: self.text,
            analysis: Analysis {
                extraction: self.ex,
                picture: self.picture,
                kind: tidemark::lint::DocKind::Other,
                diagnostics: self.diagnostics,
            },
        }
    }
}

/// An invented two-patient ward day, hand-built, in a deliberately shuffled file order:
/// the afternoon note of bed 5 first, then bed 9, the morning note of bed 5, and a note
/// without any identifier.
pub fn ward() -> Vec<Input> {
    use MeasureConcept::*;
    let a1_text = "Ward 2 Bed 5   MRN 0000501 (invented)   10/04/2026 08:30\n\
Ward round. Mr E.E., 70. Acute on chronic HFrEF (LVEF 30%), NYHA III.\n\
O: BP 110/70, HR 88, RR 20, SpO2 94% RA, T 36.8.\n\
   JVP +4 cm, bibasal creps. Warm peripheries.\n\
   Weights: 08/04 82.0 kg, 09/04 81.1 kg, today 80.4 kg. Target 78 kg.\n\
   FB yesterday -1.2 L.\n\
   Bloods: Cr 120 (adm 105), K 4.4.\n\
P: - IV furosemide 80 mg bd, continue\n\
   - bisoprolol 2.5 mg od; ramipril 2.5 mg od\n\
   - no MRA due to K\n\
   - daily weights <script>alert('x')</script>\n";
    let a1 = NoteBuilder::new("ward/bed05-1.txt", a1_text)
        .st("70", StatementKind::Age, "70")
        .st("Mr", StatementKind::Sex, "male")
        .st("HFrEF", StatementKind::HfType, "hfref")
        .st(
            "Acute on chronic",
            StatementKind::Acuity,
            "acute_on_chronic",
        )
        .st("NYHA III", StatementKind::Nyha, "III")
        .m("LVEF 30%", 0, Lvef, 30.0, None, None)
        .m("110", 0, SystolicBp, 110.0, None, None)
        .m("70,", 0, DiastolicBp, 70.0, None, None)
        .m("HR 88", 0, HeartRate, 88.0, None, None)
        .m("RR 20", 0, RespiratoryRate, 20.0, None, None)
        .m("SpO2 94%", 0, Spo2, 94.0, None, None)
        .m("T 36.8", 0, Temperature, 36.8, None, None)
        .m("82.0 kg", 0, Weight, 82.0, None, Some("2026-04-08"))
        .m("81.1 kg", 0, Weight, 81.1, None, Some("2026-04-09"))
        .m("80.4 kg", 0, Weight, 80.4, Some(TimeRef::Today), None)
        .st("Target 78 kg", StatementKind::TargetWeight, "78")
        .m(
            "-1.2 L",
            0,
            FluidBalance,
            -1200.0,
            Some(TimeRef::Yesterday),
            None,
        )
        .m("Cr 120", 0, Creatinine, 120.0, None, None)
        .m(
            "adm 105",
            0,
            Creatinine,
            105.0,
            Some(TimeRef::Admission),
            None,
        )
        .m("K 4.4", 0, Potassium, 4.4, None, None)
        .profile(
            "warm-wet",
            &[
                ("JVP +4 cm", "raised_jvp", "wet"),
                ("creps", "crackles", "wet"),
                ("Warm peripheries", "cool_peripheries", "warm"),
            ],
        )
        .build();
    let a2_text = "Ward 2 Bed 5   MRN 0000501   10/04/2026 16:00   Nursing\n\
Obs: BP 102/64, HR 80, SpO2 95% air.\n\
Fluid balance 00:00-16:00: -800 ml.\n\
Oral intake poor. Furosemide 80 mg IV given 14:00.\n";
    let a2 = NoteBuilder::new("ward/bed05-2.txt", a2_text)
        .m("102", 0, SystolicBp, 102.0, None, None)
        .m("64", 0, DiastolicBp, 64.0, None, None)
        .m("HR 80", 0, HeartRate, 80.0, None, None)
        .m("SpO2 95%", 0, Spo2, 95.0, None, None)
        .m("-800 ml", 0, FluidBalance, -800.0, None, None)
        .diag(
            "fluid-balance-period-missing",
            "Fluid balance",
            "the balance period is written; check it covers the whole day",
        )
        .build();
    let b_text = "Bed 9   10/04/2026 09:00\n\
Mrs F.F., 80. HFpEF (LVEF 60%).\n\
Wt 70.2 kg.\n\
Plan: furosemide 40 mg od, apixaban 5 mg bd continue.\n";
    let b = NoteBuilder::new("ward/bed09-1.txt", b_text)
        .st("80", StatementKind::Age, "80")
        .st("Mrs", StatementKind::Sex, "female")
        .st("HFpEF", StatementKind::HfType, "hfpef")
        .m("LVEF 60%", 0, Lvef, 60.0, None, None)
        .m("70.2 kg", 0, Weight, 70.2, None, None)
        .build();
    let c = NoteBuilder::new(
        "ward/phone.txt",
        "Telephone call from lab: K 5.1 on repeat sample.\n",
    )
    .m("K 5.1", 0, Potassium, 5.1, None, None)
    .build();
    vec![a2, b, a1, c]
}
