//! The store's generic suite: every test here runs on each backend, SQLite in memory and PostgreSQL
//! in a database of its own (see `common`), through the same [`Repository`] calls and the same
//! assertions. Expected values are what the test wrote (a store returns what it stored) or the rules
//! stated beside each check (common practice, no source).
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use common::{nitrogen_tank, reading};
use store::*;

fn import_text(
    s: &mut dyn Repository,
    tanks: Option<&str>,
    readings: Option<&str>,
    deliveries: Option<&str>,
) -> Result<ImportSummary, StoreError> {
    s.import(
        ImportSources {
            tanks: tanks.map(|t| ImportSource::text("tanks.csv", t)),
            readings: readings.map(|t| ImportSource::text("readings.csv", t)),
            deliveries: deliveries.map(|t| ImportSource::text("deliveries.csv", t)),
        },
        &ImportOptions::default(),
    )
}

fn export_text(s: &dyn Repository, kind: RecordKind) -> String {
    let mut out = Vec::new();
    s.export(kind, &mut out).unwrap();
    String::from_utf8(out).unwrap()
}

const TANKS: &str = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c,strapping\n\
    Yard b,b-2,nitrogen,vertical,2,5,flat,15,\n\
    Yard B,B-1,argon,horizontal,2.4,7.5,ellipsoidal,12,\n\
    Yard a,a-3,oxygen,vertical,2,5,flat,15,0:0;1:3;2:6.5\n";

const READINGS: &str = "tank,time,dp,dp_unit,pressure,pressure_unit,note\n\
    b-2,2026-01-01T08:00:00Z,80,inH2O,10,barg,\n\
    b-2,2026-01-02T08:00:00Z,75.5,inH2O,10.2,barg,morning round\n\
    B-1,2026-01-01T09:00:00+01:00,20,kPa,8,barg,\n\
    a-3,2026-01-01T08:00:00Z,150,mbar,12,barg,\n";

const DELIVERIES: &str = "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
    b-2,T-100,2026-01-01T12:00:00Z,2026-01-01T12:40:00Z,2500,kg,Nimbleforth Haulage,NWH-07\n\
    B-1,T-101,2026-01-01T13:00:00Z,2026-01-01T13:30:00Z,1800,kg,Nimbleforth Haulage,NWH-07\n";

