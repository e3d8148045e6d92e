//! Which notes belong to which patient, and in what order they were written.
//!
//! A patient is recognised by an identifier line near the top of the note: a hospital number
//! (`MRN 0000301`, `Hospital no: ...`, `NHS number ...`), a bed label (`Ward 7 Bed 3`,
//! `Bed 12`), or a pattern the user configures (`[handover] patient_id` in `tidemark.toml`,
//! `--patient-id`). Notes sharing a number form one group; a note with only a bed joins the
//! one numbered group with that bed, or groups with other notes of the same bed; a note with
//! no identifier is a group of its own.
//!
//! Within a group notes are ordered by their date and time: the extracted note date (or the
//! last dated entry of a multi-day note), else the date on the identifier line, with the time
//! from the entry or the identifier line; undated notes follow in input order.

use std::sync::OnceLock;

use regex::Regex;
use serde::Serialize;

use crate::model::Extraction;
use crate::span::{LineIndex, Span};

/// How many lines from the top are searched for an identifier.
const HEADER_LINES: usize = 8;

/// The identifier of one note.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PatientId {
    /// The identifier pieces as written, joined: `Ward 7 Bed 3 · MRN 0000301`.
    pub label: String,
    /// Grouping keys: `id:...` (configured), `mrn:...`, `bed:...`.
    pub keys: Vec<String>,
    pub spans: Vec<Span>,
}

impl PatientId {
    fn primary(&self) -> Option<&str> {
        self.keys
            .iter()
            .find(|k| k.starts_with("id:"))
            .or_else(|| self.keys.iter().find(|k| k.starts_with("mrn:")))
            .map(String::as_str)
    }

    fn bed(&self) -> Option<&str> {
        self.keys
            .iter()
            .find(|k| k.starts_with("bed:"))
            .map(String::as_str)
    }
}

fn mrn_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(
            r"(?i)(?-u:\b)(?:MRN|URN?|UR\s+no|hospital\s+(?:no|number|id)|hosp\s+no|unit\s+(?:no|number)|(?:medical\s+)?record\s+(?:no|number)|NHS\s+(?:no|number)|NHI|patient\s+(?:id|ref|no|number)|pt\s+(?:id|ref|no)|H/N)\.?\s*[:#]?\s*([A-Z]{0,3}-?[0-9]{2,}(?:[ -][0-9]{2,})*)(?-u:\b)",
        )
        .expect("valid regex")
    })
}

fn bed_re() -> &'static Regex {
    static RE: OnceLock<Regex> = OnceLock::new();
    RE.get_or_init(|| {
        Regex::new(
            r"(?i)(?-u:\b)(?:(?:ward|unit)\s+([A-Za-z0-9]+)[,\s/-]+)?bed\s*(?:no\.?\s*)?([0-9]{1,3}[A-Za-z]?)(?-u:\b)",
        )
        .expect("valid regex")
    })
}

/// Finds identifiers, with an optional configured pattern tried first.
#[derive(Debug, Clone, Default)]
pub struct Matcher {
    custom: Option<Regex>,
}

impl Matcher {
    /// A matcher with the configured pattern, if any; a bad pattern is an error.
    pub fn new(custom: Option<&str>) -> Result<Matcher, regex::Error> {
        Ok(Matcher {
            custom: custom.map(Regex::new).transpose()?,
        })
    }

