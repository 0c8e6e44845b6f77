//! Time as operators live it: a demo site (demo-data/tanks.csv: Europe/London), a reading entered on
//! the site's clock on the two
//! days the clocks change (2026-03-29 and 2026-10-25, the IANA tz database's rule for the UK, as
//! chrono-tz carries it) is stored at the right UTC instant, with its text as entered, and shown back
//! as entered; a time the clocks skip is refused, a time they show twice asks which.

#![allow(clippy::expect_used)] // helpers of tests: a failure to set up is a test failure

mod common;

use app::CryoApp;
use app::action::Action;
use app::egui;
use app::view::{LocalEntry, ReadingForm, TankTab};
use egui_kittest::{Harness, kittest::Queryable};
use std::path::PathBuf;
use store::Repository;

/// The demo fleet and its tank ASB-N2-1, whose site keeps UK time.
fn store_in_london() -> (store::Store, store::TankId) {
    let s = common::demo_store();
    let t = s.tank_by_name("ASB-N2-1").expect("demo tank");
    assert_eq!(t.time_zone.as_deref(), Some("Europe/London"));
    (s, t.id)
}

/// The tank's readings at an instant.
fn at(h: &Harness<'_, CryoApp>, tank: store::TankId, ms: i64) -> Vec<store::Reading> {
    h.state()
        .repository()
        .readings(tank, None)
        .expect("readings")
        .into_iter()
        .filter(|r| r.entry.time.ms == ms)
        .collect()
}

fn form(date: &str, clock: &str, repeat: Option<bool>) -> ReadingForm {
    ReadingForm {
        time: LocalEntry {
            date: date.into(),
            clock: clock.into(),
            repeat,
        },
        dp: "120".into(),
        dp_unit: "inH2O".into(),
        pressure: "8".into(),
        pressure_unit: "barg".into(),
        ..Default::default()
    }
}

fn time_messages(h: &Harness<'_, CryoApp>) -> Vec<String> {
    h.state()
        .view()
        .reading_editor
        .check
        .errors
        .iter()
        .filter(|m| m.field == "time")
        .map(|m| m.reason.clone())
        .collect()
}

#[test]
fn readings_on_the_days_the_clocks_change_are_stored_at_the_right_instant() {
    let (store, tank) = store_in_london();
    let mut app = CryoApp::new(store, PathBuf::from(":memory:"));
    app.wait_for_background();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    h.run();
    h.state_mut().push(Action::SelectTank(tank.0));
    h.state_mut().push(Action::ShowTab(TankTab::Readings));
    h.run();
    // the form says whose clock it is
    assert!(
        h.query_by_label_contains("site time, Europe/London")
            .is_some()
    );

    let count = |h: &Harness<'_, CryoApp>| {
        h.state()
            .repository()
            .readings(tank, None)
            .expect("r")
            .len()
    };
    let before = count(&h);

    // 01:30 on 29 March does not happen in London: refused, nothing written
    h.state_mut()
        .push(Action::EditReadingForm(form("2026-03-29", "01:30", None)));
    h.run();
    let m = time_messages(&h);
    assert!(m.iter().any(|m| m.contains("does not happen")), "{m:?}");
    h.state_mut().push(Action::SaveReading);
    h.run();
    assert_eq!(count(&h), before);

    // 03:30 BST that day is 02:30 UTC
    h.state_mut()
        .push(Action::EditReadingForm(form("2026-03-29", "03:30", None)));
    h.state_mut().push(Action::SaveReading);
    h.run();
    assert_eq!(count(&h), before + 1);
    let spring = at(&h, tank, 1_774_751_400_000);
    assert_eq!(spring.len(), 1);
    assert_eq!(spring[0].entry.time.text, "2026-03-29T03:30:00+01:00");

    // 01:30 on 25 October happens twice: the form asks which
    h.state_mut()
        .push(Action::EditReadingForm(form("2026-10-25", "01:30", None)));
    h.run();
    let m = time_messages(&h);
    assert!(m.iter().any(|m| m.contains("happens twice")), "{m:?}");
    assert!(
        h.query_all_by_label_contains("second (2026-10-25T01:30:00+00:00)")
            .next()
            .is_some()
    );
    // the second, after the clocks went back: 01:30 GMT
    h.state_mut().push(Action::EditReadingForm(form(
        "2026-10-25",
        "01:30",
        Some(true),
    )));
    h.state_mut().push(Action::SaveReading);
    h.run();
    assert_eq!(count(&h), before + 2);
    let autumn = at(&h, tank, 1_792_891_800_000);
    assert_eq!(autumn.len(), 1);
    let autumn = &autumn[0];
    assert_eq!(autumn.entry.time.text, "2026-10-25T01:30:00+00:00");

    // shown back as entered: in the log on the site's clock (opening a reading scrolls the log to
    // it: the demo's year of readings is far longer than the window), and in the form
    h.state_mut()
        .push(Action::SelectReading(Some(spring[0].id.0)));
    h.run();
    h.run();
    assert!(h.query_by_label("2026-03-29 03:30 BST").is_some());
    assert!(
        h.query_by_label("2026-10-25 01:30 GMT").is_none(),
        "seven months apart: one in view"
    );
    h.state_mut().push(Action::SelectReading(Some(autumn.id.0)));
    h.run();
    h.run();
    assert!(h.query_by_label("2026-10-25 01:30 GMT").is_some());
    let shown = &h.state().view().reading_editor.form.time;
    assert_eq!(
        (shown.date.as_str(), shown.clock.as_str(), shown.repeat),
        ("2026-10-25", "01:30", Some(true))
    );
}
