//! `handover --format text`: fixed width (at most 80 columns, fits A4 portrait in a 10–12 pt
//! monospace font), no colour, one block per patient.
//!
//! The rows are shared with the Markdown and HTML renderers through [`rows`], so the three
//! human formats say the same things.

use std::io::{self, Write};

use super::diuretics::EQUIVALENCE_BASIS;
use super::sheet::{Direction, GdmtStatus, LabLine, MedLine, NoteInfo, PatientSheet, Sheet};
use super::wrap;
use crate::extract::meds::fmt_num;
use crate::model::MedChange;

/// The width of the text sheet.
pub const WIDTH: usize = 80;
const LABEL: usize = 10;

/// One labelled row of a sheet: a label and its entries (each entry one logical line).
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    pub label: &'static str,
    pub entries: Vec<String>,
}

fn row(label: &'static str, entries: Vec<String>) -> Row {
    Row { label, entries }
}

fn short_date(iso: &str) -> String {
    match (iso.get(8..10), iso.get(5..7)) {
        (Some(d), Some(m)) => format!("{d}/{m}"),
        _ => iso.to_string(),
    }
}

/// How a note is named on the sheet: its date and time, else its file name.
pub fn note_label(n: &NoteInfo) -> String {
    match (&n.date, &n.time) {
        (Some(d), Some(t)) => format!("{} {t}", short_date(d)),
        (Some(d), None) => short_date(d),
        (None, Some(t)) => t.clone(),
        (None, None) => n
            .source
            .rsplit('/')
            .next()
            .unwrap_or(n.source.as_str())
            .to_string(),
    }
}

fn signed(v: f64) -> String {
    if v > 0.0 {
        format!("+{}", fmt_num(v))
    } else {
        fmt_num(v)
    }
}

fn round1(v: f64) -> f64 {
    (v * 10.0).round() / 10.0
}

fn change_word(c: Option<MedChange>) -> &'static str {
    match c {
        Some(MedChange::Started) => "started",
        Some(MedChange::Stopped) => "stopped",
        Some(MedChange::Increased) => "increased",
        Some(MedChange::Reduced) => "reduced",
        Some(MedChange::Held) => "held",
        Some(MedChange::Continued) => "continued",
        Some(MedChange::Switched) => "switched",
        None => "",
    }
}

fn med_text(m: &MedLine) -> String {
    let mut s = m.summary.clone();
    let c = change_word(m.change);
    if !c.is_empty() {
        s.push_str(&format!(" ({c})"));
    }
    match m.assertion {
        crate::model::Assertion::Hypothetical => s.push_str(" [conditional]"),
        crate::model::Assertion::Possible => s.push_str(" [possible]"),
        crate::model::Assertion::Absent => s.push_str(" [not on]"),
        crate::model::Assertion::Present => {}
    }
    s
}

fn lab_text(l: &LabLine) -> String {
    let mut s = format!("{} {} {}", l.label, fmt_num(round1(l.latest)), l.unit);
    match (l.previous, &l.previous_when, l.change) {
        (Some(p), Some(w), Some(c)) => s.push_str(&format!(
            " (was {} {w}, {})",
            fmt_num(round1(p)),
            signed(round1(c))
        )),
        (Some(p), None, Some(c)) => s.push_str(&format!(
            " (was {}, {})",
            fmt_num(round1(p)),
            signed(round1(c))
        )),
        _ => {}
    }
    if l.basis.is_some() {
        s.push_str(" (computed, CKD-EPI 2021)");
    }
    if let Some(c) = &l.caveat {
        s.push_str(&format!(" [{c}]"));
    }
    s
}

