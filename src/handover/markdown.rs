//! `handover --format markdown`: one section per patient, rows as a list. Note text is
//! escaped so that a note cannot inject markup or HTML into a rendered page.

use std::io::{self, Write};

use super::sheet::Sheet;
use super::text::{equivalence_footnote, rows, title};

/// Escape Markdown and inline HTML in text taken from notes.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '\\' | '`' | '*' | '_' | '[' | ']' | '#' | '|' | '!' => {
                out.push('\\');
                out.push(c);
            }
            '\n' | '\r' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// Write the whole sheet.
pub fn write<W: Write>(out: &mut W, sheet: &Sheet) -> io::Result<()> {
    writeln!(out, "# Handover sheet\n")?;
    writeln!(out, "> **Caution.** {}\n", escape(&sheet.caution))?;
    if sheet.patients.is_empty() {
        writeln!(out, "No notes.")?;
    }
    for p in &sheet.patients {
        writeln!(out, "## {}\n", escape(&title(p)))?;
        for r in rows(p) {
            let mut entries = r.entries.iter();
            if let Some(first) = entries.next() {
                writeln!(
                    out,
                    "- **{}:** {}",
                    r.label,
                    escape(first.trim_start_matches("- "))
                )?;
            }
            for e in entries {
                writeln!(out, "  - {}", escape(e.trim_start_matches("- ")))?;
            }
        }
        if let Some(f) = equivalence_footnote(p) {
            writeln!(out, "\n{}", escape(f.trim_start_matches("* ")))?;
        }
        writeln!(out, "\n*Caution: {}*\n", escape(&p.caution))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_is_escaped() {
        assert_eq!(
            escape("<b>x</b> *y* [z](u)"),
            "&lt;b&gt;x&lt;/b&gt; \\*y\\* \\[z\\](u)"
        );
        assert_eq!(escape("a|b\nc"), "a\\|b c");
    }
}
