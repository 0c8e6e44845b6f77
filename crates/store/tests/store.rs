//! The store: migrations, history of edits and deletions, and row checks that never panic.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use proptest::prelude::*;
use store::*;

fn nitrogen_tank() -> TankSpec {
    TankFields {
        site: "Quarry Lane",
        tank: "QL-N2",
        fluid: "nitrogen",
        orientation: "vertical",
        diameter_m: "2.0",
        length_m: "5.0",
        heads: "ellipsoidal",
        line_temperature_c: "15",
        ..Default::default()
    }
    .check()
    .unwrap()
}

fn reading(time: &str, dp: &str) -> ReadingEntry {
    ReadingFields {
        time,
        dp,
        dp_unit: "inH2O",
        pressure: "11.5",
        pressure_unit: "barg",
        ..Default::default()
    }
    .check(101_325.0)
    .unwrap()
}

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
fn edits_and_deletions_keep_the_earlier_version() {
    let mut s = Store::open_in_memory().unwrap();
    let t = s.add_tank(&nitrogen_tank()).unwrap();
    let id = s
        .add_reading(t, &reading("2026-01-01T00:00:00Z", "100"))
        .unwrap();
    // A reason is required.
    assert!(matches!(
        s.edit_reading(id, &reading("2026-01-01T00:00:00Z", "101"), "  "),
        Err(StoreError::Invalid(_))
    ));
    s.edit_reading(id, &reading("2026-01-01T00:00:00Z", "110.5"), "typo in DP")
        .unwrap();
    assert_eq!(s.reading(id).unwrap().entry.dp.value, 110.5);
    let h = s.history(RecordRef::Reading(id)).unwrap();
    assert_eq!(h.len(), 1);
    assert_eq!(h[0].action, RevisionAction::Edit);
    assert_eq!(h[0].reason, "typo in DP");
    assert!(
        matches!(&h[0].before, EarlierVersion::Reading(r) if r.dp.value == 100.0),
        "{:?}",
        h[0].before
    );
    s.delete_reading(id, "duplicate of the morning round")
        .unwrap();
    assert_eq!(s.readings(t, None).unwrap().len(), 0);
    assert_eq!(
        s.reading(id).unwrap().entry.dp.value,
        110.5,
        "deleted rows stay readable"
    );
    let h = s.history(RecordRef::Reading(id)).unwrap();
    assert_eq!(
        h.iter().map(|r| r.action.as_str()).collect::<Vec<_>>(),
        ["edit", "delete"]
    );
    // After deletion the instant is free again.
    s.add_reading(t, &reading("2026-01-01T00:00:00Z", "99"))
        .unwrap();
}

