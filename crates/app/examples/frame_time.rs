//! Frame-time and page-open benchmark, a bench command (CI runs it):
//! `cargo run -p app --release --example frame_time` (`-- --tanks N` for a smaller fleet).
//!
//! A fleet of 1,000 tanks in the Fleet list (30 days of readings each) and one tank with five years of
//! readings four times a day shown on the Trend tab over its whole history. Reports the time to open that tank's
//! page (every reading evaluated with its uncertainty) and the CPU time per frame: the app's own timer
//! (logic + ui) and the whole harness step (egui layout, accessibility tree); then the audit page
//! with one balance open, and frames while the fleet audit runs again in the background.
#![allow(clippy::expect_used)] // benchmark set-up: a failure stops the benchmark

#[path = "../tests/common/mod.rs"]
mod common;

use app::CryoApp;
use app::action::Action;
use app::view::TankTab;
use common::{DAY_MS, add_history, add_history_every, tank_fields};
use egui_kittest::Harness;
use std::time::Instant;
use store::Repository;

fn stats(mut v: Vec<f64>) -> (f64, f64, f64) {
    v.sort_by(f64::total_cmp);
    let pick = |q: f64| {
        v.get(((v.len() as f64 - 1.0) * q).round() as usize)
            .copied()
            .unwrap_or(0.0)
    };
    (
        pick(0.5),
        pick(0.95),
        v.iter().sum::<f64>() / v.len().max(1) as f64,
    )
}

