//! Headless tests that drive the real app with egui_kittest: select a tank, enter readings (valid and
//! invalid), add a delivery, switch units, edit a reading and find the old value in its history, and
//! create a tank in Tank setup. Assertions read the store and the labels shown. Every test runs on
//! the demo fleet of `cryoledger demo` (demo-data/), the one a new user's first start writes.

#![allow(clippy::expect_used)] // helpers of tests: a failure to set up is a test failure

mod common;

use common::type_into;

use app::CryoApp;
use app::egui::{self, Role};
use app::fmt::UnitSystem;
use app::view::{Attention, Page, TankTab};
use egui_kittest::{Harness, kittest::Queryable};
use std::path::PathBuf;

fn harness(store: store::Store) -> Harness<'static, CryoApp> {
    let mut app = CryoApp::new(store, PathBuf::from(":memory:"));
    app.wait_for_background();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    h
}

fn tank_id(h: &Harness<'_, CryoApp>, name: &str) -> store::TankId {
    h.state().repository().tank_by_name(name).expect("tank").id
}

/// A time as the window shows it: on the tank's site clock.
fn shown(h: &Harness<'_, CryoApp>, id: store::TankId, ms: i64) -> String {
    let t = h.state().repository().tank(id).expect("tank");
    store::zone_of(t.time_zone.as_deref()).text(ms)
}

/// The tank's newest reading (the log lists the newest first, in view when the tab opens).
fn newest(h: &Harness<'_, CryoApp>, id: store::TankId) -> store::Reading {
    h.state()
        .repository()
        .readings(id, None)
        .expect("readings")
        .last()
        .cloned()
        .expect("a reading")
}

/// The demo fleet's readings of one tank in demo-data/readings.csv (counted from the file, not
/// through the store).
fn demo_readings_of(tank: &str) -> usize {
    include_str!("../../../demo-data/readings.csv")
        .lines()
        .filter(|l| l.split(',').next() == Some(tank))
        .count()
}

fn select(h: &mut Harness<'_, CryoApp>, name: &str) {
    h.get_by_label(name).click();
    h.run();
}

fn tab(h: &mut Harness<'_, CryoApp>, t: &str) {
    h.get_by_role_and_label(Role::Button, t).click();
    h.run();
}

#[test]
fn clicking_a_tank_in_the_fleet_list_opens_its_page() {
    let mut h = harness(common::demo_store());
    select(&mut h, "HLL-AR-15");
    let view = h.state().view();
    let t = view.tank.as_ref().expect("a tank is selected");
    assert_eq!(t.name, "HLL-AR-15");
    assert!(demo_readings_of("HLL-AR-15") > 300);
    assert_eq!(t.readings.len(), demo_readings_of("HLL-AR-15"));
    assert_eq!(view.page, Page::Tank);
    // The Now tab shows the big figures.
    assert!(h.query_by_label("Total mass").is_some());
    assert!(h.query_by_label("Safe-fill limit").is_some());
}

#[test]
fn a_valid_reading_is_saved_shown_first_and_changes_the_contents() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-N2-1");
    let id = tank_id(&h, "ASB-N2-1");
    let before_mass = h
        .state()
        .view()
        .tank
        .as_ref()
        .and_then(|t| t.now.latest.clone())
        .and_then(|r| r.contents.ok())
        .expect("contents")
        .mass_kg
        .value;
    tab(&mut h, "Readings");
    type_into(&mut h, "DP", "30");
    type_into(&mut h, "Tank pressure", "11.2");
    // The preview shows what the reading implies before it is saved.
    assert!(h.query_by_label("This reading means").is_some());
    assert!(
        h.state().view().reading_editor.check.ok,
        "{:?}",
        h.state().view().reading_editor.check
    );
    h.get_by_label("Save reading").click();
    h.run();
    let stored = h.state().repository().readings(id, None).expect("readings");
    assert_eq!(stored.len(), demo_readings_of("ASB-N2-1") + 1);
    let newest = stored.last().expect("newest");
    assert_eq!(newest.entry.dp.value, 30.0);
    // Shown first in the table, and the Now figures follow it.
    assert!(
        h.query_by_label(&shown(&h, id, newest.entry.time.ms))
            .is_some()
    );
    let t = h.state().view().tank.as_ref().expect("tank");
    assert_eq!(t.readings.first().map(|r| r.id), Some(newest.id.0));
    let after_mass = t
        .now
        .latest
        .as_ref()
        .and_then(|r| r.contents.clone().ok())
        .expect("contents")
        .mass_kg
        .value;
    assert!(
        after_mass < before_mass,
        "30 inH2O is below every earlier reading: {after_mass} vs {before_mass}"
    );
}