    /// The identifier of a note, from its first lines.
    pub fn identify(&self, text: &str) -> Option<PatientId> {
        let index = LineIndex::new(text);
        let lines = index.line_count().min(HEADER_LINES);
        let end = if lines == 0 {
            0
        } else {
            index.line_range(lines - 1).end
        };
        let head = &text[..end];
        let mut pieces: Vec<(usize, usize, String)> = Vec::new();
        if let Some(re) = &self.custom {
            if let Some(c) = re.captures(head) {
                let whole = c.get(0).expect("match");
                let key = c.get(1).unwrap_or(whole).as_str().trim();
                if !key.is_empty() {
                    pieces.push((whole.start(), whole.end(), format!("id:{}", normalise(key))));
                }
            }
        }
        // At least four digits: `Ur 8.8` (urea) and `UR 12` are no record numbers.
        if let Some(c) = mrn_re()
            .captures_iter(head)
            .find(|c| c[1].bytes().filter(u8::is_ascii_digit).count() >= 4)
        {
            let whole = c.get(0).expect("match");
            let key: String = c[1].chars().filter(|c| c.is_alphanumeric()).collect();
            pieces.push((
                whole.start(),
                whole.end(),
                format!("mrn:{}", key.to_lowercase()),
            ));
        }
        if let Some(c) = bed_re().captures(head) {
            let whole = c.get(0).expect("match");
            let ward = c
                .get(1)
                .map(|w| w.as_str().to_lowercase())
                .unwrap_or_default();
            pieces.push((
                whole.start(),
                whole.end(),
                format!("bed:{ward}/{}", c[2].to_lowercase()),
            ));
        }
        if pieces.is_empty() {
            return None;
        }
        let mut shown: Vec<(usize, usize)> = pieces.iter().map(|p| (p.0, p.1)).collect();
        shown.sort();
        shown.dedup_by(|b, a| b.0 < a.1);
        let label = shown
            .iter()
            .map(|(s, e)| text[*s..*e].trim().to_string())
            .collect::<Vec<_>>()
            .join(" · ");
        Some(PatientId {
            label,
            keys: pieces.iter().map(|p| p.2.clone()).collect(),
            spans: shown.iter().map(|(s, e)| index.span(*s, *e)).collect(),
        })
    }
}

fn normalise(key: &str) -> String {
    key.split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
        .to_lowercase()
}

/// When a note was written, as far as it says.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Default)]
pub struct NoteTime {
    /// ISO date.
    pub date: Option<String>,
    /// `HH:MM`.
    pub time: Option<String>,
}

/// The date and time of a note: the extracted note date, else its last dated entry, else
/// the date on its identifier (first) line; the time from that entry or line.
pub fn note_time(text: &str, ex: &Extraction) -> NoteTime {
    let last_episode = ex.episodes.iter().rev().find(|e| e.date.is_some());
    let first_line = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let order = crate::text::dates::resolve_order(text, crate::config::DateOrder::Auto, false);
    let line_date = crate::text::dates::find_dates(first_line, order, None)
        .into_iter()
        .next()
        .map(|d| d.iso);
    let date = ex
        .note_date
        .clone()
        .or_else(|| last_episode.and_then(|e| e.date.clone()))
        .or(line_date);
    let time = last_episode.and_then(|e| e.time.clone()).or_else(|| {
        // The clock time of the first line, but not a part of a date ("16.03").
        let without_dates = strip_dates(first_line, order);
        crate::text::dates::find_time(&without_dates).map(|t| t.1)
    });
    NoteTime { date, time }
}

fn strip_dates(line: &str, order: crate::config::DateOrder) -> String {
    let mut out = line.to_string();
    for d in crate::text::dates::find_dates(line, order, None) {
        out.replace_range(d.start..d.end, &" ".repeat(d.end - d.start));
    }
    out
}

/// One patient's notes, in writing order.
#[derive(Debug, Clone, PartialEq)]
pub struct Group {
    pub id: Option<PatientId>,
    /// Indices into the inputs.
    pub notes: Vec<usize>,
}

