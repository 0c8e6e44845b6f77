//! The tank page.

use crate::action::Action;
use crate::view::ViewState;
use egui::Ui;

/// Draw the selected tank's page.
pub fn tank_ui(ui: &mut Ui, view: &ViewState, _out: &mut Vec<Action>) {
    if let Some(e) = &view.error {
        ui.colored_label(ui.visuals().error_fg_color, e);
    }
    let Some(t) = &view.tank else {
        ui.label("Select a tank in the fleet navigator.");
        return;
    };
    let s = &t.tank.spec;
    ui.heading(format!("{} — {}", s.name, s.site));
    egui::Grid::new("tank_facts")
        .num_columns(2)
        .striped(true)
        .show(ui, |ui| {
            let mut row = |k: &str, v: String| {
                ui.label(k);
                ui.label(v);
                ui.end_row();
            };
            row("Fluid", s.fluid.to_string());
            row(
                "Vessel",
                format!("{} cylinder, {} heads", s.orientation, s.heads),
            );
            row("Inner diameter", format!("{:.3} m", s.diameter_m));
            row("Straight length", format!("{:.3} m", s.length_m));
            row("Gauge unit", s.dp_unit.to_string());
            row("Readings on record", t.readings.to_string());
        });
}
