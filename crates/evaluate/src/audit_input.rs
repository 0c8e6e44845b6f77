//! The audit engine's input for a stored tank: the one place it is built, for the command line, the
//! window and the reports alike.

use std::collections::HashMap;

use crate::EvalError;
use crate::engine::{engine_tank, pressure_abs_pa};
use audit::{DeliveryInput, ReadingInput, TankInput};
use fluids::Fluid;
use store::{Delivery, Reading, Repository, TankRecord};
use units::{AbsolutePressure, DpUnit, Entered, GasBasis, QuantityUnit, Unit};

/// Each vehicle's meter repeatability (% of delivered, standard uncertainty; None: the audit default).
pub type Meters = HashMap<String, Option<f64>>;

/// The stored vehicles' meter figures.
pub fn meters(repo: &dyn Repository) -> Result<Meters, EvalError> {
    Ok(repo
        .vehicles()?
        .into_iter()
        .map(|v| (v.name, v.meter_repeatability_percent))
        .collect())
}

/// Resolution of a DP entered in `unit` as a standard uncertainty (step / √12, JCGM 100:2008 F.2.2.1;
/// the steps are what gauges commonly display: common practice, no source).
pub fn dp_resolution_u_pa(unit: DpUnit) -> f64 {
    let step = match unit {
        DpUnit::InH2O | DpUnit::InH2O60F | DpUnit::InH2O4C => 0.1,
        DpUnit::MmH2O | DpUnit::Pa | DpUnit::Mbar => 1.0,
        DpUnit::KPa | DpUnit::Psi => 0.01,
        DpUnit::Bar => 0.001,
    };
    unit.si_from_value(step) / 12f64.sqrt()
}

/// A billed quantity as a mass: gas volumes through the fluid's real-gas density at the volume's
/// reference conditions.
pub fn billed_kg(f: &Fluid, quantity: &Entered<QuantityUnit>) -> f64 {
    quantity.si().mass_kg(|basis| match basis {
        GasBasis::Normal => f.gas_density_normal_kg_m3(),
        GasBasis::Standard => f.gas_density_standard_kg_m3(),
    })
}

/// The audit input of a stored tank: its readings (all of them, any order) and its deliveries that
/// start at or after `since_ms`, with the gauge's display resolution and each vehicle's meter figure.
pub fn tank_input(
    t: &TankRecord,
    readings: &[Reading],
    deliveries: &[Delivery],
    meters: &Meters,
    since_ms: Option<i64>,
) -> Result<TankInput, EvalError> {
    let engine = engine_tank(&t.spec).map_err(|e| EvalError::settings(t, e))?;
    let f = engine.fluid;
    let barometer = AbsolutePressure::from_pa(t.barometer_pa);
    let readings = readings
        .iter()
        .map(|r| ReadingInput {
            time_ms: r.entry.time.ms,
            dp_pa: r.entry.dp.si_value(),
            pressure_pa: pressure_abs_pa(t, &r.entry),
            liquid_temperature_k: r.entry.liquid_temperature_k,
        })
        .collect();
    let deliveries = deliveries
        .iter()
        .filter(|d| since_ms.is_none_or(|s| d.entry.start.ms >= s))
        .map(|d| {
            let e = &d.entry;
            DeliveryInput {
                ticket: e.ticket.clone(),
                meter_repeatability_percent: meters.get(&e.vehicle).copied().flatten(),
                vehicle: e.vehicle.clone(),
                carrier: e.carrier.clone(),
                start_ms: e.start.ms,
                end_ms: e.end.ms,
                billed_kg: billed_kg(f, &e.quantity),
                supply_pressure_pa: e
                    .supply_pressure
                    .map(|p| p.si().to_absolute(barometer).pa()),
            }
        })
        .collect();
    Ok(TankInput {
        name: t.spec.name.clone(),
        ner_percent_per_day: t.spec.ner_percent_per_day,
        reorder_percent: t.spec.reorder_percent,
        line_temperature_k: t.spec.line_temperature_k(),
        dp_noise_u_pa: dp_resolution_u_pa(t.spec.dp_unit),
        tank: engine,
        readings,
        deliveries,
        // a zone the store holds was checked when it was written; none (or an unreadable one) leaves
        // the audit to find the site's clock from its use
        zone: t.time_zone.as_deref().and_then(|z| z.parse().ok()),
    })
}
