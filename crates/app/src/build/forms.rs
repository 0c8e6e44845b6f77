//! Checking the entry forms: typed text to checked records, with what each implies.

use super::*;
/// Split `85 inH2O` into `85` and `inH2O` (the unit text is empty when none was typed).
pub fn split_value_unit(text: &str) -> (&str, &str) {
    let t = text.trim();
    let b = t.as_bytes();
    let mut i = 0;
    if matches!(b.first(), Some(b'+' | b'-')) {
        i = 1;
    }
    while b.get(i).is_some_and(|c| c.is_ascii_digit() || *c == b'.') {
        i += 1;
    }
    if matches!(b.get(i), Some(b'e' | b'E')) {
        let mut j = i + 1;
        if matches!(b.get(j), Some(b'+' | b'-')) {
            j += 1;
        }
        if b.get(j).is_some_and(u8::is_ascii_digit) {
            while b.get(j).is_some_and(u8::is_ascii_digit) {
                j += 1;
            }
            i = j;
        }
    }
    let (n, u) = t.split_at(i);
    (n.trim(), u.trim())
}

/// The liquid temperature field in K text (`83 K`, `-190 C`, `-310 F`; a bare number is K).
fn liquid_k_text(text: &str) -> Result<String, units::UnitError> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(String::new());
    }
    let (n, u) = split_value_unit(t);
    if u.is_empty() {
        return Ok(n.to_owned());
    }
    units::parse_temperature(t).map(|e| e.si_value().to_string())
}

/// Check the reading form against its tank; on success the checked reading and the preview of what
/// it implies.
pub fn check_reading(
    form: &ReadingForm,
    t: &store::TankRecord,
    units: UnitSystem,
) -> (FormCheck, Option<ReadingEntry>) {
    let (dp, dp_u) = split_value_unit(&form.dp);
    let (p, p_u) = split_value_unit(&form.pressure);
    let dp_unit = if dp_u.is_empty() {
        form.dp_unit.as_str()
    } else {
        dp_u
    };
    let p_unit = if p_u.is_empty() {
        form.pressure_unit.as_str()
    } else {
        p_u
    };
    let mut extra = Vec::new();
    let liquid = match liquid_k_text(&form.liquid_temperature) {
        Ok(k) => k,
        Err(e) => {
            extra.push(FieldMessage::new("liquid_temperature_k", e.to_string()));
            String::new()
        }
    };
    if dp.is_empty() && !form.dp.trim().is_empty() {
        extra.push(FieldMessage {
            field: "dp".into(),
            reason: format!("'{}' is not a number", form.dp.trim()),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this reading is changed (kept in its history)".into(),
        });
    }
    let zone = store::zone_of(t.time_zone.as_deref());
    let time = super::entry_instant(&form.time, zone).unwrap_or_else(|e| {
        extra.push(FieldMessage::new("time", e));
        String::new()
    });
    let fields = ReadingFields {
        time: &time,
        dp,
        dp_unit,
        pressure: p,
        pressure_unit: p_unit,
        liquid_temperature_k: &liquid,
        note: &form.note,
    };
    let mut check = FormCheck::default();
    let input = match fields.check(t.barometer_pa) {
        Ok(input) => match evaluate::check_reading_against_tank(t, &input) {
            Ok(()) => Some(input),
            Err(e) => {
                extra.push(FieldMessage {
                    field: e.field,
                    reason: e.reason,
                });
                None
            }
        },
        Err(errs) => {
            let mut m = errs;
            // One message per field: the typed-text check above says it best.
            m.retain(|e| !extra.iter().any(|x| x.field == e.field));
            extra.extend(m);
            None
        }
    };
    let input = input.and_then(|i| match evaluate::contents_of(t, &i) {
        Ok(c) => {
            let rc = row_contents(&c, None);
            check.preview = vec![
                format!(
                    "Total mass {} {}",
                    fmt::num(units.mass(c.total_mass_kg), 0),
                    units.mass_unit()
                ),
                format!(
                    "Fill {} % · liquid {} {}",
                    fmt::num(c.fill_fraction * 100.0, 1),
                    fmt::num(units.volume(c.liquid_volume_m3), 2),
                    units.volume_unit()
                ),
                format!(
                    "Gas equivalent {} {}",
                    fmt::num(fmt::gas(units, c.gas_nm3, c.gas_scf), 0),
                    units.gas_unit()
                ),
            ];
            if rc.clamped {
                check
                    .preview
                    .push("level at the empty or full end (within the gauge tolerance)".into());
            }
            Some(i)
        }
        Err(e) => {
            extra.push(FieldMessage {
                field: "dp".into(),
                reason: e.to_string(),
            });
            None
        }
    });
    check.errors = extra;
    check.ok = input.is_some() && check.errors.is_empty();
    let ok = check.ok;
    (check, input.filter(|_| ok))
}