#[test]
fn an_invalid_dp_shows_a_message_at_the_field_and_nothing_is_saved() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-N2-1");
    let id = tank_id(&h, "ASB-N2-1");
    tab(&mut h, "Readings");
    type_into(&mut h, "DP", "abc");
    type_into(&mut h, "Tank pressure", "11");
    assert!(h.query_by_label_contains("is not a number").is_some());
    assert!(!h.state().view().reading_editor.check.ok);
    h.get_by_label("Save reading").click();
    h.run();
    assert_eq!(
        h.state()
            .repository()
            .readings(id, None)
            .expect("readings")
            .len(),
        demo_readings_of("ASB-N2-1")
    );
    // A DP beyond a full tank is refused too, with the full-tank figure in the message.
    type_into(&mut h, "DP", "2000");
    assert!(h.query_by_label_contains("more than a full tank").is_some());
    h.get_by_label("Save reading").click();
    h.run();
    assert_eq!(
        h.state()
            .repository()
            .readings(id, None)
            .expect("readings")
            .len(),
        demo_readings_of("ASB-N2-1")
    );
}

#[test]
fn a_delivery_is_added_and_listed() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-O2-2");
    let id = tank_id(&h, "ASB-O2-2");
    let before = h
        .state()
        .repository()
        .deliveries(Some(id))
        .expect("deliveries")
        .len();
    tab(&mut h, "Deliveries");
    type_into(&mut h, "Ticket", "T-77001");
    type_into(&mut h, "Quantity", "3.2 t");
    type_into(&mut h, "Carrier", "Fennelwhirl Haulage");
    type_into(&mut h, "Vehicle", "FH-9");
    assert!(
        h.state().view().delivery_editor.check.ok,
        "{:?}",
        h.state().view().delivery_editor.check
    );
    h.get_by_label("Save delivery").click();
    h.run();
    let all = h
        .state()
        .repository()
        .deliveries(Some(id))
        .expect("deliveries");
    assert_eq!(all.len(), before + 1);
    let d = all
        .iter()
        .find(|d| d.entry.ticket == "T-77001")
        .expect("saved");
    assert_eq!(d.entry.quantity.value, 3.2);
    assert!(h.query_by_label("T-77001").is_some());
}

#[test]
fn switching_units_changes_the_figures_and_is_remembered() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-N2-1");
    assert!(h.query_by_label("kg").is_some());
    h.get_by_label("US customary").click();
    h.run();
    assert_eq!(h.state().view().units, UnitSystem::Us);
    assert_eq!(h.state().settings().units, UnitSystem::Us);
    assert!(h.query_by_label("lb").is_some());
    assert!(h.query_by_label("scf").is_some());
    assert!(h.query_by_label("kg").is_none());
    tab(&mut h, "Trend");
    assert_eq!(h.state().view().tab, TankTab::Trend);
    assert!(
        h.state()
            .view()
            .tank
            .as_ref()
            .expect("tank")
            .trend
            .y_label
            .contains("lb")
    );
}

#[test]
fn an_edited_reading_keeps_its_old_value_in_the_history() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-N2-1");
    let id = tank_id(&h, "ASB-N2-1");
    tab(&mut h, "Readings");
    let first = newest(&h, id);
    let old_dp = first.entry.dp.value;
    h.get_by_label(&shown(&h, id, first.entry.time.ms)).click();
    h.run();
    assert_eq!(
        h.state().view().reading_editor.form.editing,
        Some(first.id.0)
    );
    type_into(&mut h, "DP", "99.5");
    // No reason, no save; the form says so only once the user tries to save.
    assert!(!h.state().view().reading_editor.check.ok);
    let why = "say why this reading is changed (kept in its history)";
    assert!(
        h.query_by_label(why).is_none(),
        "said before a save was tried"
    );
    h.get_by_label("Save change").click();
    h.run();
    h.get_by_label(why);
    assert_eq!(
        h.state()
            .repository()
            .reading(first.id)
            .expect("reading")
            .entry
            .dp
            .value,
        old_dp,
        "nothing saved without a reason"
    );
    type_into(
        &mut h,
        "Reason for the change",
        "transcription error on the round sheet",
    );
    h.get_by_label("Save change").click();
    h.run();
    let now = h.state().repository().reading(first.id).expect("reading");
    assert_eq!(now.entry.dp.value, 99.5);
    let revs = h
        .state()
        .repository()
        .history(store::RecordRef::Reading(first.id))
        .expect("revisions");
    assert_eq!(revs.len(), 1);
    assert_eq!(revs[0].reason, "transcription error on the round sheet");
    // The history under the form shows the earlier DP.
    let was = format!("DP {old_dp} inH2O");
    assert!(
        h.query_by_label_contains(&was).is_some(),
        "history shows {was}"
    );
}

