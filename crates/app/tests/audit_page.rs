//! The audit page driven through the real app (egui_kittest) on the demo fleet: the planted short
//! vehicle, drifting gauge and findings are found in their sections, the filter keeps one vehicle's
//! fills, a balance's detail shows the numbers of the bridge's fleet audit (the one
//! `cryoledger audit --format json` prints; tests/e2e/one_path.rs shows the two agree), and the
//! deliveries tab shows each fill's verdict.

#![allow(clippy::expect_used)] // helpers of tests: a failure to set up is a test failure

use app::CryoApp;
use app::action::{Action, ReportRequest};
use app::egui;
use app::egui::Role;
use app::view::{AuditSection, Page, VerdictWord};
use egui_kittest::{Harness, kittest::Queryable};
use std::path::PathBuf;
use store::Store;

mod common;

use common::demo_store;

fn harness() -> Harness<'static, CryoApp> {
    let mut app = CryoApp::new(demo_store(), PathBuf::from(":memory:"));
    app.wait_for_background();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    h
}

#[test]
fn the_audit_page_shows_what_was_planted_in_the_demo() {
    let mut h = harness();
    h.get_by_label("Audit").click();
    h.run();
    assert_eq!(h.state().view().page, Page::Audit);
    let a = &h.state().view().audit;
    assert!(a.ready);
    assert_eq!(a.visible.len(), a.rows.len());
    // the summary counts what the fleet audit judged (demo-data/README.md: MC-T25 3 % short on its
    // fills)
    let shorts = a
        .rows
        .iter()
        .filter(|r| r.verdict == VerdictWord::Short)
        .count();
    assert!(shorts >= 20, "{shorts} short fills");
    assert!(
        a.summary.contains(&format!("{shorts} short")),
        "{}",
        a.summary
    );

    // vehicles: MC-T25 biased, and no other
    h.get_by_label("Vehicles").click();
    h.run();
    assert_eq!(h.state().view().audit.section, AuditSection::Vehicles);
    let biased: Vec<String> = h
        .state()
        .view()
        .audit
        .vehicles
        .iter()
        .filter(|v| v.flagged)
        .map(|v| v.vehicle.clone())
        .collect();
    assert_eq!(biased, vec!["MC-T25".to_owned()]);
    h.get_by_label("biased");
    // its fills plotted against its tanks' levels: one point per compared fill, the bias near the
    // 3 % short planted (demo-data/README.md; the estimate carries the meters' noise: ±1 %)
    h.get_by_label("MC-T25").click();
    h.run();
    let a = &h.state().view().audit;
    let v = a
        .vehicle_open
        .and_then(|i| a.vehicles.get(i))
        .expect("vehicle open");
    assert_eq!(v.vehicle, "MC-T25");
    assert_eq!(v.points.len(), v.fills);
    let (bias, low, high) = v.bias.expect("bias");
    assert!((bias + 3.0).abs() < 1.0, "bias {bias} %");
    assert!(low < bias && bias < high);
    let mean = v.points.iter().map(|p| p.1).sum::<f64>() / v.points.len() as f64;
    assert!((mean + 3.0).abs() < 1.0, "mean of the points {mean} %");
    h.get_by_label_contains("MC-T25: each fill against its tank's level");
    // gauges: DSF-AR-7 drifting
    h.get_by_label("Gauges").click();
    h.run();
    let flagged: Vec<(String, String)> = h
        .state()
        .view()
        .audit
        .gauges
        .iter()
        .filter(|g| g.flagged)
        .map(|g| (g.tank.clone(), g.status.clone()))
        .collect();
    assert_eq!(flagged, vec![("DSF-AR-7".to_owned(), "drift".to_owned())]);
    h.get_by_label("drift");
    // its fills plotted with the drift the test found: the line falls by the drift's slope
    // the Fleet list names the tank too: the gauges table is drawn after it
    h.get_all_by_label("DSF-AR-7")
        .last()
        .expect("the gauges table's DSF-AR-7")
        .click();
    h.run();
    let a = &h.state().view().audit;
    let g = a
        .gauge_open
        .and_then(|i| a.gauges.get(i))
        .expect("gauge open");
    assert_eq!(g.tank, "DSF-AR-7");
    let [p0, p1] = g.drift_line.expect("drift line");
    let per_year = (p1[1] - p0[1]) / (p1[0] - p0[0]) * 365.0;
    assert!(
        (per_year - g.drift.expect("drift")).abs() < 1e-9,
        "{per_year}"
    );
    assert!(g.points.len() >= g.fills, "{} points", g.points.len());
    // each tank states the ten-day leak its scan finds, in the chosen unit, shown in the table
    let leak_seen = a
        .gauges
        .iter()
        .find(|g| g.tank == "EFF-O2-10")
        .map(|g| g.leak_seen.clone())
        .expect("EFF-O2-10's line");
    let rate: f64 = leak_seen
        .strip_suffix(" kg/day")
        .and_then(|x| x.replace(',', "").parse().ok())
        .unwrap_or_else(|| panic!("{leak_seen}"));
    assert!(rate > 0.0, "{leak_seen}");
    h.get_by_label(&leak_seen);
    // findings: the unlogged fill at BH-AR-3 and the leak at EFF-O2-10
    h.get_by_label("Findings").click();
    h.run();
    h.get_by_label("gain no ticket explains");
    h.get_by_label("loss beyond use");
    let tanks: Vec<String> = h
        .state()
        .view()
        .audit
        .findings
        .iter()
        .map(|f| f.tank.clone())
        .collect();
    assert_eq!(tanks, vec!["BH-AR-3".to_owned(), "EFF-O2-10".to_owned()]);
}

