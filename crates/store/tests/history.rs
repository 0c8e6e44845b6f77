//! The history nobody can quietly rewrite: the hash chain names changes made outside cryoledger, a
//! writer killed at any moment loses nothing it reported saved, and a backup taken while another
//! process writes is one consistent state.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use store::*;

const TANKS: &str = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
                     Yard,T-1,nitrogen,vertical,2,5,flat,15\nYard,T-2,argon,vertical,2,5,flat,15\n";

fn seeded(path: &Path) -> Store {
    let mut s = Store::open(path).unwrap();
    s.import(
        ImportSources {
            tanks: Some(ImportSource::text("t.csv", TANKS)),
            ..Default::default()
        },
        &ImportOptions::default(),
    )
    .unwrap();
    s
}

fn reading(s: &Store, ms: i64, dp: f64) -> ReadingEntry {
    let t = s.tanks().unwrap().into_iter().next().unwrap();
    let time = units::rfc3339_from_ms(ms);
    let dp = format!("{dp}");
    ReadingFields {
        time: &time,
        dp: &dp,
        dp_unit: "inH2O",
        pressure: "8",
        pressure_unit: "barg",
        ..Default::default()
    }
    .check(t.barometer_pa)
    .unwrap()
}

/// Changes through cryoledger (imports, edits with reasons, deletions) verify clean; a reading's DP
/// changed, a delivery deleted and a reading inserted with another SQLite connection are each named,
/// and nothing else is.
#[test]
fn changes_outside_cryoledger_are_named() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("l.db");
    let mut s = seeded(&path);
    let t = s.tank_by_name("T-1").unwrap();
    let mut ids = Vec::new();
    for i in 0..5 {
        ids.push(
            s.add_reading(
                t.id,
                &reading(&s, 1_772_352_000_000 + i * 86_400_000, 50.0 + i as f64),
            )
            .unwrap(),
        );
    }
    s.edit_reading(
        ids[1],
        1,
        &reading(&s, 1_772_352_000_000 + 86_400_000, 61.0),
        "misread",
    )
    .unwrap();
    s.delete_reading(ids[2], 1, "entered twice").unwrap();
    let d = DeliveryFields {
        ticket: "K-1",
        start: "2026-03-02T10:00:00Z",
        end: "2026-03-02T11:00:00Z",
        quantity: "2000",
        quantity_unit: "kg",
        carrier: "Carrier",
        vehicle: "V-1",
        ..Default::default()
    }
    .check(t.barometer_pa)
    .unwrap();
    let delivery = s.add_delivery(t.id, &d).unwrap();
    let clean = s.verify().unwrap();
    assert!(clean.problems.is_empty(), "{:?}", clean.problems);
    assert_eq!(clean.records, 1 + 2 + 5 + 1);
    drop(s);

    let c = rusqlite::Connection::open(&path).unwrap();
    c.execute(
        "UPDATE readings SET dp_value = dp_value + 1 WHERE id = ?1",
        [ids[3].0],
    )
    .unwrap();
    c.execute("DELETE FROM deliveries WHERE id = ?1", [delivery.0])
        .unwrap();
    c.execute(
        "INSERT INTO readings (tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, pressure_value, \
         pressure_unit, pressure_pa) VALUES (?1, '2026-04-01T00:00:00Z', 1775001600000, 70, 'inH2O', \
         17436.2, 8, 'barg', 9e5)",
        [t.id.0],
    )
    .unwrap();
    let added = c.last_insert_rowid();
    drop(c);
    let v = Store::open(&path).unwrap().verify().unwrap();
    let named: Vec<(String, i64, &str)> = v
        .problems
        .iter()
        .map(|p| {
            let (k, id) = p.record.clone().unwrap();
            (k, id, p.what.split(' ').next().unwrap_or(""))
        })
        .collect();
    assert_eq!(
        named,
        vec![
            ("reading".to_string(), ids[3].0, "changed"),
            ("reading".to_string(), added, "added"),
            ("delivery".to_string(), delivery.0, "removed"),
        ]
    );
}

/// With `CRYOLEDGER_CHILD_DB` set, this test is the writer the power-cut and backup tests run: it adds
/// readings one at a time, edits every tenth one with a reason, and prints each one's time after its
/// commit.
#[test]
fn child_writer() {
    let Some(path) = std::env::var_os("CRYOLEDGER_CHILD_DB") else {
        return;
    };
    let start: i64 = std::env::var("CRYOLEDGER_CHILD_START")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(0);
    let mut s = Store::open(Path::new(&path)).unwrap();
    let t = s.tank_by_name("T-1").unwrap();
    for i in 0.. {
        let ms = start + i * 60_000;
        let r = reading(&s, ms, 40.0 + (i % 50) as f64);
        let id = s.add_reading(t.id, &r).unwrap();
        if i % 10 == 9 {
            s.edit_reading(id, 1, &reading(&s, ms, 39.5), "read again")
                .unwrap();
        }
        println!("saved {ms}");
    }
}

