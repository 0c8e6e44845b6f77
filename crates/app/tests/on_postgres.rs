//! The window on a shared PostgreSQL ledger: the demo fleet in a database of the test's own, opened as
//! the command line opens it (`--db postgres://...`). The fleet summary runs on its own connection and
//! gives the same audit as from SQLite; a reading edited through the form reaches the server with its
//! revision and history. (Expected values: the same fleet from SQLite, and what the test typed; common
//! practice, no source.)
#![allow(clippy::expect_used, clippy::unwrap_used)]

mod common;
#[path = "../../store/tests/common/pg.rs"]
mod pg;

use app::CryoApp;
use app::egui::{self, Role};
use egui_kittest::{Harness, kittest::Queryable};
use store::Repository as _;

#[test]
fn the_window_works_on_a_shared_ledger() {
    let Some(server) = pg::server_or_skip() else {
        return;
    };
    let db = pg::PgDatabase::new(&server);
    let mut s = db.store();
    let demo = common::demo_store();
    for kind in [
        store::RecordKind::Tanks,
        store::RecordKind::Readings,
        store::RecordKind::Deliveries,
    ] {
        let mut text = Vec::new();
        demo.export(kind, &mut text).unwrap();
        let text = String::from_utf8(text).unwrap();
        let mut sources = store::ImportSources::default();
        let src = Some(store::ImportSource::text("demo.csv", &text));
        match kind {
            store::RecordKind::Tanks => sources.tanks = src,
            store::RecordKind::Readings => sources.readings = src,
            store::RecordKind::Deliveries => sources.deliveries = src,
        }
        s.import(sources, &store::ImportOptions::default()).unwrap();
    }
    let location = store::Location::parse(&db.uri());
    let mut app = CryoApp::new(s, location.clone());
    app.wait_for_background();
    let fills = app
        .fleet_audit()
        .expect("the fleet summary came in")
        .fills
        .len();
    let mut from_sqlite = CryoApp::new(demo, std::path::PathBuf::from(":memory:"));
    from_sqlite.wait_for_background();
    assert_eq!(fills, from_sqlite.fleet_audit().unwrap().fills.len());
    assert!(fills > 100);

    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    // the status bar names the shared ledger (its login, server and database)
    h.get_by_label(&format!("Shared ledger {location}"));
    h.get_by_label("ASB-N2-1").click();
    h.run();
    h.get_by_role_and_label(Role::Button, "Readings").click();
    h.run();
    let t = h.state().repository().tank_by_name("ASB-N2-1").unwrap();
    let newest = h
        .state()
        .repository()
        .readings(t.id, None)
        .unwrap()
        .pop()
        .unwrap();
    let shown = store::zone_of(t.time_zone.as_deref()).text(newest.entry.time.ms);
    h.get_by_label(&shown).click();
    h.run();
    common::type_into(&mut h, "DP", "88.25");
    common::type_into(&mut h, "Reason for the change", "read again on the server");
    h.get_by_label("Save change").click();
    h.run();
    // read back on a connection of its own
    let other = store::PgStore::connect(&db.url()).unwrap();
    let now = other.reading(newest.id).unwrap();
    assert_eq!(
        (now.entry.dp.value, now.revision),
        (88.25, newest.revision + 1)
    );
    assert_eq!(
        other
            .history(store::RecordRef::Reading(newest.id))
            .unwrap()
            .len(),
        1
    );
    assert_eq!(h.state().location(), &location);
}
