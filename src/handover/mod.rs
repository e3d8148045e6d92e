//! `tidemark handover`: one pre-filled handover sheet per patient from a day's notes.
//!
//! Notes are grouped by patient and ordered in time ([`patients`]), each group becomes a
//! typed [`sheet::PatientSheet`] built from the notes' analyses alone ([`sheet`]), and the
//! sheet is rendered as fixed-width text, Markdown, JSON or one printable HTML page with
//! inline SVG charts ([`text`], [`markdown`], [`json`], [`html`]). Every format carries
//! [`caution`]. Nothing here reads the grammar or re-parses a note: only identifier lines
//! and plan-section lines are sliced from the text, by span.

pub mod diuretics;
pub mod html;
pub mod json;
pub mod markdown;
pub mod patients;
pub mod sheet;
pub mod svg;
pub mod text;

use crate::Analysis;
use patients::{Matcher, NoteTime};
use sheet::{NoteRef, Sheet, HANDOVER_SCHEMA};

/// What the handover sheet adds to [`crate::render::CAUTION`].
pub const SHEET_CAUTION: &str =
    "Pre-filled from notes; verify against the record before handing over.";

/// The caution every sheet carries, in every format.
pub fn caution() -> String {
    format!("{} {}", crate::render::CAUTION, SHEET_CAUTION)
}

/// One analysed input note.
#[derive(Debug, Clone)]
pub struct Input {
    pub source: String,
    pub text: String,
    pub analysis: Analysis,
}

/// Group the notes by patient, order them, and build every patient's sheet.
pub fn build_sheet(inputs: &[Input], matcher: &Matcher) -> Sheet {
    let ids: Vec<_> = inputs.iter().map(|n| matcher.identify(&n.text)).collect();
    let times: Vec<NoteTime> = inputs
        .iter()
        .map(|n| patients::note_time(&n.text, &n.analysis.extraction))
        .collect();
    let caution = caution();
    let patients = patients::group(&ids, &times)
        .into_iter()
        .map(|g| {
            let notes: Vec<NoteRef> = g
                .notes
                .iter()
                .map(|&i| NoteRef {
                    source: &inputs[i].source,
                    text: &inputs[i].text,
                    analysis: &inputs[i].analysis,
                    time: &times[i],
                    id: ids[i].as_ref(),
                })
                .collect();
            sheet::build(&notes, &caution)
        })
        .collect();
    Sheet {
        schema: HANDOVER_SCHEMA,
        caution,
        patients,
    }
}

/// Wrap `text` to `width` columns (counted in characters), continuation lines indented by
/// `indent` spaces; words longer than a line are cut.
pub fn wrap(text: &str, width: usize, indent: usize) -> Vec<String> {
    let width = width.max(indent + 10);
    let mut lines = Vec::new();
    let mut line = String::new();
    let mut len = 0;
    for word in text.split_whitespace() {
        let mut word: Vec<char> = word.chars().collect();
        loop {
            let room = width - if lines.is_empty() { 0 } else { indent };
            let sep = usize::from(len > 0);
            if len + sep + word.len() <= room {
                if sep == 1 {
                    line.push(' ');
                }
                line.extend(word.iter());
                len += sep + word.len();
                break;
            }
            if len > 0 {
                lines.push(std::mem::take(&mut line));
                len = 0;
                continue;
            }
            // A word longer than the line: cut it.
            let rest = word.split_off(room);
            line.extend(word.iter());
            lines.push(std::mem::take(&mut line));
            word = rest;
        }
    }
    if len > 0 || lines.is_empty() {
        lines.push(line);
    }
    lines
        .into_iter()
        .enumerate()
        .map(|(i, l)| {
            if i == 0 {
                l
            } else {
                format!("{}{l}", " ".repeat(indent))
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_keeps_lines_within_width() {
        let text = "one two three four five six seven eight nine ten eleven twelve";
        let lines = wrap(text, 20, 4);
        assert!(lines.iter().all(|l| l.chars().count() <= 20), "{lines:?}");
        assert!(lines[1].starts_with("    "));
        assert_eq!(lines.join(" ").split_whitespace().count(), 12);
        let long = wrap(&"x".repeat(50), 20, 2);
        assert!(long.iter().all(|l| l.chars().count() <= 20), "{long:?}");
        assert_eq!(wrap("", 20, 2), vec![String::new()]);
    }

    #[test]
    fn the_caution_names_both_parts() {
        let c = caution();
        assert!(c.starts_with(crate::render::CAUTION));
        assert!(c.ends_with("verify against the record before handing over."));
    }
}