fn child(db: &PathBuf, start: i64) -> std::process::Child {
    Command::new(std::env::current_exe().unwrap())
        .args([
            "--exact",
            "child_writer",
            "--nocapture",
            "--test-threads",
            "1",
        ])
        .env("CRYOLEDGER_CHILD_DB", db)
        .env("CRYOLEDGER_CHILD_START", start.to_string())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// A writer killed with SIGKILL at 100 pseudo-random moments (5 to 60 ms after it starts) loses no
/// reading it reported saved, and the ledger verifies after every kill (commits are durable and
/// atomic: SQLite's WAL with synchronous=FULL).
#[test]
fn a_killed_writer_loses_nothing_it_reported() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("kill.db");
    drop(seeded(&db));
    let mut seed: u64 = 0x2545_F491_4F6C_DD1D;
    let mut reported: Vec<i64> = Vec::new();
    for round in 0..100 {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        let wait_ms = 5 + seed % 56;
        let start = 1_772_352_000_000 + round * 1_000_000_000;
        let mut c = child(&db, start);
        let out = c.stdout.take().unwrap();
        let reader = std::thread::spawn(move || {
            BufReader::new(out)
                .lines()
                .map_while(Result::ok)
                .filter_map(|l| l.strip_prefix("saved ").and_then(|v| v.parse::<i64>().ok()))
                .collect::<Vec<i64>>()
        });
        std::thread::sleep(std::time::Duration::from_millis(wait_ms));
        c.kill().unwrap();
        c.wait().unwrap();
        reported.extend(reader.join().unwrap());
        let s = Store::open(&db).unwrap();
        let v = s.verify().unwrap();
        assert!(v.problems.is_empty(), "round {round}: {:?}", v.problems);
    }
    let s = Store::open(&db).unwrap();
    let t = s.tank_by_name("T-1").unwrap();
    let stored: std::collections::HashSet<i64> = s
        .readings(t.id, None)
        .unwrap()
        .iter()
        .map(|r| r.entry.time.ms)
        .collect();
    let lost: Vec<&i64> = reported.iter().filter(|ms| !stored.contains(ms)).collect();
    assert!(
        lost.is_empty(),
        "{} of {} lost: {lost:?}",
        lost.len(),
        reported.len()
    );
    assert!(
        !reported.is_empty(),
        "the writer saved nothing in 100 rounds"
    );
}

/// A backup taken while another process adds and edits readings opens, verifies, and holds a prefix of
/// what the writer saved (one consistent state: SQLite's online backup restarts when the source
/// changes).
#[test]
fn a_backup_while_another_process_writes() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("live.db");
    drop(seeded(&db));
    let start = 1_772_352_000_000;
    let mut c = child(&db, start);
    let out = c.stdout.take().unwrap();
    let mut saved = BufReader::new(out)
        .lines()
        .map_while(Result::ok)
        .filter(|l| l.starts_with("saved "));
    // let the writer get going
    for _ in 0..20 {
        saved.next();
    }
    let copy = dir.path().join("copy.db");
    Store::open(&db).unwrap().backup(&copy).unwrap();
    for _ in 0..20 {
        saved.next();
    }
    c.kill().unwrap();
    c.wait().unwrap();
    let b = Store::open(&copy).unwrap();
    let v = b.verify().unwrap();
    assert!(v.problems.is_empty(), "{:?}", v.problems);
    let t = b.tank_by_name("T-1").unwrap();
    let times: Vec<i64> = b
        .readings(t.id, None)
        .unwrap()
        .iter()
        .map(|r| r.entry.time.ms)
        .collect();
    assert!(times.len() >= 20, "{}", times.len());
    let prefix: Vec<i64> = (0..times.len() as i64)
        .map(|i| start + i * 60_000)
        .collect();
    assert_eq!(times, prefix);
    assert!(
        Store::open(&db).unwrap().backup(&copy).is_err(),
        "a backup never overwrites"
    );
}

/// A database of the older schema (version 1, before the hash chain) opens, is brought up to date with
/// its data kept, and its records are adopted into the chain: it verifies, and a change made after the
/// upgrade through cryoledger still verifies (the migration path, common practice, no source).
#[test]
fn an_older_schema_is_upgraded_with_its_data() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("v1.db");
    let c = rusqlite::Connection::open(&path).unwrap();
    c.execute_batch(MIGRATION_FILES[0].1).unwrap();
    c.pragma_update(None, "user_version", 1).unwrap();
    c.execute_batch(
        "INSERT INTO sites (name) VALUES ('Old Yard');
         INSERT INTO tanks (site_id, name, fluid, orientation, diameter_m, length_m, heads,
             line_temperature_c, line_temperature_k) VALUES (1, 'OLD-1', 'nitrogen', 'vertical', 2, 5,
             'flat', 15, 288.15);
         INSERT INTO readings (tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, pressure_value,
             pressure_unit, pressure_pa) VALUES (1, '2026-01-05T08:00:00Z', 1767600000000, 80, 'inH2O',
             19927.1, 8, 'barg', 8e5);",
    )
    .unwrap();
    drop(c);
    let mut s = Store::open(&path).unwrap();
    assert_eq!(s.schema_version().unwrap(), MIGRATION_FILES.len() as i64);
    let t = s.tank_by_name("OLD-1").unwrap();
    assert_eq!(s.readings(t.id, None).unwrap().len(), 1);
    let v = s.verify().unwrap();
    assert!(v.problems.is_empty(), "{:?}", v.problems);
    assert_eq!((v.records, v.links), (3, 3));
    s.add_reading(t.id, &reading(&s, 1_767_686_400_000, 75.0))
        .unwrap();
    let v = s.verify().unwrap();
    assert!(v.problems.is_empty() && v.links == 4, "{v:?}");
}
