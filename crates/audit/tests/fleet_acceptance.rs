//! Acceptance on simulated fleets: a short vehicle is found and its fills flagged, honest fills and
//! vehicles are left alone, a drifting gauge is found and healthy ones are not; and the same balances
//! without the thermal history, to show what it changes.
//!
//! The truth is planted by the simulator (`simulate`), so the expected outcomes come from the scenario,
//! not from the audit. Pass marks are the acceptance criteria: the short vehicle `biased` with
//! at least 90 % of its fills `short`; at most 5 % of honest fills `short` or `excess`; the gauge
//! drifting to −4 % of span over the year `drift`, no healthy gauge `drift`; no honest vehicle `biased`.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use audit::{AuditOptions, FleetAudit, GaugeStatus, VehicleStatus, Verdict};
use simulate::{Fault, FleetConfig, simulate};

const DRIFT_TANK: usize = 5;
const SHORT_VEHICLE: usize = 0;

#[derive(Debug)]
struct Figures {
    short_status: VehicleStatus,
    short_bias_percent: f64,
    short_fills: usize,
    short_flagged: usize,
    honest_fills: usize,
    honest_flagged: usize,
    honest_biased: usize,
    drift_status: GaugeStatus,
    drift_percent_per_year: f64,
    healthy_drift: usize,
}

fn figures(fleet: &simulate::Fleet, a: &FleetAudit) -> Figures {
    let short_name = &fleet.vehicles[SHORT_VEHICLE].name;
    let drift_tank = &fleet.tanks[DRIFT_TANK].name;
    let short = a
        .vehicles
        .iter()
        .find(|v| &v.vehicle == short_name)
        .unwrap();
    let mut f = Figures {
        short_status: short.status,
        short_bias_percent: short.bias_percent.unwrap_or(f64::NAN),
        short_fills: 0,
        short_flagged: 0,
        honest_fills: 0,
        honest_flagged: 0,
        honest_biased: a
            .vehicles
            .iter()
            .filter(|v| &v.vehicle != short_name && v.status == VehicleStatus::Biased)
            .count(),
        drift_status: GaugeStatus::NotEnoughData,
        drift_percent_per_year: f64::NAN,
        healthy_drift: a
            .gauges
            .iter()
            .filter(|g| &g.tank != drift_tank && g.status == GaugeStatus::Drift)
            .count(),
    };
    let g = a.gauges.iter().find(|g| &g.tank == drift_tank).unwrap();
    f.drift_status = g.status;
    f.drift_percent_per_year = g.drift_percent_per_year.unwrap_or(f64::NAN);
    for b in &a.fills {
        if &b.tank == drift_tank {
            continue; // the drifting gauge's balances are neither honest nor short by the vehicle
        }
        if &b.vehicle == short_name {
            f.short_fills += 1;
            f.short_flagged += usize::from(b.verdict == Verdict::Short);
        } else {
            f.honest_fills += 1;
            f.honest_flagged += usize::from(matches!(b.verdict, Verdict::Short | Verdict::Excess));
        }
    }
    f
}

fn config(seed: u64, short: f64) -> FleetConfig {
    FleetConfig {
        seed,
        tanks: 16,
        days: 365,
        vehicles: 6,
        faults: vec![
            Fault::VehicleShort {
                vehicle: SHORT_VEHICLE,
                fraction: short,
            },
            Fault::GaugeSpanDrift {
                tank: DRIFT_TANK,
                fraction_per_year: -0.04,
            },
        ],
        ..FleetConfig::default()
    }
}

fn pct(a: usize, b: usize) -> f64 {
    100.0 * a as f64 / b.max(1) as f64
}

fn print(label: &str, f: &Figures) {
    println!(
        "{label:<34} vehicle {:>7} bias {:+6.2} %  short fills flagged {:>3}/{:<3} ({:5.1} %)  honest flagged {:>2}/{:<3} ({:4.1} %)  honest biased {}  drift gauge {:>5} ({:+5.2} %/yr)  healthy drift {}",
        format!("{:?}", f.short_status),
        f.short_bias_percent,
        f.short_flagged,
        f.short_fills,
        pct(f.short_flagged, f.short_fills),
        f.honest_flagged,
        f.honest_fills,
        pct(f.honest_flagged, f.honest_fills),
        f.honest_biased,
        format!("{:?}", f.drift_status),
        f.drift_percent_per_year,
        f.healthy_drift,
    );
}

