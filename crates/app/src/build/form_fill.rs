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
        opened: t.revision,
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
    let zone = store::zone_of(repo.tank(r.tank_id)?.time_zone.as_deref());
    Ok(ReadingForm {
        editing: Some(id),
        opened: r.revision,
        time: local_entry(zone, r.entry.time.ms),
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
    let zone = store::zone_of(t.and_then(|t| t.time_zone.as_deref()));
    ReadingForm {
        time: local_entry(zone, fmt::now_ms()),
        dp_unit: t
            .map(|t| t.spec.dp_unit.symbol().to_owned())
            .unwrap_or_else(|| "inH2O".into()),
        pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}

/// The delivery form filled from a stored delivery.
pub fn delivery_form_for(repo: &dyn Repository, id: i64) -> Result<DeliveryForm, StoreError> {
    let stored = repo.delivery(store::DeliveryId(id))?;
    let zone = store::zone_of(repo.tank(stored.tank_id)?.time_zone.as_deref());
    let d = stored.entry;
    Ok(DeliveryForm {
        editing: Some(id),
        opened: stored.revision,
        ticket: d.ticket,
        start: local_entry(zone, d.start.ms),
        end: local_entry(zone, d.end.ms),
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

/// A blank delivery form: start and end one hour ago and now, on the tank's site's clock.
pub fn new_delivery_form(t: Option<&store::TankRecord>, units: UnitSystem) -> DeliveryForm {
    let now = fmt::now_ms();
    let zone = store::zone_of(t.and_then(|t| t.time_zone.as_deref()));
    DeliveryForm {
        start: local_entry(zone, now - 3_600_000),
        end: local_entry(zone, now),
        quantity_unit: units.default_quantity_entry_unit().to_owned(),
        supply_pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}

/// An instant as a form shows it on the site's clock; a time the clocks show twice says which.
pub fn local_entry(zone: units::Zone, ms: i64) -> LocalEntry {
    let Some((date, h, m)) = zone.parts(ms) else {
        return LocalEntry::default();
    };
    let repeat = match zone.instant(date, h, m, units::Repeat::First) {
        Ok(first) if zone.instant(date, h, m, units::Repeat::Ask).is_err() => Some(first != ms),
        _ => None,
    };
    LocalEntry {
        date: date.format("%Y-%m-%d").to_string(),
        clock: format!("{h:02}:{m:02}"),
        repeat,
    }
}

/// The instant a form's local time names on the site's clock, as RFC 3339 with the site's offset
/// (the text stored as entered); the reason when it names none (no such day or time, a time the
/// clocks skip, or a repeated time not yet chosen).
pub fn entry_instant(e: &LocalEntry, zone: units::Zone) -> Result<String, String> {
    let date = chrono::NaiveDate::parse_from_str(e.date.trim(), "%Y-%m-%d")
        .map_err(|_| format!("'{}' is not a day (YYYY-MM-DD)", e.date.trim()))?;
    let clock = e.clock.trim();
    let (h, m) = clock
        .split_once(':')
        .and_then(|(h, m)| Some((h.parse::<u32>().ok()?, m.parse::<u32>().ok()?)))
        .filter(|(h, m)| *h < 24 && *m < 60)
        .ok_or_else(|| format!("'{clock}' is not a time of day (HH:MM, 00:00 to 23:59)"))?;
    let repeat = match e.repeat {
        None => units::Repeat::Ask,
        Some(false) => units::Repeat::First,
        Some(true) => units::Repeat::Second,
    };
    zone.instant(date, h, m, repeat)
        .map(|ms| zone.rfc3339(ms))
        .map_err(|e| e.to_string())
}
