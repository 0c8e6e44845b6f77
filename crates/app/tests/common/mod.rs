//! Fictional test fleets built through the store API (names and figures are invented for tests).
#![allow(dead_code, clippy::expect_used)]

use egui_kittest::kittest::Queryable as _;
use store::Repository;
use store::{DeliveryFields, ReadingFields, Store, TankFields};

/// One day, ms.
pub const DAY_MS: i64 = 86_400_000;

/// A vertical nitrogen tank and a horizontal argon tank at two fictional sites.
pub fn tank_fields(site: &str, name: &str, fluid: &str, orientation: &str) -> store::TankSpec {
    TankFields {
        site,
        tank: name,
        fluid,
        orientation,
        diameter_m: if orientation == "vertical" {
            "2.1"
        } else {
            "2.4"
        },
        length_m: if orientation == "vertical" {
            "6.4"
        } else {
            "7.5"
        },
        heads: "torispherical",
        line_temperature_c: "15",
        dp_unit: "inH2O",
        gauge_span: "400",
        gauge_accuracy_percent: "1",
        relief_pressure: "17.2",
        relief_pressure_unit: "barg",
        reorder_percent: "25",
        ner_percent_per_day: "0.4",
        ..Default::default()
    }
    .check()
    .expect("fixture tank checks")
}

/// Fraction of the full-tank DP on a day of a saw-tooth use pattern: falls from 0.92 to about 0.22
/// over 33 days, then a fill (invented for tests and screenshots).
pub fn fraction_on_day(day: i64) -> f64 {
    let cycle = day.rem_euclid(33) as f64;
    0.92 - cycle * 0.0212 + 0.004 * ((day * 7919) % 13) as f64 / 13.0
}

/// Full-tank DP of a stored tank at `barg`, inH2O (through the engine, saturated liquid).
pub fn full_dp_inh2o(s: &Store, tank: store::TankId, barg: f64) -> f64 {
    let t = s.tank(tank).expect("tank");
    let engine = evaluate::engine_tank(&t.spec).expect("engine tank");
    let c = tank::Conditions::saturated(barg * 1e5 + t.barometer_pa)
        .with_line_temperature_k(t.spec.line_temperature_k());
    let full = engine
        .full_tank_dp(&c, &tank::ContentsOptions::default())
        .expect("full dp");
    full.reading_pa / units::INCH_WATER_CONVENTIONAL_PA
}

/// Add `days` daily readings ending `end_ms` (the DP pattern shifted by `phase` days, counted from the
/// first reading), and a delivery at each refill.
pub fn add_history(
    s: &mut Store,
    tank: store::TankId,
    end_ms: i64,
    days: i64,
    ticket_prefix: &str,
    phase: i64,
) {
    add_history_at(s, tank, end_ms, days, ticket_prefix, phase, 11.5);
}

/// [`add_history`] around a mean tank pressure `barg`.
pub fn add_history_at(
    s: &mut Store,
    tank: store::TankId,
    end_ms: i64,
    days: i64,
    ticket_prefix: &str,
    phase: i64,
    barg: f64,
) {
    add_history_every(s, tank, end_ms, days, ticket_prefix, phase, barg, 1);
}

