//! The audit page's vehicles, gauges and findings sections.

use crate::action::Action;
use crate::fmt;
use crate::fmt::Figure;
use crate::style;
use crate::view::AuditView;
use egui::{RichText, Stroke, Ui, vec2};

/// Each vehicle's bias with its 95 % interval against the legal tolerance (shaded), then its figures.
pub(super) fn vehicles_ui(ui: &mut Ui, a: &AuditView, out: &mut Vec<Action>) {
    ui.label(
        RichText::new(
            "Each vehicle's fills against the level the other vehicles show at the same tanks. Bias and \
             95 % interval, %; the shaded band is the legal tolerance for such meters. Click a vehicle \
             to plot its fills.",
        )
        .color(style::MUTED),
    );
    let span = a
        .vehicles
        .iter()
        .filter_map(|v| v.bias.map(|b| b.1.abs().max(b.2.abs())))
        .chain(a.vehicles.iter().map(|v| v.tolerance_percent))
        .fold(1.0_f64, f64::max)
        * 1.15;
    egui::ScrollArea::vertical().show(ui, |ui| {
        if let Some(v) = a.vehicle_open.and_then(|i| a.vehicles.get(i)) {
            vehicle_plot(ui, v);
            ui.add_space(8.0);
        }
        egui::Grid::new("vehicles")
            .striped(true)
            .num_columns(8)
            .show(ui, |ui| {
                for h in [
                    "Vehicle",
                    "Carrier",
                    "Status",
                    "Fills",
                    "Short fills",
                    "Bias (%)",
                    "",
                    "",
                ] {
                    ui.label(RichText::new(h).color(style::MUTED));
                }
                ui.end_row();
                for (i, v) in a.vehicles.iter().enumerate() {
                    let open = a.vehicle_open == Some(i);
                    if ui
                        .selectable_label(open, &v.vehicle)
                        .on_hover_text("Plot this vehicle's fills against its tanks' levels")
                        .clicked()
                    {
                        out.push(Action::SelectVehicle(if open { None } else { Some(i) }));
                    }
                    ui.label(&v.carrier);
                    let ink = if v.flagged { style::ERROR } else { style::INK };
                    ui.label(RichText::new(&v.status).color(ink).strong());
                    ui.label(v.fills.to_string());
                    if v.short_with_vehicle > 0 {
                        ui.label(format!("{} + {}", v.short_fills, v.short_with_vehicle))
                            .on_hover_text(
                                "on their own balances + with the vehicle's other fills (its mean, or for one short on only some fills the balance of probabilities)",
                            );
                    } else {
                        ui.label(v.short_fills.to_string());
                    }
                    ui.label(match v.bias {
                        Some((b, l, h)) => format!(
                            "{} [{}, {}]",
                            fmt::fig(Figure::Percent, b),
                            fmt::fig(Figure::Percent, l),
                            fmt::fig(Figure::Percent, h)
                        ),
                        None => "—".into(),
                    });
                    let (rect, resp) =
                        ui.allocate_exact_size(vec2(260.0, 16.0), egui::Sense::hover());
                    let p = ui.painter_at(rect);
                    let x = |pct: f64| rect.center().x + (pct / span) as f32 * rect.width() * 0.5;
                    p.rect_filled(
                        egui::Rect::from_min_max(
                            egui::pos2(x(-v.tolerance_percent), rect.top()),
                            egui::pos2(x(v.tolerance_percent), rect.bottom()),
                        ),
                        0.0,
                        style::BAND,
                    );
                    p.hline(
                        rect.x_range(),
                        rect.center().y,
                        Stroke::new(1.0, style::GRID),
                    );
                    p.vline(x(0.0), rect.y_range(), Stroke::new(1.0, style::WALL));
                    if let Some((b, l, h)) = v.bias {
                        p.hline(x(l)..=x(h), rect.center().y, Stroke::new(2.0, ink));
                        p.circle_filled(egui::pos2(x(b), rect.center().y), 4.0, ink);
                    }
                    resp.on_hover_text(format!(
                        "legal tolerance ±{} %; p after Holm {}",
                        fmt::num(v.tolerance_percent, 1),
                        v.p_adjusted.map_or("—".into(), p_text)
                    ));
                    if ui
                        .small_button("Report…")
                        .on_hover_text(format!(
                            "Save vehicle {}'s report: its fills across tanks with its bias, interval and the legal tolerance (as `cryoledger report vehicle`)",
                            v.vehicle
                        ))
                        .clicked()
                    {
                        out.push(Action::SaveReport {
                            what: crate::action::ReportRequest::Vehicle(v.vehicle.clone()),
                            to: None,
                        });
                    }
                    ui.end_row();
                }
            });
    });
}