/// Two people edit the same reading: the one who saves second made the change from a revision that
/// has moved on; the window refuses it with both versions in the message, keeps what they typed in
/// the form (nothing lost), and the other's value stays stored.
#[test]
fn an_edit_of_a_reading_someone_else_changed_meanwhile_is_refused_with_both_versions() {
    let dir = tempfile::tempdir().expect("dir");
    let db = dir.path().join("ledger.db");
    let store = common::demo_into(store::Store::open(&db).expect("store"));
    let mut app = CryoApp::new(store, db.clone());
    app.wait_for_background();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    select(&mut h, "ASB-N2-1");
    let id = tank_id(&h, "ASB-N2-1");
    tab(&mut h, "Readings");
    let first = newest(&h, id);
    h.get_by_label(&shown(&h, id, first.entry.time.ms)).click();
    h.run();
    assert_eq!(h.state().view().reading_editor.form.opened, first.revision);
    // someone else, on their own connection, changes it meanwhile
    use store::Repository as _;
    let mut other = store::Store::open(&db).expect("second connection");
    let mut theirs = first.entry.clone();
    theirs.dp.value = 77.25;
    other
        .edit_reading(first.id, first.revision, &theirs, "their correction")
        .expect("their edit");
    type_into(&mut h, "DP", "99.5");
    type_into(&mut h, "Reason for the change", "my correction");
    h.get_by_label("Save change").click();
    h.run();
    h.get_by_label_contains("was changed by someone else after you opened it");
    h.get_by_label_contains("DP 77.25 inH2O");
    h.get_by_label_contains("DP 99.5 inH2O");
    let stored = h.state().repository().reading(first.id).expect("reading");
    assert_eq!(stored.entry.dp.value, 77.25, "theirs stays");
    assert_eq!(
        h.state().view().reading_editor.form.dp,
        "99.5",
        "yours stays in the form"
    );
}

#[test]
fn tank_setup_creates_a_tank_with_a_live_full_tank_dp() {
    let mut h = harness(common::demo_store());
    h.get_by_label("New tank").click();
    h.run();
    assert_eq!(h.state().view().page, Page::Setup);
    type_into(&mut h, "Site name", "Mossquill Dairy");
    type_into(&mut h, "Tank name", "MD-N2-1");
    type_into(&mut h, "Relief set pressure", "17");
    type_into(&mut h, "Reorder level (%)", "30");
    assert!(
        h.query_by_label_contains("Full tank, saturated at 1 atm")
            .is_some()
    );
    h.get_by_label("Create tank").click();
    h.run();
    let t = h
        .state()
        .repository()
        .tank_by_name("MD-N2-1")
        .expect("created");
    assert_eq!(t.spec.site, "Mossquill Dairy");
    assert_eq!(t.spec.reorder_percent, Some(30.0));
    // It is in the Fleet list.
    assert!(h.query_by_label("MD-N2-1").is_some());
}

#[test]
fn the_fleet_list_search_filters_tanks() {
    let mut h = harness(common::demo_store());
    type_into(&mut h, "Search fleet", "argon");
    assert!(h.query_by_label("DSF-AR-7").is_some());
    assert!(h.query_by_label("ASB-N2-1").is_none());
    assert!(h.query_by_label("ASB-O2-2").is_none());
}