/// The rows of one patient's sheet, in reading order.
pub fn rows(p: &PatientSheet) -> Vec<Row> {
    let mut out = Vec::new();
    let nw = "not written".to_string();
    let notes: Vec<String> = p.notes.iter().map(note_label).collect();
    out.push(row(
        "Notes",
        vec![format!("{}: {}", p.notes.len(), notes.join(", "))],
    ));
    out.push(row(
        "Patient",
        vec![p
            .age_sex
            .as_ref()
            .map(|f| f.text.clone())
            .unwrap_or(nw.clone())],
    ));
    out.push(row(
        "HF",
        vec![p
            .heart_failure
            .as_ref()
            .map(|h| h.text.clone())
            .unwrap_or(nw.clone())],
    ));
    out.push(row(
        "Profile",
        vec![match &p.profile {
            Some(pr) => {
                let from = p.notes.get(pr.note).map(note_label).unwrap_or_default();
                if pr.evidence.is_empty() {
                    format!("{} ({from} note)", pr.label)
                } else {
                    format!("{} ({from} note) - {}", pr.label, pr.evidence)
                }
            }
            None => "unknown: the notes do not support a call".into(),
        }],
    ));
    out.push(row(
        "Obs",
        if p.observations.is_empty() {
            vec![nw.clone()]
        } else {
            vec![p
                .observations
                .iter()
                .map(|o| {
                    let mut s = format!("{} {}{}", o.label, o.value, unit_gap(o.unit));
                    if let (Some(prev), Some(d)) = (&o.previous, o.direction) {
                        if d == Direction::Same {
                            s.push_str(" (same)");
                        } else {
                            s.push_str(&format!(" (was {prev}, {})", d.word()));
                        }
                    }
                    s
                })
                .collect::<Vec<_>>()
                .join("; ")]
        },
    ));
    out.push(row(
        "Weight",
        match &p.weight {
            Some(w) => {
                let first = &w.points[0];
                let last = w.points.last().unwrap_or(first);
                let mut s = if w.points.len() > 1 {
                    format!(
                        "{} kg ({}) -> {} kg ({}), change {} kg",
                        fmt_num(round1(w.first_kg)),
                        first.label,
                        fmt_num(round1(w.latest_kg)),
                        last.label,
                        signed(round1(w.change_kg.unwrap_or(0.0)))
                    )
                } else {
                    format!(
                        "{} kg ({}), one value",
                        fmt_num(round1(w.latest_kg)),
                        last.label
                    )
                };
                match (w.target_kg, w.above_target_kg) {
                    (Some(t), Some(a)) => s.push_str(&format!(
                        "; target {} kg (now {} kg)",
                        fmt_num(t),
                        signed(round1(a))
                    )),
                    _ => s.push_str("; target not written"),
                }
                let series: Vec<String> = w
                    .points
                    .iter()
                    .map(|pt| format!("{} {}", pt.label, fmt_num(round1(pt.value))))
                    .collect();
                vec![s, format!("series: {}", series.join(", "))]
            }
            None => vec![nw.clone()],
        },
    ));
    out.push(row(
        "Balance",
        vec![match &p.fluid_balance {
            Some(f) => {
                // An undated "yesterday" balance is shown as such, not as today's.
                let undated_before = f
                    .days
                    .iter()
                    .rev()
                    .find(|d| d.date.is_none() && d.label.ends_with("yest"));
                let today = match (f.today_ml, undated_before) {
                    (Some(v), _) => format!("today {} mL", signed(v)),
                    (None, Some(d)) => {
                        format!("today not written; {} {} mL", d.label, signed(d.value))
                    }
                    (None, None) => "today not written".into(),
                };
                let days = f.days.iter().filter(|d| d.date.is_some()).count();
                match f.cumulative_ml {
                    Some(c) => format!("{today}; cumulative {} mL over {days} day(s)", signed(c)),
                    None => today,
                }
            }
            None => nw.clone(),
        }],
    ));
    out.push(row(
        "Renal",
        if p.renal.is_empty() {
            vec![nw.clone()]
        } else {
            p.renal.iter().map(lab_text).collect()
        },
    ));
    let d = &p.diuretics;
    let mut diur = Vec::new();
    if d.regime.is_empty() {
        diur.push("no current diuretic regime found".to_string());
    }
    for m in &d.regime {
        let mut s = med_text(m);
        if let Some(item) = d
            .loop_total
            .items
            .iter()
            .find(|i| i.span == m.source.span && i.note == Some(m.source.note))
        {
            s.push_str(&format!(" = {} mg/day", fmt_num(item.daily_mg)));
        }
        diur.push(s);
    }
    if let Some(eq) = d.loop_total.oral_furosemide_mg {
        diur.push(format!(
            "loop total ≈ {} mg/day oral furosemide equivalent{}*",
            fmt_num(eq),
            if d.loop_total.complete {
                ""
            } else {
                " (part of the regime has no equivalence)"
            }
        ));
    }
    for m in &d.changes_today {
        match &m.starts {
            Some(day) if day.starts_with("in ") || day == "next week" => {
                diur.push(format!("{day}: {}", med_text(m)))
            }
            Some(day) => diur.push(format!("from {day}: {}", med_text(m))),
            None => diur.push(format!("today: {}", med_text(m))),
        }
    }
    out.push(row("Diuretic", diur));
    let mut gdmt = Vec::new();
    let on: Vec<String> = p
        .gdmt
        .iter()
        .filter(|g| g.status == GdmtStatus::On)
        .map(|g| {
            let drugs: Vec<String> = g.drugs.iter().map(med_text).collect();
            format!("{} ({})", g.label, drugs.join(", "))
        })
        .collect();
    if !on.is_empty() {
        gdmt.push(format!("on: {}", on.join("; ")));
    }
    let off: Vec<String> = p
        .gdmt
        .iter()
        .filter(|g| g.status != GdmtStatus::On)
        .map(|g| {
            let drugs: Vec<String> = g.drugs.iter().map(|m| m.summary.clone()).collect();
            if drugs.is_empty() {
                format!("{} {}", g.label, g.status.word())
            } else {
                format!("{} {} ({})", g.label, g.status.word(), drugs.join(", "))
            }
        })
        .collect();
    if !off.is_empty() {
        gdmt.push(format!("not on now: {}", off.join("; ")));
    }
    if gdmt.is_empty() {
        gdmt.push("no GDMT class mentioned".into());
    }
    out.push(row("GDMT", gdmt));
    out.push(row(
        "Plan",
        match &p.plan {
            Some(pl) => {
                let from = p.notes.get(pl.note).map(note_label).unwrap_or_default();
                let mut v = vec![format!("from the {from} note:")];
                v.extend(pl.lines.iter().map(|l| format!("- {}", l.text)));
                v
            }
            None => vec!["no plan section found".into()],
        },
    ));
    out.push(row(
        "To check",
        if p.to_check.is_empty() {
            vec!["no lint findings".into()]
        } else {
            check_lines(p)
        },
    ));
    out
}

