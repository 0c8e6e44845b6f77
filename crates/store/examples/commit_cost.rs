//! The cost of durable commits: single-reading commits per second with the ledger's setting
//! (synchronous=FULL: every commit reaches the disk) beside synchronous=NORMAL in the same run (a
//! commit may be lost on power loss, never half-written). `cargo run --release -p store --example
//! commit_cost [-- N]`.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::time::Instant;
use store::{ImportOptions, ImportSource, ImportSources, ReadingFields, Repository, Store};

fn main() {
    let n: i64 = std::env::args()
        .nth(1)
        .and_then(|v| v.parse().ok())
        .unwrap_or(300);
    let dir = std::env::temp_dir().join(format!("cryoledger-commit-cost-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for mode in ["FULL", "NORMAL"] {
        let path = dir.join(format!("{mode}.db"));
        let _ = std::fs::remove_file(&path);
        let mut s = Store::open(&path).unwrap();
        s.import(
            ImportSources {
                tanks: Some(ImportSource::text(
                    "t.csv",
                    "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\nY,T,nitrogen,vertical,2,5,flat,15\n",
                )),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
        if mode == "NORMAL" {
            s.set_synchronous_normal_for_benchmark().unwrap();
        }
        let t = s.tank_by_name("T").unwrap();
        let start = Instant::now();
        for i in 0..n {
            let time = units::rfc3339_from_ms(1_772_352_000_000 + i * 60_000);
            let r = ReadingFields {
                time: &time,
                dp: "50",
                dp_unit: "inH2O",
                pressure: "8",
                pressure_unit: "barg",
                ..Default::default()
            }
            .check(t.barometer_pa)
            .unwrap();
            s.add_reading(t.id, &r).unwrap();
        }
        let secs = start.elapsed().as_secs_f64();
        println!(
            "synchronous={mode}: {n} single-reading commits in {secs:.2} s, {:.0} commits/s",
            n as f64 / secs
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
