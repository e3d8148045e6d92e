//! `extract --format text`: a compact human summary of each note's picture.
//!
//! Per note: the profile with its deciding evidence (line:column and the words), conflicts,
//! the classifications with their basis, the patient facts, derived values (or why each is
//! missing), and the weight, fluid-balance, creatinine and potassium trends. The caution
//! closes the output.

use std::io::{self, Write};

use crate::cli::inputs::Doc;
use crate::picture::{fmt_num as num, ClassSource, DerivedValue, LabSeries, Picture};
use crate::span::Span;
use crate::Analysis;

pub fn write<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    for (doc, analysis) in docs {
        write_document(out, doc, analysis.as_ref())?;
    }
    write_footer(out)
}

/// The closing lines of a summary run: the caution.
pub fn write_footer<W: Write>(out: &mut W) -> io::Result<()> {
    writeln!(out, "\n{}", super::CAUTION)
}

/// One document's summary.
pub fn write_document<W: Write>(
    out: &mut W,
    doc: &Doc,
    analysis: Option<&Analysis>,
) -> io::Result<()> {
    writeln!(out, "== {}", doc.source)?;
    for w in &doc.warnings {
        writeln!(out, "   warning: {}", w.message)?;
    }
    let Some(a) = analysis else { return Ok(()) };
    let ex = &a.extraction;
    writeln!(
        out,
        "   items: {} measurements, {} findings, {} statements",
        ex.measurements.len(),
        ex.findings.len(),
        ex.statements.len()
    )?;
    write_picture(out, &a.picture)
}

fn at(s: &Span) -> String {
    format!("{}:{}", s.line, s.column)
}

/// The picture of one note, indented under its header.
pub fn write_picture<W: Write>(out: &mut W, p: &Picture) -> io::Result<()> {
    let pr = &p.profile;
    writeln!(out, "   profile: {}  [{}]", pr.label, pr.axes_summary())?;
    for e in &pr.evidence {
        writeln!(
            out,
            "     {:<5} {:>7}  {}  \"{}\"",
            e.supports,
            at(&e.span),
            e.note,
            e.text
        )?;
    }
    for c in &pr.conflicts {
        writeln!(out, "     conflict ({}): {}", c.axis, c.message)?;
    }

    let c = &p.classifications;
    let class = |name: &str, v: &Option<String>, s: &Option<ClassSource>| match (v, s) {
        (Some(v), Some(s)) => {
            let note = s
                .note
                .as_deref()
                .map(|n| format!("; {n}"))
                .unwrap_or_default();
            format!(
                "{name} {v} ({} {} \"{}\"{note})",
                s.basis,
                at(&s.span),
                s.text
            )
        }
        _ => format!("{name} -"),
    };
    writeln!(out, "   classification:")?;
    for line in [
        class("hf type", &c.hf_type, &c.sources.hf_type),
        class("acuity", &c.acuity, &c.sources.acuity),
        class("NYHA", &c.nyha_class, &c.sources.nyha_class),
        class("volume status", &c.volume_status, &c.sources.volume_status),
    ] {
        writeln!(out, "     {line}")?;
    }

    let pt = &p.patient;
    writeln!(
        out,
        "   patient: age {}, sex {}",
        pt.age.map(|a| a.to_string()).unwrap_or_else(|| "-".into()),
        pt.sex.as_deref().unwrap_or("-")
    )?;

    let d = &p.derived;
    writeln!(out, "   derived:")?;
    let dv = |name: &str, v: &DerivedValue, decimals: usize, unit: &str| -> String {
        match v.value {
            Some(x) => {
                let inputs: Vec<String> = v
                    .inputs
                    .iter()
                    .map(|i| format!("{} \"{}\"", at(&i.span), i.text))
                    .collect::<std::collections::BTreeSet<_>>()
                    .into_iter()
                    .collect();
                let extra: Vec<&str> = v.flag.into_iter().chain(v.category).collect();
                let extra = if extra.is_empty() {
                    String::new()
                } else {
                    format!(" [{}]", extra.join(", "))
                };
                format!(
                    "{name} {}{unit}{extra} from {}",
                    num(x, decimals),
                    inputs.join(", ")
                )
            }
            None => format!(
                "{name} - ({})",
                v.reason.as_deref().unwrap_or("not computed")
            ),
        }
    };
    for line in [
        dv("MAP", &d.mean_arterial_pressure, 0, " mmHg"),
        dv("pulse pressure", &d.pulse_pressure, 0, " mmHg"),
        dv(
            "proportional pulse pressure",
            &d.proportional_pulse_pressure,
            1,
            " %",
        ),
        dv("shock index", &d.shock_index, 2, ""),
        dv("BMI", &d.bmi, 1, " kg/m2"),
        dv("eGFR (CKD-EPI 2021)", &d.egfr, 1, " mL/min/1.73m2"),
    ] {
        writeln!(out, "     {line}")?;
    }
    if let Some(l) = &d.lvef_category {
        writeln!(
            out,
            "     LVEF {} % -> {} ({} \"{}\")",
            num(l.value, 1),
            l.category.unwrap_or("no category"),
            at(&l.span),
            l.text
        )?;
    }

    let t = &p.trends;
    writeln!(out, "   trends:")?;
    let w = &t.weight;
    if w.points.is_empty() {
        writeln!(out, "     weight -")?;
    } else {
        let series: Vec<String> = w
            .points
            .iter()
            .map(|pt| match &pt.date {
                Some(d) => format!("{} {}", d, num(pt.value, 1)),
                None => num(pt.value, 1),
            })
            .collect();
        let mut line = format!("weight kg: {}", series.join(" -> "));
        if let Some(ch) = w.change {
            line.push_str(&format!("; change {:+}", num_f(ch, 1)));
        }
        if let Some(x) = w.change_72h {
            line.push_str(&format!("; last 72 h {:+}", num_f(x, 1)));
        }
        if let Some(x) = w.per_day {
            line.push_str(&format!("; {:+}/day", num_f(x, 2)));
        }
        if let Some(x) = w.above_target {
            line.push_str(&format!("; {:+} vs target", num_f(x, 1)));
        }
        if w.gain_flag {
            line.push_str("; GAIN > 2 kg in 3 days");
        }
        if w.unit_inconsistent {
            line.push_str("; units inconsistent (kg/lb?)");
        }
        writeln!(out, "     {line}")?;
    }
    let fb = &t.fluid_balance;
    if fb.days.is_empty() && fb.stated_total.is_none() {
        writeln!(out, "     fluid balance -")?;
    } else {
        let days: Vec<String> = fb
            .days
            .iter()
            .map(|d| {
                format!(
                    "{} {:+}",
                    d.date.as_deref().unwrap_or("undated"),
                    num_f(d.value, 0)
                )
            })
            .collect();
        let mut line = format!("fluid balance mL: {}", days.join(", "));
        if let Some(c) = fb.cumulative {
            line.push_str(&format!("; cumulative {:+}", num_f(c, 0)));
        }
        if let Some(s) = &fb.stated_total {
            line.push_str(&format!("; stated total {:+}", num_f(s.value, 0)));
        }
        writeln!(out, "     {line}")?;
    }
    writeln!(out, "     {}", lab_line("creatinine", &t.creatinine, 0))?;
    writeln!(out, "     {}", lab_line("potassium", &t.potassium, 1))?;
    Ok(())
}

