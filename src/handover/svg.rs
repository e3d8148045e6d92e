//! Small inline SVG charts drawn by tidemark itself: the weight series and the daily fluid
//! balance. No script, no external resource; every label is escaped.

use super::html::escape;
use super::sheet::SeriesPoint;
use crate::extract::meds::fmt_num;

const W: f64 = 300.0;
const H: f64 = 130.0;
const LEFT: f64 = 44.0;
const RIGHT: f64 = 12.0;
const TOP: f64 = 14.0;
const BOTTOM: f64 = 26.0;

fn round1(v: f64) -> f64 {
    (v * 10.0).round() / 10.0
}

fn x_at(i: usize, n: usize) -> f64 {
    if n <= 1 {
        LEFT + (W - LEFT - RIGHT) / 2.0
    } else {
        LEFT + (W - LEFT - RIGHT) * i as f64 / (n - 1) as f64
    }
}

fn open(label: &str, class: &str) -> String {
    format!(
        "<svg class=\"chart {class}\" viewBox=\"0 0 {W} {H}\" width=\"{W}\" height=\"{H}\" role=\"img\" aria-label=\"{l}\"><title>{l}</title>",
        l = escape(label)
    )
}

/// A line chart of daily weights (kg), with the target weight dashed when written.
/// `None` when there is no point to draw.
pub fn weight_chart(points: &[SeriesPoint], target: Option<f64>) -> Option<String> {
    if points.is_empty() {
        return None;
    }
    let mut lo = points.iter().map(|p| p.value).fold(f64::INFINITY, f64::min);
    let mut hi = points
        .iter()
        .map(|p| p.value)
        .fold(f64::NEG_INFINITY, f64::max);
    if let Some(t) = target {
        lo = lo.min(t);
        hi = hi.max(t);
    }
    lo -= 0.5;
    hi += 0.5;
    let y = |v: f64| TOP + (H - TOP - BOTTOM) * (hi - v) / (hi - lo);
    let n = points.len();
    let mut s = open("Weight series (kg)", "weight");
    s.push_str(&format!(
        "<line class=\"axis\" x1=\"{LEFT}\" y1=\"{b}\" x2=\"{r}\" y2=\"{b}\"/>",
        b = H - BOTTOM,
        r = W - RIGHT
    ));
    for v in [hi - 0.5, lo + 0.5] {
        s.push_str(&format!(
            "<text class=\"tick\" x=\"{x}\" y=\"{y:.1}\" text-anchor=\"end\">{}</text>",
            fmt_num(round1(v)),
            x = LEFT - 4.0,
            y = y(v) + 3.0
        ));
    }
    if let Some(t) = target {
        s.push_str(&format!(
            "<line class=\"target\" x1=\"{LEFT}\" y1=\"{yt:.1}\" x2=\"{r}\" y2=\"{yt:.1}\" stroke-dasharray=\"4 3\"/><text class=\"tick\" x=\"{r}\" y=\"{ty:.1}\" text-anchor=\"end\">target {}</text>",
            fmt_num(t),
            yt = y(t),
            ty = y(t) - 3.0,
            r = W - RIGHT
        ));
    }
    let pts: Vec<String> = points
        .iter()
        .enumerate()
        .map(|(i, p)| format!("{:.1},{:.1}", x_at(i, n), y(p.value)))
        .collect();
    if n > 1 {
        s.push_str(&format!(
            "<polyline class=\"series\" fill=\"none\" points=\"{}\"/>",
            pts.join(" ")
        ));
    }
    for (i, p) in points.iter().enumerate() {
        let (x, yy) = (x_at(i, n), y(p.value));
        s.push_str(&format!(
            "<circle class=\"point\" cx=\"{x:.1}\" cy=\"{yy:.1}\" r=\"2.5\"><title>{} {} kg</title></circle>",
            escape(&p.label),
            fmt_num(round1(p.value))
        ));
        s.push_str(&format!(
            "<text class=\"tick\" x=\"{x:.1}\" y=\"{ly}\" text-anchor=\"middle\">{}</text>",
            escape(&p.label),
            ly = H - BOTTOM + 14.0
        ));
    }
    s.push_str("</svg>");
    Some(s)
}

