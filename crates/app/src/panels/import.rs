//! The import page: a file for tanks, readings and deliveries each; "Check" reads them as the importer
//! will (header and first rows shown) and lists every refused row with its file and line, writing
//! nothing; "Import" writes all of it or nothing, and the audit runs again.

use crate::action::Action;
use crate::style;
use crate::view::{IMPORT_KINDS, ViewState};
use egui::{RichText, Ui};

/// Draw the import page.
pub fn import_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let iv = &view.import;
    ui.heading("Import CSV files");
    ui.label(
        RichText::new(
            "The formats `cryoledger export` writes (see README): a header row, columns in any order. \
             Tanks are read first, then readings, then deliveries. Nothing is written until every row \
             checks out.",
        )
        .color(style::MUTED),
    );
    ui.add_space(6.0);
    for (k, kind) in IMPORT_KINDS.iter().enumerate() {
        ui.horizontal(|ui| {
            ui.add_sized([90.0, 20.0], egui::Label::new(*kind));
            let mut p = iv.paths[k].clone();
            let r = ui.add(
                egui::TextEdit::singleline(&mut p)
                    .desired_width(560.0)
                    .hint_text("path of a .csv file (optional)"),
            );
            let name = format!("{kind} file");
            r.widget_info(|| egui::WidgetInfo::labeled(egui::Role::TextInput, true, &name));
            if r.changed() {
                out.push(Action::SetImportPath(k, p));
            }
            if ui
                .button("Choose…")
                .on_hover_text("Pick the file with the desktop's file dialog")
                .clicked()
            {
                out.push(Action::ChooseImportFile(k));
            }
        });
    }
    ui.add_space(6.0);
    let busy = iv.progress.is_some();
    ui.horizontal(|ui| {
        if ui.add_enabled(!busy, egui::Button::new("Check")).clicked() {
            out.push(Action::CheckImport);
        }
        if ui
            .add_enabled(iv.checked.is_some() && !busy, egui::Button::new("Import"))
            .on_disabled_hover_text("Check the files first")
            .clicked()
        {
            out.push(Action::RunImport);
        }
    });
    if let Some((read, total)) = iv.progress {
        let f = if total > 0 {
            read as f32 / total as f32
        } else {
            0.0
        };
        ui.add(
            egui::ProgressBar::new(f.min(1.0))
                .desired_width(420.0)
                .text(format!(
                    "importing: {:.1} of {:.1} MB read (all or nothing: written when every row checks out)",
                    read as f64 / 1e6,
                    total as f64 / 1e6
                )),
        );
    }
    if let Some(done) = &iv.done {
        ui.label(RichText::new(done).color(style::OK).strong());
    }
    if let Some(c) = &iv.checked {
        ui.label(RichText::new(c).color(style::OK));
    }
    if !iv.errors.is_empty() {
        ui.add_space(4.0);
        ui.label(
            RichText::new(format!(
                "Nothing can be imported: {} problem(s){}",
                iv.errors.len(),
                if iv.truncated {
                    " (checking stopped at the cap; there may be more)"
                } else {
                    ""
                }
            ))
            .color(style::ERROR)
            .strong(),
        );
    }
    egui::ScrollArea::vertical().show(ui, |ui| {
        for e in &iv.errors {
            ui.label(RichText::new(e).color(style::ERROR));
        }
        for f in &iv.files {
            ui.add_space(8.0);
            ui.label(
                RichText::new(format!(
                    "{}: {} ({} rows; the first {} as read)",
                    IMPORT_KINDS.get(f.kind).copied().unwrap_or(""),
                    f.path,
                    f.row_count,
                    f.rows.len()
                ))
                .strong(),
            );
            egui::ScrollArea::horizontal()
                .id_salt(("import_preview", f.kind))
                .show(ui, |ui| {
                    egui::Grid::new(("import_grid", f.kind))
                        .striped(true)
                        .show(ui, |ui| {
                            for h in &f.header {
                                ui.label(RichText::new(h).color(style::MUTED));
                            }
                            ui.end_row();
                            for row in &f.rows {
                                for c in row {
                                    ui.label(c);
                                }
                                ui.end_row();
                            }
                        });
                });
        }
    });
}
