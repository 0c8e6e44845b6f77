//! The vessel drawing: the shell, heads and orientation to scale, the liquid level, and the reorder and
//! safe-fill levels as lines. Heads are drawn as half-ellipses of their true depth.

use crate::fmt::{self, UnitSystem};
use crate::style;
use crate::view::VesselView;
use egui::{Align2, FontId, Pos2, Rect, Sense, Shape, Stroke, Ui, pos2, vec2};
use std::f64::consts::PI;

/// Outline of the inner vessel in metres (x across, y up from the bottom tap), convex, clockwise.
fn outline(v: &VesselView) -> Vec<[f64; 2]> {
    let n = 24;
    let mut pts = Vec::with_capacity(4 * n + 4);
    let a = v.head_depth_m.max(0.0);
    let r = v.diameter_m / 2.0;
    if v.strapping {
        let h = v.inner_height_m;
        let w = (h / 2.0).max(0.1) / 2.0;
        return vec![[-w, 0.0], [w, 0.0], [w, h], [-w, h]];
    }
    let arc = |pts: &mut Vec<[f64; 2]>, cx: f64, cy: f64, rx: f64, ry: f64, from: f64, to: f64| {
        for i in 0..=n {
            let t = from + (to - from) * i as f64 / n as f64;
            pts.push([cx + rx * t.cos(), cy + ry * t.sin()]);
        }
    };
    if v.horizontal {
        let half = v.length_m / 2.0;
        // Right head (bottom to top), then left head (top to bottom).
        arc(&mut pts, half, r, a, r, -PI / 2.0, PI / 2.0);
        arc(&mut pts, -half, r, a, r, PI / 2.0, 1.5 * PI);
    } else {
        // Bottom head (left to right through the bottom), top head (right to left over the top).
        arc(&mut pts, 0.0, a, r, a, PI, 2.0 * PI);
        arc(&mut pts, 0.0, a + v.length_m, r, a, 0.0, PI);
    }
    pts
}

/// The part of a convex polygon at or below `level` (Sutherland–Hodgman against one half-plane).
fn below(poly: &[[f64; 2]], level: f64) -> Vec<[f64; 2]> {
    let mut out = Vec::with_capacity(poly.len() + 2);
    for (i, p) in poly.iter().enumerate() {
        let q = poly[(i + 1) % poly.len()];
        let (pin, qin) = (p[1] <= level, q[1] <= level);
        if pin {
            out.push(*p);
        }
        if pin != qin {
            let t = (level - p[1]) / (q[1] - p[1]);
            out.push([p[0] + t * (q[0] - p[0]), level]);
        }
    }
    out
}

