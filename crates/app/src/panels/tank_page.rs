//! The tank page: a header with the tank's identity and attention, then the tabs Now, Readings,
//! Deliveries and Trend.

use crate::action::Action;
use crate::panels::{deliveries, now, readings, trend, widgets};
use crate::style;
use crate::view::{TankTab, ViewState};
use egui::{RichText, Ui};

/// Draw the selected tank's page.
pub fn tank_page_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let Some(t) = &view.tank else {
        if widgets::message_line(ui, view.notice.as_deref(), view.error.as_deref()) {
            out.push(Action::DismissMessage);
        }
        ui.add_space(40.0);
        ui.vertical_centered(|ui| {
            ui.label(RichText::new("Select a tank in the Fleet list.").size(16.0));
            ui.label(RichText::new("Or create one with New tank.").color(style::MUTED));
        });
        return;
    };
    ui.add_space(2.0);
    ui.horizontal(|ui| {
        ui.label(RichText::new(&t.name).size(22.0).strong());
        ui.label(
            RichText::new(format!("{} · {}", t.site, t.fluid))
                .size(15.0)
                .color(style::MUTED),
        );
        for a in &t.attention {
            egui::Frame::new()
                .fill(style::CAUTION_BG)
                .corner_radius(8)
                .inner_margin(egui::Margin::symmetric(8, 1))
                .show(ui, |ui| {
                    ui.label(RichText::new(a.short()).color(style::CAUTION).small())
                        .on_hover_text(a.describe());
                });
        }
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            if ui.button("Edit tank setup").clicked() {
                out.push(Action::OpenSetup(Some(t.id)));
            }
            if ui
                .button("Save stock statement…")
                .on_hover_text(
                    "This tank's monthly stock statement over the last twelve months and this one: in, out, losses found, and the running sum of fill residuals against its band (HTML, or CSV for the table; as `cryoledger report statement`).",
                )
                .clicked()
            {
                out.push(Action::SaveReport {
                    what: crate::action::ReportRequest::Statement(t.id),
                    to: None,
                });
            }
        });
    });
    ui.label(RichText::new(&t.summary).color(style::MUTED));
    if t.oxygen {
        ui.label(
            RichText::new(
                "Oxygen service: keep oil, grease and ignition sources away; use only parts approved for oxygen (Help and cautions).",
            )
            .small()
            .color(style::CAUTION),
        );
    }
    ui.add_space(4.0);
    ui.horizontal(|ui| {
        for tab in TankTab::ALL {
            let r = ui.selectable_label(view.tab == tab, RichText::new(tab.title()).size(15.0));
            if r.clicked() && view.tab != tab {
                out.push(Action::ShowTab(tab));
            }
        }
    });
    ui.separator();
    if widgets::message_line(ui, view.notice.as_deref(), view.error.as_deref()) {
        out.push(Action::DismissMessage);
    }
    match view.tab {
        TankTab::Now => now::now_ui(ui, view, out),
        TankTab::Readings => readings::readings_ui(ui, view, out),
        TankTab::Deliveries => deliveries::deliveries_ui(ui, view, out),
        TankTab::Trend => trend::trend_ui(ui, view, out),
    }
}
