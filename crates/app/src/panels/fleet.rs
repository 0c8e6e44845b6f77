//! The fleet navigator: sites and their tanks.

use crate::action::Action;
use crate::view::ViewState;
use egui::Ui;

/// Draw the fleet navigator.
pub fn fleet_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    ui.heading("Fleet");
    let mut filter = view.fleet_filter.clone();
    let r = ui.add(egui::TextEdit::singleline(&mut filter).hint_text("search sites and tanks"));
    r.widget_info(|| egui::WidgetInfo::labeled(egui::Role::TextInput, true, "Search fleet"));
    if r.changed() {
        out.push(Action::SetFleetFilter(filter.clone()));
    }
    ui.separator();
    let needle = filter.to_lowercase();
    let selected = view.tank.as_ref().map(|t| t.id);
    egui::ScrollArea::vertical().show(ui, |ui| {
        if view.fleet.is_empty() {
            ui.label("No sites yet. Import a tanks CSV: cryoledger import --db DB --tanks FILE");
        }
        for site in &view.fleet {
            let site_hit = site.name.to_lowercase().contains(&needle);
            let tanks: Vec<_> = site
                .tanks
                .iter()
                .filter(|t| site_hit || t.name.to_lowercase().contains(&needle))
                .collect();
            if tanks.is_empty() && !site_hit {
                continue;
            }
            egui::CollapsingHeader::new(&site.name)
                .default_open(true)
                .show(ui, |ui| {
                    for t in tanks {
                        let text =
                            format!("{}  ·  {}  ·  {} readings", t.name, t.fluid, t.readings);
                        if ui.selectable_label(selected == Some(t.id), text).clicked() {
                            out.push(Action::SelectTank(t.id));
                        }
                    }
                });
        }
    });
}
