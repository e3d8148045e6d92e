//! Documented days: a multi-day record starts each entry with a date (`02/06/2026 08:30
//! Ward round`, `Day 3 (04/06):`, `14 Mar 2026 - review`). Each entry runs to the next one.
//! Rows of a table (`01/06  89.0  1.8 L`) are not entries: they start with a date but go on
//! with numbers.

use crate::model::Episode;
use crate::span::LineIndex;
use crate::text::dates::{find_time, FoundDate};

/// Find the dated entries of a document, in document order.
pub fn find(text: &str, index: &LineIndex, dates: &[FoundDate]) -> Vec<Episode> {
    let mut starts: Vec<(usize, String, Option<String>)> = Vec::new();
    for d in dates {
        let line = index.line_range(index.line_of(d.start));
        // Only a short lead-in can come before an entry's date.
        if d.start - line.start > 40 {
            continue;
        }
        let before = text[line.start..d.start].trim();
        let lead_ok = before.is_empty()
            || before.len() <= 24 && {
                let b = before.to_ascii_lowercase();
                let b = b.trim_matches(|c: char| !c.is_alphanumeric());
                b.starts_with("day")
                    || b.starts_with("date")
                    || b.starts_with("entry")
                    || b.starts_with("review")
                    || b.starts_with("ward round")
                    || ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]
                        .iter()
                        .any(|w| b.starts_with(w))
                    || b.is_empty()
            };
        if !lead_ok {
            continue;
        }
        let mut after_end = line.end.min(d.end + 64);
        while !text.is_char_boundary(after_end) {
            after_end -= 1;
        }
        let after =
            text[d.end..after_end].trim_start_matches([')', ']', ' ', '\t', ':', '-', '–', ',']);
        // A clock time may follow the date.
        let after_time = match find_time(after) {
            Some((0, _)) => after
                .trim_start_matches(|c: char| c.is_ascii_digit() || c == ':' || c == '.')
                .trim_start_matches(['h', ' ']),
            _ => after,
        };
        let first = after_time.trim_start().chars().next();
        let entry = match first {
            None => true,
            Some(c) => c.is_alphabetic() || c == '(',
        };
        // A header line such as "Clinic date: 12/05/2026" is the note's date, not an entry.
        let is_meta = before.to_ascii_lowercase().contains("date")
            && !before.to_ascii_lowercase().starts_with("day");
        if entry
            && !is_meta
            && starts
                .last()
                .is_none_or(|s| index.line_of(s.0) != index.line_of(d.start))
        {
            let time = find_time(after).map(|(_, t)| t);
            starts.push((line.start, d.iso.clone(), time));
        }
    }
    // One dated line alone is a heading or a date stamp, not a multi-day record.
    if starts.len() < 2 {
        return Vec::new();
    }
    let mut out = Vec::with_capacity(starts.len());
    for (i, (start, iso, time)) in starts.iter().enumerate() {
        let end = starts.get(i + 1).map(|s| s.0).unwrap_or(text.len());
        out.push(Episode {
            date: Some(iso.clone()),
            time: time.clone(),
            span: index.span(*start, end),
        });
    }
    out
}

/// Index of the entry holding `offset`.
pub fn episode_at(episodes: &[Episode], offset: usize) -> Option<usize> {
    let i = episodes.partition_point(|e| e.span.start <= offset);
    (i > 0 && offset < episodes[i - 1].span.end).then(|| i - 1)
}

/// The date of the note itself: a date on a header line that names it (`Date:`, `Clinic
/// date:`, `Date of discharge:`), else the first date in the first five lines, else the
/// latest entry's date.
pub fn note_date(
    text: &str,
    index: &LineIndex,
    dates: &[FoundDate],
    episodes: &[Episode],
) -> Option<String> {
    let mut named: Option<(u8, String)> = None;
    for d in dates {
        let line_no = index.line_of(d.start);
        if line_no > 20 {
            break;
        }
        let line = index.line_range(line_no);
        let mut from = d.start.saturating_sub(40).max(line.start);
        while !text.is_char_boundary(from) {
            from += 1;
        }
        let before = text[from..d.start].to_ascii_lowercase();
        // The word names this date only with no number between them (`Clinic date:
        // 19/11/2026`, not `clinic scales), was 10 st 12 lb on 22/10`).
        let names = |w: &str| {
            before
                .rfind(w)
                .is_some_and(|i| !before[i..].bytes().any(|b| b.is_ascii_digit()))
        };
        let rank = if names("discharge") {
            3
        } else if names("date") || names("seen") || names("clinic") {
            2
        } else {
            0
        };
        if rank > 0 && named.as_ref().is_none_or(|(r, _)| rank > *r) {
            named = Some((rank, d.iso.clone()));
        }
    }
    if let Some((_, d)) = named {
        return Some(d);
    }
    if let Some(last) = episodes.iter().filter_map(|e| e.date.clone()).max() {
        return Some(last);
    }
    dates
        .iter()
        .find(|d| index.line_of(d.start) < 5)
        .map(|d| d.iso.clone())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::DateOrder;
    use crate::text::dates::find_dates;

    #[test]
    fn dated_entries_split_a_record_but_table_rows_do_not() {
        let text = "02/06/2026 08:30 Ward round\nJVP +4\n03/06/2026 Review\nwt 80\n\
                    04/06/2026 79.2 kg\n";
        let idx = LineIndex::new(text);
        let d = find_dates(text, DateOrder::Dmy, Some(2026));
        let eps = find(text, &idx, &d);
        assert_eq!(eps.len(), 2);
        assert_eq!(eps[0].date.as_deref(), Some("2026-06-02"));
        assert_eq!(eps[0].time.as_deref(), Some("08:30"));
        assert_eq!(eps[1].date.as_deref(), Some("2026-06-03"));
        // The table-like line belongs to the second entry.
        assert_eq!(episode_at(&eps, text.find("79.2").unwrap()), Some(1));
    }

    #[test]
    fn a_single_dated_heading_is_not_a_record() {
        let text = "Clinic date: 12/05/2026\nSeen today.\n";
        let idx = LineIndex::new(text);
        let d = find_dates(text, DateOrder::Dmy, None);
        assert!(find(text, &idx, &d).is_empty());
        assert_eq!(
            note_date(text, &idx, &d, &[]).as_deref(),
            Some("2026-05-12")
        );
    }
}
