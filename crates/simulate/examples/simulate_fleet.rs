//! Write a simulated fleet as the store's CSV import files.
//!
//! ```text
//! cargo run --release -p simulate --example simulate_fleet -- --out DIR [--tanks N] [--days D]
//!     [--seed S] [--start YYYY-MM-DD] [--fill-interval LO,HI] [--demo]
//! ```
//! `--demo` writes the demo scenario of `demo-data/` (fictional names, planted faults; see
//! demo-data/README.md). Without it, numbered names and no faults unless `--short V,F` (vehicle index,
//! fraction short) or `--drift T,F` (tank index, span drift per year) are given.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use simulate::{Fault, FleetConfig, Naming, simulate};
use std::io::Write;

use units::days_from_civil;

fn pair(s: &str) -> (f64, f64) {
    let (a, b) = s.split_once(',').expect("two numbers separated by a comma");
    (a.trim().parse().unwrap(), b.trim().parse().unwrap())
}

/// The demo scenario: 16 tanks of a fictional distributor's customers over 2026-01-01 .. 2026-11-30,
/// one vehicle delivering 3 % short, a gauge drifting to -4 % of span a year, one unlogged delivery,
/// one leak.
pub fn demo_config() -> FleetConfig {
    FleetConfig {
        seed: 2026,
        tanks: 16,
        days: 334,
        naming: Naming::Demo,
        faults: vec![
            Fault::VehicleShort {
                vehicle: 4,
                fraction: 0.03,
            },
            Fault::GaugeSpanDrift {
                tank: 6,
                fraction_per_year: -0.04,
            },
            Fault::UnloggedDelivery { tank: 2, day: 200 },
            Fault::Leak {
                tank: 9,
                from_day: 290,
                days: 12,
                kg_per_day: 150.0,
            },
        ],
        ..FleetConfig::default()
    }
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut cfg = FleetConfig::default();
    let mut out = None;
    let mut i = 0;
    while i < args.len() {
        let value = args.get(i + 1).cloned().unwrap_or_default();
        match args[i].as_str() {
            "--out" => out = Some(std::path::PathBuf::from(&value)),
            "--tanks" => cfg.tanks = value.parse().unwrap(),
            "--days" => cfg.days = value.parse().unwrap(),
            "--seed" => cfg.seed = value.parse().unwrap(),
            "--fill-interval" => cfg.fill_interval_days = pair(&value),
            "--start" => {
                let p: Vec<i64> = value.split('-').map(|x| x.parse().unwrap()).collect();
                cfg.start_ms =
                    days_from_civil(p[0], p[1], p[2]).expect("--start: a real date") * 86_400_000;
            }
            "--short" => {
                let (v, f) = pair(&value);
                cfg.faults.push(Fault::VehicleShort {
                    vehicle: v as usize,
                    fraction: f,
                });
            }
            "--drift" => {
                let (t, f) = pair(&value);
                cfg.faults.push(Fault::GaugeSpanDrift {
                    tank: t as usize,
                    fraction_per_year: f,
                });
            }
            "--demo" => {
                cfg = demo_config();
                i += 1;
                continue;
            }
            other => panic!("unknown argument {other}"),
        }
        i += 2;
    }
    let out = out.expect("--out DIR");
    std::fs::create_dir_all(&out).unwrap();
    let t0 = std::time::Instant::now();
    let fleet = simulate(&cfg).unwrap();
    let sim_s = t0.elapsed().as_secs_f64();
    std::fs::write(out.join("tanks.csv"), fleet.tanks_csv()).unwrap();
    let mut w = std::io::BufWriter::new(std::fs::File::create(out.join("readings.csv")).unwrap());
    fleet.write_readings_csv(&mut w).unwrap();
    w.flush().unwrap();
    std::fs::write(out.join("deliveries.csv"), fleet.deliveries_csv()).unwrap();
    eprintln!(
        "simulated {} tanks, {} readings, {} fills ({} logged) in {sim_s:.1} s; wrote {}",
        fleet.tanks.len(),
        fleet.readings.len(),
        fleet.deliveries.len(),
        fleet.deliveries.iter().filter(|d| d.logged).count(),
        out.display()
    );
}
