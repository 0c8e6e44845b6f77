//! The Now tab: the latest contents in big figures with their uncertainties, the vessel drawing, the
//! liquid's saturation state, use per day, days to the reorder level and the safe-fill limit with its
//! cautions.

use crate::action::Action;
use crate::fmt::{self, UnitSystem};
use crate::panels::{vessel, widgets};
use crate::style;
use crate::view::{Figure, ViewState};
use egui::{RichText, Ui};

fn fig_text(f: Figure, conv: impl Fn(f64) -> f64, decimals: usize) -> (String, String) {
    let v = fmt::num(conv(f.value), decimals);
    let u = match f.u {
        Some(u) => format!(
            "± {} (standard uncertainty, k = 1)",
            fmt::num(conv(u).abs(), decimals)
        ),
        None => "uncertainty not set (no gauge class)".into(),
    };
    (v, u)
}

/// Draw the Now tab.
pub fn now_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let Some(t) = &view.tank else { return };
    let units = view.units;
    let now = &t.now;
    let Some(latest) = &now.latest else {
        ui.add_space(20.0);
        ui.label(RichText::new("No reading of this tank can be evaluated yet.").size(16.0));
        if ui.button("Enter a reading").clicked() {
            out.push(Action::ShowTab(crate::view::TankTab::Readings));
        }
        return;
    };
    let Ok(c) = &latest.contents else { return };
    ui.label(
        RichText::new(format!(
            "Latest reading {} ({} ago): DP {} at {}",
            fmt::site_time(view, latest.time_ms),
            fmt::age(fmt::now_ms() - latest.time_ms),
            latest.dp_text,
            latest.pressure_text
        ))
        .color(style::MUTED),
    );
    for a in &t.attention {
        if let crate::view::Attention::OpenFinding(what) = a {
            widgets::finding(ui, what);
        }
    }
    ui.add_space(4.0);
    egui::ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| {
        ui.horizontal(|ui| {
            let w = ((ui.available_width() - 3.0 * ui.spacing().item_spacing.x) / 4.0 - 4.0).clamp(150.0, 300.0);
            let m = fig_text(c.mass_kg, |v| units.mass(v), 0);
            widgets::figure(ui, w, "Total mass", &m.0, units.mass_unit(), &m.1);
            let vd = if units == UnitSystem::Si { 3 } else { 0 };
            let v = fig_text(c.volume_m3, |v| units.volume(v), vd);
            widgets::figure(ui, w, "Liquid volume", &v.0, units.volume_unit(), &v.1);
            let f = fig_text(c.fill, |v| v * 100.0, 1);
            widgets::figure(ui, w, "Fill", &f.0, "% of gross", &f.1);
            let g = match units {
                UnitSystem::Si => fig_text(c.gas_nm3, |v| v, 0),
                UnitSystem::Us => fig_text(c.gas_scf, |v| v, 0),
            };
            widgets::figure(ui, w, "Gas equivalent", &g.0, units.gas_unit(), &g.1);
        });
        ui.add_space(8.0);
        ui.horizontal_top(|ui| {
            ui.vertical(|ui| {
                ui.set_width(380.0);
                vessel::draw_vessel(ui, &t.vessel, egui::vec2(380.0, 360.0), units);
            });
            ui.add_space(12.0);
            ui.vertical(|ui| {
                ui.set_max_width(560.0);
                ui.label(RichText::new("Liquid").strong());
                egui::Grid::new("now_state").num_columns(2).spacing([24.0, 4.0]).show(ui, |ui| {
                    let tu = units.temperature_unit();
                    ui.label("Liquid temperature");
                    ui.label(format!("{} {tu}  ({:.1} K)", fmt::num(units.temperature(c.liquid_temperature_k), 1), c.liquid_temperature_k));
                    ui.end_row();
                    ui.label("Saturation at tank pressure");
                    ui.label(format!("{} {tu}", fmt::num(units.temperature(c.saturation_temperature_k), 1)));
                    ui.end_row();
                    ui.label("Subcooling");
                    ui.label(format!(
                        "{} {}",
                        fmt::num(units.temperature_difference(c.saturation_temperature_k - c.liquid_temperature_k), 1),
                        units.temperature_difference_unit()
                    ));
                    ui.end_row();
                    ui.label("Liquid density");
                    ui.label(format!("{} kg/m³", fmt::num(c.liquid_density_kg_m3, 1)));
                    ui.end_row();
                    ui.label("Tank pressure");
                    ui.label(format!("{} {}", fmt::num(units.pressure(latest.pressure_gauge_pa), units.pressure_decimals()), units.pressure_unit()));
                    ui.end_row();
                });
                ui.label(RichText::new(&now.liquid_state_note).small().color(style::MUTED));
                ui.add_space(8.0);
                ui.label(RichText::new("Use").strong());
                egui::Grid::new("now_use").num_columns(2).spacing([24.0, 4.0]).show(ui, |ui| {
                    ui.label("Use per day");
                    ui.label(match now.usage_kg_per_day {
                        Some(r) => format!("{} {}/d ({})", fmt::num(units.mass(r), 0), units.mass_unit(), now.usage_source),
                        None => "not enough readings".into(),
                    });
                    ui.end_row();
                    ui.label("Reorder level");
                    ui.label(match now.reorder {
                        Some(r) => format!("{:.0} % of gross", r * 100.0),
                        None => "not set".into(),
                    });
                    ui.end_row();
                    ui.label("Days to reorder level");
                    ui.label(match now.days_to_reorder {
                        Some(d) if d <= 0.0 => RichText::new("below it now").color(style::CAUTION),
                        Some(d) => RichText::new(format!("{d:.1} d")),
                        None => RichText::new("—"),
                    });
                    ui.end_row();
                });
                ui.add_space(8.0);
                ui.label(RichText::new("Safe-fill limit").strong());
                match &now.safe_fill {
                    Ok(sf) => {
                        egui::Grid::new("now_safe").num_columns(2).spacing([24.0, 4.0]).show(ui, |ui| {
                            ui.label("Largest fill now");
                            ui.label(RichText::new(format!("{:.1} % of gross", sf.max_fill * 100.0)).color(style::CAUTION).strong());
                            ui.end_row();
                            ui.label("Largest liquid mass");
                            ui.label(format!("{} {}", fmt::num(units.mass(sf.max_liquid_mass_kg), 0), units.mass_unit()));
                            ui.end_row();
                            ui.label("Relief set pressure");
                            ui.label(format!("{} {}", fmt::num(units.pressure(sf.relief_gauge_pa), units.pressure_decimals()), units.pressure_unit()));
                            ui.end_row();
                        });
                        ui.label(
                            RichText::new(format!(
                                "Keeps {:.0} % of the gross volume as vapour when the liquid warms to saturation at the relief pressure.",
                                sf.vapour_fraction * 100.0
                            ))
                            .small()
                            .color(style::MUTED),
                        );
                    }
                    Err(why) => {
                        ui.label(RichText::new(why).color(style::MUTED));
                    }
                }
                ui.add_space(6.0);
                for (i, text) in view.cautions.iter().enumerate() {
                    // The general caution, overfilling, and oxygen service for oxygen tanks.
                    if i <= 1 || (t.oxygen && text.starts_with("Oxygen")) {
                        widgets::caution(ui, text);
                        ui.add_space(3.0);
                    }
                }
            });
        });
    });
}