#[test]
fn a_balance_opens_with_the_fleet_audits_numbers_and_the_filter_keeps_one_vehicle() {
    let mut h = harness();
    h.get_by_label("Audit").click();
    h.run();
    // keep MC-T25's fills
    let mut f = h.state().view().audit.filter.clone();
    f.vehicle = "MC-T25".into();
    h.state_mut().push(Action::SetAuditFilter(f));
    h.run();
    let a = &h.state().view().audit;
    assert!(!a.visible.is_empty());
    assert!(a.visible.iter().all(|&i| a.rows[i].vehicle == "MC-T25"));
    // open the first kept balance by clicking its ticket
    let i = a.visible[0];
    let ticket = a.rows[i].ticket.clone();
    h.get_by_label(ticket.as_str()).click();
    h.run();
    assert_eq!(h.state().view().audit.selected, Some(i));
    // the bridge's fleet audit for the same ticket (what `audit --format json` prints)
    let fleet = evaluate::audit_fleet(
        h.state().repository(),
        &evaluate::AuditRequest::default(),
        &mut |_, _| {},
        &std::sync::atomic::AtomicBool::new(false),
    )
    .expect("audit");
    let b = fleet
        .fills
        .iter()
        .find(|b| b.ticket == ticket)
        .expect("ticket audited");
    let r = &h.state().view().audit.rows[i];
    assert_eq!(r.residual_kg, b.residual_kg);
    assert_eq!(r.sigma_kg, b.sigma_kg);
    assert_eq!(r.explanation, b.explanation);
    // shown: the heading, the verdict word, the residual in kg as formatted, the sentence
    h.get_by_label(format!("Ticket {ticket}").as_str());
    h.get_by_label(format!("{} kg", app::fmt::num(b.residual_kg, 0)).as_str());
    h.get_by_label(b.explanation.as_str());
    // the reading after the fill opens in the readings tab, in its form
    let after_ms = r.after.as_ref().expect("reading after").time_ms;
    h.get_by_label("Open the reading after").click();
    h.run();
    {
        let v = h.state().view();
        assert_eq!(v.tab, app::view::TankTab::Readings);
        let id = v.reading_editor.form.editing.expect("a reading open");
        let read = h
            .state()
            .repository()
            .reading(store::ReadingId(id))
            .expect("reading");
        assert_eq!(read.entry.time.ms, after_ms);
    }
    // back to the balance, then to the delivery on its tank page: its verdict is in the deliveries tab
    h.get_by_label("Audit").click();
    h.run();
    h.get_by_label("Open the delivery on its tank page").click();
    h.run();
    let v = h.state().view();
    assert_eq!(v.page, Page::Tank);
    let t = v.tank.as_ref().expect("tank page");
    assert_eq!(t.name, b.tank);
    let row = t
        .deliveries
        .iter()
        .find(|d| d.ticket == ticket)
        .expect("delivery row");
    assert_eq!(row.verdict.map(|x| x.0), Some(VerdictWord::Short));
    assert_eq!(
        v.delivery_editor.form.editing,
        Some(row.id),
        "the delivery is open in the form"
    );
    // the trend marks the flagged fill
    assert!(
        t.trend
            .deliveries
            .iter()
            .any(|d| d.1 == ticket && d.2 == Some(VerdictWord::Short))
    );
    let _ = h.state().repository().reading_count(None);
}

/// The demo's three CSV files written into `dir`: tanks, readings, deliveries.
fn demo_files(dir: &std::path::Path) -> Vec<PathBuf> {
    [
        ("tanks.csv", include_str!("../../../demo-data/tanks.csv")),
        (
            "readings.csv",
            include_str!("../../../demo-data/readings.csv"),
        ),
        (
            "deliveries.csv",
            include_str!("../../../demo-data/deliveries.csv"),
        ),
    ]
    .into_iter()
    .map(|(name, text)| {
        let p = dir.join(name);
        std::fs::write(&p, text).expect("write");
        p
    })
    .collect()
}

