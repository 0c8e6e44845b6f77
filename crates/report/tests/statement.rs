//! Stock statements on simulated fleets: the books close (each period's closing is the next one's
//! opening; opening + gained − use = closing within the stated rounding), the running sum of honest
//! fills stays inside its k = 2 band, and a vehicle 1.5 % short on every fill takes it out within two
//! months.
//!
//! The fleets come from the project's simulator (`simulate`), whose truth is planted: which vehicle is
//! short is the scenario's, not the audit's. The pass marks are the acceptance criteria:
//! at least 95 % of honest periods inside the band; outside it within two months of fills for the
//! short vehicle.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::sync::atomic::AtomicBool;

use chrono::NaiveDate;
use report::{Period, Scope, Statement};
use simulate::{Fault, FleetConfig, simulate};
use store::{ImportOptions, ImportSource, ImportSources, Repository, Store};

/// A ledger holding a simulated fleet, its fleet audit, and every tank's monthly statement over the
/// simulated year.
fn statements(cfg: &FleetConfig) -> Vec<Statement> {
    let fleet = simulate(cfg).unwrap();
    let mut st = Store::open_in_memory().unwrap();
    let (t, r, d) = (
        fleet.tanks_csv(),
        fleet.readings_csv(),
        fleet.deliveries_csv(),
    );
    st.import(
        ImportSources {
            tanks: Some(ImportSource::text("tanks.csv", &t)),
            readings: Some(ImportSource::text("readings.csv", &r)),
            deliveries: Some(ImportSource::text("deliveries.csv", &d)),
        },
        &ImportOptions::default(),
    )
    .unwrap();
    let req = evaluate::AuditRequest::default();
    let audit = evaluate::audit_fleet(&st, &req, &mut |_, _| {}, &AtomicBool::new(false)).unwrap();
    let from = NaiveDate::from_ymd_opt(2026, 1, 1).unwrap();
    let to = NaiveDate::from_ymd_opt(2027, 1, 1).unwrap();
    st.tanks()
        .unwrap()
        .iter()
        .map(|t| {
            report::statement(
                &st,
                &audit,
                &req.options,
                &Scope::Tank(t.spec.name.clone()),
                from,
                to,
                Period::Month,
            )
            .unwrap()
        })
        .collect()
}

/// STATEMENT_SEEDS=1,2,3 runs other seeds than the committed ones.
fn seeds(committed: &[u64]) -> Vec<u64> {
    std::env::var("STATEMENT_SEEDS")
        .ok()
        .map(|s| s.split(',').filter_map(|x| x.trim().parse().ok()).collect())
        .unwrap_or_else(|| committed.to_vec())
}

fn config(seed: u64, faults: Vec<Fault>, vehicles: usize) -> FleetConfig {
    FleetConfig {
        seed,
        tanks: 8,
        days: 365,
        vehicles,
        vehicles_per_carrier: vehicles.min(3),
        // bulk tanks filled two or three times a month
        fill_interval_days: (10.0, 16.0),
        faults,
        ..FleetConfig::default()
    }
}

#[test]
fn the_books_close_period_to_period() {
    for s in statements(&config(41, vec![], 4)) {
        assert!(s.rows.len() >= 11, "{}: {} periods", s.title, s.rows.len());
        for w in s.rows.windows(2) {
            // the same reading closes one period and opens the next: equal to the bit
            assert_eq!(w[0].closing_kg, w[1].opening_kg, "{}", s.title);
            assert_eq!(w[0].closed_ms, w[1].opened_ms, "{}", s.title);
        }
        for r in &s.rows {
            // printed figures: opening + gained − use − closing, each rounded to 1 kg, is off by at
            // most half a kilogram per figure (the rounding stated on every report)
            let k = report::rounding::Figure::Mass;
            let printed = k.round(r.opening_kg) + k.round(r.gained_kg)
                - k.round(r.use_kg)
                - k.round(r.closing_kg);
            assert!(
                printed.abs() <= 4.0 * k.half_step(),
                "{} {}: {printed}",
                s.title,
                r.label
            );
            assert!(r.use_kg > 0.0, "{} {}: use {}", s.title, r.label, r.use_kg);
        }
    }
}

#[test]
fn honest_running_sums_stay_inside_their_band() {
    let mut periods = 0;
    let mut inside = 0;
    for seed in seeds(&[41, 42, 43]) {
        for s in statements(&config(seed, vec![], 4)) {
            for r in &s.rows {
                periods += 1;
                inside += usize::from(r.inside_band());
            }
        }
    }
    let share = 100.0 * inside as f64 / periods as f64;
    println!("honest periods inside the band: {inside}/{periods} = {share:.1} %");
    // the acceptance: at least 95 % of periods
    assert!(share >= 95.0, "{inside}/{periods} = {share:.1} %");
}

#[test]
fn a_vehicle_short_on_every_fill_leaves_the_band_within_two_months() {
    // one vehicle serves every tank and delivers 1.5 % less than it bills
    let faults = vec![Fault::VehicleShort {
        vehicle: 0,
        fraction: 0.015,
    }];
    let mut worst = 0;
    for s in seeds(&[44, 45, 46])
        .into_iter()
        .flat_map(|seed| statements(&config(seed, faults.clone(), 1)))
    {
        // months from the first month with a judged fill to the first outside the band
        let first = s.rows.iter().position(|r| r.fills_judged > 0).unwrap();
        let out = s.rows.iter().position(|r| !r.inside_band());
        let months = out.map(|o| o.saturating_sub(first) + 1);
        println!("{}: outside the band in month {months:?} of fills", s.title);
        let m = months.unwrap_or(usize::MAX);
        worst = worst.max(m);
        // and it stays out: the shortfall only grows
        if let Some(o) = out {
            assert!(
                s.rows[o..].iter().filter(|r| r.inside_band()).count() <= 1,
                "{}",
                s.title
            );
        }
    }
    assert!(
        worst <= 2,
        "a tank's running sum took {worst} months to leave its band"
    );
}
