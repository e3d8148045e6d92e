//! Section headers in their usual spellings, with or without colons.
//!
//! A header is recognised at the start of a line (after indentation or a bullet): either a
//! known title followed by `:` or ` - ` (content may follow on the same line), or a known
//! title alone on its line. The section runs to the next header.

use crate::model::{Section, SectionKind};
use crate::span::LineIndex;

/// Known titles, lower case, spaces collapsed.
const TITLES: &[(&str, SectionKind)] = {
    use SectionKind::*;
    &[
        ("diagnosis", Diagnosis),
        ("diagnoses", Diagnosis),
        ("dx", Diagnosis),
        ("primary diagnosis", Diagnosis),
        ("principal diagnosis", Diagnosis),
        ("discharge diagnosis", Diagnosis),
        ("discharge diagnoses", Diagnosis),
        ("working diagnosis", Diagnosis),
        ("admission diagnosis", Diagnosis),
        ("problem list", Diagnosis),
        ("problems", Diagnosis),
        ("active problems", Diagnosis),
        ("pc", PresentingComplaint),
        ("presenting complaint", PresentingComplaint),
        ("chief complaint", PresentingComplaint),
        ("cc", PresentingComplaint),
        ("reason for admission", PresentingComplaint),
        ("reason for referral", PresentingComplaint),
        ("reason for review", PresentingComplaint),
        ("hpc", History),
        ("hpi", History),
        ("hopc", History),
        ("history", History),
        ("symptoms", Subjective),
        ("current symptoms", Subjective),
        ("symptom review", Subjective),
        ("today", Subjective),
        ("overnight", Subjective),
        ("events", Subjective),
        ("24h events", Subjective),
        ("overnight events", Subjective),
        ("history of presenting complaint", History),
        ("history of present illness", History),
        ("history of presenting illness", History),
        ("interval history", History),
        ("clinical history", History),
        ("subjective", Subjective),
        ("s", Subjective),
        ("pmh", PastHistory),
        ("pmhx", PastHistory),
        ("past medical history", PastHistory),
        ("past history", PastHistory),
        ("medical history", PastHistory),
        ("background", PastHistory),
        ("previous medical history", PastHistory),
        ("past medical and surgical history", PastHistory),
        ("psh", PastHistory),
        ("fh", FamilyHistory),
        ("fhx", FamilyHistory),
        ("family history", FamilyHistory),
        ("sh", SocialHistory),
        ("shx", SocialHistory),
        ("social history", SocialHistory),
        ("social", SocialHistory),
        ("medications", Medications),
        ("medication", Medications),
        ("meds", Medications),
        ("current medications", Medications),
        ("current meds", Medications),
        ("regular medications", Medications),
        ("medications on admission", Medications),
        ("admission medications", Medications),
        ("drug history", Medications),
        ("dh", Medications),
        ("allergies", Allergies),
        ("allergy", Allergies),
        ("examination", Examination),
        ("exam", Examination),
        ("o/e", Examination),
        ("oe", Examination),
        ("on examination", Examination),
        ("physical examination", Examination),
        ("physical exam", Examination),
        ("pe", Examination),
        ("clinical examination", Examination),
        ("examination on discharge", Examination),
        ("discharge examination", Examination),
        ("exam at discharge", Examination),
        ("objective", Objective),
        ("o", Objective),
        ("obs", Observations),
        ("observations", Observations),
        ("vitals", Observations),
        ("vital signs", Observations),
        ("nursing observations", Observations),
        ("bloods", Labs),
        ("blood results", Labs),
        ("bloods today", Labs),
        ("labs", Labs),
        ("laboratory", Labs),
        ("laboratory results", Labs),
        ("lab results", Labs),
        ("results", Labs),
        ("investigations", Labs),
        ("key investigations", Labs),
        ("imaging", Imaging),
        ("echo", Imaging),
        ("echocardiogram", Imaging),
        ("echocardiography", Imaging),
        ("tte", Imaging),
        ("cxr", Imaging),
        ("chest x-ray", Imaging),
        ("chest xray", Imaging),
        ("ecg", Imaging),
        ("assessment", Assessment),
        ("impression", Assessment),
        ("imp", Assessment),
        ("a", Assessment),
        ("a/p", Assessment),
        ("assessment and plan", Assessment),
        ("assessment & plan", Assessment),
        ("summary", Assessment),
        ("clinical summary", Assessment),
        ("hospital course", Assessment),
        ("course", Assessment),
        ("progress", Assessment),
        ("plan", Plan),
        ("p", Plan),
        ("management", Plan),
        ("management plan", Plan),
        ("to do", Plan),
        ("todo", Plan),
        ("jobs", Plan),
        ("actions", Plan),
        ("recommendations", Plan),
        ("discharge medications", DischargeMedications),
        ("discharge meds", DischargeMedications),
        ("medications on discharge", DischargeMedications),
        ("medication on discharge", DischargeMedications),
        ("tto", DischargeMedications),
        ("tta", DischargeMedications),
        ("discharge instructions", DischargeInstructions),
        ("discharge advice", DischargeInstructions),
        ("advice", DischargeInstructions),
        ("advice given", DischargeInstructions),
        ("patient advice", DischargeInstructions),
        ("patient instructions", DischargeInstructions),
        ("instructions", DischargeInstructions),
        ("safety net", DischargeInstructions),
        ("safety netting", DischargeInstructions),
        ("safety-netting", DischargeInstructions),
        ("return precautions", DischargeInstructions),
        ("information for the patient", DischargeInstructions),
        ("follow up", FollowUp),
        ("follow-up", FollowUp),
        ("followup", FollowUp),
        ("f/u", FollowUp),
        ("follow up arrangements", FollowUp),
    ]
};

