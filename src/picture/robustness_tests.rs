//! Bad or odd extractions never make the picture panic, and every piece of evidence points
//! at an item of the extraction (traceability).

use proptest::prelude::*;

use crate::model::*;
use crate::span::Span;

fn span() -> impl Strategy<Value = Span> {
    prop_oneof![
        (0usize..400, 0usize..40).prop_map(|(s, l)| Span {
            start: s,
            end: s + l,
            line: 1,
            column: 1,
            end_line: 1,
            end_column: 1,
        }),
        // Reversed and extreme offsets.
        (any::<usize>(), any::<usize>()).prop_map(|(s, e)| Span {
            start: s,
            end: e,
            ..Span::default()
        }),
    ]
}

fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        -50.0f64..400.0,
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(0.0),
        Just(-0.0),
        Just(1e300),
    ]
}

fn date() -> impl Strategy<Value = Option<String>> {
    prop_oneof![
        Just(None),
        (2025i32..2027, 1u32..13, 1u32..29)
            .prop_map(|(y, m, d)| Some(format!("{y:04}-{m:02}-{d:02}"))),
        Just(Some("99999999999-01-01".to_string())),
        Just(Some("garbage".to_string())),
        Just(Some(String::new())),
    ]
}

fn assertion() -> impl Strategy<Value = Assertion> {
    prop_oneof![
        Just(Assertion::Present),
        Just(Assertion::Absent),
        Just(Assertion::Possible),
        Just(Assertion::Hypothetical)
    ]
}

fn temporality() -> impl Strategy<Value = Temporality> {
    prop_oneof![Just(Temporality::Current), Just(Temporality::Historical)]
}

fn experiencer() -> impl Strategy<Value = Experiencer> {
    prop_oneof![Just(Experiencer::Patient), Just(Experiencer::Other)]
}

fn time_ref() -> impl Strategy<Value = Option<TimeRef>> {
    prop_oneof![
        Just(None),
        Just(Some(TimeRef::Admission)),
        Just(Some(TimeRef::Yesterday)),
        Just(Some(TimeRef::Baseline)),
        Just(Some(TimeRef::Previous)),
        Just(Some(TimeRef::Discharge)),
        Just(Some(TimeRef::Today)),
    ]
}

fn index() -> impl Strategy<Value = Option<usize>> {
    prop_oneof![
        Just(None),
        (0usize..6).prop_map(Some),
        Just(Some(usize::MAX))
    ]
}

prop_compose! {
    fn measurement()(
        c in 0usize..MeasureConcept::ALL.len(),
        v in number(),
        norm in proptest::option::of(number()),
        a in assertion(), t in temporality(), e in experiencer(),
        d in date(), tr in time_ref(),
        range in proptest::option::of((number(), number())),
        q in prop_oneof![Just(None), Just(Some(Qualifier::UpperBound)), Just(Some(Qualifier::LowerBound)), Just(Some(Qualifier::Approximate))],
        unit in prop_oneof![Just(None), Just(Some("cm")), Just(Some("cm[H2O]")), Just(Some("kg"))],
        sp in span(), sec in index(), ep in index(),
    ) -> Measurement {
        let concept = MeasureConcept::ALL[c];
        Measurement {
            concept,
            value: v,
            unit,
            normalized: norm.map(|value| Quantity { value, unit: concept.canonical_unit() }),
            unit_inferred: false,
            date: d,
            time: None,
            assertion: a,
            temporality: t,
            experiencer: e,
            time_ref: tr,
            range,
            qualifier: q,
            unit_text: None,
            text: "x RA".into(),
            span: sp,
            section: sec,
            episode: ep,
        }
    }
}

prop_compose! {
    fn finding()(
        c in 0usize..FindingConcept::ALL.len(),
        a in assertion(), t in temporality(), e in experiencer(),
        sp in span(), sec in index(), ep in index(),
    ) -> Finding {
        Finding {
            concept: FindingConcept::ALL[c],
            assertion: a,
            experiencer: e,
            temporality: t,
            text: "f".into(),
            span: sp,
            detail: FindingDetail { grade: Some(2.0), ..FindingDetail::default() },
            cues: Vec::new(),
            section: sec,
            episode: ep,
        }
    }
}

