//! Access by site on a shared (PostgreSQL) ledger, enforced by the server: an operator's own
//! connection, sending any SQL it likes, reads and changes only their sites' tanks, readings and
//! deliveries; an auditor reads everything and enters deliveries, not readings; users are added,
//! listed and removed. Expected values: the counts the test wrote at each site (a store returns what
//! it stored), and the refusals the roles in migrations/postgres/0005_access.sql were set to give
//! (common practice, no source). Each run uses logins of its own, removed afterwards.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use common::{PgDatabase, server_or_skip};
use postgres::error::SqlState;
use store::*;

const TANKS: &str = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
    North Dock,N-1,nitrogen,vertical,2,5,flat,15\n\
    South Quay,S-1,argon,vertical,2,5,flat,15\n";
const READINGS: &str = "tank,time,dp,dp_unit,pressure,pressure_unit\n\
    N-1,2026-01-01T08:00:00Z,80,inH2O,10,barg\n\
    N-1,2026-01-02T08:00:00Z,75,inH2O,10,barg\n\
    S-1,2026-01-01T08:00:00Z,60,inH2O,9,barg\n\
    S-1,2026-01-02T08:00:00Z,55,inH2O,9,barg\n\
    S-1,2026-01-03T08:00:00Z,50,inH2O,9,barg\n";
const DELIVERIES: &str = "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
    N-1,N-100,2026-01-01T12:00:00Z,2026-01-01T12:40:00Z,2500,kg,Nimbleforth Haulage,NWH-07\n\
    S-1,S-100,2026-01-01T13:00:00Z,2026-01-01T13:30:00Z,1800,kg,Nimbleforth Haulage,NWH-07\n";

/// Logins made by a test, removed when it ends (roles are the server's, not the database's).
struct Logins(postgres::Config, Vec<String>);

impl Drop for Logins {
    fn drop(&mut self) {
        if let Ok(mut c) = self.0.connect(postgres::NoTls) {
            for n in &self.1 {
                let _ = c.batch_execute(&format!("DROP ROLE IF EXISTS \"{n}\""));
            }
        }
    }
}

fn unique(prefix: &str) -> String {
    format!(
        "{prefix}_{}_{}",
        std::process::id(),
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .unwrap()
            .subsec_micros()
    )
}

fn denied(r: Result<u64, postgres::Error>) -> String {
    let e = r.expect_err("the server must refuse this");
    assert_eq!(e.code(), Some(&SqlState::INSUFFICIENT_PRIVILEGE), "{e}");
    e.as_db_error()
        .map(|d| d.message().to_owned())
        .unwrap_or_default()
}

fn count(c: &mut postgres::Client, sql: &str) -> i64 {
    c.query_one(sql, &[]).unwrap().get(0)
}