fn lookup(title: &str) -> Option<SectionKind> {
    let norm: String = title
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .to_ascii_lowercase();
    let norm = norm.trim_end_matches(['.', ':']).trim();
    TITLES.iter().find(|(t, _)| *t == norm).map(|(_, k)| *k)
}

/// Find the sections of a text.
pub fn find(text: &str, index: &LineIndex) -> Vec<Section> {
    let mut heads: Vec<(SectionKind, usize, usize)> = Vec::new();
    for line_no in 0..index.line_count() {
        let range = index.line_range(line_no);
        let line = &text[range.clone()];
        let lead = line.len()
            - line
                .trim_start_matches([' ', '\t', '-', '*', '•', '#'])
                .len();
        let body = &line[lead..];
        if body.is_empty() {
            continue;
        }
        let start = range.start + lead;
        // Title followed by a colon (or " - ").
        let delim = body
            .char_indices()
            .take_while(|(i, _)| *i <= 48)
            .find(|(_, c)| *c == ':')
            .map(|(i, _)| (i, i + 1))
            .or_else(|| body.find(" - ").map(|i| (i, i + 3)));
        if let Some((at, after)) = delim {
            let title = &body[..at];
            if let Some(kind) = lookup(title) {
                // Single letters (S:, O:, A:, P:) only with a colon, and only when they are
                // upper case, so that "a: ..." or "p - ..." in prose do not open sections.
                let short = title.trim().len() <= 2;
                if !short
                    || (body.as_bytes()[at] == b':'
                        && title
                            .trim()
                            .chars()
                            .all(|c| c.is_ascii_uppercase() || c == '/'))
                {
                    heads.push((kind, start, start + after));
                    continue;
                }
            }
        }
        // Any other short title with a colon ends the section before it: a "Symptoms:"
        // after "Background:" is no longer background.
        if let Some((at, _)) = delim {
            let title = body[..at].trim();
            let looks_like_title = body.as_bytes()[at] == b':'
                && (3..=32).contains(&title.len())
                && title.starts_with(|c: char| c.is_ascii_uppercase())
                && title.split_whitespace().count() <= 4
                && title.chars().all(|c| {
                    c.is_ascii_alphabetic() || matches!(c, ' ' | '&' | '\'' | '-' | '/' | '(' | ')')
                });
            if looks_like_title {
                // A boundary only: it ends the section before and is not reported.
                heads.push((SectionKind::Other, start, start));
                continue;
            }
        }
        // A title alone on its line.
        let alone = body.trim_end_matches([':', ' ', '\t']);
        if alone.len() <= 48 && alone.len() > 2 {
            if let Some(kind) = lookup(alone) {
                heads.push((kind, start, range.end));
            }
        }
    }
    let mut out = Vec::with_capacity(heads.len());
    for (i, (kind, start, header_end)) in heads.iter().enumerate() {
        if header_end == start {
            continue;
        }
        let mut end = heads.get(i + 1).map(|h| h.1).unwrap_or(text.len());
        // Only family history: past-history lists often run on over unmarked lines
        // ("PMH: IHD" then "CKD 3" then "AF"), relatives' rarely do.
        if *kind == SectionKind::FamilyHistory {
            end = end.min(inline_section_end(text, index, *header_end, |_| true));
        }
        // A past-history heading with its content on its line runs on over the unmarked
        // lines of its list, but not over a line about this episode ("Echo this admission:
        // LVEF 52%").
        if *kind == SectionKind::PastHistory {
            end = end.min(inline_section_end(
                text,
                index,
                *header_end,
                speaks_of_this_episode,
            ));
        }
        out.push(Section {
            kind: *kind,
            title: text[*start..*header_end].trim_end().to_string(),
            header: index.span(*start, *header_end),
            span: index.span(*start, end),
        });
    }
    out
}

