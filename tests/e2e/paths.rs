use crate::common::*;
use std::path::Path;
use store::{Repository, Store};

const TANKS: &str = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n";

fn write(dir: &Path, name: &str, text: &[u8]) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.to_str().unwrap().to_owned()
}

/// CSV as spreadsheets write it is read alike (RFC 4180 quoting): a UTF-8 byte-order mark, CRLF line
/// ends, a quoted site name holding a comma, and columns the importer does not know (ignored).
#[test]
fn spreadsheet_csv_is_read() {
    let dir = tempfile::tempdir().unwrap();
    let tanks = write(
        dir.path(),
        "t.csv",
        b"\xEF\xBB\xBFsite,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c,colour\r\n\
          \"Mill Road, Unit 4\",MR-1,N2,Vertical,2.0,5.0,ELLIPSOIDAL,15,blue\r\n",
    );
    let db = dir.path().join("a.db");
    let out = import(&db, &["--tanks", &tanks]);
    expect_success(&out);
    let s = Store::open(&db).unwrap();
    let t = s.tank_by_name("MR-1").unwrap();
    assert_eq!(t.spec.site, "Mill Road, Unit 4");
    assert_eq!(t.spec.fluid, store::FluidId::Nitrogen);
}

/// An empty file and a header-only file: the empty one is refused at line 1 (no header), the
/// header-only one imports nothing and succeeds; a malformed strapping cell names its field and point.
#[test]
fn empty_header_only_and_bad_strapping() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("a.db");
    let empty = write(dir.path(), "empty.csv", b"");
    let out = import(&db, &["--tanks", &empty]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("empty.csv:1:"), "{err}");
    let header = write(dir.path(), "header.csv", TANKS.as_bytes());
    let out = import(&db, &["--tanks", &header]);
    expect_success(&out);
    assert!(String::from_utf8_lossy(&out.stdout).contains("imported 0 tanks"));
    let bad = write(
        dir.path(),
        "strap.csv",
        format!(
            "{}strapping\nS,T-1,argon,vertical,2,5,flat,15,0:0;1:x\n",
            TANKS.trim_end().to_owned() + ","
        )
        .as_bytes(),
    );
    let out = import(&db, &["--tanks", &bad]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("strap.csv:2: strapping: point 2: volume 'x' is not a number"),
        "{err}"
    );
}

/// Deliveries billed in Nm³ and scf become masses through the real-gas density at the unit's reference
/// conditions: nitrogen 1.25038613 kg/Nm³ (0 °C, 101.325 kPa) and 1.1604241 kg/m³ at 70 °F, 14.696 psia
/// (CoolProp 8.0.0), 1 scf = 0.3048³ m³ (exact); the audit's billed masses match to 1e-6.
#[test]
fn gas_volume_tickets_become_masses() {
    let dir = tempfile::tempdir().unwrap();
    let tanks = write(
        dir.path(),
        "t.csv",
        format!("{TANKS}Yard,GV-1,nitrogen,vertical,2.0,5.0,ellipsoidal,15\n").as_bytes(),
    );
    let readings = write(
        dir.path(),
        "r.csv",
        b"tank,time,dp,dp_unit,pressure,pressure_unit\n\
          GV-1,2026-03-01T08:00:00Z,40,inH2O,8,barg\n\
          GV-1,2026-03-01T12:00:00Z,120,inH2O,8,barg\n\
          GV-1,2026-03-02T08:00:00Z,40,inH2O,8,barg\n\
          GV-1,2026-03-02T12:00:00Z,120,inH2O,8,barg\n",
    );
    let deliveries = write(
        dir.path(),
        "d.csv",
        b"tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
          GV-1,N-1,2026-03-01T09:00:00Z,2026-03-01T10:00:00Z,4000,Nm3,C,V-1\n\
          GV-1,S-1,2026-03-02T09:00:00Z,2026-03-02T10:00:00Z,150000,scf,C,V-1\n",
    );
    let db = dir.path().join("a.db");
    let out = import(
        &db,
        &[
            "--tanks",
            &tanks,
            "--readings",
            &readings,
            "--deliveries",
            &deliveries,
        ],
    );
    expect_success(&out);
    let out = bin()
        .args(["audit", "--format", "json", "--db"])
        .arg(&db)
        .output()
        .unwrap();
    expect_success(&out);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let billed = |ticket: &str| {
        v["fills"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["ticket"] == ticket)
            .unwrap()["billed_kg"]
            .as_f64()
            .unwrap()
    };
    let rel = |a: f64, b: f64| (a / b - 1.0).abs();
    assert!(
        rel(billed("N-1"), 4000.0 * 1.250_386_13) < 1e-6,
        "{}",
        billed("N-1")
    );
    let scf_m3 = 0.3048_f64.powi(3);
    assert!(
        rel(billed("S-1"), 150_000.0 * scf_m3 * 1.160_424_1) < 1e-6,
        "{}",
        billed("S-1")
    );
}

