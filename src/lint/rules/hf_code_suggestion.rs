//! `hf-code-suggestion`: see [`RULE`] and its documentation text.

use crate::lint::icd10cm::{ckd_code, code_and_title, family_of_type, EDITION};
use crate::lint::kind::ANY;
use crate::lint::{at_line, quote, statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{Statement, StatementKind};

pub const RULE: Rule = Rule {
    id: "hf-code-suggestion",
    category: Category::Coding,
    severity: Severity::Info,
    summary: "The heart-failure codes the wording supports, as a suggestion for the coder.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
When the note states the heart failure's type (HFrEF, HFmrEF, HFpEF, systolic, diastolic,
combined) and its acuity (acute, chronic, acute on chronic, or decompensated read with known
chronic heart failure), names the ICD-10-CM code the wording supports, and the words it
relied on. With hypertension documented it adds the combination code ICD-10-CM presumes
(I11.0; with chronic kidney disease I13.0 for stages 1 to 4 or unstaged, I13.2 for stage 5
or end-stage renal disease) and the N18 stage code. When the note gives heart failure another
cause (\"due to\", \"secondary to\"), or says it is not hypertensive, hypertension and heart
failure are left to be coded separately.

## Why
A coder checking a discharge summary wants the code the documentation supports and the words
behind it. The message is a suggestion, never an assigned code: sequencing, present-on-admission
indicators and payer rules stay with the coder, and HFmrEF's code rests on reported advice
that a coder confirms.

## Fires
```text
Diagnoses: acute on chronic HFpEF. Hypertension. CKD stage 4.
```

## Does not fire
```text
Diagnoses: heart failure. Hypertension.
```

## Sources
ICD-10-CM Tabular List FY2026, I50.2- to I50.4-, I11.0, I13.0, I13.2, N18 (CDC/NCHS);
ICD-10-CM Official Guidelines for Coding and Reporting I.C.9.a (hypertension with heart
involvement and with CKD presumed linked) and I.C.14.a (stage with ESRD: N18.6 only);
domain reference 08-icd10cm.md §8.2-8.6 and the check values I01-I10 and I14 of
13-check-values.md.
";

/// The fifth character of I50.2- to I50.4- for an acuity value.
fn acuity_digit(acuity: &str) -> Option<char> {
    match acuity {
        "acute" => Some('1'),
        "chronic" => Some('2'),
        "acute_on_chronic" => Some('3'),
        _ => None,
    }
}

/// Heart failure given a cause other than hypertension, or said not to be hypertensive.
fn other_cause(text: &str, hf: &[&Statement]) -> Option<String> {
    let lower = text.to_ascii_lowercase();
    for phrase in [
        "not hypertensive",
        "non-hypertensive",
        "unrelated to hypertension",
        "not related to hypertension",
        "not due to hypertension",
        "not secondary to hypertension",
    ] {
        if lower.contains(phrase) {
            return Some(phrase.to_string());
        }
    }
    for s in hf {
        let cut = text.floor_char_boundary(s.span.end.saturating_add(50));
        let after = lower.get(s.span.end..cut).unwrap_or("");
        for link in ["due to ", "secondary to ", "caused by "] {
            if let Some(i) = after.find(link) {
                // The cause runs to the end of the clause.
                let cause = after[i + link.len()..]
                    .split(['.', ';', ',', '\n'])
                    .next()
                    .unwrap_or("")
                    .trim();
                if !cause.is_empty() && !cause.contains("hypertens") && !cause.contains("htn") {
                    return Some(format!("{link}{cause}"));
                }
            }
        }
    }
    None
}

/// Combined systolic and diastolic heart failure, which the type classification reports as
/// reduced EF: "combined systolic and diastolic HF", or a reduced-EF type "with diastolic
/// dysfunction" (ICD-10-CM I50.4- inclusion terms; check value I18).
fn combined_wording(text: &str, stated: &Statement) -> Option<&'static str> {
    let own = text
        .get(stated.span.range())
        .unwrap_or("")
        .to_ascii_lowercase();
    if own.contains("combined") || (own.contains("systolic") && own.contains("diastolic")) {
        return Some("I50.4");
    }
    let after = text
        .get(stated.span.end..text.floor_char_boundary(stated.span.end.saturating_add(40)))
        .unwrap_or("")
        .to_ascii_lowercase();
    let reduced = matches!(stated.value.as_str(), "hfref" | "systolic");
    (reduced && after.trim_start().starts_with("with diastolic dysfunction")).then_some("I50.4")
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let types = statements(cx.ex, StatementKind::HfType);
    let Some(stated) = types.last() else { return };
    let Some(family) = combined_wording(cx.text, stated).or_else(|| family_of_type(&stated.value))
    else {
        return;
    };
    // The acuity the classification settled on, only when the note states one.
    let Some(acuity) = cx.pic.classifications.acuity.as_deref() else {
        return;
    };
    let Some(source) = cx.pic.classifications.sources.acuity.as_ref() else {
        return;
    };
    if source.basis != "stated" {
        return;
    }
    let Some(digit) = acuity_digit(acuity) else {
        return;
    };
    let hf_code = format!("{family}{digit}");
    let mut relied = vec![
        format!("\"{}\" ({})", quote(&stated.text), at_line(&stated.span)),
        format!("\"{}\" ({})", quote(&source.text), at_line(&source.span)),
    ];
    relied.dedup();

    let htn = statements(cx.ex, StatementKind::Hypertension);
    let ckd = statements(cx.ex, StatementKind::Ckd);
    let hf_named: Vec<&Statement> = statements(cx.ex, StatementKind::HeartFailure)
        .into_iter()
        .chain(types.iter().copied())
        .collect();
    // ESRD outranks a stage; otherwise the highest stage written.
    let ckd_stage = ckd
        .iter()
        .map(|s| s.value.as_str())
        .max_by_key(|v| match *v {
            "esrd" => 100,
            "unstaged" => 0,
            v => {
                v.chars().next().and_then(|c| c.to_digit(10)).unwrap_or(0) * 2
                    + u32::from(v.ends_with('b'))
            }
        });
    let ckd_n18 = ckd_stage.and_then(ckd_code);
    if let Some(s) = ckd.last() {
        relied.push(format!("\"{}\" ({})", quote(&s.text), at_line(&s.span)));
    }

    let mut codes = Vec::new();
    let mut notes = Vec::new();
    match (htn.first(), other_cause(cx.text, &hf_named)) {
        (Some(h), None) => {
            relied.push(format!("\"{}\" ({})", quote(&h.text), at_line(&h.span)));
            let combination = match ckd_stage {
                Some("5") | Some("esrd") => "I13.2",
                Some(_) => "I13.0",
                None => "I11.0",
            };
            codes.push(code_and_title(combination));
            notes.push(
                "ICD-10-CM presumes the link between hypertension and the heart (and kidney) \
                 disease unless the clinician documents another cause (Official Guidelines \
                 I.C.9.a)",
            );
        }
        (Some(_), Some(cause)) => {
            notes.push("hypertension and heart failure are coded separately");
            relied.push(format!("\"{cause}\""));
        }
        (None, _) => {}
    }
    codes.push(code_and_title(&hf_code));
    if let Some(n18) = ckd_n18 {
        codes.push(code_and_title(n18));
    }
    if stated.value == "hfmref" {
        notes.push("HFmrEF codes as systolic by reported coding advice: coder review");
    }
    let mut message = format!(
        "As written, the documentation supports {} ({EDITION}). Relied on: {}.",
        codes.join(" + "),
        relied.join(", ")
    );
    for n in notes {
        message.push(' ');
        let mut n = n.to_string();
        if let Some(first) = n.get(..1) {
            n = first.to_uppercase() + &n[1..];
        }
        message.push_str(&n);
        message.push('.');
    }
    message.push_str(
        " A suggestion only: code assignment, sequencing and present-on-admission indicators \
         are the coder's.",
    );
    out.push(RULE.diag(message, Some(stated.span)));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;

    #[test]
    fn silent_without_a_stated_acuity() {
        let n = Note::new("Chronic HFrEF.\n").stmt(StatementKind::HfType, "hfref", "HFrEF");
        assert!(n.check(&RULE).is_empty());
    }
}