/// `FH: father - HFrEF` then `BP 120/80` on the next line: a family-history heading with
/// its content on the same line covers that line and the indented or bulleted lines under it,
/// not the examination that follows without a heading of its own (common practice, no
/// source). A heading alone on its line keeps its section to the next heading.
///
/// `ends` says whether an unmarked line after the heading's own line ends the section.
fn inline_section_end(
    text: &str,
    index: &LineIndex,
    header_end: usize,
    ends: impl Fn(&str) -> bool,
) -> usize {
    let line_no = index.line_of(header_end.saturating_sub(1));
    let first = index.line_range(line_no);
    if text[header_end.min(first.end)..first.end].trim().is_empty() {
        return text.len();
    }
    let mut end = first.end;
    for n in line_no + 1..index.line_count() {
        let range = index.line_range(n);
        let line = &text[range.clone()];
        let marked = line.starts_with([' ', '\t', '-', '•', '*']) && !line.trim().is_empty();
        if !marked && (line.trim().is_empty() || ends(line)) {
            break;
        }
        end = range.end;
    }
    end
}

/// Words that place a line in the present episode, not the past history: `this admission`,
/// `on admission`, `today`, `currently` (common practice, no source).
fn speaks_of_this_episode(line: &str) -> bool {
    const NOW: [&str; 9] = [
        "this admission",
        "on admission",
        "this episode",
        "on arrival",
        "today",
        "currently",
        "this morning",
        "on examination",
        "presenting",
    ];
    let lower = line.to_ascii_lowercase();
    NOW.iter().any(|w| {
        lower.match_indices(w).any(|(at, _)| {
            let before = lower[..at].chars().next_back();
            let after = lower[at + w.len()..].chars().next();
            !before.is_some_and(|c| c.is_alphanumeric())
                && !after.is_some_and(|c| c.is_alphanumeric())
        })
    })
}

/// Index of the section holding byte `offset`, if any.
pub fn section_at(sections: &[Section], offset: usize) -> Option<usize> {
    let i = sections.partition_point(|s| s.span.start <= offset);
    (i > 0 && offset < sections[i - 1].span.end).then(|| i - 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(text: &str) -> Vec<(SectionKind, String)> {
        let idx = LineIndex::new(text);
        find(text, &idx)
            .into_iter()
            .map(|s| (s.kind, s.title))
            .collect()
    }

    #[test]
    fn headers_with_and_without_colons() {
        let text = "PAST MEDICAL HISTORY\nHTN\nO/E: JVP +3\nFamily history: mother HF\n  Plan - diurese\nS: better\n";
        assert_eq!(
            kinds(text),
            vec![
                (SectionKind::PastHistory, "PAST MEDICAL HISTORY".into()),
                (SectionKind::Examination, "O/E:".into()),
                (SectionKind::FamilyHistory, "Family history:".into()),
                (SectionKind::Plan, "Plan -".into()),
                (SectionKind::Subjective, "S:".into()),
            ]
        );
    }

    #[test]
    fn prose_with_colons_is_not_a_header() {
        assert!(kinds("Weight: 82 kg\nNote: seen with wife\n").is_empty());
        assert!(kinds("a: one\n").is_empty());
    }

    fn pmh_end(text: &str) -> &str {
        let idx = LineIndex::new(text);
        let s = find(text, &idx)
            .into_iter()
            .find(|s| s.kind == SectionKind::PastHistory)
            .expect("a past-history section");
        &text[s.span.start..s.span.end]
    }

    #[test]
    fn inline_past_history_stops_at_this_episode() {
        // Unmarked list lines run on (common practice, no source)...
        assert_eq!(
            pmh_end("PMH: IHD\nCKD 3a\nAF on apixaban\n\nBP 120/80\n"),
            "PMH: IHD\nCKD 3a\nAF on apixaban"
        );
        // ...a line about the present admission does not.
        assert_eq!(
            pmh_end("Background: DCM 2022, LVEF 25%\nEcho this admission (12/07): LVEF 52%\n"),
            "Background: DCM 2022, LVEF 25%"
        );
        assert_eq!(pmh_end("PMH: HTN\nToday: SOB, weight 84 kg\n"), "PMH: HTN");
        // A heading alone on its line keeps its section to the next heading.
        assert_eq!(
            pmh_end("PAST MEDICAL HISTORY\nHTN\nSeen today in clinic\n"),
            "PAST MEDICAL HISTORY\nHTN\nSeen today in clinic\n"
        );
    }
}