fn empty_harness() -> Harness<'static, CryoApp> {
    let mut app = CryoApp::new(
        Store::open_in_memory().expect("store"),
        PathBuf::from(":memory:"),
    );
    app.wait_for_background();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    h
}

fn set_path(h: &mut Harness<'_, CryoApp>, label: &str, path: &std::path::Path) {
    let field = h.get_by_role_and_label(Role::TextInput, label);
    field.focus();
    field.type_text(&path.display().to_string());
    h.run();
}

/// A readings file with a bad DP on its third line: "Check" lists the error with its file and line,
/// "Import" stays disabled, and nothing is written (the store's all-or-nothing rule).
#[test]
fn an_import_with_a_bad_row_shows_it_and_writes_nothing() {
    let dir = tempfile::tempdir().expect("dir");
    let tanks = dir.path().join("tanks.csv");
    std::fs::write(&tanks, include_str!("../../../demo-data/tanks.csv")).expect("write");
    let readings = dir.path().join("readings.csv");
    std::fs::write(
        &readings,
        "tank,time,dp,dp_unit,pressure,pressure_unit\n\
         ASB-N2-1,2026-01-01T08:52:38Z,114,inH2O,12.1,barg\n\
         ASB-N2-1,2026-01-02T08:44:30Z,abc,inH2O,11.5,barg\n",
    )
    .expect("write");
    let mut h = empty_harness();
    h.get_by_label("Import").click();
    h.run();
    assert_eq!(h.state().view().page, Page::Import);
    set_path(&mut h, "Tanks file", &tanks);
    set_path(&mut h, "Readings file", &readings);
    h.get_by_label("Check").click();
    h.run();
    let iv = &h.state().view().import;
    assert!(iv.checked.is_none());
    let line = format!("{}:3: dp:", readings.display());
    assert!(
        iv.errors.iter().any(|e| e.starts_with(&line)),
        "{:?}",
        iv.errors
    );
    let shown = iv.errors[0].clone();
    h.get_by_label(shown.as_str());
    // the preview shows the files as read
    assert_eq!(iv.files.len(), 2);
    assert_eq!(iv.files[1].row_count, 2);
    assert_eq!(iv.files[1].rows[1][2], "abc");
    // the page's Import button is disabled: a click does nothing
    h.get_all_by_label("Import")
        .last()
        .expect("the page's Import button")
        .click();
    h.run();
    assert!(h.state().repository().tanks().expect("tanks").is_empty());
    assert_eq!(
        h.state().repository().reading_count(None).expect("count"),
        0
    );
}

/// Good files: "Check" says what an import would add and writes nothing; "Import" writes them, and
/// the audit page shows the fleet's fills with MC-T25 biased (the demo's planted fault).
#[test]
fn an_import_of_good_files_refreshes_the_audit() {
    let dir = tempfile::tempdir().expect("dir");
    let paths = demo_files(dir.path());
    let mut h = empty_harness();
    h.get_by_label("Import").click();
    h.run();
    for (label, p) in ["Tanks file", "Readings file", "Deliveries file"]
        .iter()
        .zip(&paths)
    {
        set_path(&mut h, label, p);
    }
    h.get_by_label("Check").click();
    h.run();
    let checked = h.state().view().import.checked.clone().expect("checked");
    assert!(
        checked.contains("16 tanks, 5706 readings, 181 deliveries"),
        "{checked}"
    );
    assert!(h.state().repository().tanks().expect("tanks").is_empty());
    // the page's Import button (the top bar's comes first)
    h.get_all_by_label("Import")
        .last()
        .expect("the page's Import button")
        .click();
    h.run();
    h.state_mut().wait_for_background();
    h.run();
    assert_eq!(h.state().repository().tanks().expect("tanks").len(), 16);
    let a = &h.state().view().audit;
    assert_eq!(a.rows.len(), 181);
    assert!(
        a.vehicles
            .iter()
            .any(|v| v.vehicle == "MC-T25" && v.flagged)
    );
}

