//! Tank setup: create or edit a site and tank (vessel, gauge, relief pressure, reorder level), with the
//! vessel drawing updating as the user types and the full-tank DP shown as a sanity check.

use crate::action::Action;
use crate::panels::{vessel, widgets};
use crate::style;
use crate::view::{SetupForm, ViewState};
use egui::{RichText, Ui};
use units::Unit;

const FLUIDS: [&str; 7] = [
    "nitrogen",
    "oxygen",
    "argon",
    "carbon-dioxide",
    "methane",
    "hydrogen",
    "parahydrogen",
];
const ORIENTATIONS: [&str; 2] = ["vertical", "horizontal"];
const HEADS: [&str; 4] = ["flat", "hemispherical", "ellipsoidal", "torispherical"];

/// Draw Tank setup.
pub fn setup_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let f = &view.setup_form;
    let check = &view.setup_check;
    let editing = f.editing.is_some();
    egui::Panel::right("setup_preview")
        .exact_size(440.0)
        .resizable(false)
        .show(ui, |ui| {
            ui.add_space(4.0);
            ui.label(RichText::new("Preview").strong());
            match &view.setup_preview.vessel {
                Some(v) => vessel::draw_vessel(ui, v, egui::vec2(420.0, 380.0), view.units),
                None => {
                    ui.label(
                        RichText::new("Enter the shape to see the vessel.").color(style::MUTED),
                    );
                }
            }
            ui.add_space(6.0);
            ui.label(RichText::new("Full-tank DP (sanity check against the gauge)").strong());
            if view.setup_preview.full_dp.is_empty() {
                ui.label(RichText::new("Shown once every field checks.").color(style::MUTED));
            }
            for line in &view.setup_preview.full_dp {
                ui.label(line);
            }
            if let Some(w) = &view.setup_preview.span_warning {
                ui.label(RichText::new(w).color(style::CAUTION));
            }
            if f.fluid == "oxygen" {
                ui.add_space(6.0);
                if let Some(c) = view.cautions.iter().find(|c| c.starts_with("Oxygen")) {
                    widgets::caution(ui, c);
                }
            }
            if !f.relief_pressure.trim().is_empty()
                && let Some(c) = view.cautions.get(2)
            {
                ui.add_space(4.0);
                widgets::caution(ui, c);
            }
        });
    egui::ScrollArea::vertical()
        .auto_shrink([false, false])
        .show(ui, |ui| {
            ui.add_space(4.0);
            ui.horizontal(|ui| {
                ui.heading(if editing {
                    format!("Tank setup — {}", f.tank)
                } else {
                    "Tank setup — new tank".to_owned()
                });
                if view.tank.is_some() && ui.small_button("Back to the tank page").clicked() {
                    out.push(Action::ShowTankPage);
                }
            });
            if widgets::message_line(ui, view.notice.as_deref(), view.error.as_deref()) {
                out.push(Action::DismissMessage);
            }
            let mut next: Option<SetupForm> = None;
            let mut set = |g: &mut dyn FnMut(&mut SetupForm)| {
                let mut n = next.clone().unwrap_or_else(|| f.clone());
                g(&mut n);
                next = Some(n);
            };
            section(ui, "Site");
            ui.horizontal(|ui| {
                if let Some(v) =
                    widgets::text_field(ui, "Site name", &f.site, 220.0, "e.g. Harbour Works")
                {
                    set(&mut |n| n.site = v.clone());
                }
                if let Some(v) =
                    widgets::text_field(ui, "Elevation (m, optional)", &f.elevation_m, 110.0, "")
                {
                    set(&mut |n| n.elevation_m = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "Barometer (kPa abs, optional)",
                    &f.barometer_kpa,
                    110.0,
                    "",
                ) {
                    set(&mut |n| n.barometer_kpa = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "Time zone (IANA name, optional)",
                    &f.time_zone,
                    170.0,
                    "e.g. Europe/London",
                ) {
                    set(&mut |n| n.time_zone = v.clone());
                }
            });
            widgets::messages(ui, check, "site");
            widgets::messages(ui, check, "elevation_m");
            widgets::messages(ui, check, "barometer_kpa");
            widgets::messages(ui, check, "time_zone");
            section(ui, "Tank and vessel");
            ui.horizontal(|ui| {
                if let Some(v) = widgets::text_field(ui, "Tank name", &f.tank, 160.0, "unique name")
                {
                    set(&mut |n| n.tank = v.clone());
                }
                if let Some(v) = widgets::choice(ui, "Fluid", &f.fluid, &FLUIDS, 130.0) {
                    set(&mut |n| n.fluid = v.clone());
                }
            });
            widgets::messages(ui, check, "tank");
            widgets::messages(ui, check, "fluid");
            ui.horizontal(|ui| {
                if let Some(v) =
                    widgets::choice(ui, "Orientation", &f.orientation, &ORIENTATIONS, 110.0)
                {
                    set(&mut |n| n.orientation = v.clone());
                }
                if let Some(v) = widgets::choice(ui, "Heads", &f.heads, &HEADS, 130.0) {
                    set(&mut |n| n.heads = v.clone());
                }
                if let Some(v) =
                    widgets::text_field(ui, "Inner diameter (m)", &f.diameter_m, 90.0, "")
                {
                    set(&mut |n| n.diameter_m = v.clone());
                }
                if let Some(v) =
                    widgets::text_field(ui, "Straight length (m)", &f.length_m, 90.0, "")
                {
                    set(&mut |n| n.length_m = v.clone());
                }
            });
            widgets::messages(ui, check, "orientation");
            widgets::messages(ui, check, "heads");
            widgets::messages(ui, check, "diameter_m");
            widgets::messages(ui, check, "length_m");
            section(ui, "Gauge");
            ui.horizontal(|ui| {
                let opts: Vec<&str> = units::DpUnit::ALL.iter().map(|u| u.symbol()).collect();
                if let Some(v) = widgets::choice(ui, "Gauge unit", &f.dp_unit, &opts, 110.0) {
                    set(&mut |n| n.dp_unit = v.clone());
                }
                if let Some(v) =
                    widgets::text_field(ui, "Span (gauge unit)", &f.gauge_span, 90.0, "optional")
                {
                    set(&mut |n| n.gauge_span = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "Accuracy (% of span)",
                    &f.gauge_accuracy_percent,
                    90.0,
                    "optional",
                ) {
                    set(&mut |n| n.gauge_accuracy_percent = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "Line temperature (°C)",
                    &f.line_temperature_c,
                    90.0,
                    "",
                ) {
                    set(&mut |n| n.line_temperature_c = v.clone());
                }
            });
            widgets::messages(ui, check, "dp_unit");
            widgets::messages(ui, check, "gauge_span");
            widgets::messages(ui, check, "gauge_accuracy_percent");
            widgets::messages(ui, check, "line_temperature_c");
            section(ui, "Operation");
            ui.horizontal(|ui| {
                if let Some(v) = widgets::text_field(
                    ui,
                    "Relief set pressure",
                    &f.relief_pressure,
                    90.0,
                    "optional",
                ) {
                    set(&mut |n| n.relief_pressure = v.clone());
                }
                let opts: Vec<&str> = units::TankPressureUnit::ALL
                    .iter()
                    .map(|u| u.symbol())
                    .collect();
                if let Some(v) =
                    widgets::choice(ui, "Relief unit", &f.relief_pressure_unit, &opts, 90.0)
                {
                    set(&mut |n| n.relief_pressure_unit = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "Reorder level (%)",
                    &f.reorder_percent,
                    90.0,
                    "optional",
                ) {
                    set(&mut |n| n.reorder_percent = v.clone());
                }
                if let Some(v) = widgets::text_field(
                    ui,
                    "NER (% per day)",
                    &f.ner_percent_per_day,
                    90.0,
                    "optional",
                ) {
                    set(&mut |n| n.ner_percent_per_day = v.clone());
                }
            });
            widgets::messages(ui, check, "relief_pressure");
            widgets::messages(ui, check, "reorder_percent");
            widgets::messages(ui, check, "ner_percent_per_day");
            if editing {
                section(ui, "Change");
                if let Some(v) = widgets::text_field(
                    ui,
                    "Reason for the change",
                    &f.reason,
                    420.0,
                    "required: kept in the tank's history",
                ) {
                    set(&mut |n| n.reason = v.clone());
                }
                if view.setup_tried {
                    widgets::messages(ui, check, "reason");
                }
            }
            if let Some(n) = next {
                out.push(Action::EditSetupForm(Box::new(n)));
            }
            ui.add_space(10.0);
            ui.horizontal(|ui| {
                let label = if editing { "Save tank" } else { "Create tank" };
                if widgets::action_button(ui, label, widgets::savable(check)) {
                    out.push(Action::SaveTank);
                }
                if !check.ok {
                    ui.label(
                        RichText::new("Fix the fields marked in red to save.")
                            .small()
                            .color(style::MUTED),
                    );
                }
            });
        });
}

fn section(ui: &mut Ui, title: &str) {
    ui.add_space(8.0);
    ui.label(RichText::new(title).strong().color(style::ACCENT));
    ui.separator();
}
