//! The audit engine's view of one tank, for the app: the liquid's thermal history (its saturation
//! pressure at every reading: fills mixed by enthalpy, heat leak between them) and the open findings
//! that mark a tank in the Fleet navigator.

use audit::{AuditOptions, FindingKind, Verdict};
use std::collections::HashMap;
use units::{AbsolutePressure, GasBasis};

/// Balances and findings this recent (before the latest reading) are open, ms.
pub const OPEN_WINDOW_MS: i64 = 60 * 86_400_000;

/// What the audit says about one tank.
#[derive(Debug, Clone, Default)]
pub struct TankHistory {
    /// The liquid's saturation pressure at each reading time (ms), Pa absolute.
    pub liquid_saturation_pa: HashMap<i64, f64>,
    /// One sentence per open finding (short or excess fills, unexplained gains, losses beyond use).
    pub open_findings: Vec<String>,
    /// The audit's use rate, kg/day.
    pub usage_kg_per_day: Option<f64>,
    /// The audit's days from the last reading to the reorder level.
    pub days_to_reorder: Option<f64>,
}

/// The audit options the app uses: thermal history on, every reading's state kept.
pub fn options() -> AuditOptions {
    AuditOptions {
        keep_readings: true,
        ..AuditOptions::default()
    }
}

/// The standard uncertainty the audit gives a tracked liquid state, Pa (its own defaults).
pub fn liquid_state_u_pa(tank_pa: f64, liquid_sat_pa: f64) -> f64 {
    let o = AuditOptions::default();
    o.liquid_state_u_fraction * (tank_pa - liquid_sat_pa).max(0.0) + o.liquid_state_u_pa
}

/// Audit one stored tank over the given readings and deliveries.
pub fn tank_history(
    t: &store::Tank,
    readings: &[store::Reading],
    deliveries: &[store::Delivery],
) -> Result<TankHistory, String> {
    let engine = ledger::engine_tank(&t.spec).map_err(|e| e.to_string())?;
    let f = engine.fluid;
    let barometer = AbsolutePressure::from_pa(t.barometer_pa);
    let input = audit::TankInput {
        name: t.spec.name.clone(),
        tank: engine,
        ner_percent_per_day: t.spec.ner_percent_per_day,
        reorder_percent: t.spec.reorder_percent,
        line_temperature_k: t.spec.line_temperature_k(),
        dp_noise_u_pa: 0.0,
        readings: readings
            .iter()
            .map(|r| audit::ReadingInput {
                time_ms: r.input.time.ms,
                dp_pa: r.input.dp.si_value(),
                pressure_pa: ledger::pressure_abs_pa(t, &r.input),
                liquid_temperature_k: r.input.liquid_temperature_k,
            })
            .collect(),
        deliveries: deliveries
            .iter()
            .map(|d| audit::DeliveryInput {
                ticket: d.input.ticket.clone(),
                vehicle: d.input.vehicle.clone(),
                carrier: d.input.carrier.clone(),
                start_ms: d.input.start.ms,
                end_ms: d.input.end.ms,
                billed_kg: d.input.quantity.si().mass_kg(|b| match b {
                    GasBasis::Normal => f.gas_density_normal_kg_m3(),
                    GasBasis::Standard => f.gas_density_standard_kg_m3(),
                }),
                supply_pressure_pa: d
                    .input
                    .supply_pressure
                    .map(|p| p.si().to_absolute(barometer).pa()),
                meter_repeatability_percent: None,
            })
            .collect(),
    };
    let a = audit::audit_tank(&input, &options()).map_err(|e| e.to_string())?;
    let last = readings.iter().map(|r| r.input.time.ms).max().unwrap_or(0);
    let from = last - OPEN_WINDOW_MS;
    let mut open: Vec<String> = a
        .balances
        .iter()
        .filter(|b| b.end_ms >= from && matches!(b.verdict, Verdict::Short | Verdict::Excess))
        .map(|b| format!("fill {}: {}", b.ticket, b.explanation))
        .collect();
    open.extend(
        a.findings
            .iter()
            .filter(|f| f.to_ms >= from)
            .map(|f| match f.kind {
                FindingKind::UnexplainedGain => format!("unexplained gain: {}", f.explanation),
                FindingKind::LossBeyondUse => format!("loss beyond use: {}", f.explanation),
            }),
    );
    Ok(TankHistory {
        liquid_saturation_pa: a
            .readings
            .iter()
            .map(|r| (r.time_ms, r.liquid_saturation_pa))
            .collect(),
        open_findings: open,
        usage_kg_per_day: a.forecast.map(|f| f.usage_kg_per_day),
        days_to_reorder: a.forecast.map(|f| f.days_to_reorder),
    })
}