#[test]
fn an_operator_reads_and_changes_only_their_sites_whatever_sql_they_send() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let db = PgDatabase::new(&server);
    let mut owner = db.store();
    owner
        .import(
            ImportSources {
                tanks: Some(ImportSource::text("tanks.csv", TANKS)),
                readings: Some(ImportSource::text("readings.csv", READINGS)),
                deliveries: Some(ImportSource::text("deliveries.csv", DELIVERIES)),
            },
            &ImportOptions::default(),
        )
        .unwrap();
    let (op, aud) = (unique("op"), unique("aud"));
    let _logins = Logins(server.clone(), vec![op.clone(), aud.clone()]);
    owner
        .add_user(
            &op,
            AccessRole::Operator,
            &["North Dock".into()],
            Some("op's pass; --"),
        )
        .unwrap();
    owner
        .add_user(&aud, AccessRole::Auditor, &[], None)
        .unwrap();
    let south = owner.tank_by_name("S-1").unwrap();
    let south_before = owner.readings(south.id, None).unwrap();

    // the operator's own connection, hand-written SQL
    let mut c =
        postgres::Client::connect(&db.url_as(Some((&op, "op's pass; --"))), postgres::NoTls)
            .unwrap();
    assert_eq!(count(&mut c, "SELECT COUNT(*) FROM readings"), 2);
    assert_eq!(count(&mut c, "SELECT COUNT(*) FROM deliveries"), 1);
    assert_eq!(count(&mut c, "SELECT COUNT(*) FROM sites"), 1);
    let tanks: Vec<String> = c
        .query("SELECT name FROM tanks", &[])
        .unwrap()
        .iter()
        .map(|r| r.get(0))
        .collect();
    assert_eq!(tanks, ["N-1"]);
    let s = south.id.0;
    // another site's rows are not there to change
    assert_eq!(
        c.execute(
            &format!("UPDATE readings SET dp_value = 0 WHERE tank_id = {s}"),
            &[]
        )
        .unwrap(),
        0
    );
    // nor to move one's own into
    let n_id: i64 = c.query_one("SELECT id FROM tanks", &[]).unwrap().get(0);
    let msg = denied(c.execute(
        &format!("UPDATE readings SET tank_id = {s} WHERE tank_id = {n_id}"),
        &[],
    ));
    assert!(msg.contains("row-level security"), "{msg}");
    denied(c.execute(
        &format!(
            "INSERT INTO readings (tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, pressure_value, \
             pressure_unit, pressure_pa) VALUES ({s}, 'x', 1, 1, 'inH2O', 249, 1, 'barg', 201325)"
        ),
        &[],
    ));
    denied(c.execute("DELETE FROM readings", &[]));
    denied(c.execute("UPDATE tanks SET length_m = 9", &[]));
    denied(c.execute("DELETE FROM revisions", &[]));
    denied(c.execute("UPDATE chain SET link = digest", &[]));
    denied(c.execute(
        &format!(
            "INSERT INTO deliveries (tank_id, ticket, start_text, start_ms, end_text, end_ms, quantity_value, \
             quantity_unit, quantity_si, carrier_id, vehicle_id) VALUES ({s}, 'x', 'x', 1, 'x', 2, 1, 'kg', 1, 1, 1)"
        ),
        &[],
    ));
    denied(c.execute(
        &format!("INSERT INTO site_access VALUES ('{op}', {s})"),
        &[],
    ));

    // the operator through cryoledger: their tanks only; readings entered and edited there
    let mut ops = PgStore::connect(&db.url_as(Some((&op, "op's pass; --")))).unwrap();
    let mine = ops.tanks().unwrap();
    assert_eq!(mine.len(), 1);
    let r = ReadingFields {
        time: "2026-01-03T08:00:00Z",
        dp: "70",
        dp_unit: "inH2O",
        pressure: "10",
        pressure_unit: "barg",
        ..Default::default()
    }
    .check(101_325.0)
    .unwrap();
    let id = ops.add_reading(mine[0].id, &r).unwrap();
    ops.edit_reading(id, 1, &r, "read again").unwrap();
    assert!(ops.add_reading(south.id, &r).is_err());
    // what the server refuses is said as a refusal of the login's role, not as a database fault
    let mut spec = mine[0].spec.clone();
    spec.length_m = 9.0;
    let e = ops
        .edit_tank(mine[0].id, mine[0].revision, &spec, "longer")
        .unwrap_err();
    assert!(matches!(e, StoreError::NotAllowed(_)), "{e:?}");
    assert!(e.to_string().contains("your login may not do this"), "{e}");
    let e = ops
        .import(
            ImportSources {
                readings: Some(ImportSource::text(
                    "r.csv",
                    "tank,time,dp,dp_unit,pressure,pressure_unit\nS-1,2026-02-01T08:00:00Z,1,inH2O,1,barg\n",
                )),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap_err();
    assert!(e.to_string().contains("unknown tank 'S-1'"), "{e}");
    // an import of their own tank's readings goes through (rows and links under row-level security)
    let n = ops
        .import(
            ImportSources {
                readings: Some(ImportSource::text(
                    "round.csv",
                    "tank,time,dp,dp_unit,pressure,pressure_unit\n\
                     N-1,2026-02-01T08:00:00Z,61,inH2O,10,barg\n\
                     N-1,2026-02-02T08:00:00Z,58,inH2O,10,barg\n",
                )),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
    assert_eq!(n.readings, 2);

    // the auditor: everything to read, deliveries to enter, no readings
    let mut auds = PgStore::connect(&db.url_as(Some((&aud, "")))).unwrap();
    assert_eq!(auds.tanks().unwrap().len(), 2);
    assert_eq!(auds.reading_count(None).unwrap(), 8);
    let d = DeliveryFields {
        ticket: "S-101",
        start: "2026-01-04T10:00:00Z",
        end: "2026-01-04T10:30:00Z",
        quantity: "900",
        quantity_unit: "kg",
        carrier: "Nimbleforth Haulage",
        vehicle: "NWH-07",
        ..Default::default()
    }
    .check(101_325.0)
    .unwrap();
    auds.add_delivery(south.id, &d).unwrap();
    assert!(auds.add_reading(south.id, &r).is_err());

    // South Quay's readings are as they were, and the history verifies
    assert_eq!(owner.readings(south.id, None).unwrap(), south_before);
    assert!(owner.verify().unwrap().problems.is_empty());

    // the users, listed and removed
    let users = owner.users().unwrap();
    let me = users.iter().find(|u| u.name == op).unwrap();
    assert_eq!(
        (me.role, me.sites.as_slice()),
        (AccessRole::Operator, &["North Dock".to_owned()][..])
    );
    assert!(
        users
            .iter()
            .any(|u| u.name == aud && u.role == AccessRole::Auditor)
    );
    assert!(matches!(
        owner.add_user(&op, AccessRole::Admin, &[], None),
        Err(StoreError::Invalid(_))
    ));
    assert!(matches!(
        owner.add_user(
            "x\"; DROP TABLE readings; --",
            AccessRole::Auditor,
            &[],
            None
        ),
        Err(StoreError::Invalid(_))
    ));
    drop(ops);
    drop(c);
    owner.remove_user(&op).unwrap();
    assert!(!owner.users().unwrap().iter().any(|u| u.name == op));
    assert!(PgStore::connect(&db.url_as(Some((&op, "op's pass; --")))).is_err());
    assert!(matches!(
        owner.remove_user("postgres"),
        Err(StoreError::NotFound { .. })
    ));
}