/// One frame: the harness step plus the tessellation eframe does next (ms), and the app's own
/// logic + ui time (ms).
fn frame(h: &mut Harness<'_, CryoApp>) -> (f64, f64) {
    let t = Instant::now();
    h.step();
    let shapes = h.output().shapes.clone();
    let ppp = h.output().pixels_per_point;
    let _meshes = h.ctx.tessellate(shapes, ppp);
    (t.elapsed().as_secs_f64() * 1e3, h.state().last_frame_ms())
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let tanks: u32 = args
        .iter()
        .position(|a| a == "--tanks")
        .and_then(|i| args.get(i + 1))
        .and_then(|v| v.parse().ok())
        .unwrap_or(1000);
    let t0 = Instant::now();
    // A database file, as in the app: the fleet summary then reads through its own connection.
    let dir = std::env::temp_dir().join(format!("cryoledger-frame-time-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join("bench.db");
    let _ = std::fs::remove_file(&path);
    let mut s = store::Store::open(&path).expect("store");
    let end = app::fmt::now_ms() / DAY_MS * DAY_MS - DAY_MS + 7 * 3_600_000;
    let big = s
        .add_tank(&tank_fields(
            "Aldergate Works",
            "AW-N2-5Y",
            "nitrogen",
            "vertical",
        ))
        .expect("tank");
    // read four times a day for five years, as some sites read
    add_history_every(&mut s, big, end, 5 * 365 + 1, "AW", 0, 11.5, 4);
    for n in 0..tanks.saturating_sub(1) {
        let site = format!("Bench Site {:03}", n / 10);
        let name = format!("BX-{n:04}");
        let id = s
            .add_tank(&tank_fields(&site, &name, "nitrogen", "vertical"))
            .expect("tank");
        add_history(&mut s, id, end, 30, &format!("B{n:04}"), i64::from(n % 33));
    }
    println!("set-up (store writes): {:.1} s", t0.elapsed().as_secs_f64());

    let t1 = Instant::now();
    let mut app = CryoApp::new(s, path.clone());
    let spawn_ms = t1.elapsed().as_secs_f64() * 1e3;
    app.wait_for_background();
    println!(
        "fleet summary of {tanks} tanks: {spawn_ms:.0} ms on the UI thread, {:.0} ms until the background summary (reads, contents, fleet audit) was in",
        t1.elapsed().as_secs_f64() * 1e3
    );
    assert_eq!(app.view().fleet.counts.0, tanks as usize);

    let mut opens = Vec::new();
    for _ in 0..5 {
        let t = Instant::now();
        app.push(Action::SelectTank(big.0));
        app.drain_actions();
        opens.push(t.elapsed().as_secs_f64() * 1e3);
    }
    let page = app.view().tank.as_ref().expect("page");
    // Four readings a day plus one just before each fill.
    let n = page.readings.len();
    assert!(n > 4 * 5 * 365, "{n} readings");
    let (open_med, open_p95, _) = stats(opens.clone());
    println!(
        "open the 5-year tank page ({n} readings, four a day; thermal history, GUM uncertainty): median {open_med:.1} ms, max of 5 {open_p95:.1} ms"
    );

    app.push(Action::ShowTab(TankTab::Trend));
    app.push(Action::SetTrendPeriod(None));
    app.drain_actions();
    let mut h = Harness::builder()
        .with_size(app::egui::vec2(1360.0, 860.0))
        .build_eframe(move |_cc| app);
    for _ in 0..10 {
        h.step();
    }
    let (mut own, mut step, mut total) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..300 {
        // Move the pointer over the plot so hover labels are computed too.
        h.hover_at(app::egui::pos2(500.0 + (i % 50) as f32 * 12.0, 350.0));
        let t = Instant::now();
        h.step();
        let stepped = t.elapsed().as_secs_f64() * 1e3;
        // What eframe does next on the CPU: turn the frame's shapes into triangles.
        let shapes = h.output().shapes.clone();
        let ppp = h.output().pixels_per_point;
        let t = Instant::now();
        let meshes = h.ctx.tessellate(shapes, ppp);
        let tess = t.elapsed().as_secs_f64() * 1e3;
        assert!(!meshes.is_empty());
        step.push(stepped);
        total.push(stepped + tess);
        own.push(h.state().last_frame_ms());
    }
    let (o_med, o_p95, o_mean) = stats(own);
    let (s_med, s_p95, s_mean) = stats(step);
    let (t_med, t_p95, t_mean) = stats(total);
    println!("trend (all 5 years) + {tanks}-tank Fleet list, 300 frames:");
    println!("  app logic+ui CPU: median {o_med:.2} ms, p95 {o_p95:.2} ms, mean {o_mean:.2} ms");
    println!("  whole harness step: median {s_med:.2} ms, p95 {s_p95:.2} ms, mean {s_mean:.2} ms");
    println!("  step + tessellation: median {t_med:.2} ms, p95 {t_p95:.2} ms, mean {t_mean:.2} ms");

    // The Readings table (1826 rows, virtualised) beside the Fleet list.
    h.state_mut().push(Action::ShowTab(TankTab::Readings));
    h.step();
    let (mut own, mut total) = (Vec::new(), Vec::new());
    for _ in 0..100 {
        let (whole, app_ms) = frame(&mut h);
        total.push(whole);
        own.push(app_ms);
    }
    let (r_med, r_p95, _) = stats(own);
    let (rt_med, rt_p95, _) = stats(total);
    println!("readings table ({n} rows, virtualised) + Fleet list:");
    println!("  app logic+ui CPU: median {r_med:.2} ms, p95 {r_p95:.2} ms");
    println!("  step + tessellation: median {rt_med:.2} ms, p95 {rt_p95:.2} ms");

    // The audit page: every fill of the fleet, filtered and ordered, one balance open.
    h.state_mut().push(Action::ShowAudit);
    h.step();
    let fills = h.state().view().audit.rows.len();
    if fills > 0 {
        h.state_mut().push(Action::SelectBalance(Some(0)));
    }
    h.step();
    let (mut own, mut total) = (Vec::new(), Vec::new());
    for i in 0..100 {
        h.hover_at(app::egui::pos2(600.0, 200.0 + (i % 20) as f32 * 20.0));
        let (whole, app_ms) = frame(&mut h);
        total.push(whole);
        own.push(app_ms);
    }
    let (a_med, a_p95, _) = stats(own);
    let (at_med, at_p95, _) = stats(total);
    println!("audit page ({fills} fills, one balance open) + Fleet list:");
    println!("  app logic+ui CPU: median {a_med:.2} ms, p95 {a_p95:.2} ms");
    println!("  step + tessellation: median {at_med:.2} ms, p95 {at_p95:.2} ms");

    // Frames while the fleet audit runs again in the background (its own thread and connection).
    h.state_mut().push(Action::RunAudit);
    h.step();
    let (mut own, mut total) = (Vec::new(), Vec::new());
    let started = Instant::now();
    while h.state().view().fleet.progress.is_some() && started.elapsed().as_secs() < 600 {
        let (whole, app_ms) = frame(&mut h);
        total.push(whole);
        own.push(app_ms);
    }
    // the frames just after: the new audit page's first layouts
    let after: Vec<(f64, f64)> = (0..3).map(|_| frame(&mut h)).collect();
    let frames = own.len();
    let (worst_at, worst) = total
        .iter()
        .copied()
        .enumerate()
        .fold((0, 0.0_f64), |a, (i, x)| if x > a.1 { (i, x) } else { a });
    let worst_own = own.get(worst_at).copied().unwrap_or(0.0);
    let (b_med, b_p95, _) = stats(own);
    let (bt_med, bt_p95, _) = stats(total.clone());
    println!(
        "audit page while the {tanks}-tank audit runs in the background ({frames} frames, {:.1} s):",
        started.elapsed().as_secs_f64()
    );
    println!("  app logic+ui CPU: median {b_med:.2} ms, p95 {b_p95:.2} ms");
    println!(
        "  step + tessellation: median {bt_med:.2} ms, p95 {bt_p95:.2} ms, worst {worst:.2} ms"
    );
    println!(
        "  the worst is frame {} of {frames} (the last installs the result); the app's own logic+ui in it: {worst_own:.2} ms",
        worst_at + 1
    );
    println!(
        "  the 3 frames after (step + tessellation, app): {}",
        after
            .iter()
            .map(|(w, a)| format!("{w:.2}/{a:.2} ms"))
            .collect::<Vec<_>>()
            .join(", ")
    );
    drop(h);
    let _ = std::fs::remove_dir_all(&dir);
}
