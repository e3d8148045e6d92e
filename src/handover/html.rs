//! `handover --format html`: one self-contained printable page (A4 portrait), one card per
//! patient, inline CSS and inline SVG charts drawn by [`super::svg`]. The page loads
//! nothing: no script, no font, no image, no link, and a content security policy that
//! forbids them. Every piece of note text is HTML-escaped.

use std::io::{self, Write};

use super::sheet::Sheet;
use super::svg::{balance_chart, weight_chart};
use super::text::{equivalence_footnote, rows, title};

/// Escape text for HTML element content and attribute values.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const CSS: &str = "\
@page { size: A4 portrait; margin: 12mm; }
* { box-sizing: border-box; }
body { font: 10pt/1.35 sans-serif; color: #000; background: #fff; margin: 0 auto; max-width: 186mm; padding: 4mm; }
h1 { font-size: 14pt; margin: 0 0 2mm; }
.caution { border: 1px solid #000; padding: 2mm 3mm; margin: 0 0 4mm; font-size: 9pt; }
.card { border: 1px solid #444; border-radius: 2mm; padding: 3mm 4mm; margin: 0 0 5mm; break-inside: avoid; page-break-inside: avoid; }
.card h2 { font-size: 12pt; margin: 0 0 2mm; border-bottom: 1px solid #999; padding-bottom: 1mm; }
table { border-collapse: collapse; width: 100%; }
th { text-align: left; vertical-align: top; width: 22mm; padding: 0.6mm 2mm 0.6mm 0; font-weight: bold; }
td { vertical-align: top; padding: 0.6mm 0; }
td div + div { margin-top: 0.6mm; }
.charts { display: flex; gap: 4mm; flex-wrap: wrap; margin: 2mm 0; }
.charts figure { margin: 0; }
.charts figcaption { font-size: 8.5pt; font-weight: bold; margin: 0 0 0.5mm; }
.chart { border: 1px solid #ccc; max-width: 100%; height: auto; display: block; }
.chart .axis { stroke: #000; stroke-width: 1; }
.chart .series { stroke: #000; stroke-width: 1.5; }
.chart .point { fill: #000; }
.chart .target { stroke: #555; stroke-width: 1; }
.chart .tick { font-size: 8px; fill: #000; }
.chart .bar.negative { fill: #555; }
.chart .bar.positive { fill: #bbb; stroke: #000; stroke-width: 0.5; }
.foot { font-size: 8.5pt; margin: 1mm 0 0; }
@media print { body { padding: 0; } }
";

/// Write the whole page.
pub fn write<W: Write>(out: &mut W, sheet: &Sheet) -> io::Result<()> {
    writeln!(out, "<!DOCTYPE html>")?;
    writeln!(out, "<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">")?;
    writeln!(
        out,
        "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'\">"
    )?;
    writeln!(
        out,
        "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
    )?;
    writeln!(
        out,
        "<title>Handover sheet</title>\n<style>\n{CSS}</style>\n</head>\n<body>"
    )?;
    writeln!(out, "<h1>Handover sheet</h1>")?;
    writeln!(
        out,
        "<p class=\"caution\"><strong>Caution.</strong> {}</p>",
        escape(&sheet.caution)
    )?;
    if sheet.patients.is_empty() {
        writeln!(out, "<p>No notes.</p>")?;
    }
    for p in &sheet.patients {
        writeln!(out, "<section class=\"card\">")?;
        writeln!(out, "<h2>{}</h2>", escape(&title(p)))?;
        writeln!(out, "<table>")?;
        for r in rows(p) {
            let cells: Vec<String> = r
                .entries
                .iter()
                .map(|e| format!("<div>{}</div>", escape(e)))
                .collect();
            writeln!(
                out,
                "<tr><th>{}</th><td>{}</td></tr>",
                escape(r.label),
                cells.join("")
            )?;
        }
        writeln!(out, "</table>")?;
        let weight = p
            .weight
            .as_ref()
            .and_then(|w| weight_chart(&w.points, w.target_kg));
        let balance = p
            .fluid_balance
            .as_ref()
            .and_then(|f| balance_chart(&f.days));
        if weight.is_some() || balance.is_some() {
            writeln!(out, "<div class=\"charts\">")?;
            for (caption, chart) in [
                ("Weight (kg)", weight),
                ("Daily fluid balance (mL)", balance),
            ] {
                if let Some(c) = chart {
                    writeln!(
                        out,
                        "<figure><figcaption>{caption}</figcaption>{c}</figure>"
                    )?;
                }
            }
            writeln!(out, "</div>")?;
        }
        if let Some(f) = equivalence_footnote(p) {
            writeln!(out, "<p class=\"foot\">{}</p>", escape(&f))?;
        }
        writeln!(out, "<p class=\"foot caution\">{}</p>", escape(&p.caution))?;
        writeln!(out, "</section>")?;
    }
    writeln!(out, "</body>\n</html>")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_quotes() {
        assert_eq!(
            escape("<script>alert('x')</script> & \"q\""),
            "&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt; &amp; &quot;q&quot;"
        );
    }
}