/// Check the delivery form.
pub fn check_delivery(
    form: &DeliveryForm,
    t: &store::TankRecord,
) -> (FormCheck, Option<DeliveryEntry>) {
    let (q, q_u) = split_value_unit(&form.quantity);
    let (sp, sp_u) = split_value_unit(&form.supply_pressure);
    let q_unit = if q_u.is_empty() {
        form.quantity_unit.as_str()
    } else {
        q_u
    };
    let sp_unit = if sp.is_empty() {
        ""
    } else if sp_u.is_empty() {
        form.supply_pressure_unit.as_str()
    } else {
        sp_u
    };
    let mut extra = Vec::new();
    if q.is_empty() && !form.quantity.trim().is_empty() {
        extra.push(FieldMessage {
            field: "quantity".into(),
            reason: format!("'{}' is not a number", form.quantity.trim()),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this delivery is changed (kept in its history)".into(),
        });
    }
    let zone = store::zone_of(t.time_zone.as_deref());
    let mut instant = |field: &str, e: &LocalEntry| {
        super::entry_instant(e, zone).unwrap_or_else(|m| {
            extra.push(FieldMessage::new(field, m));
            String::new()
        })
    };
    let (start, end) = (instant("start", &form.start), instant("end", &form.end));
    let fields = DeliveryFields {
        ticket: &form.ticket,
        start: &start,
        end: &end,
        quantity: q,
        quantity_unit: q_unit,
        carrier: &form.carrier,
        vehicle: &form.vehicle,
        supply_pressure: sp,
        supply_pressure_unit: sp_unit,
    };
    let input = match fields.check(t.barometer_pa) {
        Ok(i) => Some(i),
        Err(errs) => {
            let mut m = errs;
            m.retain(|e| !extra.iter().any(|x| x.field == e.field));
            extra.extend(m);
            None
        }
    };
    let mut check = FormCheck {
        errors: extra,
        ..Default::default()
    };
    if let Some(i) = &input {
        check.preview = vec![format!(
            "{} over {} min",
            i.quantity,
            (i.end.ms - i.start.ms) / 60_000
        )];
    }
    check.ok = input.is_some() && check.errors.is_empty();
    let ok = check.ok;
    (check, input.filter(|_| ok))
}

