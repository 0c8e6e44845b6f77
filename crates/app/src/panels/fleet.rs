//! The Fleet list: sites and their tanks, searchable, each tank with its fill as a small bar, its
//! fluid, the age of its last reading and a marker when it needs attention. The list is virtualised
//! (only visible lines are laid out), so a fleet of thousands of tanks stays fast.

use crate::action::Action;
use crate::fmt;
use crate::style;
use crate::view::{FleetRow, ViewState};
use egui::{Align2, Color32, FontId, Rect, Role, Sense, Stroke, Ui, WidgetInfo, pos2, vec2};

const LINE: f32 = 24.0;

/// Draw the Fleet list.
pub fn fleet_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    ui.add_space(4.0);
    ui.horizontal(|ui| {
        ui.heading("Fleet");
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            if ui.small_button("New tank").clicked() {
                out.push(Action::OpenSetup(None));
            }
        });
    });
    let mut filter = view.fleet.filter.clone();
    let r = ui.add(
        egui::TextEdit::singleline(&mut filter)
            .hint_text("search sites, tanks, fluids")
            .desired_width(f32::INFINITY),
    );
    r.widget_info(|| WidgetInfo::labeled(Role::TextInput, true, "Search fleet"));
    if r.changed() {
        out.push(Action::SetFleetFilter(filter));
    }
    let f = &view.fleet;
    ui.label(
        egui::RichText::new(format!(
            "{} tanks · {} need attention",
            f.counts.0, f.counts.1
        ))
        .small()
        .color(style::MUTED),
    );
    ui.separator();
    if f.sites.is_empty() {
        if let Some((done, total)) = f.progress {
            ui.label(format!("Evaluating the fleet… {done} of {total} tanks"));
            ui.add(egui::ProgressBar::new(done as f32 / total.max(1) as f32));
        } else {
            ui.label("No tanks yet. Use New tank, or Import (top bar) for CSV files.");
        }
        return;
    }
    let selected = view.tank.as_ref().map(|t| t.id);
    egui::ScrollArea::vertical()
        .auto_shrink([false, false])
        .show_rows(ui, LINE, f.rows.len(), |ui, range| {
            for i in range {
                match f.rows.get(i) {
                    Some(FleetRow::Site(si, open)) => {
                        let Some(site) = f.sites.get(*si) else {
                            continue;
                        };
                        let flagged = site
                            .tanks
                            .iter()
                            .filter(|t| !t.attention.is_empty())
                            .count();
                        let label = format!(
                            "{}  {}  · {} {}{}",
                            if *open { "−" } else { "+" },
                            site.name,
                            site.tanks.len(),
                            if site.tanks.len() == 1 {
                                "tank"
                            } else {
                                "tanks"
                            },
                            if flagged > 0 {
                                format!(" · {flagged} flagged")
                            } else {
                                String::new()
                            }
                        );
                        let r = site_line(ui, &label, *open);
                        if r.clicked() {
                            out.push(Action::ToggleSite(site.id));
                        }
                    }
                    Some(FleetRow::Tank(si, ti)) => {
                        let Some(t) = f.sites.get(*si).and_then(|s| s.tanks.get(*ti)) else {
                            continue;
                        };
                        if tank_line(ui, t, selected == Some(t.id), f.as_of_ms) {
                            out.push(Action::SelectTank(t.id));
                        }
                    }
                    None => {}
                }
            }
        });
}

/// A site header line (click to open or close).
fn site_line(ui: &mut Ui, label: &str, open: bool) -> egui::Response {
    let w = ui.available_width();
    let (rect, r) = ui.allocate_exact_size(vec2(w, LINE), Sense::click());
    let text = label.to_owned();
    r.widget_info(|| WidgetInfo::selected(Role::Button, true, open, &text));
    if r.hovered() {
        ui.painter()
            .rect_filled(rect, 2.0, ui.visuals().faint_bg_color);
    }
    ui.painter().text(
        pos2(rect.left() + 4.0, rect.center().y),
        Align2::LEFT_CENTER,
        label,
        FontId::proportional(13.5),
        style::ACCENT,
    );
    r
}