/// Group notes by patient and order each group by time. Groups come in the order of their
/// first note in the input.
pub fn group(ids: &[Option<PatientId>], times: &[NoteTime]) -> Vec<Group> {
    let mut groups: Vec<Group> = Vec::new();
    let mut by_primary: Vec<(String, usize)> = Vec::new();
    // Pass 1: numbered notes.
    let mut group_of: Vec<Option<usize>> = vec![None; ids.len()];
    for (i, id) in ids.iter().enumerate() {
        let Some(key) = id.as_ref().and_then(|id| id.primary()) else {
            continue;
        };
        let g = match by_primary.iter().find(|(k, _)| k == key) {
            Some((_, g)) => *g,
            None => {
                groups.push(Group {
                    id: id.clone(),
                    notes: Vec::new(),
                });
                by_primary.push((key.to_string(), groups.len() - 1));
                groups.len() - 1
            }
        };
        group_of[i] = Some(g);
    }
    // Pass 2: bed-only notes join the one numbered group with that bed, or a bed group.
    let mut by_bed: Vec<(String, usize)> = Vec::new();
    for (i, id) in ids.iter().enumerate() {
        if group_of[i].is_some() {
            continue;
        }
        let Some(bed) = id.as_ref().and_then(|id| id.bed()) else {
            continue;
        };
        let numbered: Vec<usize> = (0..ids.len())
            .filter(|&j| {
                ids[j]
                    .as_ref()
                    .is_some_and(|o| o.primary().is_some() && o.bed() == Some(bed))
            })
            .filter_map(|j| group_of[j])
            .collect::<std::collections::BTreeSet<_>>()
            .into_iter()
            .collect();
        let g = if numbered.len() == 1 {
            numbered[0]
        } else if let Some((_, g)) = by_bed.iter().find(|(k, _)| k == bed) {
            *g
        } else {
            groups.push(Group {
                id: id.clone(),
                notes: Vec::new(),
            });
            by_bed.push((bed.to_string(), groups.len() - 1));
            groups.len() - 1
        };
        group_of[i] = Some(g);
    }
    // Pass 3: notes without an identifier stand alone.
    for (i, slot) in group_of.iter_mut().enumerate() {
        if slot.is_none() {
            groups.push(Group {
                id: None,
                notes: Vec::new(),
            });
            *slot = Some(groups.len() - 1);
        }
        let _ = i;
    }
    for (i, g) in group_of.iter().enumerate() {
        if let Some(g) = g {
            groups[*g].notes.push(i);
        }
    }
    // Groups in the order of their first note; notes by time, undated last, input order
    // breaking ties.
    groups.sort_by_key(|g| g.notes.first().copied().unwrap_or(usize::MAX));
    for g in &mut groups {
        g.notes.sort_by(|&a, &b| {
            let ka = sort_key(times.get(a));
            let kb = sort_key(times.get(b));
            ka.cmp(&kb).then(a.cmp(&b))
        });
    }
    groups
}