/// Draw the vessel in a box of `size`, with captions in `units`.
pub fn draw_vessel(ui: &mut Ui, v: &VesselView, size: egui::Vec2, units: UnitSystem) {
    let (rect, _) = ui.allocate_exact_size(size, Sense::hover());
    let painter = ui.painter_at(rect);
    if v.diameter_m <= 0.0 || v.inner_height_m <= 0.0 {
        painter.text(
            rect.center(),
            Align2::CENTER_CENTER,
            "shape not set",
            FontId::proportional(13.0),
            style::MUTED,
        );
        return;
    }
    let poly = outline(v);
    let (mut xmin, mut xmax, mut ymax) = (f64::MAX, f64::MIN, 0.0f64);
    for p in &poly {
        xmin = xmin.min(p[0]);
        xmax = xmax.max(p[0]);
        ymax = ymax.max(p[1]);
    }
    let draw = Rect::from_min_max(rect.min + vec2(70.0, 10.0), rect.max - vec2(96.0, 34.0));
    let s = (f64::from(draw.width()) / (xmax - xmin)).min(f64::from(draw.height()) / ymax);
    let cx = f64::from(draw.center().x) - s * (xmin + xmax) / 2.0;
    let by = f64::from(draw.center().y) + s * ymax / 2.0;
    let to = |p: [f64; 2]| -> Pos2 { pos2((cx + s * p[0]) as f32, (by - s * p[1]) as f32) };
    let shell: Vec<Pos2> = poly.iter().map(|p| to(*p)).collect();
    painter.add(Shape::convex_polygon(
        shell.clone(),
        style::VAPOUR,
        Stroke::NONE,
    ));
    if let Some(level) = v.level_m {
        let liquid: Vec<Pos2> = below(&poly, level.clamp(0.0, ymax))
            .iter()
            .map(|p| to(*p))
            .collect();
        if liquid.len() >= 3 {
            painter.add(Shape::convex_polygon(liquid, style::LIQUID, Stroke::NONE));
        }
    }
    painter.add(Shape::closed_line(shell, Stroke::new(2.0, style::WALL)));
    // Tangent lines (where the heads meet the shell).
    if !v.strapping && v.head_depth_m > 0.0 {
        let faint = Stroke::new(1.0, egui::Color32::from_rgb(0xb5, 0xbf, 0xc9));
        let r = v.diameter_m / 2.0;
        let segs: [[[f64; 2]; 2]; 2] = if v.horizontal {
            let h = v.length_m / 2.0;
            [[[-h, 0.0], [-h, 2.0 * r]], [[h, 0.0], [h, 2.0 * r]]]
        } else {
            let a = v.head_depth_m;
            [
                [[-r, a], [r, a]],
                [[-r, a + v.length_m], [r, a + v.length_m]],
            ]
        };
        for [a, b] in segs {
            painter.add(Shape::dashed_line(&[to(a), to(b)], faint, 4.0, 3.0));
        }
    }
    let right = to([xmax, 0.0]).x;
    let left = to([xmin, 0.0]).x;
    let font = FontId::proportional(11.5);
    let len = |level: f64| -> String {
        format!(
            "{} {}",
            fmt::num(units.length(level), 2),
            units.length_unit()
        )
    };
    // Reorder and safe-fill lines, labelled on the right (kept apart when close).
    let mut last_label_y: Option<f32> = None;
    let mut marks: Vec<(f64, egui::Color32, &str)> = Vec::new();
    if let Some(l) = v.safe_fill_level_m {
        marks.push((l, style::CAUTION, "safe fill"));
    }
    if let Some(l) = v.reorder_level_m {
        marks.push((l, style::REORDER, "reorder"));
    }
    for (l, colour, name) in marks {
        let y = to([0.0, l]).y;
        painter.add(Shape::dashed_line(
            &[pos2(left - 6.0, y), pos2(right + 6.0, y)],
            Stroke::new(1.5, colour),
            6.0,
            4.0,
        ));
        let mut ty = y;
        if let Some(prev) = last_label_y
            && (ty - prev).abs() < 28.0
        {
            ty = prev + 28.0;
        }
        last_label_y = Some(ty);
        painter.text(
            pos2(right + 10.0, ty),
            Align2::LEFT_CENTER,
            format!("{name}\n{}", len(l)),
            font.clone(),
            colour,
        );
    }
    if let Some(l) = v.level_m {
        let y = to([0.0, l.clamp(0.0, ymax)]).y;
        painter.line_segment(
            [pos2(left - 8.0, y), pos2(left - 1.0, y)],
            Stroke::new(2.0, style::ACCENT),
        );
        painter.text(
            pos2(left - 10.0, y),
            Align2::RIGHT_CENTER,
            format!("level\n{}", len(l)),
            font,
            style::ACCENT,
        );
    }
    let caption = if v.strapping {
        format!(
            "strapping table · {} {} tall · {} {} gross",
            fmt::num(units.length(v.inner_height_m), 2),
            units.length_unit(),
            fmt::num(units.volume(v.gross_volume_m3), 2),
            units.volume_unit()
        )
    } else {
        format!(
            "{} · D {} × L {} {} · {} heads · {} {} gross",
            if v.horizontal {
                "horizontal"
            } else {
                "vertical"
            },
            fmt::num(units.length(v.diameter_m), 2),
            fmt::num(units.length(v.length_m), 2),
            units.length_unit(),
            v.heads,
            fmt::num(
                units.volume(v.gross_volume_m3),
                if units == UnitSystem::Si { 2 } else { 0 }
            ),
            units.volume_unit()
        )
    };
    painter.text(
        pos2(rect.left() + 12.0, rect.bottom() - 12.0),
        Align2::LEFT_CENTER,
        caption,
        FontId::proportional(12.0),
        style::MUTED,
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clipping_a_square_at_half_keeps_half_its_area() {
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let half = below(&sq, 0.5);
        // Shoelace area: the lower half of a unit square is 0.5 (geometry identity).
        let area: f64 = (0..half.len())
            .map(|i| {
                let (p, q) = (half[i], half[(i + 1) % half.len()]);
                p[0] * q[1] - q[0] * p[1]
            })
            .sum::<f64>()
            / 2.0;
        assert!((area.abs() - 0.5).abs() < 1e-12);
    }
}