fn scenario(short: f64) {
    let with = AuditOptions::default();
    // the physics alone: the fleet's fit of each gauge's scale absorbs most of a fixed saturation
    // assumption's error on these tanks (measured: 0-3 % of honest fills flagged with it), so the
    // comparison is made without it
    let without = AuditOptions {
        thermal_history: false,
        calibrate_gauges: false,
        ..AuditOptions::default()
    };
    let mut failures = Vec::new();
    // AUDIT_SEEDS=1,2,3 runs other seeds (the committed ones are below)
    let seeds: Vec<u64> = std::env::var("AUDIT_SEEDS")
        .ok()
        .map(|s| s.split(',').filter_map(|x| x.trim().parse().ok()).collect())
        .unwrap_or_else(|| vec![101, 202, 303]);
    for seed in seeds {
        let fleet = simulate(&config(seed, short)).unwrap();
        let horizontal = fleet
            .tanks
            .iter()
            .filter(|t| t.orientation == tank::Orientation::Horizontal)
            .count();
        assert!(
            horizontal * 2 >= fleet.tanks.len(),
            "half the tanks horizontal"
        );
        let audited = common::run(&fleet, &with);
        let f = figures(&fleet, &audited);
        // each vehicle's per-fill points are what its bias is the weighted mean of (an identity of
        // the weighted mean, common practice, no source): one point per compared fill, and their
        // 1/u²-weighted mean within 1e-9 % of the bias
        for v in &audited.vehicles {
            let Some(bias) = v.bias_percent else { continue };
            let sw: f64 = v.adjusted.iter().map(|a| a.u_percent.powi(-2)).sum();
            let mean = v
                .adjusted
                .iter()
                .map(|a| a.percent * a.u_percent.powi(-2))
                .sum::<f64>()
                / sw;
            if v.adjusted.len() != v.fills || (mean - bias).abs() > 1e-9 {
                failures.push(format!(
                    "seed {seed}: vehicle {} has {} points for {} fills, mean {mean} against bias {bias}",
                    v.vehicle,
                    v.adjusted.len(),
                    v.fills
                ));
            }
        }
        // a vehicle's counts are its fills' verdicts (an identity, common practice, no source):
        // short on their own balances plus short with the vehicle's other fills is every short
        // verdict of a judged fill, and the second is exactly the fills that carry that evidence
        for v in &audited.vehicles {
            let mine = || audited.fills.iter().filter(|b| b.vehicle == v.vehicle);
            let short = mine().filter(|b| b.verdict == Verdict::Short).count();
            let pooled = mine()
                .filter(|b| {
                    b.verdict == Verdict::Short
                        && (b.with_vehicle.is_some() || b.with_mixture.is_some())
                })
                .count();
            if pooled != v.short_with_vehicle || v.short_fills + v.short_with_vehicle != short {
                failures.push(format!(
                    "seed {seed}: vehicle {}: {} + {} short counted, {short} short verdicts ({pooled} with the vehicle)",
                    v.vehicle, v.short_fills, v.short_with_vehicle
                ));
            }
        }
        print(
            &format!("seed {seed}, {:.1} % short, thermal history", 100.0 * short),
            &f,
        );
        let g = figures(&fleet, &common::run(&fleet, &without));
        print(
            &format!("seed {seed}, {:.1} % short, saturated at p", 100.0 * short),
            &g,
        );
        // the thermal history is what keeps honest fills honest: without it (liquid saturated at the
        // tank pressure) at least a fifth of them are flagged on these tanks (measured 29-35 %)
        if pct(g.honest_flagged, g.honest_fills) < 20.0 {
            failures.push(format!(
                "seed {seed}: without the thermal history only {}/{} honest fills flagged",
                g.honest_flagged, g.honest_fills
            ));
        }
        if f.short_status != VehicleStatus::Biased {
            failures.push(format!("seed {seed}: short vehicle {:?}", f.short_status));
        }
        if pct(f.short_flagged, f.short_fills) < 90.0 {
            failures.push(format!(
                "seed {seed}: only {}/{} short fills flagged",
                f.short_flagged, f.short_fills
            ));
        }
        if pct(f.honest_flagged, f.honest_fills) > 5.0 {
            failures.push(format!(
                "seed {seed}: {}/{} honest fills flagged",
                f.honest_flagged, f.honest_fills
            ));
        }
        if f.honest_biased != 0 {
            failures.push(format!(
                "seed {seed}: {} honest vehicles biased",
                f.honest_biased
            ));
        }
        if f.drift_status != GaugeStatus::Drift || f.healthy_drift != 0 {
            failures.push(format!(
                "seed {seed}: drift {:?}, healthy drifting {}",
                f.drift_status, f.healthy_drift
            ));
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

/// A vehicle delivering 5 % less than billed.
#[test]
fn vehicle_five_percent_short() {
    scenario(0.05);
}

/// A vehicle delivering 2.5 % less than billed.
#[test]
fn vehicle_two_and_a_half_percent_short() {
    scenario(0.025);
}
