//! The Deliveries tab: the delivery log (newest first) and its entry form, checked as the user types.
//! Clicking a row loads it for editing or deletion with a reason.

use crate::action::Action;
use crate::fmt;
use crate::panels::widgets::{self, Column, LogRow};
use crate::style;
use crate::view::{DeliveryForm, ViewState};
use egui::{RichText, Ui};
use units::Unit;

/// Draw the Deliveries tab.
pub fn deliveries_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let Some(t) = &view.tank else { return };
    egui::Panel::right("delivery_form")
        .exact_size(330.0)
        .resizable(false)
        .show(ui, |ui| {
            egui::ScrollArea::vertical().show(ui, |ui| form_ui(ui, view, out));
        });
    let mut cols = vec![
        // the verdict and residual stay in view beside the form at 1360 px; the carrier takes what
        // is left (a horizontal scroll shows the rest)
        Column::text("Ticket", 78.0),
        Column::text("Start (site)", 144.0),
        Column::num("Minutes", 54.0),
        Column::num("Billed", 82.0),
        Column::num("Supply", 70.0),
        Column::text("Vehicle", 60.0),
        Column::text("Verdict", 76.0),
        Column::num("Residual (%)", 80.0),
    ];
    let used: f32 = cols.iter().map(|c| c.width).sum();
    cols.push(Column::text(
        "Carrier",
        (ui.available_width() - used - 16.0).max(120.0),
    ));
    ui.label(
        RichText::new(format!(
            "{} deliveries, newest first. Click a row to edit or delete it.",
            t.deliveries.len()
        ))
        .color(style::MUTED),
    );
    let clicked = widgets::record_log(
        ui,
        "deliveries",
        &cols,
        t.deliveries.len(),
        view.delivery_editor.form.editing,
        |id| t.deliveries.iter().position(|d| d.id == id),
        |i| {
            let d = t.deliveries.get(i)?;
            Some(LogRow {
                id: d.id,
                cells: vec![
                    d.ticket.clone(),
                    fmt::site_time(view, d.start_ms),
                    fmt::num((d.end_ms - d.start_ms) as f64 / 60_000.0, 0),
                    d.quantity_text.clone(),
                    d.supply_text.clone(),
                    d.vehicle.clone(),
                    d.verdict
                        .map_or("not audited yet".into(), |v| v.0.word().to_owned()),
                    d.verdict.map_or(String::new(), |v| fmt::num(v.1, 2)),
                    d.carrier.clone(),
                ],
                colour: d.verdict.and_then(|v| style::verdict_colour(v.0)),
            })
        },
    );
    if let Some(id) = clicked {
        out.push(Action::SelectDelivery(Some(id)));
    }
}

fn form_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let f = &view.delivery_editor.form;
    let check = &view.delivery_editor.check;
    let editing = f.editing.is_some();
    if widgets::form_heading(ui, "delivery", editing) {
        out.push(Action::SelectDelivery(None));
    }
    let mut next: Option<DeliveryForm> = None;
    let mut set = |g: &mut dyn FnMut(&mut DeliveryForm)| {
        let mut n = next.clone().unwrap_or_else(|| f.clone());
        g(&mut n);
        next = Some(n);
    };
    if let Some(v) = widgets::text_field(ui, "Ticket", &f.ticket, 300.0, "ticket number") {
        set(&mut |n| n.ticket = v.clone());
    }
    widgets::messages(ui, check, "ticket");
    let zone = view.tank.as_ref().map(|t| t.zone).unwrap_or_default();
    if let Some(v) = widgets::local_time(ui, "Start", &f.start, zone) {
        set(&mut |n| n.start = v.clone());
    }
    widgets::messages(ui, check, "start");
    if let Some(v) = widgets::local_time(ui, "End", &f.end, zone) {
        set(&mut |n| n.end = v.clone());
    }
    widgets::messages(ui, check, "end");
    ui.horizontal(|ui| {
        if let Some(v) =
            widgets::text_field(ui, "Quantity", &f.quantity, 150.0, "e.g. 4120 or 9000 lb")
        {
            set(&mut |n| n.quantity = v.clone());
        }
        let opts: Vec<&str> = units::QuantityUnit::ALL
            .iter()
            .map(|u| u.symbol())
            .collect();
        if let Some(v) = widgets::choice(ui, "Quantity unit", &f.quantity_unit, &opts, 110.0) {
            set(&mut |n| n.quantity_unit = v.clone());
        }
    });
    widgets::messages(ui, check, "quantity");
    if let Some(v) = widgets::text_field(ui, "Carrier", &f.carrier, 300.0, "") {
        set(&mut |n| n.carrier = v.clone());
    }
    widgets::messages(ui, check, "carrier");
    if let Some(v) = widgets::text_field(ui, "Vehicle", &f.vehicle, 300.0, "") {
        set(&mut |n| n.vehicle = v.clone());
    }
    widgets::messages(ui, check, "vehicle");
    ui.horizontal(|ui| {
        if let Some(v) = widgets::text_field(
            ui,
            "Supply pressure (optional)",
            &f.supply_pressure,
            150.0,
            "e.g. 2.5",
        ) {
            set(&mut |n| n.supply_pressure = v.clone());
        }
        let opts: Vec<&str> = units::TankPressureUnit::ALL
            .iter()
            .map(|u| u.symbol())
            .collect();
        if let Some(v) = widgets::choice(
            ui,
            "Supply pressure unit",
            &f.supply_pressure_unit,
            &opts,
            110.0,
        ) {
            set(&mut |n| n.supply_pressure_unit = v.clone());
        }
    });
    widgets::messages(ui, check, "supply_pressure");
    if editing
        && let Some(v) = widgets::reason_field(ui, &f.reason, check, view.delivery_editor.tried)
    {
        set(&mut |n| n.reason = v.clone());
    }
    if let Some(n) = next {
        out.push(Action::EditDeliveryForm(n));
    }
    for line in &check.preview {
        ui.label(RichText::new(line).color(style::MUTED));
    }
    ui.add_space(6.0);
    let (save, delete) =
        widgets::save_and_delete(ui, "delivery", editing, widgets::savable(check), &f.reason);
    if save {
        out.push(Action::SaveDelivery);
    }
    if delete {
        out.push(Action::DeleteDelivery);
    }
    if editing {
        widgets::record_history(ui, "delivery", &view.delivery_editor.history);
    }
}
