//! Forms filled from stored records (for editing) and blank forms with sensible starting values.

use super::*;
/// The setup form filled from a stored tank (and its site).
pub fn setup_form_for(repo: &dyn Repository, id: i64) -> Result<SetupForm, StoreError> {
    let t = repo.tank(store::TankId(id))?;
    let site = repo.sites()?.into_iter().find(|s| s.id == t.site_id);
    let s = &t.spec;
    let o = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    Ok(SetupForm {
        editing: Some(id),
        site: s.site.clone(),
        elevation_m: o(site.as_ref().and_then(|s| s.elevation_m)),
        barometer_kpa: o(site.as_ref().and_then(|s| s.barometer_kpa)),
        time_zone: site
            .as_ref()
            .and_then(|s| s.time_zone.clone())
            .unwrap_or_default(),
        tank: s.name.clone(),
        fluid: s.fluid.to_string(),
        orientation: s.orientation.to_string(),
        diameter_m: s.diameter_m.to_string(),
        length_m: s.length_m.to_string(),
        heads: s.heads.to_string(),
        line_temperature_c: s.line_temperature_c.to_string(),
        dp_unit: s.dp_unit.symbol().to_owned(),
        gauge_span: o(s.gauge_span),
        gauge_accuracy_percent: o(s.gauge_accuracy_percent),
        relief_pressure: s
            .relief_pressure
            .map(|r| r.value.to_string())
            .unwrap_or_default(),
        relief_pressure_unit: s
            .relief_pressure
            .map(|r| r.unit.symbol().to_owned())
            .unwrap_or_else(|| "barg".into()),
        reorder_percent: o(s.reorder_percent),
        ner_percent_per_day: o(s.ner_percent_per_day),
        reason: String::new(),
    })
}

/// A blank setup form with sensible starting values for a new tank.
pub fn new_setup_form(site: &str) -> SetupForm {
    SetupForm {
        site: site.to_owned(),
        fluid: "nitrogen".into(),
        orientation: "vertical".into(),
        diameter_m: "2.0".into(),
        length_m: "5.0".into(),
        heads: "torispherical".into(),
        line_temperature_c: "15".into(),
        dp_unit: "inH2O".into(),
        relief_pressure_unit: "barg".into(),
        ..Default::default()
    }
}

/// The reading form filled from a stored reading, for editing.
pub fn reading_form_for(repo: &dyn Repository, id: i64) -> Result<ReadingForm, StoreError> {
    let r = repo.reading(store::ReadingId(id))?;
    Ok(ReadingForm {
        editing: Some(id),
        time: r.entry.time.text.clone(),
        dp: r.entry.dp.value.to_string(),
        dp_unit: r.entry.dp.unit.symbol().to_owned(),
        pressure: r.entry.pressure.value.to_string(),
        pressure_unit: r.entry.pressure.unit.symbol().to_owned(),
        liquid_temperature: r
            .entry
            .liquid_temperature_k
            .map(|k| format!("{k} K"))
            .unwrap_or_default(),
        note: r.entry.note.unwrap_or_default(),
        reason: String::new(),
    })
}

/// A blank reading form for a tank: time now, the gauge's unit, the display pressure unit.
pub fn new_reading_form(t: Option<&store::TankRecord>, units: UnitSystem) -> ReadingForm {
    ReadingForm {
        time: fmt::rfc3339(fmt::now_ms()),
        dp_unit: t
            .map(|t| t.spec.dp_unit.symbol().to_owned())
            .unwrap_or_else(|| "inH2O".into()),
        pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}

/// The delivery form filled from a stored delivery.
pub fn delivery_form_for(repo: &dyn Repository, id: i64) -> Result<DeliveryForm, StoreError> {
    let d = repo.delivery(store::DeliveryId(id))?.entry;
    Ok(DeliveryForm {
        editing: Some(id),
        ticket: d.ticket,
        start: d.start.text,
        end: d.end.text,
        quantity: d.quantity.value.to_string(),
        quantity_unit: d.quantity.unit.symbol().to_owned(),
        carrier: d.carrier,
        vehicle: d.vehicle,
        supply_pressure: d
            .supply_pressure
            .map(|p| p.value.to_string())
            .unwrap_or_default(),
        supply_pressure_unit: d
            .supply_pressure
            .map(|p| p.unit.symbol().to_owned())
            .unwrap_or_else(|| "barg".into()),
        reason: String::new(),
    })
}

/// A blank delivery form: start and end one hour ago and now.
pub fn new_delivery_form(units: UnitSystem) -> DeliveryForm {
    let now = fmt::now_ms();
    DeliveryForm {
        start: fmt::rfc3339(now - 3_600_000),
        end: fmt::rfc3339(now),
        quantity_unit: units.default_quantity_entry_unit().to_owned(),
        supply_pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}