/// `contents --tank --db` takes the vessel, gauge and barometer from the store and gives the same
/// contents as the same tank described on the command line (the fixture's HW-N2-1: vertical, D 2.1 m,
/// L 6.4 m, torispherical, line 15 °C, elevation 12 m; identity of the two paths).
#[test]
fn contents_of_a_stored_tank() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let json = |args: &[&str]| -> serde_json::Value {
        let out = bin()
            .arg("contents")
            .args(args)
            .args([
                "--dp",
                "150 inH2O",
                "--pressure",
                "11 barg",
                "--format",
                "json",
            ])
            .output()
            .unwrap();
        expect_success(&out);
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let stored = json(&["--tank", "HW-N2-1", "--db", db.to_str().unwrap()]);
    let barometer = units::icao_barometer_from_elevation(12.0).pa();
    let given = json(&[
        "--fluid",
        "nitrogen",
        "--orientation",
        "vertical",
        "--diameter",
        "2.1 m",
        "--length",
        "6.4 m",
        "--heads",
        "torispherical",
        "--barometer",
        &format!("{barometer} Pa"),
    ]);
    let a = stored["total_mass_kg"].as_f64().unwrap();
    let b = given["total_mass_kg"].as_f64().unwrap();
    assert!((a / b - 1.0).abs() < 1e-12, "{a} {b}");
}

/// `audit --threads N` gives byte-identical output for 1, 2 and 3 worker threads (the order of the
/// result does not depend on which worker finished first).
#[test]
fn audit_output_does_not_depend_on_threads() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let run = |n: &str| {
        let out = bin()
            .args(["audit", "--format", "json", "--threads", n, "--db"])
            .arg(&db)
            .output()
            .unwrap();
        assert!(out.status.success());
        out.stdout
    };
    let one = run("1");
    assert_eq!(one, run("2"));
    assert_eq!(one, run("3"));
}

/// Two writers on one database: an import into a database another connection holds open and writes
/// to (as the window does) succeeds, both writes are kept (SQLite's WAL and busy timeout).
#[test]
fn an_import_while_another_connection_writes() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let mut window = Store::open(&db).unwrap();
    let t = window.tank_by_name("HW-N2-1").unwrap();
    let reading = |time: &str, dp: &str| {
        store::ReadingFields {
            time,
            dp,
            dp_unit: "inH2O",
            pressure: "11",
            pressure_unit: "barg",
            ..Default::default()
        }
        .check(t.barometer_pa)
        .unwrap()
    };
    window
        .add_reading(t.id, &reading("2026-04-01T08:00:00Z", "150"))
        .unwrap();
    let more = write(
        dir.path(),
        "r.csv",
        b"tank,time,dp,dp_unit,pressure,pressure_unit\nHW-N2-1,2026-04-02T08:00:00Z,140,inH2O,11,barg\n",
    );
    let out = import(&db, &["--readings", &more]);
    expect_success(&out);
    window
        .add_reading(t.id, &reading("2026-04-03T08:00:00Z", "130"))
        .unwrap();
    let all = window
        .readings(t.id, Some((1_775_000_000_000, i64::MAX)))
        .unwrap();
    assert_eq!(all.len(), 3, "{all:?}");
}

/// A database that is not SQLite, or one a newer cryoledger wrote, is refused with a message and left
/// as it was.
#[test]
fn corrupt_and_newer_databases_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let junk = dir.path().join("junk.db");
    std::fs::write(
        &junk,
        b"this is not a database, just text that is long enough",
    )
    .unwrap();
    let before = std::fs::read(&junk).unwrap();
    let out = bin().args(["audit", "--db"]).arg(&junk).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("junk.db"), "{err}");
    assert_eq!(std::fs::read(&junk).unwrap(), before);

    let db = seeded_db(dir.path());
    let conn = rusqlite::Connection::open(&db).unwrap();
    conn.pragma_update(None, "user_version", 99).unwrap();
    drop(conn);
    let out = bin().args(["audit", "--db"]).arg(&db).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("schema version 99, newer than"), "{err}");
}