/// A number for `{:+}` formatting, rounded for display.
fn num_f(v: f64, decimals: usize) -> f64 {
    let f = 10f64.powi(decimals as i32);
    (v * f).round() / f
}

fn lab_line(name: &str, s: &LabSeries, decimals: usize) -> String {
    if s.points.is_empty() {
        return format!("{name} -");
    }
    let vals: Vec<String> = s.points.iter().map(|p| num(p.value, decimals)).collect();
    let mut line = format!("{name} {}: {}", s.unit, vals.join(" -> "));
    if let Some(c) = s.change {
        line.push_str(&format!("; change {:+}", num_f(c, decimals)));
    }
    line
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::picture::examples;

    fn render(notes: Vec<crate::picture::testkit::Note>) -> String {
        let docs: Vec<(Doc, Option<Analysis>)> = notes
            .into_iter()
            .enumerate()
            .map(|(i, n)| {
                let ex = n.build();
                let picture = crate::picture::build(&ex);
                (
                    Doc {
                        source: format!("note-{i}.txt"),
                        text: Some(n.text.clone()),
                        warnings: Vec::new(),
                    },
                    Some(Analysis {
                        extraction: ex,
                        picture,
                        kind: crate::lint::DocKind::Other,
                        diagnostics: Vec::new(),
                    }),
                )
            })
            .collect();
        let mut out = Vec::new();
        write(&mut out, &docs).unwrap();
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn summary_shows_the_picture_with_positions_and_the_caution() {
        let s = render(vec![examples::discharge_summary(), examples::ward_record()]);
        assert!(s.contains("== note-0.txt"));
        assert!(s.contains("profile: warm-dry"));
        assert!(s.contains("profile: cold-wet"));
        assert!(s.contains("conflict (congestion)"));
        // Evidence lines carry line:column and the words: "JVP not raised" is line 8, column 24.
        assert!(s
            .lines()
            .any(|l| l.contains("dry") && l.contains("8:24") && l.contains("\"JVP not raised\"")));
        assert!(s.contains("hf type hfref (stated"));
        assert!(s.contains("acuity acute_on_chronic"));
        assert!(s.contains("patient: age 72, sex female"));
        assert!(s.contains("eGFR (CKD-EPI 2021) 36.3 mL/min/1.73m2 [G3b]"));
        assert!(s.contains("BMI - (no height documented)"));
        assert!(s.contains("weight kg: 78.6 -> 72.9; change -5.7"));
        assert!(s.contains("GAIN > 2 kg in 3 days"));
        assert!(s.contains("creatinine umol/L: 134 -> 231; change +97"));
        assert!(s.trim_end().ends_with(crate::render::CAUTION));
    }

    #[test]
    fn skipped_documents_show_their_warning_only() {
        let docs = vec![(
            Doc {
                source: "bad.bin".into(),
                text: None,
                warnings: vec![crate::model::InputWarning {
                    code: "binary",
                    message: "looks binary, skipped".into(),
                    offset: None,
                }],
            },
            None,
        )];
        let mut out = Vec::new();
        write(&mut out, &docs).unwrap();
        let s = String::from_utf8(out).unwrap();
        assert!(s.contains("warning: looks binary, skipped"));
        assert!(!s.contains("profile:"));
        assert!(s.contains(crate::render::CAUTION));
    }
}
