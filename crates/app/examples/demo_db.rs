//! Writes a fictional fleet database for screenshots and benchmarks (names and figures invented).
//!
//! `cargo run -p app --example demo_db -- OUT.db [--fleet N] [--days D]`: with no options, four sites
//! and eleven tanks with two years of daily readings; `--fleet N` adds N more small tanks (30 days of
//! readings each) for Fleet list benchmarks.
#![allow(clippy::expect_used)]

#[path = "../tests/common/mod.rs"]
mod common;

use common::{DAY_MS, add_history, tank_fields};
use store::Repository;
use store::Store;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let path = args
        .get(1)
        .expect("usage: demo_db OUT.db [--fleet N] [--days D]");
    let opt = |name: &str| -> Option<i64> {
        let i = args.iter().position(|a| a == name)?;
        args.get(i + 1)?.parse().ok()
    };
    let days = opt("--days").unwrap_or(730);
    let extra = opt("--fleet").unwrap_or(0);
    let _ = std::fs::remove_file(path);
    let mut s = Store::open(std::path::Path::new(path)).expect("open");
    let end = app::fmt::now_ms() / DAY_MS * DAY_MS - DAY_MS + 7 * 3_600_000;
    let fleet = [
        (
            "Lanternfell Foundry",
            "LF-N2-1",
            "nitrogen",
            "vertical",
            0,
            0,
        ),
        (
            "Lanternfell Foundry",
            "LF-N2-2",
            "nitrogen",
            "vertical",
            11,
            0,
        ),
        (
            "Lanternfell Foundry",
            "LF-AR-1",
            "argon",
            "horizontal",
            5,
            0,
        ),
        ("Copse Road Lab", "CR-O2-1", "oxygen", "vertical", 17, 0),
        ("Copse Road Lab", "CR-N2-1", "nitrogen", "horizontal", 24, 6),
        (
            "Mossquill Dairy",
            "MD-CO2-1",
            "carbon-dioxide",
            "horizontal",
            8,
            0,
        ),
        ("Mossquill Dairy", "MD-N2-1", "nitrogen", "vertical", 29, 0),
        ("Sorrelwick Works", "SW-N2-1", "nitrogen", "vertical", 3, 0),
        ("Sorrelwick Works", "SW-N2-2", "nitrogen", "vertical", 14, 0),
        ("Sorrelwick Works", "SW-O2-1", "oxygen", "vertical", 20, 0),
        ("Sorrelwick Works", "SW-AR-1", "argon", "vertical", 26, 0),
    ];
    for (i, (site, name, fluid, o, phase, stale_days)) in fleet.iter().enumerate() {
        let mut spec = tank_fields(site, name, fluid, o);
        if *fluid == "carbon-dioxide" {
            // CO2 bulk tanks run near 20 barg with relief around 24 barg (invented demo settings).
            spec.relief_pressure = Some(units::Entered {
                value: 24.0,
                unit: units::TankPressureUnit::Barg,
            });
        }
        if i % 3 == 1 {
            spec.heads = store::HeadShape::Ellipsoidal;
        }
        let id = s.add_tank(&spec).expect("add tank");
        let pressure = if *fluid == "carbon-dioxide" {
            19.5
        } else {
            11.5
        };
        common::add_history_at(
            &mut s,
            id,
            end - stale_days * DAY_MS,
            days,
            &format!("D{i:02}"),
            *phase,
            pressure,
        );
    }
    // One ticket billed 6 % above what arrived, so the demo has an open finding to show.
    if let Ok(t) = s.tank_by_name("SW-AR-1")
        && let Some(d) = s
            .deliveries(Some(t.id))
            .expect("deliveries")
            .last()
            .cloned()
    {
        let mut input = d.entry.clone();
        input.quantity.value = (input.quantity.value * 1.06).round();
        s.edit_delivery(d.id, &input, "demo: the ticket was keyed 6 % high")
            .expect("edit delivery");
    }
    // One reading corrected after entry, so its history has something to show.
    if let Ok(t) = s.tank_by_name("LF-N2-1")
        && let Some(r) = s.readings(t.id, None).expect("readings").last().cloned()
    {
        let mut corrected = r.entry.clone();
        corrected.dp.value = ((r.entry.dp.value - 0.6) * 10.0).round() / 10.0;
        corrected.note = Some("re-read after the needle settled".into());
        s.edit_reading(
            r.id,
            &corrected,
            "first entry read while the needle was still moving",
        )
        .expect("edit reading");
    }
    for n in 0..extra {
        let site = format!("Benchmark Site {:03}", n / 10);
        let name = format!("BX-{n:04}");
        let id = s
            .add_tank(&tank_fields(&site, &name, "nitrogen", "vertical"))
            .expect("add tank");
        add_history(&mut s, id, end, 30, &format!("B{n:04}"), n % 33);
    }
    println!("wrote {path}");
}
