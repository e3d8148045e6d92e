//! Patient facts written in the note: age and sex (`78M`, `82-year-old woman`, `F, 67`),
//! as the extraction stage states them. Only statements about the patient count; the most
//! recent one wins, and the spans of every agreeing statement are kept.

use serde::Serialize;

use super::timeline::Timeline;
use crate::model::{Assertion, Experiencer, Extraction, Statement, StatementKind};
use crate::span::Span;

/// Age and sex as written.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Patient {
    /// Age in whole years.
    pub age: Option<u32>,
    /// `female` or `male`.
    pub sex: Option<String>,
    /// Spans of every statement that gave the age or the sex.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub spans: Vec<Span>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub age_span: Option<Span>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub age_text: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sex_span: Option<Span>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sex_text: Option<String>,
}

/// The oldest age accepted as a plausible written age.
const MAX_AGE: f64 = 130.0;

fn about_patient(s: &Statement) -> bool {
    s.experiencer == Experiencer::Patient && s.assertion == Assertion::Present
}

fn parse_age(v: &str) -> Option<u32> {
    if v.trim_start().starts_with('-') {
        return None;
    }
    let n = super::leading_number(v)?;
    (n.is_finite() && (0.0..=MAX_AGE).contains(&n)).then_some(n.floor() as u32)
}

fn parse_sex(v: &str) -> Option<&'static str> {
    match v.trim().to_ascii_lowercase().as_str() {
        "female" | "f" | "woman" => Some("female"),
        "male" | "m" | "man" => Some("male"),
        _ => None,
    }
}

/// Build the patient facts.
pub fn build(ex: &Extraction, tl: &Timeline) -> Patient {
    let mut p = Patient::default();
    let order = |s: &Statement| {
        (
            tl.when(s.episode, s.section, s.span.start, None),
            s.span.start,
        )
    };
    let ages = ex
        .statements
        .iter()
        .filter(|s| s.kind == StatementKind::Age && about_patient(s))
        .filter_map(|s| parse_age(&s.value).map(|a| (s, a)));
    if let Some((s, a)) = ages.clone().max_by_key(|(s, _)| order(s)) {
        p.age = Some(a);
        p.age_span = Some(s.span);
        p.age_text = Some(s.text.clone());
        p.spans
            .extend(ages.filter(|(_, x)| *x == a).map(|(s, _)| s.span));
    }
    let sexes = ex
        .statements
        .iter()
        .filter(|s| s.kind == StatementKind::Sex && about_patient(s))
        .filter_map(|s| parse_sex(&s.value).map(|x| (s, x)));
    if let Some((s, x)) = sexes.clone().max_by_key(|(s, _)| order(s)) {
        p.sex = Some(x.to_string());
        p.sex_span = Some(s.span);
        p.sex_text = Some(s.text.clone());
        p.spans
            .extend(sexes.filter(|(_, y)| *y == x).map(|(s, _)| s.span));
    }
    p.spans.sort();
    p.spans.dedup();
    p
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::StatementKind as K;
    use crate::picture::testkit::Note;

    #[test]
    fn age_and_sex_of_the_patient_only() {
        let mut n = Note::new("82-year-old woman. Mother died aged 60. F, 82");
        n.state("82-year-old", K::Age, "82")
            .state("woman", K::Sex, "female");
        n.statement("aged 60", K::Age, "60").experiencer = Experiencer::Other;
        n.state("F", K::Sex, "female").state("82", K::Age, "82");
        let ex = n.build();
        let p = build(&ex, &Timeline::new(&ex));
        assert_eq!(p.age, Some(82));
        assert_eq!(p.sex.as_deref(), Some("female"));
        // Both agreeing age statements and both sex statements keep their spans.
        assert_eq!(p.spans.len(), 4);
        assert_eq!(p.age_text.as_deref(), Some("82"));
    }

    #[test]
    fn implausible_or_unreadable_values_are_ignored() {
        let mut n = Note::new("age 240, sex X");
        n.state("age 240", K::Age, "240")
            .state("sex X", K::Sex, "x");
        let ex = n.build();
        let p = build(&ex, &Timeline::new(&ex));
        assert_eq!(p, Patient::default());
        assert_eq!(parse_age("67"), Some(67));
        assert_eq!(parse_age("67y"), Some(67));
        assert_eq!(parse_age("67 years"), Some(67));
        assert_eq!(parse_age("-3"), None);
        assert_eq!(parse_sex("M"), Some("male"));
    }
}