/// [`add_history_at`] read `per_day` times a day, evenly spaced from the morning reading; the extra
/// readings follow the day's use toward the next morning's (or the last reading before a fill).
#[allow(clippy::too_many_arguments)]
pub fn add_history_every(
    s: &mut Store,
    tank: store::TankId,
    end_ms: i64,
    days: i64,
    ticket_prefix: &str,
    phase: i64,
    barg: f64,
    per_day: i64,
) {
    let barometer = s.tank(tank).expect("tank").barometer_pa;
    let full = full_dp_inh2o(s, tank, barg);
    let t = s.tank(tank).expect("tank");
    // Mass at a fraction of the full DP, the liquid saturated at `liquid_pa` (None: at the tank
    // pressure).
    let mass_at = |f: f64, liquid_pa: Option<f64>| -> f64 {
        let dp = format!("{:.2}", full * f);
        let r = ReadingFields {
            time: "2026-01-01T00:00:00Z",
            dp: &dp,
            dp_unit: "inH2O",
            pressure: &format!("{barg}"),
            pressure_unit: "barg",
            ..Default::default()
        }
        .check(barometer)
        .expect("reading");
        let liquid = liquid_pa.map_or(tank::LiquidState::SaturatedAtTankPressure, |p| {
            tank::LiquidState::SaturatedAtPressure { pressure_pa: p }
        });
        let engine = evaluate::engine_tank(&t.spec).expect("engine tank");
        engine
            .contents_from_reading(
                full * f * units::INCH_WATER_CONVENTIONAL_PA,
                &evaluate::conditions(&t, &r, liquid),
                &tank::ContentsOptions::default(),
            )
            .expect("contents")
            .total_mass_kg
    };
    // A fill lifts the tank from the low to the high end of the pattern. Just after it the liquid is
    // mostly the delivered one, about saturated at the supply pressure, so the billed mass
    // (rounded to 10 kg) is what an honest ticket would say.
    // Trailers carry carbon dioxide well above its triple point (about 11 barg); cryogens at 2.5 barg.
    let supply_barg = if t.spec.fluid == store::FluidId::CarbonDioxide {
        11.0
    } else {
        2.5
    };
    let supply_pa = supply_barg * 1e5 + barometer;
    let supply = format!("{supply_barg}");
    // one fixture reading: its time, DP (inH2O) and tank pressure (barg) as typed
    let entry = |time: &str, dp: &str, p: &str| {
        ReadingFields {
            time,
            dp,
            dp_unit: "inH2O",
            pressure: p,
            pressure_unit: "barg",
            ..Default::default()
        }
        .check(barometer)
        .expect("fixture reading checks")
    };
    let mut readings = Vec::with_capacity(days as usize);
    for d in 0..days {
        let ms = end_ms - (days - 1 - d) * DAY_MS;
        // the pattern's day counts from the first reading, not the calendar: the fixture is the same
        // whatever day the tests run
        let day = d + phase;
        let time = store::Stamp::from_ms(ms).text;
        let dp = format!("{:.1}", full * fraction_on_day(day));
        let wave = (day as f64 * std::f64::consts::TAU / 47.0).sin();
        let p = format!("{:.2}", barg + 0.3 * wave + 0.04 * ((day * 31) % 5) as f64);
        readings.push(entry(&time, &dp, &p));
        // later readings of the day, toward tomorrow's morning level (before a fill: toward the
        // reading just before it)
        let next = if (day + 1).rem_euclid(33) == 0 {
            fraction_on_day(day) - 0.004
        } else {
            fraction_on_day(day + 1)
        };
        for k in 1..per_day.max(1) {
            if d + 1 == days {
                break;
            }
            let share = k as f64 / per_day as f64;
            // at most 18 h after the morning reading: before the next day's fill (at 04:00 when the
            // morning reading is at 07:00)
            let later = store::Stamp::from_ms(ms + (share * DAY_MS as f64) as i64).text;
            let dp = format!(
                "{:.1}",
                full * (fraction_on_day(day) + share * (next - fraction_on_day(day)))
            );
            readings.push(entry(&later, &dp, &p));
        }
        if day.rem_euclid(33) == 0 && d > 0 {
            // A reading just before the fill (the day's use so far), so the fill is bracketed.
            let before = store::Stamp::from_ms(ms - 4 * 3_600_000).text;
            let low = fraction_on_day(day - 1) - 0.004;
            let dp_before = format!("{:.1}", full * low);
            let billed = format!(
                "{:.0}",
                ((mass_at(fraction_on_day(day), Some(supply_pa)) - mass_at(low, None)) / 10.0)
                    .round()
                    * 10.0
            );
            readings.push(entry(&before, &dp_before, &p));
            let start = store::Stamp::from_ms(ms - 3 * 3_600_000).text;
            let end = store::Stamp::from_ms(ms - 2 * 3_600_000).text;
            let ticket = format!("{ticket_prefix}-{day}");
            let dl = DeliveryFields {
                ticket: &ticket,
                start: &start,
                end: &end,
                quantity: &billed,
                quantity_unit: "kg",
                carrier: "Fennelwhirl Haulage",
                vehicle: "FH-3",
                supply_pressure: &supply,
                supply_pressure_unit: "barg",
            }
            .check(barometer)
            .expect("fixture delivery checks");
            s.add_delivery(tank, &dl).expect("add delivery");
        }
    }
    for r in &readings {
        s.add_reading(tank, r).expect("add reading");
    }
}

/// The demo fleet of `cryoledger demo` and the first start (demo-data/, its planted faults in
/// demo-data/README.md), as the files hold it (not moved to today).
pub fn demo_store() -> Store {
    demo_into(Store::open_in_memory().expect("store"))
}

/// [`demo_store`] written into an open store (a file, for tests that need a second connection).
pub fn demo_into(mut s: Store) -> Store {
    use store::{ImportOptions, ImportSource, ImportSources};
    s.import(
        ImportSources {
            tanks: Some(ImportSource::text(
                "tanks.csv",
                include_str!("../../../../demo-data/tanks.csv"),
            )),
            readings: Some(ImportSource::text(
                "readings.csv",
                include_str!("../../../../demo-data/readings.csv"),
            )),
            deliveries: Some(ImportSource::text(
                "deliveries.csv",
                include_str!("../../../../demo-data/deliveries.csv"),
            )),
        },
        &ImportOptions::default(),
    )
    .expect("demo import");
    s
}

/// Replace the text (a test helper, on the real window) of the field labelled `label`.
pub fn type_into(h: &mut egui_kittest::Harness<'_, app::CryoApp>, label: &str, text: &str) {
    h.get_by_role_and_label(app::egui::Role::TextInput, label)
        .focus();
    h.run();
    h.key_press_modifiers(app::egui::Modifiers::COMMAND, app::egui::Key::A);
    h.run();
    h.get_by_role_and_label(app::egui::Role::TextInput, label)
        .type_text(text);
    h.run();
}