/// On a database file the import runs on its own thread and connection, with its progress shown; the
/// window's ledger sees the imported records, and the audit follows.
#[test]
fn an_import_into_a_database_file_runs_in_the_background() {
    let dir = tempfile::tempdir().expect("dir");
    let db = dir.path().join("ledger.db");
    let store = Store::open(&db).expect("store");
    let paths = demo_files(dir.path());
    let mut app = CryoApp::new(store, db.clone());
    app.wait_for_background();
    for (k, p) in paths.iter().enumerate() {
        app.push(Action::SetImportPath(k, p.display().to_string()));
    }
    app.push(Action::CheckImport);
    app.push(Action::RunImport);
    app.drain_actions();
    let (read, total) = app
        .view()
        .import
        .progress
        .expect("running in the background");
    let size: u64 = paths
        .iter()
        .map(|p| std::fs::metadata(p).expect("size").len())
        .sum();
    assert_eq!(total, size);
    assert!(read <= total);
    app.wait_for_background();
    let v = app.view();
    assert!(v.import.progress.is_none());
    assert!(
        v.import
            .done
            .as_deref()
            .is_some_and(|d| d.contains("16 tanks, 5706 readings, 181 deliveries")),
        "{:?} {:?}",
        v.import.done,
        v.import.errors
    );
    assert_eq!(app.repository().tanks().expect("tanks").len(), 16);
    assert_eq!(v.audit.rows.len(), 181);
}

/// "Save fill report…", each vehicle's "Report…" and the tank page's "Save stock statement…" are
/// there; the reports they save are the command line's documents (the same code), written where
/// asked, and the page says where.
#[test]
fn reports_are_saved_from_the_balance_the_vehicles_and_the_tank_page() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut h = harness();
    h.get_by_label("Audit").click();
    h.run();
    let (ticket, vehicle) = {
        let fa = h.state().fleet_audit().expect("audit");
        let b = fa
            .fills
            .iter()
            .find(|b| b.verdict == audit::Verdict::Short)
            .expect("a short fill");
        (b.ticket.clone(), b.vehicle.clone())
    };
    // the balance's detail offers its report
    let row = h
        .state()
        .view()
        .audit
        .rows
        .iter()
        .position(|r| r.ticket == ticket)
        .expect("row");
    h.state_mut().push(Action::SelectBalance(Some(row)));
    h.run();
    assert!(h.query_by_label("Save fill report…").is_some());
    let fill = dir.path().join("fill.html");
    h.state_mut().push(Action::SaveReport {
        what: ReportRequest::Fill(ticket.clone()),
        to: Some(fill.clone()),
    });
    h.run();
    let text = std::fs::read_to_string(&fill).expect("fill report");
    assert!(text.contains(&format!("Fill report: ticket {ticket}")));
    // the balance's residual as the report prints it: the audit's own figure
    let b = h
        .state()
        .fleet_audit()
        .and_then(|fa| fa.fills.iter().find(|b| b.ticket == ticket).cloned())
        .expect("balance");
    assert!(text.contains(&format!(
        "data-field=\"residual_kg\" data-value=\"{:e}\"",
        b.residual_kg
    )));
    let notice = h.state().view().notice.clone().unwrap_or_default();
    assert!(notice.contains("fill.html"), "{notice}");

    // each vehicle has its report button
    h.get_by_label("Vehicles").click();
    h.run();
    let n = h.state().view().audit.vehicles.len();
    assert_eq!(h.query_all_by_label("Report…").count(), n);
    let vf = dir.path().join("vehicle.html");
    h.state_mut().push(Action::SaveReport {
        what: ReportRequest::Vehicle(vehicle.clone()),
        to: Some(vf.clone()),
    });
    h.run();
    assert!(
        std::fs::read_to_string(&vf)
            .expect("vehicle report")
            .contains(&format!("Vehicle report: {vehicle}"))
    );

    // the tank page saves the tank's statement, as CSV when the name says so
    let tank = h
        .state()
        .repository()
        .tank_by_name(&b.tank)
        .expect("tank")
        .id
        .0;
    h.state_mut().push(Action::SelectTank(tank));
    h.run();
    assert!(h.query_by_label("Save stock statement…").is_some());
    let sf = dir.path().join("statement.csv");
    h.state_mut().push(Action::SaveReport {
        what: ReportRequest::Statement(tank),
        to: Some(sf.clone()),
    });
    h.run();
    let csv = std::fs::read_to_string(&sf).expect("statement");
    assert!(csv.starts_with("period,opened,closed,opening_kg"), "{csv}");
    assert!(
        h.state().view().error.is_none(),
        "{:?}",
        h.state().view().error
    );

    // a folder that is not there: the error names the file, nothing is written
    let bad = dir.path().join("no-such-folder").join("x.html");
    h.state_mut().push(Action::SaveReport {
        what: ReportRequest::Fill(ticket),
        to: Some(bad.clone()),
    });
    h.run();
    let err = h.state().view().error.clone().unwrap_or_default();
    assert!(err.contains("x.html"), "{err}");
    assert!(!bad.exists());
}