#[test]
fn an_edited_delivery_keeps_its_history_and_a_short_fill_marks_the_tank() {
    let mut h = harness(common::demo_store());
    select(&mut h, "CHB-N2-5");
    let id = tank_id(&h, "CHB-N2-5");
    assert!(
        !h.state()
            .view()
            .tank
            .as_ref()
            .expect("tank")
            .attention
            .iter()
            .any(|a| matches!(a, Attention::OpenFinding(_))),
        "CHB-N2-5 has no open finding in the demo (demo-data/README.md: no fault planted there)"
    );
    tab(&mut h, "Deliveries");
    let d = h
        .state()
        .repository()
        .deliveries(Some(id))
        .expect("deliveries")
        .last()
        .cloned()
        .expect("a fill in the demo year");
    let billed = d.entry.quantity.value;
    h.get_by_label(&d.entry.ticket).click();
    h.run();
    assert_eq!(h.state().view().delivery_editor.form.editing, Some(d.id.0));
    // Billed 6 % more than the tank gained: the audit must call this fill short (its limit is the
    // larger of 2 standard uncertainties and 1 % of the ticket; its last fill, by MC-T24, is honest in the demo).
    type_into(&mut h, "Quantity", &format!("{}", billed * 1.06));
    type_into(
        &mut h,
        "Reason for the change",
        "ticket re-keyed from the carrier's copy",
    );
    h.get_by_label("Save change").click();
    h.run();
    let now = h.state().repository().delivery(d.id).expect("delivery");
    assert_eq!(now.entry.quantity.value, billed * 1.06);
    let revs = h
        .state()
        .repository()
        .history(store::RecordRef::Delivery(d.id))
        .expect("revisions");
    assert_eq!(revs.len(), 1);
    assert!(
        h.query_by_label_contains(&format!("quantity {billed} kg"))
            .is_some(),
        "history shows the old quantity"
    );
    let t = h.state().view().tank.as_ref().expect("tank");
    assert!(
        t.attention
            .iter()
            .any(|a| matches!(a, Attention::OpenFinding(f) if f.contains(&d.entry.ticket))),
        "{:?}",
        t.attention
    );
    let line = h
        .state()
        .view()
        .fleet
        .sites
        .iter()
        .flat_map(|s| &s.tanks)
        .find(|t| t.id == id.0)
        .expect("line");
    assert!(
        line.attention
            .iter()
            .any(|a| matches!(a, Attention::OpenFinding(_)))
    );
}

#[test]
fn a_deleted_reading_leaves_the_log_and_keeps_its_history() {
    let mut h = harness(common::demo_store());
    select(&mut h, "ASB-N2-1");
    let id = tank_id(&h, "ASB-N2-1");
    tab(&mut h, "Readings");
    let last = newest(&h, id);
    h.get_by_label(&shown(&h, id, last.entry.time.ms)).click();
    h.run();
    // Without a reason the delete button does nothing.
    h.get_by_label("Delete reading").click();
    h.run();
    assert_eq!(
        h.state()
            .repository()
            .readings(id, None)
            .expect("readings")
            .len(),
        demo_readings_of("ASB-N2-1")
    );
    type_into(
        &mut h,
        "Reason for the change",
        "duplicate of the telemetry reading",
    );
    h.get_by_label("Delete reading").click();
    h.run();
    assert_eq!(
        h.state()
            .repository()
            .readings(id, None)
            .expect("readings")
            .len(),
        demo_readings_of("ASB-N2-1") - 1
    );
    let revs = h
        .state()
        .repository()
        .history(store::RecordRef::Reading(last.id))
        .expect("revisions");
    assert_eq!(revs.len(), 1);
    assert_eq!(revs[0].action.as_str(), "delete");
    assert!(
        h.query_by_label(&shown(&h, id, last.entry.time.ms))
            .is_none()
    );
    assert!(h.query_by_label_contains("Reading deleted").is_some());
}

/// The status bar shows the result of a verify run over the ledger's hash chain at start-up, and the
/// "Verify history" button runs it again (the demo is written only through the store, so it
/// verifies: every record has its link).
#[test]
fn the_window_shows_the_history_check() {
    let mut h = harness(common::demo_store());
    h.run();
    let check = h
        .state()
        .view()
        .history_check
        .clone()
        .expect("checked at start-up");
    assert!(check.ok, "{}", check.text);
    assert!(h.query_by_label_contains("History verified").is_some());
    h.get_by_label("Verify history").click();
    h.run();
    h.state_mut().wait_for_background();
    h.run();
    assert!(
        h.state()
            .view()
            .history_check
            .as_ref()
            .is_some_and(|c| c.ok)
    );
}