#[test]
fn tank_and_delivery_edits_keep_history() {
    let mut s = Store::open_in_memory().unwrap();
    let t = s.add_tank(&nitrogen_tank()).unwrap();
    let mut spec = nitrogen_tank();
    spec.diameter_m = 2.2;
    s.edit_tank(t, &spec, "measured on site").unwrap();
    assert_eq!(s.tank(t).unwrap().spec.diameter_m, 2.2);
    // every column an edit writes comes back as written (definition: a store returns what it stored)
    let full = TankFields {
        site: "Quarry Lane East",
        tank: "QL-N2-B",
        fluid: "argon",
        orientation: "horizontal",
        diameter_m: "2.4",
        length_m: "7.5",
        heads: "torispherical",
        line_temperature_c: "12",
        crown_ratio: "1.0",
        knuckle_ratio: "0.06",
        dp_unit: "kPa",
        gauge_span: "60",
        gauge_accuracy_percent: "1.0",
        relief_pressure: "17.2",
        relief_pressure_unit: "barg",
        reorder_percent: "25",
        ner_percent_per_day: "0.4",
        ..Default::default()
    }
    .check()
    .unwrap();
    s.edit_tank(t, &full, "rebuilt").unwrap();
    assert_eq!(s.tank(t).unwrap().spec, full);
    s.edit_tank(t, &spec, "put back").unwrap();
    assert!(matches!(&s.history(RecordRef::Tank(t)).unwrap()[0].before,
            EarlierVersion::Tank(old) if old.diameter_m == 2.0));
    let d = DeliveryFields {
        ticket: "A-1",
        start: "2026-01-02T10:00:00Z",
        end: "2026-01-02T10:30:00Z",
        quantity: "2500",
        quantity_unit: "kg",
        carrier: "Nimbleforth Haulage",
        vehicle: "NWH-07",
        ..Default::default()
    }
    .check(101_325.0)
    .unwrap();
    let id = s.add_delivery(t, &d).unwrap();
    assert!(
        matches!(s.add_delivery(t, &d), Err(StoreError::Invalid(_))),
        "duplicate ticket"
    );
    let mut d2 = d.clone();
    d2.quantity.value = 2450.0;
    s.edit_delivery(id, &d2, "corrected from the scale ticket")
        .unwrap();
    assert_eq!(s.delivery(id).unwrap().entry.quantity.value, 2450.0);
    s.delete_delivery(id, "entered on the wrong tank").unwrap();
    assert!(s.deliveries(Some(t)).unwrap().is_empty());
    assert_eq!(s.history(RecordRef::Delivery(id)).unwrap().len(), 2);
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

/// A site's time zone comes in with the tanks CSV (an IANA name), is kept, exported and read back, is
/// changed with the site's history and chain kept; a name that is not a zone is refused with its file,
/// line and field, and nothing is written.
#[test]
fn a_sites_time_zone_is_imported_kept_and_exported() {
    let mut s = Store::open_in_memory().unwrap();
    let tanks = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c,time_zone\n\
                 Quay,Q-1,nitrogen,vertical,2,5,flat,15,Europe/London\n\
                 Quay,Q-2,argon,vertical,2,5,flat,15,\n";
    s.import(
        ImportSources {
            tanks: Some(ImportSource::text("tanks.csv", tanks)),
            ..Default::default()
        },
        &ImportOptions::default(),
    )
    .unwrap();
    let site = s.sites().unwrap().into_iter().next().unwrap();
    assert_eq!(site.time_zone.as_deref(), Some("Europe/London"));
    assert_eq!(
        s.tank_by_name("Q-2").unwrap().time_zone.as_deref(),
        Some("Europe/London")
    );
    let mut out = Vec::new();
    s.export(RecordKind::Tanks, &mut out).unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(text.lines().next().unwrap().contains("time_zone"), "{text}");
    assert!(text.contains("Europe/London"), "{text}");
    // read back into a new ledger: the same zone
    let mut again = Store::open_in_memory().unwrap();
    again
        .import(
            ImportSources {
                tanks: Some(ImportSource::text("export.csv", &text)),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
    assert_eq!(again.sites().unwrap()[0].time_zone, site.time_zone);

    // changed with a reason: the earlier version kept, the chain still verifies
    s.edit_site(
        site.id,
        &SiteSettings {
            time_zone: Some("America/Chicago".into()),
            ..SiteSettings::of(&site)
        },
        "the site moved",
    )
    .unwrap();
    assert_eq!(
        s.sites().unwrap()[0].time_zone.as_deref(),
        Some("America/Chicago")
    );
    let h = s.history(RecordRef::Site(site.id)).unwrap();
    assert!(
        matches!(&h[0].before, EarlierVersion::Site(old) if old.time_zone.as_deref() == Some("Europe/London"))
    );
    assert!(s.verify().unwrap().problems.is_empty());
    // a name that is not a zone: refused, nothing changed
    let refused = s.edit_site(
        site.id,
        &SiteSettings {
            time_zone: Some("Europe/Atlantis".into()),
            ..SiteSettings::default()
        },
        "typo",
    );
    assert!(refused.is_err());
    assert_eq!(
        s.sites().unwrap()[0].time_zone.as_deref(),
        Some("America/Chicago")
    );

    let bad = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c,time_zone\n\
               Dock,D-1,nitrogen,vertical,2,5,flat,15,Europe/Atlantis\n";
    let before = s.dump().unwrap();
    let e = s
        .import(
            ImportSources {
                tanks: Some(ImportSource::text("bad.csv", bad)),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap_err()
        .to_string();
    assert!(e.contains("bad.csv:2") && e.contains("time_zone"), "{e}");
    assert_eq!(s.dump().unwrap(), before);
}
