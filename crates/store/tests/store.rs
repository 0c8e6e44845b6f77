//! The store: migrations, history of edits and deletions, and row checks that never panic.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use common::{nitrogen_tank, reading};
use proptest::prelude::*;
use store::*;

#[test]
fn every_migration_file_is_applied_in_order() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../../migrations");
    let mut on_disk: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".sql"))
        .collect();
    on_disk.sort();
    let listed: Vec<&str> = MIGRATION_FILES.iter().map(|(n, _)| *n).collect();
    assert_eq!(on_disk, listed, "migrations/ and MIGRATION_FILES disagree");
    let s = Store::open_in_memory().unwrap();
    assert_eq!(s.schema_version().unwrap(), listed.len() as i64);
}

#[test]
fn reopening_keeps_data_and_schema() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("a/b/log.db");
    {
        let mut s = Store::open(&path).unwrap();
        let t = s.add_tank(&nitrogen_tank()).unwrap();
        s.add_reading(t, &reading("2026-01-01T00:00:00Z", "100"))
            .unwrap();
    }
    let s = Store::open(&path).unwrap();
    assert_eq!(s.reading_count(None).unwrap(), 1);
    assert_eq!(s.tanks().unwrap()[0].spec, nitrogen_tank());
}

#[test]
fn wal_and_foreign_keys_are_on() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("log.db");
    let mut s = Store::open(&path).unwrap();
    // A reading of a tank that does not exist violates the foreign key.
    assert!(
        s.add_reading(TankId(42), &reading("2026-01-01T00:00:00Z", "1"))
            .is_err()
    );
    assert!(path.with_extension("db-wal").exists(), "WAL file expected");
}

#[test]
fn strapping_tables_must_rise() {
    assert!(parse_strapping("0:0;1:2;2:5").is_ok());
    assert!(parse_strapping("0:0;1:2;0.5:5").is_err());
    assert!(parse_strapping("0:0;1:2;2:1").is_err());
    assert!(parse_strapping("0:0").is_err());
    assert!(parse_strapping("0:0;x:1").is_err());
    assert_eq!(
        format_strapping(&parse_strapping("0:0;1.5:2.25").unwrap()),
        "0:0;1.5:2.25"
    );
}

proptest! {
    /// Row checks never panic on any text (common practice, no source).
    #[test]
    fn row_checks_never_panic(a in ".{0,30}", b in ".{0,12}", c in ".{0,12}", d in ".{0,12}") {
        let _ = ReadingFields { time: &a, dp: &b, dp_unit: &c, pressure: &d, pressure_unit: &a,
            liquid_temperature_k: &b, note: &c }.check(101_325.0);
        let _ = DeliveryFields { ticket: &a, start: &a, end: &b, quantity: &c, quantity_unit: &d,
            carrier: &a, vehicle: &b, supply_pressure: &c, supply_pressure_unit: &d }.check(101_325.0);
        let _ = TankFields { site: &a, tank: &b, fluid: &c, orientation: &d, diameter_m: &b, length_m: &c,
            heads: &d, line_temperature_c: &b, crown_ratio: &c, knuckle_ratio: &d, dp_unit: &a,
            gauge_span: &b, gauge_accuracy_percent: &c, relief_pressure: &d, relief_pressure_unit: &a,
            reorder_percent: &b, ner_percent_per_day: &c, strapping: &a }.check();
        let _ = parse_strapping(&a);
        let _ = Stamp::parse(&a);
    }

    /// Importing arbitrary bytes as a readings file never panics and never writes (common practice,
    /// no source).
    #[test]
    fn import_of_garbage_never_panics(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("r.csv");
        let mut body = b"tank,time,dp,dp_unit,pressure,pressure_unit\n".to_vec();
        body.extend_from_slice(&bytes);
        std::fs::write(&path, &body).unwrap();
        let mut s = Store::open_in_memory().unwrap();
        s.add_tank(&nitrogen_tank()).unwrap();
        let files = ImportFiles { readings: Some(path), ..Default::default() };
        match s.import(ImportSources::open(&files).unwrap(), &ImportOptions::default()) {
            Ok(sum) => prop_assert_eq!(sum.readings as i64, s.reading_count(None).unwrap()),
            Err(_) => prop_assert_eq!(s.reading_count(None).unwrap(), 0),
        }
    }
}

proptest! {
    /// The importer's own RFC 3339 reader agrees with the `time` crate's (an independent implementation)
    /// on arbitrary valid instants and offsets.
    #[test]
    fn stamps_agree_with_the_time_crate(secs in -2_000_000_000i64..8_000_000_000, ms in 0i64..1000, off_min in -720i32..840) {
        use time::{OffsetDateTime, UtcOffset, format_description::well_known::Rfc3339};
        let off = UtcOffset::from_whole_seconds(off_min * 60).unwrap();
        let dt = OffsetDateTime::from_unix_timestamp(secs).unwrap().replace_millisecond(ms as u16).unwrap().to_offset(off);
        let text = dt.format(&Rfc3339).unwrap();
        let parsed = Stamp::parse(&text).unwrap();
        prop_assert_eq!(parsed.ms, secs * 1000 + ms, "{}", text);
    }
}

#[test]
fn stamps_refuse_impossible_dates() {
    for bad in [
        "2026-02-29T00:00:00Z",
        "2026-13-01T00:00:00Z",
        "2026-04-31T00:00:00Z",
        "2026-01-01T24:00:00Z",
        "2026-01-01T00:60:00Z",
        "2026-01-01T00:00:00",
        "2026-01-01T00:00:00+0100",
        "2026-01-01",
        "2026-01-01T00:00:00.Z",
        "2026-01-01T00:00:00Zjunk",
        "२०२६-01-01T00:00:00Z",
    ] {
        assert!(Stamp::parse(bad).is_err(), "{bad}");
    }
    // 2024 is a leap year (Gregorian rule); 2000 too; 1900 is not.
    assert!(Stamp::parse("2024-02-29T12:00:00Z").is_ok());
    assert!(Stamp::parse("2000-02-29T12:00:00Z").is_ok());
    assert!(Stamp::parse("1900-02-29T12:00:00Z").is_err());
    // 2026-03-01T08:00:00Z is 1772352000 s after the epoch (date -d 2026-03-01T08:00:00Z +%s).
    assert_eq!(
        Stamp::parse("2026-03-01T09:00:00+01:00").unwrap().ms,
        1_772_352_000_000
    );
}