/// Check the setup form; the preview draws the vessel and the full-tank DP whenever the shape checks.
pub fn check_setup(
    form: &SetupForm,
    units: UnitSystem,
) -> (
    FormCheck,
    SetupPreview,
    Option<(TankSpec, store::SiteSettings)>,
) {
    let mut extra = Vec::new();
    let opt = |field: &str, text: &str, extra: &mut Vec<FieldMessage>| -> Option<f64> {
        let t = text.trim();
        if t.is_empty() {
            return None;
        }
        match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            _ => {
                extra.push(FieldMessage {
                    field: field.into(),
                    reason: format!("'{t}' is not a number"),
                });
                None
            }
        }
    };
    let zone = form.time_zone.trim();
    let site = store::SiteSettings {
        elevation_m: opt("elevation_m", &form.elevation_m, &mut extra),
        barometer_kpa: opt("barometer_kpa", &form.barometer_kpa, &mut extra),
        time_zone: match zone.parse::<units::Zone>() {
            _ if zone.is_empty() => None,
            Ok(z) => Some(z.name().to_string()),
            Err(m) => {
                extra.push(FieldMessage {
                    field: "time_zone".into(),
                    reason: m,
                });
                None
            }
        },
    };
    if site
        .barometer_kpa
        .is_some_and(|b| !(50.0..=110.0).contains(&b))
    {
        extra.push(FieldMessage {
            field: "barometer_kpa".into(),
            reason: "a barometer is between 50 and 110 kPa".into(),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this tank is changed (kept in its history)".into(),
        });
    }
    let (rp, rp_u) = split_value_unit(&form.relief_pressure);
    let fields = TankFields {
        site: &form.site,
        tank: &form.tank,
        fluid: &form.fluid,
        orientation: &form.orientation,
        diameter_m: &form.diameter_m,
        length_m: &form.length_m,
        heads: &form.heads,
        line_temperature_c: &form.line_temperature_c,
        crown_ratio: "",
        knuckle_ratio: "",
        dp_unit: &form.dp_unit,
        gauge_span: &form.gauge_span,
        gauge_accuracy_percent: &form.gauge_accuracy_percent,
        relief_pressure: rp,
        relief_pressure_unit: if rp_u.is_empty() {
            &form.relief_pressure_unit
        } else {
            rp_u
        },
        reorder_percent: &form.reorder_percent,
        ner_percent_per_day: &form.ner_percent_per_day,
        strapping: "",
    };
    let mut preview = SetupPreview::default();
    let spec = match fields.check() {
        Ok(s) => Some(s),
        Err(errs) => {
            extra.extend(errs);
            None
        }
    };
    // The drawing follows the shape even while other fields are incomplete.
    let shape = TankFields {
        site: "preview",
        tank: "preview",
        fluid: if form.fluid.trim().is_empty() {
            "nitrogen"
        } else {
            &form.fluid
        },
        orientation: &form.orientation,
        diameter_m: &form.diameter_m,
        length_m: &form.length_m,
        heads: &form.heads,
        line_temperature_c: "15",
        reorder_percent: &form.reorder_percent,
        ..Default::default()
    }
    .check();
    if let Ok(s) = &shape {
        preview.vessel = vessel(s);
    }
    if let Some(s) = &spec {
        match full_dp_lines(s, units) {
            Ok((lines, warn)) => {
                preview.full_dp = lines;
                preview.span_warning = warn;
            }
            Err(e) => extra.push(FieldMessage::new("diameter_m", crate::describe(&e))),
        }
    }
    let check = FormCheck {
        ok: spec.is_some() && extra.is_empty(),
        errors: extra,
        preview: Vec::new(),
    };
    let out = spec.filter(|_| check.ok).map(|s| (s, site));
    (check, preview, out)
}

/// Full-tank DP of a spec at 1 atm saturation (coldest usual liquid) and at the relief pressure,
/// in the gauge's unit, and a warning when the span is too small.
fn full_dp_lines(
    s: &TankSpec,
    units: UnitSystem,
) -> Result<(Vec<String>, Option<String>), evaluate::EvalError> {
    let e = evaluate::engine_tank(s)?;
    let opts = ContentsOptions::default();
    let u = s.dp_unit;
    let mut lines = Vec::new();
    let mut max_dp: f64 = 0.0;
    let mut cases = vec![("saturated at 1 atm".to_owned(), fmt::ATMOSPHERE_PA * 1.001)];
    if let Some(r) = &s.relief_pressure {
        let p = r
            .si()
            .to_absolute(AbsolutePressure::STANDARD_ATMOSPHERE)
            .pa();
        cases.push((
            format!(
                "saturated at relief, {} {}",
                fmt::num(units.pressure(p - fmt::ATMOSPHERE_PA), 1),
                units.pressure_unit()
            ),
            p,
        ));
    }
    for (what, p) in cases {
        let c = tank::Conditions::saturated(p).with_line_temperature_k(s.line_temperature_k());
        match e.full_tank_dp(&c, &opts) {
            Ok(f) => {
                max_dp = max_dp.max(f.reading_pa);
                lines.push(format!(
                    "Full tank, {what}: {} {}",
                    fmt::num(u.value_from_si(f.reading_pa), 1),
                    u.symbol()
                ));
            }
            Err(err) => lines.push(format!("Full tank, {what}: {err}")),
        }
    }
    let warn = s.gauge_span_pa().and_then(|span| {
        (span < max_dp).then(|| {
            format!(
                "The gauge span ({} {}) is below the full-tank DP: a full tank would read off scale.",
                fmt::num(u.value_from_si(span), 1),
                u.symbol()
            )
        })
    });
    Ok((lines, warn))
}