fn unit_gap(unit: &str) -> String {
    match unit {
        "%" | "/min" | "°C" => unit.to_string(),
        u => format!(" {u}"),
    }
}

/// The footnote for the furosemide equivalent, when a sheet uses one.
pub fn equivalence_footnote(p: &PatientSheet) -> Option<String> {
    p.diuretics
        .loop_total
        .oral_furosemide_mg
        .map(|_| format!("* {EQUIVALENCE_BASIS}."))
}

/// The title of a patient's block.
pub fn title(p: &PatientSheet) -> String {
    p.identifier
        .as_ref()
        .map(|f| f.text.clone())
        .unwrap_or_else(|| {
            let src = p.notes.first().map(|n| n.source.as_str()).unwrap_or("-");
            format!("No identifier ({src})")
        })
}

fn push_wrapped(out: &mut Vec<String>, label: &str, text: &str, first: bool) {
    for (i, line) in wrap(text, WIDTH - LABEL, 2).into_iter().enumerate() {
        let lead = if first && i == 0 {
            format!("{label:<width$}", width = LABEL)
        } else {
            " ".repeat(LABEL)
        };
        out.push(format!("{lead}{line}"));
    }
}

/// The text lines of one patient's block.
pub fn patient_lines(p: &PatientSheet) -> Vec<String> {
    let mut out = Vec::new();
    let t = format!("== {} ", title(p));
    let fill = WIDTH.saturating_sub(t.chars().count());
    let mut head = format!("{t}{}", "=".repeat(fill));
    if head.chars().count() > WIDTH {
        head = wrap(&title(p), WIDTH, 3).join("\n");
    }
    out.extend(head.lines().map(str::to_string));
    for r in rows(p) {
        for (i, e) in r.entries.iter().enumerate() {
            push_wrapped(&mut out, r.label, e, i == 0);
        }
    }
    if let Some(f) = equivalence_footnote(p) {
        out.extend(wrap(&f, WIDTH, 2));
    }
    out.extend(wrap(&format!("Caution: {}", p.caution), WIDTH, 0));
    out
}

/// Write the whole sheet.
pub fn write<W: Write>(out: &mut W, sheet: &Sheet) -> io::Result<()> {
    writeln!(out, "HANDOVER SHEET")?;
    for l in wrap(&sheet.caution, WIDTH, 0) {
        writeln!(out, "{l}")?;
    }
    if sheet.patients.is_empty() {
        writeln!(out, "\nNo notes.")?;
    }
    for p in &sheet.patients {
        writeln!(out)?;
        for l in patient_lines(p) {
            writeln!(out, "{}", l.trim_end())?;
        }
    }
    Ok(())
}

/// The lint findings of one patient, one line each, except that a note's values written
/// without a unit are one line: a sheet lists what to check, the lint output each value.
fn check_lines(p: &PatientSheet) -> Vec<String> {
    let mut out = Vec::new();
    let mut grouped: Vec<usize> = Vec::new();
    for c in &p.to_check {
        let from = p.notes.get(c.note).map(note_label).unwrap_or_default();
        let sev = match c.severity {
            crate::lint::Severity::Error => "error",
            crate::lint::Severity::Warning => "warning",
            crate::lint::Severity::Info => "info",
        };
        if c.rule == "unit-missing" {
            if grouped.contains(&c.note) {
                continue;
            }
            let same: Vec<&crate::handover::sheet::Check> = p
                .to_check
                .iter()
                .filter(|o| o.rule == c.rule && o.note == c.note)
                .collect();
            if same.len() > 1 {
                grouped.push(c.note);
                let mut lines: Vec<u32> =
                    same.iter().filter_map(|o| o.span.map(|s| s.line)).collect();
                lines.dedup();
                let lines: Vec<String> = lines.iter().map(u32::to_string).collect();
                let at = if lines.len() == 1 { "line" } else { "lines" };
                out.push(format!(
                    "- [{sev}] {}: {} values have no unit written ({at} {}); each was read in \
                     its usual unit, listed by `tidemark lint` ({from})",
                    c.rule,
                    same.len(),
                    lines.join(", ")
                ));
                continue;
            }
        }
        out.push(format!("- [{sev}] {}: {} ({from})", c.rule, c.message));
    }
    out
}
