//! What one stored reading means on screen: its contents with the liquid state the audit tracked.

use super::*;

/// The standard uncertainty the audit gives a tracked liquid state, Pa (its own settings).
fn liquid_state_u_pa(tank_pa: f64, liquid_sat_pa: f64) -> f64 {
    let o = audit::AuditOptions::default();
    o.liquid_state_u_fraction * (tank_pa - liquid_sat_pa).max(0.0) + o.liquid_state_u_pa
}

/// The liquid state of a reading: its measured temperature (set by `evaluate::conditions`), else the
/// saturation pressure the thermal history gives, else saturated at the tank pressure; with the
/// standard uncertainty of that state for the GUM budget.
pub(super) fn liquid_for(
    t: &store::TankRecord,
    r: &store::ReadingEntry,
    sat_pa: Option<f64>,
) -> (LiquidState, f64) {
    if r.liquid_temperature_k.is_some() {
        return (LiquidState::SaturatedAtTankPressure, 0.0);
    }
    let p = evaluate::pressure_abs_pa(t, r);
    match sat_pa {
        Some(ps) if ps < p * (1.0 - 1e-6) => (
            LiquidState::SaturatedAtPressure { pressure_pa: ps },
            liquid_state_u_pa(p, ps),
        ),
        _ => (LiquidState::SaturatedAtTankPressure, 0.0),
    }
}

/// What one reading means with the given liquid state, with its GUM uncertainty when `with_u`
/// (the error as the text the page shows).
pub(super) fn contents_for(
    t: &store::TankRecord,
    engine: &tank::Tank<&'static fluids::Fluid>,
    r: &store::ReadingEntry,
    sat_pa: Option<f64>,
    with_u: bool,
) -> Result<RowContents, String> {
    let (liquid, u) = liquid_for(t, r, sat_pa);
    let c = evaluate::conditions(t, r, liquid);
    let opts = ContentsOptions::default();
    if with_u {
        let inputs = UncertaintyInputs {
            liquid_state_u: u,
            ..UncertaintyInputs::default()
        };
        engine
            .contents_with_uncertainty(r.dp.si_value(), &c, &inputs, &opts)
            .map(|(c, b)| row_contents(&c, Some(&b.combined)))
            .map_err(|e| crate::describe(&e))
    } else {
        engine
            .contents_from_reading(r.dp.si_value(), &c, &opts)
            .map(|c| row_contents(&c, None))
            .map_err(|e| crate::describe(&e))
    }
}

pub(super) fn figure(v: f64, u: f64) -> Figure {
    Figure {
        value: v,
        u: (u > 0.0 && u.is_finite()).then_some(u),
    }
}

pub(super) fn row_contents(c: &Contents, u: Option<&tank::OutputSet>) -> RowContents {
    let u = u.copied().unwrap_or_default();
    let scf_per_nm3 = if c.gas_nm3 > 0.0 {
        c.gas_scf / c.gas_nm3
    } else {
        CUBIC_FEET_PER_M3
    };
    RowContents {
        mass_kg: figure(c.total_mass_kg, u.total_mass_kg),
        fill: figure(c.fill_fraction, u.fill_fraction),
        volume_m3: figure(c.liquid_volume_m3, u.liquid_volume_m3),
        gas_nm3: figure(c.gas_nm3, u.gas_nm3),
        gas_scf: figure(c.gas_scf, u.gas_nm3 * scf_per_nm3),
        level_m: c.liquid_height_m,
        liquid_temperature_k: c.liquid_temperature_k,
        saturation_temperature_k: c.saturation_temperature_k,
        liquid_density_kg_m3: c.liquid_density_kg_m3,
        vapour_density_kg_m3: c.vapour_density_kg_m3,
        clamped: c.level_clamp != LevelClamp::None,
    }
}

/// A reading's row: what was entered and what it means (with its GUM uncertainty).
pub(super) fn reading_row(
    t: &store::TankRecord,
    engine: Option<&tank::Tank<&'static fluids::Fluid>>,
    r: &store::Reading,
    sat_pa: Option<f64>,
) -> ReadingRow {
    let contents = match engine {
        Some(e) => contents_for(t, e, &r.entry, sat_pa, true),
        None => Err("the tank's settings are refused by the engine".into()),
    };
    let barometer = AbsolutePressure::from_pa(t.barometer_pa);
    ReadingRow {
        id: r.id.0,
        time_ms: r.entry.time.ms,
        dp_text: r.entry.dp.to_string(),
        pressure_text: r.entry.pressure.to_string(),
        pressure_gauge_pa: r.entry.pressure.si().to_absolute(barometer).pa() - t.barometer_pa,
        liquid_temperature_k: r.entry.liquid_temperature_k,
        note: r.entry.note.clone().unwrap_or_default(),
        contents,
    }
}
