//! The Trend tab: contents against time with its ±1 u band, deliveries marked on the time axis, the
//! reorder level and safe-fill limit as lines, and the tank pressure in a linked plot below. Zoom with
//! the wheel (Ctrl) or a box drag, pan by dragging, double-click to reset; hovering a point shows the
//! reading.

use crate::action::Action;
use crate::fmt;
use crate::panels::widgets;
use crate::style;
use crate::view::{TrendQuantity, VerdictWord, ViewState};
use egui::{RichText, Ui};
use egui_plot::{
    FilledArea, GridMark, HLine, HoverPosition, Legend, Line, LineStyle, Plot, PlotPoints, Polygon,
    VLine,
};

const SERIES: &str = "Contents";

fn date_axis(mark: GridMark, _range: &std::ops::RangeInclusive<f64>) -> String {
    fmt::date((mark.value * 86_400_000.0) as i64)
}

/// Grid steps for a short axis: about four labelled lines (1, 2 or 5 times a power of ten).
fn nice_steps(input: egui_plot::GridInput) -> [f64; 3] {
    let span = (input.bounds.1 - input.bounds.0).abs().max(1e-9);
    let raw = span / 4.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    [step / 5.0, step, step * 5.0]
}

/// Grid steps of a time axis in days: about six labelled dates across the visible span.
fn day_steps(input: egui_plot::GridInput) -> [f64; 3] {
    let span = (input.bounds.1 - input.bounds.0).abs().max(1e-3);
    let raw = span / 6.0;
    let step = [1.0, 2.0, 7.0, 14.0, 30.0, 61.0, 91.0, 182.0, 365.0, 730.0]
        .into_iter()
        .find(|s| *s >= raw)
        .unwrap_or(1461.0);
    let minor: f64 = if step >= 30.0 { 7.0 } else { 1.0 };
    [minor.min(step), step, step * 4.0]
}

/// Axis labels with the decimals their step needs.
fn value_axis(mark: GridMark, _range: &std::ops::RangeInclusive<f64>) -> String {
    let decimals = (-mark.step_size.log10().floor()).clamp(0.0, 4.0) as usize;
    fmt::num(mark.value, decimals)
}

