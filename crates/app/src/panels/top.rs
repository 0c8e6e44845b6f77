//! The top bar (title, pages, units) and the status bar (frame time, background work).

use crate::action::Action;
use crate::fmt::UnitSystem;
use crate::style;
use crate::view::{Page, ViewState};
use egui::{RichText, Ui};

/// The top bar.
pub fn top_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    ui.horizontal(|ui| {
        ui.label(
            RichText::new("cryoledger")
                .strong()
                .size(16.0)
                .color(style::ACCENT),
        );
        ui.separator();
        let on_tank = view.page == Page::Tank;
        if ui.selectable_label(on_tank, "Tank page").clicked() {
            out.push(Action::ShowTankPage);
        }
        if ui
            .selectable_label(view.page == Page::Setup, "Tank setup")
            .clicked()
        {
            out.push(Action::OpenSetup(view.tank.as_ref().map(|t| t.id)));
        }
        if ui
            .selectable_label(view.page == Page::Audit, "Audit")
            .on_hover_text("Every fill's balance, vehicles, gauges and findings")
            .clicked()
        {
            out.push(Action::ShowAudit);
        }
        if ui
            .selectable_label(view.page == Page::Import, "Import")
            .on_hover_text("Import tanks, readings and deliveries from CSV files")
            .clicked()
        {
            out.push(Action::ShowImport);
        }
        if ui
            .selectable_label(view.page == Page::Help, "Help and cautions")
            .clicked()
        {
            out.push(Action::ShowHelp);
        }
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            for u in [UnitSystem::Us, UnitSystem::Si] {
                if ui.selectable_label(view.units == u, u.label()).clicked() && view.units != u {
                    out.push(Action::SetUnits(u));
                }
            }
            ui.label(RichText::new("Units").color(style::MUTED));
        });
    });
}

/// The status bar.
pub fn status_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    ui.horizontal(|ui| {
        ui.label(
            RichText::new("Figures are estimates: see Help and cautions before any fill.")
                .color(style::MUTED)
                .small(),
        );
        ui.separator();
        if !view.ledger.is_empty() {
            ui.label(RichText::new(&view.ledger).color(style::MUTED).small());
            ui.separator();
        }
        match &view.history_check {
            Some(h) => {
                let colour = if h.ok { style::MUTED } else { style::ERROR };
                ui.label(RichText::new(&h.text).color(colour).small());
            }
            None => {
                ui.label(
                    RichText::new("History: checking…")
                        .color(style::MUTED)
                        .small(),
                );
            }
        }
        if ui
            .small_button("Verify history")
            .on_hover_text("Check that no record was changed outside cryoledger (its hash chain)")
            .clicked()
        {
            out.push(Action::VerifyHistory);
        }
        if let Some((done, total)) = view.fleet.progress {
            ui.separator();
            ui.label(
                RichText::new(format!("Fleet summary {done}/{total}"))
                    .color(style::MUTED)
                    .small(),
            );
        }
        if !view.diagnostics {
            return;
        }
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            ui.label(
                RichText::new(format!("frame {:.2} ms CPU", view.frame_ms))
                    .color(style::MUTED)
                    .small(),
            );
            if let Some(t) = &view.tank {
                ui.separator();
                ui.label(
                    RichText::new(format!("page built in {:.0} ms", t.build_ms))
                        .color(style::MUTED)
                        .small(),
                );
            }
        });
    });
}