/// One vehicle's fills: each one's (gained + drawn) / billed less its tank's level from the other
/// vehicles' fills, over time, with the bias and its 95 % interval and the legal tolerance shaded.
fn vehicle_plot(ui: &mut Ui, v: &crate::view::VehicleLine) {
    use egui_plot::{HLine, Line, Plot, Points, Polygon};
    ui.label(
        RichText::new(format!(
            "{}: each fill against its tank's level from the other vehicles' fills, %; {}",
            v.vehicle,
            match v.bias {
                Some((b, l, h)) => format!(
                    "bias {} % (95 % interval {} to {}), legal tolerance ±{} % shaded",
                    fmt::fig(Figure::Percent, b),
                    fmt::fig(Figure::Percent, l),
                    fmt::fig(Figure::Percent, h),
                    fmt::num(v.tolerance_percent, 1)
                ),
                None => "too few fills to estimate a bias".into(),
            }
        ))
        .strong(),
    );
    let (x0, x1) = v
        .points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.0), b.max(p.0))
        });
    let (x0, x1) = if x0.is_finite() {
        (x0 - 5.0, x1 + 5.0)
    } else {
        (0.0, 1.0)
    };
    let band = |lo: f64, hi: f64| vec![[x0, lo], [x1, lo], [x1, hi], [x0, hi]];
    Plot::new(("vehicle_plot", v.vehicle.as_str()))
        .height(260.0)
        .x_axis_formatter(|m, _| fmt::date((m.value * 86_400_000.0) as i64))
        .y_axis_label("against the tank's level (%)")
        .label_formatter(|pos: &egui_plot::HoverPosition<'_>| {
            let (tank, at) = match pos {
                egui_plot::HoverPosition::NearDataPoint {
                    plot_name: "fills",
                    position,
                    index,
                } => (
                    v.points
                        .get(*index)
                        .map_or(String::new(), |p| format!("tank {}\n", p.2)),
                    position,
                ),
                egui_plot::HoverPosition::NearDataPoint { position, .. }
                | egui_plot::HoverPosition::Elsewhere { position, .. } => (String::new(), position),
            };
            Some(format!(
                "{tank}{} (UTC day)\nagainst the tank's level: {} %",
                fmt::date((at.x * 86_400_000.0) as i64),
                fmt::num(at.y, 2)
            ))
        })
        .show(ui, |p| {
            let tol = v.tolerance_percent;
            p.add(
                Polygon::new("legal tolerance", band(-tol, tol))
                    .fill_color(style::BAND)
                    .stroke(Stroke::NONE),
            );
            p.add(HLine::new("0 %", 0.0).color(style::GRID));
            let ink = if v.flagged { style::ERROR } else { style::INK };
            if let Some((b, l, h)) = v.bias {
                p.add(
                    Polygon::new("95 % interval", band(l, h))
                        .fill_color(ink.gamma_multiply(0.25))
                        .stroke(Stroke::NONE),
                );
                p.line(
                    Line::new("bias", band(b, b)[..2].to_vec())
                        .color(ink)
                        .width(2.0),
                );
            }
            let pts: Vec<[f64; 2]> = v.points.iter().map(|x| [x.0, x.1]).collect();
            p.points(
                Points::new("fills", pts)
                    .radius(3.0)
                    .color(VEHICLE_COLOURS[0]),
            );
        });
}

/// A p-value as read: three decimals, or powers of ten below 0.001.
fn p_text(p: f64) -> String {
    if p >= 0.001 {
        format!("{p:.3}")
    } else {
        format!("{p:.1e}")
    }
}

/// Colours told apart for the vehicles on one plot (cycled).
const VEHICLE_COLOURS: [egui::Color32; 6] = [
    egui::Color32::from_rgb(0x2f, 0x5f, 0x86),
    egui::Color32::from_rgb(0xb0, 0x37, 0x37),
    egui::Color32::from_rgb(0x3e, 0x8e, 0x7e),
    egui::Color32::from_rgb(0xa8, 0x6a, 0x10),
    egui::Color32::from_rgb(0x8a, 0x4f, 0x9e),
    egui::Color32::from_rgb(0x4a, 0x55, 0x63),
];