/// Draw the Trend tab.
pub fn trend_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let Some(t) = &view.tank else { return };
    let tv = &t.trend;
    ui.horizontal(|ui| {
        ui.label(RichText::new("Show").color(style::MUTED));
        for q in TrendQuantity::ALL {
            if ui.selectable_label(tv.quantity == q, q.title()).clicked() && tv.quantity != q {
                out.push(Action::SetTrendQuantity(q));
            }
        }
        ui.separator();
        for (label, days) in [
            ("90 d", Some(90)),
            ("180 d", Some(180)),
            ("1 y", Some(365)),
            ("All", None),
        ] {
            if ui.selectable_label(tv.period_days == days, label).clicked()
                && tv.period_days != days
            {
                out.push(Action::SetTrendPeriod(days));
            }
        }
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            ui.label(
                RichText::new("drag to pan · Ctrl+wheel to zoom · double-click to reset")
                    .small()
                    .color(style::MUTED),
            );
        });
    });
    if tv.points.is_empty() {
        ui.add_space(20.0);
        ui.label("No evaluated readings to plot yet.");
        return;
    }
    let link = egui::Id::unique("trend_link");
    let total = ui.available_height() - 64.0;
    let top_h = (total * 0.68).max(160.0);
    let bottom_h = (total - top_h).max(90.0);
    let hover = &tv.hover;
    let y_label = tv.y_label.clone();
    // Contents from zero, with headroom above the highest line for the legend.
    let top = tv
        .points
        .iter()
        .map(|p| p[1])
        .chain(tv.safe_fill_y)
        .fold(0.0f64, f64::max);
    let last_x = tv.points.last().map(|p| p[0]).unwrap_or(0.0);
    let first_x = tv.points.first().map(|p| p[0]).unwrap_or(0.0);
    let from_x = tv
        .period_days
        .map_or(first_x, |d| (last_x - f64::from(d)).max(first_x));
    let period_id = tv.period_days.unwrap_or(0);
    let hover_label = tv.y_label.clone();
    let pressure_label = tv.pressure_label.clone();
    Plot::new(("trend_contents", period_id))
        .height(top_h)
        .default_x_bounds(from_x, last_x + 2.0)
        .legend(Legend::default().position(egui_plot::Corner::LeftTop))
        .include_y(0.0)
        .include_y(top * 1.3)
        .show_axes([false, true])
        .grid_color(style::GRID)
        .link_axis(link, [true, false])
        .link_cursor(link, [true, false])
        .x_axis_formatter(date_axis)
        .x_grid_spacer(egui_plot::uniform_grid_spacer(day_steps))
        .y_axis_formatter(value_axis)
        .y_axis_label(y_label)
        .y_axis_min_width(56.0)
        .show_x(false)
        .label_formatter(move |pos: &HoverPosition<'_>| match pos {
            HoverPosition::NearDataPoint {
                plot_name, index, ..
            } if *plot_name == SERIES => hover.get(*index).cloned(),
            HoverPosition::NearDataPoint { position, .. }
            | HoverPosition::Elsewhere { position, .. } => Some(format!(
                "{}\n{}: {}",
                fmt::site_time(view, (position.x * 86_400_000.0) as i64),
                hover_label,
                fmt::num(position.y, fmt::decimals_for(position.y))
            )),
        })
        .show(ui, |p| {
            p.add(
                FilledArea::new(
                    "±1 u (standard uncertainty)",
                    &tv.band_x,
                    &tv.band_lo,
                    &tv.band_hi,
                )
                .fill_color(style::BAND),
            );
            p.line(
                Line::new(SERIES, tv.points.clone())
                    .color(style::ACCENT)
                    .width(1.5),
            );
            // findings between fills: their periods shaded across the plotted range
            let (lo, hi) = tv
                .band_lo
                .iter()
                .chain(&tv.band_hi)
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
                    (a.min(*y), b.max(*y))
                });
            if lo.is_finite() && hi.is_finite() {
                for (a, b, what) in &tv.findings {
                    let b = b.max(a + 0.05);
                    p.add(
                        Polygon::new(
                            format!("Finding: {what}"),
                            PlotPoints::from(vec![[*a, lo], [b, lo], [b, hi], [*a, hi]]),
                        )
                        .fill_color(style::CAUTION_BG)
                        .stroke(egui::Stroke::new(1.0, style::CAUTION)),
                    );
                }
            }
            for (x, _ticket, verdict) in &tv.deliveries {
                // a flagged fill (short or excess) is drawn solid in its verdict's colour
                match verdict.filter(|w| matches!(w, VerdictWord::Short | VerdictWord::Excess)) {
                    Some(w) => p.add(
                        VLine::new(format!("Fills judged {}", w.word()), *x)
                            .color(style::verdict_colour(w).unwrap_or(style::ERROR))
                            .width(2.0),
                    ),
                    None => p.add(
                        VLine::new("Deliveries", *x)
                            .color(style::DELIVERY)
                            .style(LineStyle::dotted_loose())
                            .width(1.0),
                    ),
                }
            }
            if let Some(y) = tv.reorder_y {
                p.add(
                    HLine::new("Reorder level", y)
                        .color(style::REORDER)
                        .width(1.2)
                        .style(LineStyle::dashed_dense()),
                );
            }
            if let Some(y) = tv.safe_fill_y {
                p.add(
                    HLine::new("Safe-fill limit", y)
                        .color(style::CAUTION)
                        .width(1.5)
                        .style(LineStyle::dashed_dense()),
                );
            }
        });
    let pressure = tv.pressure.clone();
    Plot::new(("trend_pressure", period_id))
        .height(bottom_h)
        .default_x_bounds(from_x, last_x + 2.0)
        .link_axis(link, [true, false])
        .link_cursor(link, [true, false])
        .x_axis_formatter(date_axis)
        .x_grid_spacer(egui_plot::uniform_grid_spacer(day_steps))
        .y_axis_formatter(value_axis)
        .y_axis_label(tv.pressure_label.clone())
        .grid_color(style::GRID)
        .y_grid_spacer(egui_plot::uniform_grid_spacer(nice_steps))
        .y_axis_min_width(56.0)
        .label_formatter(move |pos: &HoverPosition<'_>| {
            let p = match pos {
                HoverPosition::NearDataPoint { position, .. }
                | HoverPosition::Elsewhere { position, .. } => position,
            };
            Some(format!(
                "{}\n{}: {}",
                fmt::site_time(view, (p.x * 86_400_000.0) as i64),
                pressure_label,
                fmt::num(p.y, 2)
            ))
        })
        .show(ui, |p| {
            p.line(
                Line::new("Tank pressure", pressure)
                    .color(style::WALL)
                    .width(1.0),
            );
        });
    if tv.safe_fill_y.is_some()
        && let Some(text) = view.cautions.get(1)
    {
        widgets::caution(ui, text);
    }
}