/// A bar chart of daily fluid balance (mL) around a zero line. `None` when empty.
pub fn balance_chart(days: &[SeriesPoint]) -> Option<String> {
    if days.is_empty() {
        return None;
    }
    let max = days
        .iter()
        .map(|d| d.value.abs())
        .fold(0.0f64, f64::max)
        .max(100.0);
    let mid = TOP + (H - TOP - BOTTOM) / 2.0;
    let half = (H - TOP - BOTTOM) / 2.0;
    let n = days.len();
    let slot = (W - LEFT - RIGHT) / n as f64;
    let bar = (slot * 0.6).min(36.0);
    let mut s = open("Daily fluid balance (mL)", "balance");
    s.push_str(&format!(
        "<line class=\"axis\" x1=\"{LEFT}\" y1=\"{mid:.1}\" x2=\"{r}\" y2=\"{mid:.1}\"/>",
        r = W - RIGHT
    ));
    for (v, yy) in [(max, TOP), (-max, H - BOTTOM)] {
        s.push_str(&format!(
            "<text class=\"tick\" x=\"{x}\" y=\"{y:.1}\" text-anchor=\"end\">{}</text>",
            signed(v),
            x = LEFT - 4.0,
            y = yy + 3.0
        ));
    }
    for (i, d) in days.iter().enumerate() {
        let hgt = half * d.value.abs() / max;
        let x = LEFT + slot * i as f64 + (slot - bar) / 2.0;
        let y = if d.value >= 0.0 { mid - hgt } else { mid };
        let class = if d.value >= 0.0 {
            "positive"
        } else {
            "negative"
        };
        s.push_str(&format!(
            "<rect class=\"bar {class}\" x=\"{x:.1}\" y=\"{y:.1}\" width=\"{bar:.1}\" height=\"{hgt:.1}\"><title>{} {} mL</title></rect>",
            escape(&d.label),
            signed(d.value)
        ));
        s.push_str(&format!(
            "<text class=\"tick\" x=\"{cx:.1}\" y=\"{ly}\" text-anchor=\"middle\">{}</text>",
            escape(&d.label),
            cx = x + bar / 2.0,
            ly = H - BOTTOM + 14.0
        ));
    }
    s.push_str("</svg>");
    Some(s)
}

fn signed(v: f64) -> String {
    if v > 0.0 {
        format!("+{}", fmt_num(v))
    } else {
        fmt_num(v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::handover::sheet::Src;
    use crate::span::Span;

    fn pt(label: &str, v: f64) -> SeriesPoint {
        SeriesPoint {
            date: None,
            label: label.into(),
            value: v,
            source: Src {
                note: 0,
                span: Span::default(),
            },
        }
    }

    #[test]
    fn weight_chart_draws_every_point_inside_the_box() {
        let pts = [pt("13/03", 88.9), pt("14/03", 87.6), pt("16/03", 85.7)];
        let s = weight_chart(&pts, Some(82.0)).expect("chart");
        assert_eq!(s.matches("<circle").count(), 3);
        assert!(s.contains("<polyline"));
        assert!(s.contains("target 82"));
        // Every coordinate lies within the view box.
        for cap in s.split("cy=\"").skip(1) {
            let y: f64 = cap
                .split('"')
                .next()
                .unwrap_or("x")
                .parse()
                .expect("number");
            assert!((0.0..=H).contains(&y), "{y}");
        }
        assert!(weight_chart(&[], None).is_none());
        assert!(weight_chart(&[pt("<b>", 80.0)], None)
            .expect("one point")
            .contains("&lt;b&gt;"));
    }

    #[test]
    fn balance_bars_sit_on_the_right_side_of_zero() {
        let s = balance_chart(&[pt("15/03", -1300.0), pt("16/03", 650.0)]).expect("chart");
        assert_eq!(s.matches("class=\"bar negative\"").count(), 1);
        assert_eq!(s.matches("class=\"bar positive\"").count(), 1);
        assert!(balance_chart(&[]).is_none());
    }
}
