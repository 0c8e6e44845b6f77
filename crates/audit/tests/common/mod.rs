//! Simulated fleets as audit inputs (the same mapping the binary makes from stored records through
//! `ledger`: gauge class as % of span with the default systematic share, site barometer from the
//! elevation, line temperature 15 °C).

use audit::{
    AuditOptions, DeliveryInput, FleetAudit, ReadingInput, TankInput, audit_fleet, audit_tank,
};
use fluids::fluid;
use tank::{AccuracyBasis, Cylinder, Gauge, GaugeAccuracy, Tank, dp_pa_from_unit};

/// Resolution of the simulator's DP readings as a standard uncertainty (display step / √12), as the
/// binary sets it from the gauge's unit.
pub fn dp_noise_u_pa(t: &simulate::SimTank) -> f64 {
    let step = if t.dp_unit == tank::DpUnit::Mbar {
        1.0
    } else {
        0.1
    };
    dp_pa_from_unit(step, t.dp_unit) / 12f64.sqrt()
}

/// The fleet's tanks as audit inputs.
pub fn inputs(fleet: &simulate::Fleet) -> Vec<TankInput> {
    fleet
        .tanks
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let head = t.heads.head(None, None);
            let span_pa = dp_pa_from_unit(t.gauge_span, t.dp_unit);
            let gauge = Gauge {
                zero_offset_pa: 0.0,
                accuracy: Some(
                    GaugeAccuracy::new(t.gauge_accuracy_percent, AccuracyBasis::Span(span_pa))
                        .unwrap(),
                ),
            };
            let engine = Tank::new(
                Cylinder::new(t.orientation, t.diameter_m, t.length_m, head).unwrap(),
                fluid(t.fluid),
            )
            .with_gauge(gauge);
            let psi = t.pressure_unit == "psig";
            let readings = fleet
                .readings
                .iter()
                .filter(|r| r.tank == i)
                .map(|r| ReadingInput {
                    time_ms: r.time_ms,
                    dp_pa: dp_pa_from_unit(r.dp, t.dp_unit),
                    pressure_pa: if psi {
                        r.pressure * units::PSI_PA
                    } else {
                        r.pressure * 1e5
                    } + t.barometer_pa,
                    liquid_temperature_k: None,
                })
                .collect();
            let deliveries = fleet
                .deliveries
                .iter()
                .filter(|d| d.tank == i && d.logged)
                .map(|d| DeliveryInput {
                    ticket: d.ticket.clone(),
                    vehicle: fleet.vehicles[d.vehicle].name.clone(),
                    carrier: fleet.vehicles[d.vehicle].carrier.clone(),
                    start_ms: d.start_ms,
                    end_ms: d.end_ms,
                    billed_kg: d.billed_kg,
                    supply_pressure_pa: d.supply_pressure_barg.map(|p| p * 1e5 + t.barometer_pa),
                    meter_repeatability_percent: None,
                })
                .collect();
            TankInput {
                name: t.name.clone(),
                tank: engine,
                ner_percent_per_day: Some(t.ner_percent_per_day),
                reorder_percent: Some(t.reorder_percent),
                line_temperature_k: 288.15,
                dp_noise_u_pa: dp_noise_u_pa(t),
                readings,
                deliveries,
                zone: Some(units::Zone::UTC),
            }
        })
        .collect()
}

/// Audit a simulated fleet.
pub fn run(fleet: &simulate::Fleet, opts: &AuditOptions) -> FleetAudit {
    let audits = inputs(fleet)
        .iter()
        .map(|t| audit_tank(t, opts).unwrap())
        .collect();
    audit_fleet(audits, opts)
}