/// One tank line; true when clicked.
fn tank_line(ui: &mut Ui, t: &crate::view::FleetTank, selected: bool, as_of_ms: i64) -> bool {
    let w = ui.available_width();
    let (rect, r) = ui.allocate_exact_size(vec2(w, LINE), Sense::click());
    let name = t.name.clone();
    r.widget_info(|| WidgetInfo::selected(Role::Button, true, selected, &name));
    let p = ui.painter();
    if selected {
        p.rect_filled(rect, 2.0, ui.visuals().selection.bg_fill);
    } else if r.hovered() {
        p.rect_filled(rect, 2.0, ui.visuals().faint_bg_color);
    }
    let y = rect.center().y;
    // Attention marker.
    let marker = pos2(rect.left() + 14.0, y);
    if t.attention.is_empty() {
        p.circle_stroke(
            marker,
            3.5,
            Stroke::new(1.0, Color32::from_rgb(0xb5, 0xbf, 0xc9)),
        );
    } else {
        p.circle_filled(marker, 4.5, style::CAUTION);
    }
    let name_rect = p.text(
        pos2(rect.left() + 26.0, y),
        Align2::LEFT_CENTER,
        &t.name,
        FontId::proportional(13.5),
        style::INK,
    );
    // Fill bar with the reorder tick.
    let bar = Rect::from_min_size(pos2(rect.left() + 138.0, y - 4.0), vec2(54.0, 8.0));
    // the fluid after the name, where a long name leaves room before the bar
    let fluid = p.layout_no_wrap(
        short_fluid(&t.fluid).to_owned(),
        FontId::proportional(11.0),
        style::MUTED,
    );
    let fluid_x = (rect.left() + 100.0).max(name_rect.right() + 5.0);
    if fluid_x + fluid.size().x <= bar.left() - 3.0 {
        p.galley(pos2(fluid_x, y - fluid.size().y / 2.0), fluid, style::MUTED);
    }
    p.rect_filled(bar, 2.0, style::VAPOUR);
    if let Some(fill) = t.fill {
        let mut b = bar;
        b.set_width(bar.width() * fill.clamp(0.0, 1.0) as f32);
        let col = if t.reorder.is_some_and(|r| fill < r) {
            style::CAUTION
        } else {
            style::LIQUID
        };
        p.rect_filled(b, 2.0, col);
    }
    if let Some(ro) = t.reorder {
        let x = bar.left() + bar.width() * ro as f32;
        p.vline(
            x,
            bar.y_range().expand(2.0),
            Stroke::new(1.0, style::REORDER),
        );
    }
    p.rect_stroke(
        bar,
        2.0,
        Stroke::new(1.0, Color32::from_rgb(0xb5, 0xbf, 0xc9)),
        egui::StrokeKind::Inside,
    );
    let pct = t
        .fill
        .map(|f| format!("{:.0} %", f * 100.0))
        .unwrap_or_else(|| "—".into());
    p.text(
        pos2(bar.right() + 40.0, y),
        Align2::RIGHT_CENTER,
        pct,
        FontId::proportional(12.0),
        style::INK,
    );
    let right = rect.right() - 6.0;
    let age = t
        .last_reading_ms
        .map(|ms| fmt::age(as_of_ms - ms))
        .unwrap_or_else(|| "none".into());
    let stale = t
        .attention
        .iter()
        .any(|a| matches!(a, crate::view::Attention::StaleReading));
    p.text(
        pos2(right, y),
        Align2::RIGHT_CENTER,
        age,
        FontId::proportional(11.5),
        if stale { style::CAUTION } else { style::MUTED },
    );
    let r = if t.attention.is_empty() {
        r
    } else {
        let text = t
            .attention
            .iter()
            .map(crate::view::Attention::describe)
            .collect::<Vec<_>>()
            .join("\n");
        r.on_hover_text(text)
    };
    r.clicked()
}

fn short_fluid(f: &str) -> &str {
    match f {
        "nitrogen" => "LIN",
        "oxygen" => "LOX",
        "argon" => "LAR",
        "carbon-dioxide" => "CO2",
        // pure methane, not LNG (a mixture)
        "methane" => "CH4",
        "hydrogen" => "LH2",
        "parahydrogen" => "p-H2",
        other => other,
    }
}