ledger_tests! {
    /// A reading's edit and deletion keep the earlier version with its reason (the store's contract).
    fn edits_and_deletions_keep_the_earlier_version(l: &Ledgers) {
        let mut s = l.fresh();
        let t = s.add_tank(&nitrogen_tank()).unwrap();
        let id = s
            .add_reading(t, &reading("2026-01-01T00:00:00Z", "100"))
            .unwrap();
        // A reason is required.
        assert!(matches!(
            s.edit_reading(id, 1, &reading("2026-01-01T00:00:00Z", "101"), "  "),
            Err(StoreError::Invalid(_))
        ));
        s.edit_reading(id, 1, &reading("2026-01-01T00:00:00Z", "110.5"), "typo in DP")
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
        s.delete_reading(id, 2, "duplicate of the morning round")
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

    /// Tank and delivery edits come back as written and keep their history; a duplicate ticket is refused.
    fn tank_and_delivery_edits_keep_history(l: &Ledgers) {
        let mut s = l.fresh();
        let t = s.add_tank(&nitrogen_tank()).unwrap();
        let mut spec = nitrogen_tank();
        spec.diameter_m = 2.2;
        s.edit_tank(t, 1, &spec, "measured on site").unwrap();
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
        s.edit_tank(t, 2, &full, "rebuilt").unwrap();
        assert_eq!(s.tank(t).unwrap().spec, full);
        s.edit_tank(t, 3, &spec, "put back").unwrap();
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
        s.edit_delivery(id, 1, &d2, "corrected from the scale ticket")
            .unwrap();
        assert_eq!(s.delivery(id).unwrap().entry.quantity.value, 2450.0);
        s.delete_delivery(id, 2, "entered on the wrong tank").unwrap();
        assert!(s.deliveries(Some(t)).unwrap().is_empty());
        assert_eq!(s.history(RecordRef::Delivery(id)).unwrap().len(), 2);
    }

    /// A site's time zone comes in with the tanks CSV (an IANA name), is kept, exported and read back, is
    /// changed with the site's history and chain kept; a name that is not a zone is refused with its file,
    /// line and field, and nothing is written.
    fn a_sites_time_zone_is_imported_kept_and_exported(l: &Ledgers) {
        let mut s = l.fresh();
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
        let mut again = l.fresh();
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
            site.revision,
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
            site.revision + 1,
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

    /// An imported fleet reads back the same from either database: tanks by site then name in byte
    /// order ('B' < 'a' < 'b', as SQLite's BINARY collation sorts), strapping points, readings of a
    /// period, the latest reading, counts, deliveries by start, vehicles; an export re-imports into
    /// a new ledger and exports the same text.
    fn an_imported_fleet_reads_back_the_same(l: &Ledgers) {
        let mut s = l.fresh();
        let n = import_text(s.as_mut(), Some(TANKS), Some(READINGS), Some(DELIVERIES)).unwrap();
        assert_eq!((n.tanks, n.readings, n.deliveries), (3, 4, 2));
        let names: Vec<String> = s.tanks().unwrap().into_iter().map(|t| t.spec.name).collect();
        assert_eq!(names, ["B-1", "a-3", "b-2"]);
        let sites: Vec<String> = s.sites().unwrap().into_iter().map(|t| t.name).collect();
        assert_eq!(sites, ["Yard B", "Yard a", "Yard b"]);
        let a3 = s.tank_by_name("a-3").unwrap();
        assert_eq!(a3.spec.strapping, [(0.0, 0.0), (1.0, 3.0), (2.0, 6.5)]);
        assert_eq!(s.tank(a3.id).unwrap(), a3);
        let b2 = s.tank_by_name("b-2").unwrap();
        let all = s.readings(b2.id, None).unwrap();
        assert_eq!(all.len(), 2);
        assert_eq!(all[1].entry.note.as_deref(), Some("morning round"));
        assert_eq!(all[1].entry.dp.value, 75.5);
        // the period is [from, to): the second reading's instant is excluded as `to`
        let day2 = all[1].entry.time.ms;
        assert_eq!(s.readings(b2.id, Some((0, day2))).unwrap().len(), 1);
        assert_eq!(s.latest_reading(b2.id).unwrap().unwrap().id, all[1].id);
        assert_eq!(s.reading_count(None).unwrap(), 4);
        assert_eq!(s.reading_count(Some(b2.id)).unwrap(), 2);
        let b1 = s.tank_by_name("B-1").unwrap();
        // 09:00+01:00 is 08:00Z: the instant in ms, the text as entered
        let r = &s.readings(b1.id, None).unwrap()[0];
        assert_eq!(r.entry.time.text, "2026-01-01T09:00:00+01:00");
        assert_eq!(r.entry.time.ms, all[0].entry.time.ms);
        let d = s.deliveries(None).unwrap();
        assert_eq!(d.iter().map(|d| d.entry.ticket.as_str()).collect::<Vec<_>>(), ["T-100", "T-101"]);
        assert_eq!(s.deliveries(Some(b1.id)).unwrap().len(), 1);
        assert_eq!(s.delivery(d[0].id).unwrap(), d[0]);
        let v = s.vehicles().unwrap();
        assert_eq!(v.len(), 1);
        assert_eq!((v[0].name.as_str(), v[0].carrier.as_str()), ("NWH-07", "Nimbleforth Haulage"));
        assert!(matches!(s.tank_by_name("nope"), Err(StoreError::NotFound { .. })));

        let exported: Vec<String> = [RecordKind::Tanks, RecordKind::Readings, RecordKind::Deliveries]
            .into_iter()
            .map(|k| export_text(s.as_ref(), k))
            .collect();
        let mut again = l.fresh();
        import_text(again.as_mut(), Some(&exported[0]), Some(&exported[1]), Some(&exported[2])).unwrap();
        for (k, text) in [RecordKind::Tanks, RecordKind::Readings, RecordKind::Deliveries].into_iter().zip(&exported) {
            assert_eq!(&export_text(again.as_ref(), k), text, "{k:?}");
        }
    }

    /// An import with bad rows writes nothing and names each row's file, line and field: an unknown
    /// tank, a duplicate reading within the file and one already stored, a duplicate ticket, a
    /// vehicle of another carrier; the ledger's dump is unchanged.
    fn a_bad_import_names_its_rows_and_writes_nothing(l: &Ledgers) {
        let mut s = l.fresh();
        import_text(s.as_mut(), Some(TANKS), Some(READINGS), Some(DELIVERIES)).unwrap();
        let before = s.dump().unwrap();
        let links = s.verify().unwrap().links;
        let readings = "tank,time,dp,dp_unit,pressure,pressure_unit\n\
            b-2,2026-02-01T08:00:00Z,70,inH2O,10,barg\n\
            nowhere,2026-02-01T08:00:00Z,70,inH2O,10,barg\n\
            b-2,2026-02-01T08:00:00Z,71,inH2O,10,barg\n\
            b-2,2026-01-01T08:00:00Z,71,inH2O,10,barg\n";
        let deliveries = "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
            b-2,T-100,2026-02-01T12:00:00Z,2026-02-01T12:40:00Z,2500,kg,Nimbleforth Haulage,NWH-07\n\
            b-2,T-200,2026-02-02T12:00:00Z,2026-02-02T12:40:00Z,2500,kg,Other Carrier,NWH-07\n";
        let e = import_text(s.as_mut(), None, Some(readings), Some(deliveries)).unwrap_err();
        let StoreError::Import(errors) = e else { panic!("{e:?}") };
        let got: Vec<(String, u64, String)> = errors
            .errors
            .iter()
            .map(|e| (e.file.clone(), e.line, e.field.clone()))
            .collect();
        assert_eq!(
            got,
            [
                ("readings.csv".to_owned(), 3, "tank".to_owned()),
                ("readings.csv".to_owned(), 4, "time".to_owned()),
                ("readings.csv".to_owned(), 5, "time".to_owned()),
                ("deliveries.csv".to_owned(), 2, "ticket".to_owned()),
                ("deliveries.csv".to_owned(), 3, "vehicle".to_owned()),
            ]
        );
        assert!(errors.errors[1].reason.starts_with("duplicate:"), "{errors}");
        assert_eq!(s.dump().unwrap(), before);
        assert_eq!(s.verify().unwrap().links, links);
        // a dry run checks and writes nothing either
        let ok = "tank,time,dp,dp_unit,pressure,pressure_unit\nb-2,2026-03-01T08:00:00Z,70,inH2O,10,barg\n";
        let n = s
            .import(
                ImportSources { readings: Some(ImportSource::text("r.csv", ok)), ..Default::default() },
                &ImportOptions { dry_run: true, ..Default::default() },
            )
            .unwrap();
        assert_eq!(n.readings, 1);
        assert_eq!(s.dump().unwrap(), before);
    }

    /// Single-record writes refuse what breaks a rule with the field to mend, and change nothing: a
    /// second reading at the same instant, a second tank of a name, a site of a taken name.
    fn single_writes_refuse_duplicates(l: &Ledgers) {
        let mut s = l.fresh();
        let t = s.add_tank(&nitrogen_tank()).unwrap();
        s.add_reading(t, &reading("2026-01-01T00:00:00Z", "100")).unwrap();
        let e = s.add_reading(t, &reading("2026-01-01T00:00:00Z", "90")).unwrap_err();
        assert!(matches!(&e, StoreError::Invalid(f) if f[0].field == "time"), "{e:?}");
        let e = s.add_tank(&nitrogen_tank()).unwrap_err();
        assert!(matches!(&e, StoreError::Invalid(f) if f[0].field == "tank"), "{e:?}");
        let e = s.add_site("Quarry Lane", &SiteSettings::default()).unwrap_err();
        assert!(matches!(&e, StoreError::Invalid(f) if f[0].field == "site"), "{e:?}");
        assert_eq!(s.reading_count(None).unwrap(), 1);
        assert_eq!(s.tanks().unwrap().len(), 1);
        // and the ledger still takes the next good write
        s.add_reading(t, &reading("2026-01-01T01:00:00Z", "90")).unwrap();
        assert!(s.verify().unwrap().problems.is_empty());
    }

    /// Text holding SQL fragments is stored and read back literally (parameters, never spliced text):
    /// a tank, site, note, ticket and carrier named with quotes, semicolons and comments.
    fn sql_fragments_are_stored_literally(l: &Ledgers) {
        let mut s = l.fresh();
        let evil = "x'); DROP TABLE readings; --";
        let tanks = format!(
            "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
             \"Site\"\"; DELETE FROM sites; --\",\"{evil}\",nitrogen,vertical,2,5,flat,15\n"
        );
        let readings = format!(
            "tank,time,dp,dp_unit,pressure,pressure_unit,note\n\
             \"{evil}\",2026-01-01T08:00:00Z,80,inH2O,10,barg,\"'; UPDATE readings SET dp_value = 0; --\"\n"
        );
        let deliveries = format!(
            "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
             \"{evil}\",\"1' OR '1'='1\",2026-01-01T12:00:00Z,2026-01-01T12:40:00Z,2500,kg,\"C'; --\",V\\1\n"
        );
        import_text(s.as_mut(), Some(&tanks), Some(&readings), Some(&deliveries)).unwrap();
        let t = s.tank_by_name(evil).unwrap();
        assert_eq!(t.spec.site, "Site\"; DELETE FROM sites; --");
        let r = s.readings(t.id, None).unwrap();
        assert_eq!(r[0].entry.note.as_deref(), Some("'; UPDATE readings SET dp_value = 0; --"));
        assert_eq!(r[0].entry.dp.value, 80.0);
        let d = &s.deliveries(None).unwrap()[0];
        assert_eq!((d.entry.ticket.as_str(), d.entry.carrier.as_str(), d.entry.vehicle.as_str()), ("1' OR '1'='1", "C'; --", "V\\1"));
        assert!(s.verify().unwrap().problems.is_empty());
    }

    /// The chain has a link for every write (3 sites + 3 tanks + 4 readings + 2 deliveries imported,
    /// then an edit and a deletion) and verifies with no problem.
    fn every_write_is_chained_and_verifies(l: &Ledgers) {
        let mut s = l.fresh();
        import_text(s.as_mut(), Some(TANKS), Some(READINGS), Some(DELIVERIES)).unwrap();
        let b2 = s.tank_by_name("b-2").unwrap();
        let r = s.readings(b2.id, None).unwrap();
        s.edit_reading(r[0].id, r[0].revision, &reading("2026-01-01T08:00:00Z", "81"), "misread").unwrap();
        s.delete_reading(r[1].id, r[1].revision, "entered twice").unwrap();
        let v = s.verify().unwrap();
        assert!(v.problems.is_empty(), "{:?}", v.problems);
        assert_eq!(v.links, 3 + 3 + 4 + 2 + 2);
        assert_eq!(v.records, 3 + 3 + 4 + 2);
        assert_eq!(v.head.len(), 64);
        assert_eq!(s.schema_version().unwrap(), MIGRATION_FILES.len() as i64);
    }

    /// Every record carries its revision (1 when written, one more at each change); a change made from
    /// a revision the record has moved on from is refused with both versions in the message, and
    /// nothing is written: not the edit, not its history, not a chain link (a lost update otherwise).
    fn a_change_from_an_old_revision_is_refused_with_both_versions(l: &Ledgers) {
        let mut s = l.fresh();
        let t = s.add_tank(&nitrogen_tank()).unwrap();
        let id = s.add_reading(t, &reading("2026-01-01T00:00:00Z", "100")).unwrap();
        assert_eq!(s.reading(id).unwrap().revision, 1);
        assert_eq!(s.tank(t).unwrap().revision, 1);
        // theirs: made from revision 1
        s.edit_reading(id, 1, &reading("2026-01-01T00:00:00Z", "101"), "theirs").unwrap();
        assert_eq!(s.reading(id).unwrap().revision, 2);
        let before = s.dump().unwrap();
        // yours: also made from revision 1
        let e = s
            .edit_reading(id, 1, &reading("2026-01-01T00:00:00Z", "99.5"), "yours")
            .unwrap_err();
        let StoreError::Conflict(c) = &e else { panic!("{e:?}") };
        assert_eq!((c.opened, c.current), (1, 2));
        let text = e.to_string();
        assert!(text.contains("DP 101 inH2O") && text.contains("DP 99.5 inH2O"), "{text}");
        assert!(text.contains("revision 1") && text.contains("revision 2"), "{text}");
        assert_eq!(s.dump().unwrap(), before);
        // a stale deletion is refused the same way; a delivery and a tank too
        assert!(matches!(s.delete_reading(id, 1, "gone"), Err(StoreError::Conflict(_))));
        let mut spec = nitrogen_tank();
        spec.length_m = 6.0;
        s.edit_tank(t, 1, &spec, "longer").unwrap();
        assert!(matches!(s.edit_tank(t, 1, &nitrogen_tank(), "back"), Err(StoreError::Conflict(_))));
        assert_eq!(s.tank(t).unwrap().spec.length_m, 6.0);
        // the current revision goes through
        s.edit_reading(id, 2, &reading("2026-01-01T00:00:00Z", "99.5"), "yours, again").unwrap();
        assert_eq!(s.reading(id).unwrap().entry.dp.value, 99.5);
        assert_eq!(s.history(RecordRef::Reading(id)).unwrap().len(), 2);
        assert!(s.verify().unwrap().problems.is_empty());
    }

    /// SQL sent straight to the database, not through cryoledger, is named by `verify`: a value
    /// changed, a row removed, a row added; the ledger verified clean before it.
    fn changes_made_outside_cryoledger_are_named(l: &Ledgers) {
        let mut s = l.fresh();
        import_text(s.as_mut(), Some(TANKS), Some(READINGS), Some(DELIVERIES)).unwrap();
        assert!(s.verify().unwrap().problems.is_empty());
        let b2 = s.tank_by_name("b-2").unwrap();
        let r = s.readings(b2.id, None).unwrap();
        let (changed, removed) = (r[0].id.0, r[1].id.0);
        l.raw(&format!(
            "UPDATE readings SET dp_value = dp_value + 1 WHERE id = {changed}; \
             DELETE FROM readings WHERE id = {removed}; \
             INSERT INTO readings (id, tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, \
             pressure_value, pressure_unit, pressure_pa) VALUES (9999, {}, '2026-05-01T00:00:00Z', \
             1777593600000, 50, 'inH2O', 12454, 10, 'barg', 1101325);",
            b2.id.0
        ));
        let v = s.verify().unwrap();
        let named: Vec<(i64, &str)> = v
            .problems
            .iter()
            .map(|p| {
                let (kind, id) = p.record.as_ref().expect("a record");
                assert_eq!(kind, "reading");
                (*id, p.what.split(':').next().unwrap_or_default())
            })
            .collect();
        assert_eq!(
            named,
            [
                (changed, "changed outside cryoledger"),
                (removed, "removed outside cryoledger"),
                (9999, "added outside cryoledger"),
            ]
        );
    }
}
