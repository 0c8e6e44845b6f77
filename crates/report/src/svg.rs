//! Inline SVG charts: drawn from numbers alone, no scripts, no fonts or images fetched.

use std::fmt::Write;

use crate::html::esc;
use crate::rounding::Figure;

const INK: &str = "#1d2327";
const GRID: &str = "#d3d9dd";
const MUTED: &str = "#5b666d";
const BILLED: &str = "#3b6ea8";
const GAINED: &str = "#2f8f5b";
const DRAWN: &str = "#8fbf9f";
const RESIDUAL: &str = "#b23a2a";
const BAND: &str = "#e8d9a8";

/// A linear map from data to drawing units.
#[derive(Clone, Copy)]
struct Axis {
    lo: f64,
    hi: f64,
    a: f64,
    b: f64,
}

impl Axis {
    fn new(lo: f64, hi: f64, a: f64, b: f64) -> Axis {
        let (lo, hi) = if (hi - lo).abs() < 1e-12 || !lo.is_finite() || !hi.is_finite() {
            (lo.min(0.0) - 1.0, hi.max(0.0) + 1.0)
        } else {
            (lo, hi)
        };
        Axis { lo, hi, a, b }
    }
    fn at(&self, x: f64) -> f64 {
        self.a + (x - self.lo) / (self.hi - self.lo) * (self.b - self.a)
    }
    /// About `n` round tick values inside the range.
    fn ticks(&self, n: usize) -> Vec<f64> {
        let span = self.hi - self.lo;
        let raw = span / n.max(1) as f64;
        let mag = 10f64.powf(raw.log10().floor());
        let step = [1.0, 2.0, 2.5, 5.0, 10.0]
            .iter()
            .map(|m| m * mag)
            .find(|s| *s >= raw)
            .unwrap_or(10.0 * mag);
        let mut t = (self.lo / step).ceil() * step;
        let mut out = Vec::new();
        while t <= self.hi + 1e-9 * span && out.len() < 50 {
            out.push(if t.abs() < 1e-12 * span { 0.0 } else { t });
            t += step;
        }
        out
    }
}

fn open(w: f64, h: f64, label: &str) -> String {
    format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {w} {h}\" role=\"img\" aria-label=\"{}\" font-family=\"DejaVu Sans, Arial, sans-serif\" font-size=\"11\">",
        esc(label)
    )
}

fn text(s: &mut String, x: f64, y: f64, anchor: &str, fill: &str, t: &str) {
    let _ = write!(
        s,
        "<text x=\"{x:.1}\" y=\"{y:.1}\" text-anchor=\"{anchor}\" fill=\"{fill}\">{}</text>",
        esc(t)
    );
}

fn line(s: &mut String, x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, extra: &str) {
    let _ = write!(
        s,
        "<line x1=\"{x1:.1}\" y1=\"{y1:.1}\" x2=\"{x2:.1}\" y2=\"{y2:.1}\" stroke=\"{stroke}\" {extra}/>"
    );
}

fn rect(s: &mut String, x: f64, y: f64, w: f64, h: f64, fill: &str) {
    let (x, w) = if w < 0.0 { (x + w, -w) } else { (x, w) };
    let _ = write!(
        s,
        "<rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{w:.1}\" height=\"{h:.1}\" fill=\"{fill}\"/>"
    );
}

/// Vertical grid lines and their labels along a horizontal axis.
fn x_grid(s: &mut String, ax: &Axis, top: f64, bottom: f64, unit: &str) {
    for t in ax.ticks(6) {
        let x = ax.at(t);
        line(s, x, top, x, bottom, GRID, "");
        text(
            s,
            x,
            bottom + 13.0,
            "middle",
            MUTED,
            &format!("{}{unit}", short(t)),
        );
    }
}

/// Horizontal grid lines and their labels along a vertical axis.
fn y_grid(s: &mut String, ay: &Axis, left: f64, right: f64, unit: &str) {
    for t in ay.ticks(5) {
        let y = ay.at(t);
        line(s, left, y, right, y, GRID, "");
        text(
            s,
            left - 4.0,
            y + 4.0,
            "end",
            MUTED,
            &format!("{}{unit}", short(t)),
        );
    }
}