fn sort_key(t: Option<&NoteTime>) -> (bool, String, String) {
    match t {
        Some(t) => (
            t.date.is_none(),
            t.date.clone().unwrap_or_default(),
            t.time.clone().unwrap_or_else(|| "99:99".into()),
        ),
        None => (true, String::new(), String::new()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn id(text: &str) -> Option<PatientId> {
        Matcher::default().identify(text)
    }

    #[test]
    fn hospital_numbers_and_beds() {
        let p = id("Ward 7 Bed 3   MRN 0000301 (invented)   16/03/2026 08:45\nbody").expect("id");
        assert_eq!(p.keys, vec!["mrn:0000301", "bed:7/3"]);
        assert_eq!(p.label, "Ward 7 Bed 3 · MRN 0000301");
        assert_eq!(p.spans.len(), 2);
        let p = id("Bed 12 review\n").expect("id");
        assert_eq!(p.keys, vec!["bed:/12"]);
        let p = id("Hospital no: 123 456 7890\n").expect("id");
        assert_eq!(p.keys, vec!["mrn:1234567890"]);
        // Common practice, no source: UK unit numbers, the Australian unit record number
        // (UR, URN), and patient ID or reference labels with a letter prefix.
        for (head, key) in [
            ("Unit no: 88-2215   19/11/2026\n", "mrn:882215"),
            ("Ward round   UR 8812034\n", "mrn:8812034"),
            ("URN: 4455120\n", "mrn:4455120"),
            ("Patient ID: RX-55210 (invented)\n", "mrn:rx55210"),
            ("Pt ref: PC-0173   22/11/2026\n", "mrn:pc0173"),
        ] {
            assert_eq!(id(head).expect(head).keys, vec![key], "{head:?}");
        }
        // A urea is no record number.
        assert!(id("U+E: Na 137, K 4.7, Ur 8.8, Cr 104\n").is_none());
        assert!(id("Seen on ward round. BP 120/80.\n").is_none());
        // Only the first lines count.
        let deep = format!("{}MRN 0000999\n", "line\n".repeat(20));
        assert!(id(&deep).is_none());
    }

    #[test]
    fn a_configured_pattern_comes_first() {
        let m = Matcher::new(Some(r"Pt ref ([A-Z]{2}\d{3})")).expect("regex");
        let p = m.identify("Pt ref AB123 seen\n").expect("id");
        assert_eq!(p.keys, vec!["id:ab123"]);
        assert!(Matcher::new(Some("(unclosed")).is_err());
    }

    #[test]
    fn the_config_section_reads_patient_id() {
        // `[handover] patient_id = "..."` as the config loader deserialises it.
        let o: crate::config::HandoverOptions =
            serde_json::from_str(r#"{"patient_id": "Pt ref (\\w+)"}"#).expect("options");
        assert_eq!(o.patient_id.as_deref(), Some(r"Pt ref (\w+)"));
        let empty: crate::config::HandoverOptions = serde_json::from_str("{}").expect("default");
        assert_eq!(empty.patient_id, None);
        assert!(serde_json::from_str::<crate::config::HandoverOptions>(r#"{"nope": 1}"#).is_err());
    }

    #[test]
    fn times_from_the_identifier_line() {
        let ex = Extraction::default();
        let t = note_time("Ward 7 Bed 3   MRN 0000301   16/03/2026 19:30   FY1\n", &ex);
        assert_eq!(t.date.as_deref(), Some("2026-03-16"));
        assert_eq!(t.time.as_deref(), Some("19:30"));
        let ex = Extraction {
            note_date: Some("2026-03-17".into()),
            ..Extraction::default()
        };
        assert_eq!(
            note_time("no date here 08:00\n", &ex).date.as_deref(),
            Some("2026-03-17")
        );
        // A date written with dots is not a time.
        let t = note_time("Bed 3 16.03.2026\n", &Extraction::default());
        assert_eq!(t.time, None);
    }

    fn t(date: Option<&str>, time: Option<&str>) -> NoteTime {
        NoteTime {
            date: date.map(str::to_string),
            time: time.map(str::to_string),
        }
    }

    #[test]
    fn grouping_and_ordering() {
        let ids = vec![
            id("Ward 7 Bed 3 MRN 0000301\n"),
            id("Ward 7 Bed 7 MRN 0000702\n"),
            None,
            id("Ward 7 Bed 3\n"),
            id("MRN 0000301\n"),
            id("Bed 9\n"),
            id("Bed 9\n"),
            None,
        ];
        let times = vec![
            t(Some("2026-03-16"), Some("19:30")),
            t(Some("2026-03-16"), Some("09:10")),
            t(None, None),
            t(Some("2026-03-16"), Some("14:00")),
            t(Some("2026-03-16"), Some("08:45")),
            t(None, None),
            t(Some("2026-03-15"), None),
            t(None, None),
        ];
        let groups = group(&ids, &times);
        let notes: Vec<Vec<usize>> = groups.iter().map(|g| g.notes.clone()).collect();
        // MRN 0000301: the 08:45, 14:00 (bed only, same bed) and 19:30 notes in time order.
        assert_eq!(
            notes,
            vec![vec![4, 3, 0], vec![1], vec![2], vec![6, 5], vec![7]]
        );
        assert!(groups[2].id.is_none());
    }

    #[test]
    fn a_bed_shared_by_two_numbers_is_not_merged() {
        let ids = vec![
            id("Bed 3 MRN 0000301\n"),
            id("Bed 3 MRN 0000999\n"),
            id("Bed 3\n"),
        ];
        let times = vec![NoteTime::default(); 3];
        let groups = group(&ids, &times);
        assert_eq!(groups.len(), 3);
    }
}