const KINDS: [StatementKind; 12] = [
    StatementKind::HeartFailure,
    StatementKind::HfType,
    StatementKind::Acuity,
    StatementKind::VolumeStatus,
    StatementKind::Perfusion,
    StatementKind::Nyha,
    StatementKind::Age,
    StatementKind::Sex,
    StatementKind::TargetWeight,
    StatementKind::Hypertension,
    StatementKind::Ckd,
    StatementKind::LvFunction,
];

prop_compose! {
    fn statement()(
        k in 0usize..KINDS.len(),
        value in prop_oneof![
            Just("hfref"), Just("hfimpef"), Just("decompensated"), Just("acute"), Just("chronic"),
            Just("overloaded"), Just("euvolemic"), Just("depleted"), Just("warm"), Just("cold"),
            Just("IV"), Just("2"), Just("V"), Just("80"), Just("-3"), Just("1e400"), Just("NaN"),
            Just("female"), Just("male"), Just(""), Just("known chronic")
        ],
        a in assertion(), t in temporality(), e in experiencer(),
        sp in span(), sec in index(), ep in index(),
    ) -> Statement {
        Statement {
            kind: KINDS[k],
            value: value.into(),
            assertion: a,
            temporality: t,
            experiencer: e,
            text: value.into(),
            span: sp,
            section: sec,
            episode: ep,
        }
    }
}

prop_compose! {
    fn section()(
        kind in prop_oneof![Just(SectionKind::Examination), Just(SectionKind::History), Just(SectionKind::Objective), Just(SectionKind::Plan)],
        title in prop_oneof![Just("O/E"), Just("On admission"), Just("Discharge exam"), Just("")],
        sp in span(),
    ) -> Section {
        Section { kind, title: title.into(), header: sp, span: sp }
    }
}

prop_compose! {
    fn extraction()(
        measurements in proptest::collection::vec(measurement(), 0..24),
        findings in proptest::collection::vec(finding(), 0..16),
        statements in proptest::collection::vec(statement(), 0..10),
        sections in proptest::collection::vec(section(), 0..4),
        episodes in proptest::collection::vec((date(), span()).prop_map(|(date, span)| Episode { date, time: None, span }), 0..4),
        note_date in date(),
    ) -> Extraction {
        Extraction { sections, episodes, measurements, findings, statements, medications: Vec::new(), note_date }
    }
}

fn validator() -> &'static jsonschema::Validator {
    static V: std::sync::OnceLock<jsonschema::Validator> = std::sync::OnceLock::new();
    V.get_or_init(|| {
        let schema: serde_json::Value =
            serde_json::from_str(include_str!("../../docs/schema/picture.schema.json"))
                .expect("schema is JSON");
        jsonschema::validator_for(&schema).expect("schema compiles")
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn any_extraction_builds_a_traceable_picture(ex in extraction()) {
        let pic = super::build(&ex);
        let p = &pic.profile;
        prop_assert_eq!(p.label.as_str(), super::profile::label(p.congestion, p.perfusion));
        let starts: Vec<usize> = ex.findings.iter().map(|f| f.span.start)
            .chain(ex.measurements.iter().map(|m| m.span.start))
            .chain(ex.statements.iter().map(|s| s.span.start))
            .collect();
        for e in p.evidence.iter().chain(p.set_aside.iter()).chain(p.conflicts.iter().flat_map(|c| c.stated.iter().chain(c.documented.iter()))) {
            prop_assert!(starts.contains(&e.span.start), "evidence without an item: {:?}", e);
        }
        // Serialising and rendering never fail, and the JSON keeps to the schema.
        let json = serde_json::to_value(&pic);
        prop_assert!(json.is_ok());
        let json = json.unwrap();
        let errors: Vec<String> = validator().iter_errors(&json).map(|e| format!("{e} at {}", e.instance_path)).collect();
        prop_assert!(errors.is_empty(), "{:?}", errors);
        let mut out = Vec::new();
        prop_assert!(crate::render::summary::write_picture(&mut out, &pic).is_ok());
    }
}