/// A tick label: no more digits than it needs.
fn short(x: f64) -> String {
    let s = format!("{x:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    if s == "-0" { "0".into() } else { s }
}

/// A fill's chain: billed against gained + drawn (stacked), and the residual with its k σ whiskers,
/// the limit and the materiality.
pub struct Chain {
    /// Billed, kg.
    pub billed: f64,
    /// Gained by level, kg.
    pub gained: f64,
    /// Drawn during the fill (use between the readings), kg.
    pub drawn: f64,
    /// Residual, kg.
    pub residual: f64,
    /// k σ, kg.
    pub k_sigma: f64,
    /// Limit a residual must pass to be short, kg.
    pub limit: f64,
    /// Limit a negative residual must pass to be excess, kg.
    pub excess_limit: f64,
    /// Coverage factor.
    pub k: f64,
}

/// The chain chart.
pub fn chain(c: &Chain) -> String {
    let (w, h) = (680.0, 210.0);
    let mut s = open(
        w,
        h,
        "Billed against gained and drawn, and the residual with its band",
    );
    let left = 130.0;
    let right = w - 20.0;
    // top panel: quantities
    let top_max = c.billed.max(c.gained + c.drawn).max(1.0) * 1.05;
    let ax = Axis::new(0.0, top_max, left, right);
    x_grid(&mut s, &ax, 10.0, 92.0, "");
    text(&mut s, left - 8.0, 34.0, "end", INK, "billed");
    rect(
        &mut s,
        ax.at(0.0),
        22.0,
        ax.at(c.billed) - ax.at(0.0),
        18.0,
        BILLED,
    );
    text(&mut s, left - 8.0, 72.0, "end", INK, "gained + drawn");
    rect(
        &mut s,
        ax.at(0.0),
        60.0,
        ax.at(c.gained) - ax.at(0.0),
        18.0,
        GAINED,
    );
    rect(
        &mut s,
        ax.at(c.gained),
        60.0,
        ax.at(c.gained + c.drawn) - ax.at(c.gained),
        18.0,
        DRAWN,
    );
    text(&mut s, right, 8.0, "end", MUTED, "kg");
    // bottom panel: residual
    let span = (c.residual.abs() + c.k_sigma)
        .max(c.limit)
        .max(c.excess_limit)
        * 1.25;
    let ar = Axis::new(-span, span, left, right);
    let (y0, y1) = (128.0, 186.0);
    x_grid(&mut s, &ar, y0, y1, "");
    rect(
        &mut s,
        ar.at(-c.excess_limit),
        y0,
        ar.at(c.limit) - ar.at(-c.excess_limit),
        y1 - y0,
        BAND,
    );
    line(&mut s, ar.at(0.0), y0, ar.at(0.0), y1, INK, "");
    let yc = (y0 + y1) / 2.0;
    text(&mut s, left - 8.0, yc + 4.0, "end", INK, "residual");
    let (a, b) = (ar.at(c.residual - c.k_sigma), ar.at(c.residual + c.k_sigma));
    line(&mut s, a, yc, b, yc, RESIDUAL, "stroke-width=\"2\"");
    for end in [a, b] {
        line(
            &mut s,
            end,
            yc - 7.0,
            end,
            yc + 7.0,
            RESIDUAL,
            "stroke-width=\"2\"",
        );
    }
    let _ = write!(
        s,
        "<circle cx=\"{:.1}\" cy=\"{yc:.1}\" r=\"5\" fill=\"{RESIDUAL}\"/>",
        ar.at(c.residual)
    );
    text(
        &mut s,
        right,
        y0 - 6.0,
        "end",
        MUTED,
        &if (c.excess_limit - c.limit).abs() > 1e-9 {
            format!(
                "kg; whiskers ±{} σ; shaded: limit {} kg excess, {} kg short",
                short(c.k),
                Figure::Mass.text(c.excess_limit),
                Figure::Mass.text(c.limit)
            )
        } else {
            format!(
                "kg; whiskers ±{} σ; shaded: ±limit {} kg",
                short(c.k),
                Figure::Mass.text(c.limit)
            )
        },
    );
    s.push_str("</svg>");
    s
}

/// Horizontal bars of standard uncertainties, kg.
pub fn budget(items: &[(&str, f64)]) -> String {
    let row = 22.0;
    let h = 24.0 + row * items.len() as f64 + 10.0;
    let w = 680.0;
    let mut s = open(w, h, "Uncertainty budget, standard uncertainties in kg");
    let left = 190.0;
    let right = w - 20.0;
    let max = items.iter().map(|i| i.1).fold(0.0, f64::max).max(1.0) * 1.1;
    let ax = Axis::new(0.0, max, left, right);
    x_grid(&mut s, &ax, 6.0, h - 24.0, "");
    for (i, (label, v)) in items.iter().enumerate() {
        let y = 10.0 + row * i as f64;
        text(&mut s, left - 8.0, y + 12.0, "end", INK, label);
        let colour = if i + 1 == items.len() { INK } else { BILLED };
        rect(
            &mut s,
            ax.at(0.0),
            y + 2.0,
            ax.at(*v) - ax.at(0.0),
            row - 8.0,
            colour,
        );
    }
    s.push_str("</svg>");
    s
}

/// One row of a dot-and-whisker chart.
pub struct Dot {
    /// Label at the left.
    pub label: String,
    /// The value.
    pub value: f64,
    /// Whisker half-width.
    pub half: f64,
    /// Drawn hollow (not counted in the estimate).
    pub hollow: bool,
}

/// Dots with whiskers on a shared axis, with an estimate and its interval shaded, zero and a
/// tolerance band marked (values in %).
pub fn dots(rows: &[Dot], estimate: Option<(f64, f64, f64)>, tolerance: f64, unit: &str) -> String {
    let row = 16.0;
    let h = 40.0 + row * rows.len().max(1) as f64 + 10.0;
    let w = 680.0;
    let mut s = open(
        w,
        h,
        "Each fill's residual with its whiskers, the estimate and the tolerance",
    );
    let left = 230.0;
    let right = w - 20.0;
    let mut lo = -tolerance * 1.3;
    let mut hi = tolerance * 1.3;
    for r in rows {
        if r.value.is_finite() {
            lo = lo.min(r.value - r.half);
            hi = hi.max(r.value + r.half);
        }
    }
    let ax = Axis::new(lo, hi, left, right);
    let (top, bottom) = (22.0, h - 24.0);
    if let Some((_, a, b)) = estimate {
        rect(
            &mut s,
            ax.at(a),
            top,
            ax.at(b) - ax.at(a),
            bottom - top,
            BAND,
        );
    }
    x_grid(&mut s, &ax, top, bottom, unit);
    for t in [-tolerance, tolerance] {
        line(
            &mut s,
            ax.at(t),
            top,
            ax.at(t),
            bottom,
            RESIDUAL,
            "stroke-dasharray=\"5 3\"",
        );
    }
    line(&mut s, ax.at(0.0), top, ax.at(0.0), bottom, INK, "");
    if let Some((e, _, _)) = estimate {
        line(
            &mut s,
            ax.at(e),
            top,
            ax.at(e),
            bottom,
            BILLED,
            "stroke-width=\"2\"",
        );
    }
    text(
        &mut s,
        right,
        12.0,
        "end",
        MUTED,
        &format!(
            "{unit}; dashed: ±{} {unit} tolerance; shaded: 95 % interval of the estimate",
            short(tolerance)
        ),
    );
    for (i, r) in rows.iter().enumerate() {
        let y = top + 8.0 + row * i as f64;
        text(&mut s, left - 8.0, y + 4.0, "end", INK, &r.label);
        if !r.value.is_finite() {
            continue;
        }
        let (a, b) = (ax.at(r.value - r.half), ax.at(r.value + r.half));
        line(&mut s, a, y, b, y, MUTED, "");
        let fill = if r.hollow { "white" } else { BILLED };
        let _ = write!(
            s,
            "<circle cx=\"{:.1}\" cy=\"{y:.1}\" r=\"3.5\" fill=\"{fill}\" stroke=\"{BILLED}\"/>",
            ax.at(r.value)
        );
    }
    s.push_str("</svg>");
    s
}

/// A running sum over periods with its ± band, and each period's own sum as bars.
pub fn running_sum(labels: &[String], per_period: &[f64], running: &[f64], band: &[f64]) -> String {
    let (w, h) = (680.0, 260.0);
    let mut s = open(w, h, "Running sum of fill residuals with its k = 2 band");
    let (left, right, top, bottom) = (70.0, w - 20.0, 20.0, h - 40.0);
    let n = labels.len().max(1);
    let mut lo: f64 = 0.0;
    let mut hi: f64 = 0.0;
    for i in 0..labels.len() {
        for v in [
            running.get(i).copied().unwrap_or(0.0) + band.get(i).copied().unwrap_or(0.0),
            running.get(i).copied().unwrap_or(0.0) - band.get(i).copied().unwrap_or(0.0),
            per_period.get(i).copied().unwrap_or(0.0),
        ] {
            if v.is_finite() {
                lo = lo.min(v);
                hi = hi.max(v);
            }
        }
    }
    let pad = 0.08 * (hi - lo).max(1.0);
    let ay = Axis::new(lo - pad, hi + pad, bottom, top);
    y_grid(&mut s, &ay, left, right, "");
    let slot = (right - left) / n as f64;
    let cx = |i: usize| left + slot * (i as f64 + 0.5);
    // band as a polygon
    let mut upper = String::new();
    let mut lower = Vec::new();
    for i in 0..labels.len() {
        let b = band.get(i).copied().unwrap_or(0.0);
        let _ = write!(upper, "{:.1},{:.1} ", cx(i), ay.at(b));
        lower.push(format!("{:.1},{:.1}", cx(i), ay.at(-b)));
    }
    lower.reverse();
    if !labels.is_empty() {
        let _ = write!(
            s,
            "<polygon points=\"{upper}{}\" fill=\"{BAND}\" fill-opacity=\"0.8\"/>",
            lower.join(" ")
        );
    }
    line(&mut s, left, ay.at(0.0), right, ay.at(0.0), INK, "");
    for (i, v) in per_period.iter().enumerate() {
        if v.is_finite() {
            let (y0, y1) = (ay.at(0.0), ay.at(*v));
            let _ = write!(
                s,
                "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\" fill=\"{DRAWN}\"/>",
                cx(i) - slot * 0.2,
                y0.min(y1),
                slot * 0.4,
                (y1 - y0).abs()
            );
        }
    }
    let pts: Vec<String> = running
        .iter()
        .enumerate()
        .filter(|(_, v)| v.is_finite())
        .map(|(i, v)| format!("{:.1},{:.1}", cx(i), ay.at(*v)))
        .collect();
    let _ = write!(
        s,
        "<polyline points=\"{}\" fill=\"none\" stroke=\"{RESIDUAL}\" stroke-width=\"2\"/>",
        pts.join(" ")
    );
    for (i, v) in running.iter().enumerate() {
        if v.is_finite() {
            let _ = write!(
                s,
                "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"3\" fill=\"{RESIDUAL}\"/>",
                cx(i),
                ay.at(*v)
            );
        }
    }
    let every = labels.len().div_ceil(12).max(1);
    for (i, l) in labels.iter().enumerate() {
        if i % every == 0 {
            text(&mut s, cx(i), bottom + 14.0, "middle", MUTED, l);
        }
    }
    text(
        &mut s,
        left,
        12.0,
        "start",
        MUTED,
        "kg; line: running sum of billed − gained − drawn; bars: each period's sum; shaded: ±2 u of the running sum",
    );
    s.push_str("</svg>");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    // Round tick steps of 1, 2, 2.5 and 5 times a power of ten: common practice, no source.
    #[test]
    fn ticks_are_round_and_inside() {
        let a = Axis::new(0.0, 1234.0, 0.0, 100.0);
        let t = a.ticks(6);
        assert_eq!(t.first().copied(), Some(0.0));
        assert!(
            t.iter().all(|v| *v <= 1234.0 && (v % 250.0).abs() < 1e-9),
            "{t:?}"
        );
    }

    #[test]
    fn labels_in_charts_are_escaped() {
        let s = dots(
            &[Dot {
                label: "<T&1>".into(),
                value: 1.0,
                half: 0.5,
                hollow: false,
            }],
            None,
            1.5,
            "%",
        );
        assert!(s.contains("&lt;T&amp;1&gt;"));
        assert!(!s.contains("<T&1>"));
    }
}