/// One gauge's fills: (gained + drawn) / billed over time, a colour and a legend entry per vehicle,
/// with what the test found.
fn gauge_plot(ui: &mut Ui, g: &crate::view::GaugeLine) {
    use egui_plot::{HLine, Legend, Line, Plot, Points};
    let found = match (
        &g.carried_by_vehicle,
        g.drift_line.is_some(),
        g.step_lines.is_empty(),
    ) {
        (Some(v), _, _) => format!(
            "no gauge fault: the trend the test found is in vehicle {v}'s fills, not the others' (see its deliveries)"
        ),
        (None, true, _) => "the drift the test found, through the fills' mean".to_owned(),
        (None, false, false) => "the step the test found: the mean before and after".to_owned(),
        _ => "no fault found".to_owned(),
    };
    ui.label(
        RichText::new(format!(
            "{}: each fill's (gained + drawn) / billed, %, by vehicle; {found}",
            g.tank
        ))
        .strong(),
    );
    let mut vehicles: Vec<&str> = g.points.iter().map(|p| p.2.as_str()).collect();
    vehicles.sort_unstable();
    vehicles.dedup();
    Plot::new(("gauge_plot", g.tank.as_str()))
        .height(260.0)
        .legend(Legend::default())
        .x_axis_formatter(|m, _| fmt::date((m.value * 86_400_000.0) as i64))
        .y_axis_label("(gained + drawn) / billed (%)")
        .label_formatter(|pos: &egui_plot::HoverPosition<'_>| {
            let (name, at) = match pos {
                egui_plot::HoverPosition::NearDataPoint {
                    plot_name,
                    position,
                    ..
                } => (*plot_name, position),
                egui_plot::HoverPosition::Elsewhere { position, .. } => ("", position),
            };
            let lead = if name.is_empty() {
                String::new()
            } else {
                format!("{name}\n")
            };
            Some(format!(
                "{lead}{} (UTC day)\n(gained + drawn) / billed: {} %",
                fmt::date((at.x * 86_400_000.0) as i64),
                fmt::num(at.y, 2)
            ))
        })
        .show(ui, |p| {
            p.add(HLine::new("100 %", 100.0).color(style::GRID));
            for (k, v) in vehicles.iter().enumerate() {
                let pts: Vec<[f64; 2]> = g
                    .points
                    .iter()
                    .filter(|x| x.2 == *v)
                    .map(|x| [x.0, x.1])
                    .collect();
                p.points(
                    Points::new(*v, pts)
                        .radius(3.5)
                        .color(VEHICLE_COLOURS[k % VEHICLE_COLOURS.len()]),
                );
            }
            if let Some(l) = g.drift_line {
                p.line(Line::new("drift", l.to_vec()).color(style::INK).width(2.0));
            }
            for l in &g.step_lines {
                p.line(Line::new("step", l.to_vec()).color(style::INK).width(2.0));
            }
        });
}

pub(super) fn gauges_ui(ui: &mut Ui, a: &AuditView, out: &mut Vec<Action>) {
    ui.label(
        RichText::new(
            "(gained + drawn) / billed over time at each tank, vehicle effects removed: a linear drift \
             or a step of the gauge's span (a bad recalibration). \"Seen from\": the smallest drift and \
             step the test finds with probability 95 % on the tank's fills; a smaller one can pass \
             unseen. \"Ten-day leak seen from\": the loss beyond use over ten days with no fill that \
             the scan between fills finds with probability 95 % at the tank. Click a tank to plot its \
             fills.",
        )
        .color(style::MUTED),
    );
    egui::ScrollArea::vertical().show(ui, |ui| {
        if let Some(g) = a.gauge_open.and_then(|i| a.gauges.get(i)) {
            gauge_plot(ui, g);
            ui.add_space(8.0);
        }
        egui::Grid::new("gauges")
            .striped(true)
            .num_columns(7)
            .show(ui, |ui| {
                for h in [
                    "Tank",
                    "Status",
                    "Fills",
                    "Drift (% of span/year)",
                    "Best step (%, from)",
                    "p after Holm",
                    "Seen from (drift %/year, step %)",
                    "Ten-day leak seen from",
                ] {
                    ui.label(RichText::new(h).color(style::MUTED));
                }
                ui.end_row();
                for (i, g) in a.gauges.iter().enumerate() {
                    let open = a.gauge_open == Some(i);
                    if ui
                        .selectable_label(open, &g.tank)
                        .on_hover_text("Plot this gauge's fills")
                        .clicked()
                    {
                        out.push(Action::SelectGauge(if open { None } else { Some(i) }));
                    }
                    let ink = if g.flagged { style::ERROR } else { style::INK };
                    ui.label(RichText::new(&g.status).color(ink).strong());
                    ui.label(g.fills.to_string());
                    ui.label(g.drift.map_or("—".into(), |d| fmt::num(d, 2)));
                    ui.label(g.step.map_or("—".into(), |(s, at)| {
                        format!("{} from {}", fmt::num(s, 2), fmt::date(at))
                    }));
                    ui.label(g.p_adjusted.map_or("—".into(), p_text));
                    let seen = |x: Option<f64>| x.map_or("—".into(), |v| fmt::num(v, 1));
                    ui.label(format!(
                        "{}, {}",
                        seen(g.detectable.0),
                        seen(g.detectable.1)
                    ));
                    ui.label(&g.leak_seen);
                    ui.end_row();
                }
            });
    });
}

pub(super) fn findings_ui(ui: &mut Ui, a: &AuditView, out: &mut Vec<Action>) {
    if a.findings.is_empty() {
        ui.label(RichText::new("No gains or losses beyond use between fills.").color(style::MUTED));
        return;
    }
    egui::ScrollArea::vertical().show(ui, |ui| {
        for f in &a.findings {
            ui.horizontal(|ui| {
                ui.label(RichText::new(&f.tank).strong());
                ui.label(RichText::new(&f.kind).color(style::CAUTION));
                ui.label(format!(
                    "{} to {}",
                    f.zone.text(f.from_ms),
                    f.zone.text(f.to_ms)
                ));
                if let Some(id) = f.tank_id
                    && ui.small_button("Trend").clicked()
                {
                    out.push(Action::SelectTank(id));
                    out.push(Action::ShowTab(crate::view::TankTab::Trend));
                }
            });
            ui.label(RichText::new(&f.text).small());
            ui.separator();
        }
    });
}
