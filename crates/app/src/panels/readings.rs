//! The Readings tab: the reading log (newest first, virtualised) and the entry form, which shows what
//! the typed reading implies as the user types and refuses to save an invalid one. Clicking a row
//! loads it for editing or deletion, each with a reason kept in the reading's history.

use crate::action::Action;
use crate::fmt::{self, UnitSystem};
use crate::panels::widgets::{self, Column, LogRow};
use crate::style;
use crate::view::{ReadingForm, ViewState};
use egui::{RichText, Ui};
use units::Unit;

/// Draw the Readings tab.
pub fn readings_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let Some(t) = &view.tank else { return };
    egui::Panel::right("reading_form")
        .exact_size(330.0)
        .resizable(false)
        .show(ui, |ui| {
            egui::ScrollArea::vertical().show(ui, |ui| form_ui(ui, view, out));
        });
    let units = view.units;
    let mut cols = vec![
        Column::text("Time (site)", 150.0),
        Column::num(format!("DP ({})", t.dp_unit), 70.0),
        Column::num("Pressure", 80.0),
        Column::num(format!("Mass ({})", units.mass_unit()), 76.0),
        Column::num("± u", 46.0),
        Column::num("Fill (%)", 56.0),
        Column::num(format!("Liquid ({})", units.volume_unit()), 76.0),
        Column::num(format!("Gas ({})", units.gas_unit()), 76.0),
    ];
    let used: f32 = cols.iter().map(|c| c.width).sum();
    cols.push(Column::text(
        "Note",
        (ui.available_width() - used - 16.0).max(120.0),
    ));
    ui.label(
        RichText::new(format!(
            "{} readings, newest first. Click a row to edit or delete it.",
            t.readings.len()
        ))
        .color(style::MUTED),
    );
    let clicked = widgets::record_log(
        ui,
        "readings",
        &cols,
        t.readings.len(),
        view.reading_editor.form.editing,
        |id| t.readings.iter().position(|r| r.id == id),
        |i| {
            let r = t.readings.get(i)?;
            let dp = r.dp_text.split(' ').next().unwrap_or("").to_owned();
            let cells: Vec<String> = match &r.contents {
                Ok(c) => {
                    let vd = if units == UnitSystem::Si { 3 } else { 0 };
                    vec![
                        fmt::site_time(view, r.time_ms),
                        dp,
                        r.pressure_text.clone(),
                        fmt::num(units.mass(c.mass_kg.value), 0),
                        c.mass_kg
                            .u
                            .map(|u| fmt::num(units.mass(u), 0))
                            .unwrap_or_default(),
                        fmt::num(c.fill.value * 100.0, 1),
                        fmt::num(units.volume(c.volume_m3.value), vd),
                        fmt::num(fmt::gas(units, c.gas_nm3.value, c.gas_scf.value), 0),
                        r.note.clone(),
                    ]
                }
                Err(e) => vec![
                    fmt::site_time(view, r.time_ms),
                    dp,
                    r.pressure_text.clone(),
                    "refused".into(),
                    String::new(),
                    String::new(),
                    String::new(),
                    String::new(),
                    e.clone(),
                ],
            };
            Some(LogRow {
                id: r.id,
                cells,
                colour: r.contents.is_err().then_some(style::ERROR),
            })
        },
    );
    if let Some(id) = clicked {
        out.push(Action::SelectReading(Some(id)));
    }
}

fn form_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let f = &view.reading_editor.form;
    let check = &view.reading_editor.check;
    let editing = f.editing.is_some();
    if widgets::form_heading(ui, "reading", editing) {
        out.push(Action::SelectReading(None));
    }
    let mut next: Option<ReadingForm> = None;
    let mut set = |g: &mut dyn FnMut(&mut ReadingForm)| {
        let mut n = next.clone().unwrap_or_else(|| f.clone());
        g(&mut n);
        next = Some(n);
    };
    let zone = view.tank.as_ref().map(|t| t.zone).unwrap_or_default();
    if let Some(v) = widgets::local_time(ui, "Time", &f.time, zone) {
        set(&mut |n| n.time = v.clone());
    }
    widgets::messages(ui, check, "time");
    ui.horizontal(|ui| {
        if let Some(v) = widgets::text_field(ui, "DP", &f.dp, 150.0, "e.g. 182.5 or 46 kPa") {
            set(&mut |n| n.dp = v.clone());
        }
        let opts: Vec<&str> = units::DpUnit::ALL.iter().map(|u| u.symbol()).collect();
        if let Some(v) = widgets::choice(ui, "DP unit", &f.dp_unit, &opts, 110.0) {
            set(&mut |n| n.dp_unit = v.clone());
        }
    });
    widgets::messages(ui, check, "dp");
    ui.horizontal(|ui| {
        if let Some(v) = widgets::text_field(
            ui,
            "Tank pressure",
            &f.pressure,
            150.0,
            "e.g. 11.8 or 171 psig",
        ) {
            set(&mut |n| n.pressure = v.clone());
        }
        let opts: Vec<&str> = units::TankPressureUnit::ALL
            .iter()
            .map(|u| u.symbol())
            .collect();
        if let Some(v) = widgets::choice(ui, "Pressure unit", &f.pressure_unit, &opts, 110.0) {
            set(&mut |n| n.pressure_unit = v.clone());
        }
    });
    widgets::messages(ui, check, "pressure");
    if let Some(v) = widgets::text_field(
        ui,
        "Liquid temperature (optional)",
        &f.liquid_temperature,
        300.0,
        "e.g. 83 K or -190 C",
    ) {
        set(&mut |n| n.liquid_temperature = v.clone());
    }
    widgets::messages(ui, check, "liquid_temperature_k");
    if let Some(v) = widgets::text_field(ui, "Note (optional)", &f.note, 300.0, "") {
        set(&mut |n| n.note = v.clone());
    }
    if editing
        && let Some(v) = widgets::reason_field(ui, &f.reason, check, view.reading_editor.tried)
    {
        set(&mut |n| n.reason = v.clone());
    }
    if let Some(n) = next {
        out.push(Action::EditReadingForm(n));
    }
    ui.add_space(6.0);
    if !check.preview.is_empty() {
        egui::Frame::new()
            .fill(style::CARD)
            .inner_margin(egui::Margin::same(8))
            .corner_radius(3)
            .show(ui, |ui| {
                ui.set_width(300.0);
                ui.label(
                    RichText::new("This reading means")
                        .color(style::MUTED)
                        .small(),
                );
                for line in &check.preview {
                    ui.label(line);
                }
            });
    } else if f.dp.trim().is_empty() || f.pressure.trim().is_empty() {
        ui.label(
            RichText::new("Enter the DP and the tank pressure to see the contents they imply.")
                .small()
                .color(style::MUTED),
        );
    }
    ui.add_space(6.0);
    let (save, delete) =
        widgets::save_and_delete(ui, "reading", editing, widgets::savable(check), &f.reason);
    if save {
        out.push(Action::SaveReading);
    }
    if delete {
        out.push(Action::DeleteReading);
    }
    if editing {
        widgets::record_history(ui, "reading", &view.reading_editor.history);
    }
}
