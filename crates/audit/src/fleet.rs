//! Fleet statistics: gauge faults (a drift or a step) per tank, vehicle bias across the fleet.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::AuditOptions;
use crate::balance::set_verdict;
use crate::calibration::{self, Obs, ScaleModel};
use crate::effects::{Row, groups, two_way_apart};
pub(crate) use crate::fault_level::FaultLevel;
use crate::gauge_faults::{self, FaultTest, Point, RobustLine};
use crate::records::{Balance, Finding, FindingKind, Forecast, GaugeStep, TankAudit};
use crate::stats::holm_adjust;
pub use crate::vehicles::{AdjustedFill, VehicleFinding, VehicleStatus};

const YEAR_MS: f64 = 365.0 * 86_400_000.0;
/// A loss beyond use reaching within this of a gauge step's time is taken for the step.
const STEP_LOSS_MARGIN_MS: i64 = 86_400_000;

/// Gauge status.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum GaugeStatus {
    /// No significant trend or step, or one that the tank's other vehicles' fills show
    /// significantly less of (a vehicle's, not the gauge's).
    Ok,
    /// A significant trend beyond the smallest reported drift.
    Drift,
    /// A significant step (a bad recalibration) beyond the smallest reported step.
    Step,
    /// Too few fills, or too short a period, to test.
    NotEnoughData,
}

/// The drift test of one tank's gauge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GaugeFinding {
    /// Tank name.
    pub tank: String,
    /// Status.
    pub status: GaugeStatus,
    /// Fills tested.
    pub fills: usize,
    /// The span's drift, % per year: the trend of (gained + drawn)/billed after vehicle effects, over
    /// the fills' mean sensitivity to the span.
    pub drift_percent_per_year: Option<f64>,
    /// Its standard error, % per year.
    pub drift_se_percent_per_year: Option<f64>,
    /// The best step of the span, after − before, % (the ratios' over their sensitivity, as for the
    /// drift).
    pub step_percent: Option<f64>,
    /// When that step happened, ms (dated from the readings where they show it).
    pub step_ms: Option<i64>,
    /// The smallest drift of the span the test finds with probability 95 %, % per year (the
    /// minimum detectable value of ISO 11843-1 at the test's level, floored at the smallest drift
    /// reported): a slower one can pass unseen on these fills.
    pub drift_detectable_percent_per_year: Option<f64>,
    /// The smallest step of the span the test finds with probability 95 % from the fills alone,
    /// %, for a step with at least a quarter of the fills on either side (floored at the
    /// smallest step reported; readings that show the step's jump lower it; a step nearer either
    /// end of the record needs to be larger).
    pub step_detectable_percent: Option<f64>,
    /// The tank's p-value: the smaller of the slope's and the step's (Hunter–Worsley over the splits),
    /// doubled for the two models.
    pub p_value: Option<f64>,
    /// The p-value after Holm's correction across the tanks tested.
    pub p_adjusted: Option<f64>,
    /// The test used.
    pub test: &'static str,
    /// NER setting and fitted NER, % per day.
    pub ner_setting_percent_per_day: f64,
    /// Fitted NER, % per day.
    pub ner_fitted_percent_per_day: Option<f64>,
    /// A fault the test found that the tank's other fills, this vehicle's left out, show
    /// significantly less of and not of their own: taken for this vehicle's deliveries (a vehicle
    /// short on some fills), and the gauge left `ok`.
    pub carried_by_vehicle: Option<String>,
}

/// One tank's summary in the fleet audit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TankSummary {
    /// Tank name.
    pub tank: String,
    /// NER setting, % per day.
    pub ner_setting_percent_per_day: f64,
    /// Fitted NER, % per day.
    pub ner_fitted_percent_per_day: Option<f64>,
    /// Readings evaluated.
    pub readings_used: usize,
    /// Readings refused by the contents engine.
    pub readings_refused: usize,
    /// Use rate and next fill.
    pub forecast: Option<Forecast>,
    /// The site's clock the use model took, hours east of UTC, when the site names no time zone
    /// and the tank's use shows one other than UTC.
    pub clock_offset_hours: Option<i32>,
    /// The rate of a ten-day leak the loss scan finds at this tank with probability 95 %, kg/day.
    pub leak_detectable_kg_per_day: Option<f64>,
    /// The state behind the latest accepted reading (for the window's fleet list; not in reports).
    #[serde(skip)]
    pub latest: Option<crate::ReadingState>,
}

/// The fleet's audit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FleetAudit {
    /// Every balance, by tank then start.
    pub fills: Vec<Balance>,
    /// Gauge findings, by tank.
    pub gauges: Vec<GaugeFinding>,
    /// Vehicle findings, by vehicle.
    pub vehicles: Vec<VehicleFinding>,
    /// Findings between fills, by tank then time.
    pub findings: Vec<Finding>,
    /// Per tank: NER, readings, forecast.
    pub tanks: Vec<TankSummary>,
}

/// The least sensitivity of a fill's ratio to its gauge's span taken (a fill to the top of a
/// horizontal tank from half full can move its readings' span masses by little).
pub(crate) const MIN_SENSITIVITY: f64 = 0.05;

const GAUGE_TEST: &str = "(gained+drawn)/billed over time, vehicle effects removed, sizes over the fills' mean sensitivity to the span: weighted least-squares slope t-test (drift) and best split of two means with a t-test adjusted over the splits by the Hunter-Worsley bound (step), the better-fitting model named; Holm across tanks; a fault that the fills without one vehicle show significantly less of, and not of their own, taken for that vehicle's";

/// A balance that can speak for its gauge and its vehicle: judged from two readings, and not spanning
/// a finding between fills of its tank (a leak's or an unlogged fill's mass is in its gain, not the
/// gauge's or the meter's doing).
fn usable(b: &Balance, findings: &[Finding]) -> bool {
    let (Some(before), Some(after)) = (&b.before, &b.after) else {
        return false;
    };
    b.ratio.is_finite()
        && b.billed_kg > 0.0
        && !findings
            .iter()
            .any(|f| f.from_ms < after.time_ms && f.to_ms > before.time_ms)
}

/// How far a fill's ratio moves per unit relative error of its gauge's span: its two readings'
/// span masses' difference (see `Eval::span_kg`) per kg gained, times the ratio (the use between
/// readings and fill comes from readings read with the same span); 1 in a vertical tank's straight
/// shell, some 0.4–0.9 in a horizontal one; 1 without both readings.
pub(crate) fn sensitivity(b: &Balance) -> f64 {
    let s = match (&b.before, &b.after) {
        (Some(x), Some(y)) => (y.span_kg - x.span_kg) / b.gained_kg * b.ratio,
        _ => 1.0,
    };
    if s.is_finite() {
        s.max(MIN_SENSITIVITY)
    } else {
        1.0
    }
}

/// Leave out the losses beyond use that reach within [`STEP_LOSS_MARGIN_MS`] of a gauge step at
/// `at_ms`.
fn drop_losses_at_step(findings: &mut Vec<Finding>, at_ms: i64) {
    findings.retain(|f| {
        f.kind != FindingKind::LossBeyondUse
            || f.to_ms < at_ms - STEP_LOSS_MARGIN_MS
            || f.from_ms > at_ms + STEP_LOSS_MARGIN_MS
    });
}

/// Fleet statistics over every tank's audit.
///
/// With the Type A step on, the fleet is judged in two passes. The first measures the balances'
/// precision, each tank's ratios about their own line in time (a gauge drifting or stepped, not yet
/// found, would pass for its tank's noise and hide from its own test: on 94 independent fleets
/// drifting gauges found 69 → 81, stepped 75 → 79), and tests the gauges; the second measures the
/// precision again from the tanks' own balances, each faulty tank's fills now about its level under
/// the fault (a step's two levels, a drift's line), every other tank's about one level, and judges
/// every fill with the first pass's gauges. Measured about one level for the year, a fault passed
/// for its tank's reading and use noise and widened every limit there: four fills in a hundred at
/// faulty gauges inconclusive against one in a hundred elsewhere (24 independent fleets). Without a
/// fault the second pass judges the fills as one pass about one level would.
pub fn audit_fleet(tanks: Vec<TankAudit>, opts: &AuditOptions) -> FleetAudit {
    let mut tanks = tanks;
    tanks.sort_by(|a, b| a.tank.cmp(&b.tank));
    let (gauges, vehicles) = if opts.type_a {
        let pristine: Vec<(Vec<Balance>, Vec<Finding>)> = tanks
            .iter()
            .map(|t| (t.balances.clone(), t.findings.clone()))
            .collect();
        let first = fleet_pass(&mut tanks, opts, &[], None, true);
        for (t, (b, f)) in tanks.iter_mut().zip(pristine) {
            t.balances = b;
            t.findings = f;
        }
        let (_, vehicles, _) = fleet_pass(&mut tanks, opts, &first.2, Some(&first.0), false);
        (first.0, vehicles)
    } else {
        let (gauges, vehicles, _) = fleet_pass(&mut tanks, opts, &[], None, false);
        (gauges, vehicles)
    };
    let mut fills = Vec::new();
    let mut findings = Vec::new();
    let mut summaries = Vec::new();
    for t in tanks {
        fills.extend(t.balances);
        findings.extend(t.findings);
        summaries.push(TankSummary {
            tank: t.tank,
            ner_setting_percent_per_day: t.ner_setting_percent_per_day,
            ner_fitted_percent_per_day: t.ner_fitted_percent_per_day,
            readings_used: t.readings_used,
            readings_refused: t.readings_refused,
            forecast: t.forecast,
            clock_offset_hours: t.clock_offset_hours,
            leak_detectable_kg_per_day: t.leak_detectable_kg_per_day,
            latest: t.latest,
        });
    }
    FleetAudit {
        fills,
        gauges,
        vehicles,
        findings,
        tanks: summaries,
    }
}

/// One judgement of the fleet (tanks sorted by name): the balances' precision with each tank's
/// ratios measured about `shape` (a faulty gauge's level over time, where known), the gauge
/// statistics (or the gauges `decided` by a first judgement) and the vehicles', every balance's
/// final verdict. Returns the gauges, the vehicles and each
/// faulty gauge's level over time.
fn fleet_pass(
    tanks: &mut [TankAudit],
    opts: &AuditOptions,
    shape: &[Option<FaultLevel>],
    decided: Option<&[GaugeFinding]>,
    gauges_only: bool,
) -> (
    Vec<GaugeFinding>,
    Vec<VehicleFinding>,
    Vec<Option<FaultLevel>>,
) {
    let spread = if opts.type_a {
        crate::precision::refine(tanks, opts, shape, gauges_only)
    } else {
        BTreeMap::new()
    };
    let mut vehicle_names: Vec<(String, String)> = tanks
        .iter()
        .flat_map(|t| {
            t.balances
                .iter()
                .map(|b| (b.vehicle.clone(), b.carrier.clone()))
        })
        .collect();
    vehicle_names.sort();
    vehicle_names.dedup_by(|a, b| a.0 == b.0);
    let vehicle_index: BTreeMap<&str, usize> = vehicle_names
        .iter()
        .enumerate()
        .map(|(i, v)| (v.0.as_str(), i))
        .collect();
    // (tank, vehicle, ratio, u_ratio, time, balance index)
    let rows: Vec<(usize, usize, f64, f64, i64, usize)> = tanks
        .iter()
        .enumerate()
        .flat_map(|(ti, t)| {
            let vi = &vehicle_index;
            t.balances
                .iter()
                .enumerate()
                .filter(|(_, b)| usable(b, &t.findings))
                .filter_map(move |(bi, b)| {
                    vi.get(b.vehicle.as_str())
                        .map(|&v| (ti, v, b.ratio, b.sigma_kg / b.billed_kg, b.start_ms, bi))
                })
        })
        .collect();
    // how far each fill's ratio moves per unit relative error of its gauge's span (see
    // `sensitivity`)
    let sensitivity: Vec<f64> = rows
        .iter()
        .map(|r| {
            tanks
                .get(r.0)
                .and_then(|t| t.balances.get(r.5))
                .map_or(1.0, self::sensitivity)
        })
        .collect();
    let plain: Vec<Row> = rows.iter().map(|r| (r.0, r.1, r.2)).collect();
    // a vehicle short on only some fills (set apart by the Type A step) as a mixture of honest and
    // short deliveries, the tanks' levels fitted with its fills raised by their expected shortfall
    // (see the mixture module); a vehicle set apart where no mixture fits keeps its spread
    let extra: Vec<f64> = vehicle_names
        .iter()
        .map(|v| spread.get(&v.0).copied().unwrap_or(0.0))
        .collect();
    let apart: Vec<bool> = extra.iter().map(|x| *x > 0.0).collect();
    let u: Vec<f64> = rows.iter().map(|r| r.3.max(1e-4)).collect();
    let fitted = crate::mixture::with_levels(&plain, &u, &apart, tanks.len(), vehicle_names.len());
    let (all_fit, mixtures) = (&fitted.levels, &fitted.mixtures);
    let veff = &all_fit.vehicle;
    // what a set-apart vehicle adds to one of its fills' ratio (its honest deliveries' effect less
    // the fill's expected shortfall) and the variance that leaves
    let mixed = |r: &(usize, usize, f64, f64, i64, usize)| -> Option<(f64, f64)> {
        let m = mixtures.get(r.1).copied().flatten()?;
        let level = all_fit.tank.get(r.0)?;
        Some(m.effect(r.2 - level, r.3.max(1e-4)))
    };
    // (the ratio less what the fill's vehicle adds, its variance) for the gauge's scale (and its
    // tests where no mixture applies); `effect` is the vehicle's effect used where none does
    let gauge_point = |r: &(usize, usize, f64, f64, i64, usize), effect: f64| -> (f64, f64) {
        let u2 = r.3.max(1e-4).powi(2);
        match mixed(r) {
            Some((e, v)) => (r.2 - e, u2 + v),
            None => (r.2 - effect, u2 + extra.get(r.1).copied().unwrap_or(0.0)),
        }
    };

    // gauge faults per tank
    let mut gauges: Vec<GaugeFinding> = Vec::new();
    let mut raw_p: Vec<(usize, f64)> = Vec::new();
    let mut tests: Vec<Option<FaultTest>> = Vec::new();
    let rows_of_tank = groups(rows.iter().map(|r| r.0), tanks.len());
    // for the tests, a set-apart vehicle's fill is put on its tank's level by the vehicle's
    // expected shortfall, not by the one its own ratio suggests: a gauge that stepped makes every
    // fill after the step look short, and a fill's own short probability would take the step out
    let test_point = |r: &(usize, usize, f64, f64, i64, usize)| -> (f64, f64) {
        let u2 = r.3.max(1e-4).powi(2);
        match mixtures.get(r.1).copied().flatten() {
            Some(m) => {
                let (e, v) = m.expected();
                (r.2 - e, u2 + v)
            }
            None => gauge_point(r, veff.get(r.1).copied().unwrap_or(0.0)),
        }
    };
    // each tank's points, and how far its fills' ratios move per unit relative error of its span
    // (their sensitivities' weighted mean): a step's size in the ratios over it is the span's, which
    // times a reading's span mass is the jump the step gives that reading
    let mut tank_sens: Vec<Vec<f64>> = Vec::with_capacity(tanks.len());
    // and each point's vehicle
    let mut tank_vehicles: Vec<Vec<usize>> = Vec::with_capacity(tanks.len());
    let (tank_points, ratio_per_span): (Vec<Vec<Point>>, Vec<f64>) = rows_of_tank
        .iter()
        .map(|ks| {
            let mut pts: Vec<(Point, f64, usize)> = Vec::with_capacity(ks.len());
            let (mut sw, mut sws) = (0.0, 0.0);
            for &k in ks {
                let r = &rows[k];
                let (x, var) = test_point(r);
                let s = sensitivity.get(k).copied().unwrap_or(1.0);
                pts.push(((r.4, x, 1.0 / var), s, r.1));
                sw += 1.0 / var;
                sws += s / var;
            }
            pts.sort_by_key(|p| p.0.0);
            tank_sens.push(pts.iter().map(|p| p.1).collect());
            tank_vehicles.push(pts.iter().map(|p| p.2).collect());
            (
                pts.into_iter().map(|p| p.0).collect(),
                if sw > 0.0 { sws / sw } else { 1.0 },
            )
        })
        .unzip();
    let testable = |pts: &[Point]| {
        let span_years = match (pts.first(), pts.last()) {
            (Some(a), Some(b)) => (b.0 - a.0) as f64 / YEAR_MS,
            _ => 0.0,
        };
        pts.len() >= opts.drift_min_fills.max(3) && span_years > 60.0 / 365.0
    };
    // the fleet's prior for the scatter about each tank's line, a floor under each tank's own
    // (Smyth 2004; see `moderated`)
    let lines: Vec<Option<RobustLine>> = tank_points
        .iter()
        .map(|p| {
            (decided.is_none() && testable(p))
                .then(|| RobustLine::of(p))
                .flatten()
        })
        .collect();
    let prior = crate::moderated::fit(
        &lines
            .iter()
            .flatten()
            .map(RobustLine::scatter)
            .collect::<Vec<_>>(),
    );
    for (((t, pts), line), &per_span) in tanks
        .iter()
        .zip(&tank_points)
        .zip(&lines)
        .zip(&ratio_per_span)
    {
        let mut g = GaugeFinding {
            tank: t.tank.clone(),
            status: GaugeStatus::NotEnoughData,
            fills: pts.len(),
            drift_percent_per_year: None,
            drift_se_percent_per_year: None,
            step_percent: None,
            step_ms: None,
            drift_detectable_percent_per_year: None,
            step_detectable_percent: None,
            p_value: None,
            p_adjusted: None,
            test: GAUGE_TEST,
            ner_setting_percent_per_day: t.ner_setting_percent_per_day,
            ner_fitted_percent_per_day: t.ner_fitted_percent_per_day,
            carried_by_vehicle: None,
        };
        let mut found = None;
        if decided.is_none() && testable(pts) {
            let ft = gauge_faults::test(pts, line.as_ref(), &t.jumps, per_span, prior);
            g.drift_percent_per_year = ft.drift.map(|d| 100.0 * d.0 / per_span);
            g.drift_se_percent_per_year = ft.drift.map(|d| 100.0 * d.1 / per_span);
            g.step_percent = ft.step.map(|s| 100.0 * s.0 / per_span);
            g.step_ms = ft.step.map(|s| s.1);
            g.p_value = ft.p;
            if let Some(p) = ft.p {
                g.status = GaugeStatus::Ok;
                raw_p.push((gauges.len(), p));
            }
            found = Some(ft);
        }
        tests.push(found);
        gauges.push(g);
    }
    let adjusted = holm_adjust(&raw_p.iter().map(|x| x.1).collect::<Vec<_>>());
    for ((gi, _), pa) in raw_p.iter().zip(adjusted) {
        let g = &mut gauges[*gi];
        g.p_adjusted = Some(pa);
        let Some(ft) = tests.get(*gi).copied().flatten() else {
            continue;
        };
        // what the test could have seen, in the span's terms, floored at the smallest sizes reported
        let per_span = ratio_per_span.get(*gi).copied().unwrap_or(1.0).max(1e-9);
        let (drift_min, step_min) = gauge_faults::detectable(&ft, raw_p.len(), opts.drift_alpha);
        g.drift_detectable_percent_per_year =
            drift_min.map(|d| 100.0 * (d / per_span).max(opts.drift_min_per_year));
        g.step_detectable_percent =
            step_min.map(|s| 100.0 * (s / per_span).max(opts.step_min_fraction));
        if pa >= opts.drift_alpha {
            continue;
        }
        // the sizes in the span's terms (one gauge per tank, in the tanks' order)
        let per_span = ratio_per_span.get(*gi).copied().unwrap_or(1.0);
        let step_big = ft
            .step
            .is_some_and(|s| s.0.abs() / per_span >= opts.step_min_fraction);
        let drift_big = ft
            .drift
            .is_some_and(|d| d.0.abs() / per_span >= opts.drift_min_per_year);
        g.status = match (ft.step_fits_better, step_big, drift_big) {
            (true, true, _) | (false, true, false) => GaugeStatus::Step,
            (_, _, true) => GaugeStatus::Drift,
            _ => GaugeStatus::Ok,
        };
        // a fault carried by one vehicle's fills is that vehicle's, not the gauge's
        if let (Some(pts), Some(vs)) = (tank_points.get(*gi), tank_vehicles.get(*gi))
            && g.status != GaugeStatus::Ok
            && let Some(v) =
                gauge_faults::carried_by(pts, vs, &ft, g.status == GaugeStatus::Step, prior)
        {
            g.status = GaugeStatus::Ok;
            g.carried_by_vehicle = vehicle_names.get(v).map(|n| n.0.clone());
        }
    }
    // a second judgement keeps the first one's gauges: their tests ran on precision measured
    // without knowledge of any fault, and a fault's own shape must not feed its test
    if let Some(first) = decided {
        gauges = first.to_vec();
    }
    let faulty: Vec<bool> = gauges
        .iter()
        .map(|g| matches!(g.status, GaugeStatus::Drift | GaugeStatus::Step))
        .collect();
    // a faulty gauge's tank level over time, from its own test points
    let fault_levels: Vec<Option<FaultLevel>> = gauges
        .iter()
        .zip(&tank_points)
        .zip(tank_sens.iter().zip(&ratio_per_span))
        .map(|((g, pts), (sens, &per_span))| FaultLevel::fit(g, pts, sens, per_span))
        .collect();
    if gauges_only {
        return (gauges, Vec::new(), fault_levels);
    }

    // what a set-apart vehicle adds to fill k's ratio and the variance left (see `mixed`), at a
    // tank whose gauge is faulty judged short or honest against the tank's level at its time under
    // the fault: against one level for the year, every honest fill after a step down would look
    // short, the gauge's scale would take the step for shortfalls, and so would the vehicle's test
    let mixed_at = |k: usize, r: &(usize, usize, f64, f64, i64, usize)| -> Option<(f64, f64)> {
        match (
            mixtures.get(r.1).copied().flatten(),
            fault_levels.get(r.0).copied().flatten(),
        ) {
            (Some(m), Some(level)) => {
                let s = sensitivity.get(k).copied().unwrap_or(1.0);
                Some(m.effect(r.2 - level.at(r.4, s), r.3.max(1e-4)))
            }
            _ => mixed(r),
        }
    };
    // the fleet's levels and vehicle effects; at a tank with a gauge fault its fills' ratios less
    // the fault's part at their time (the vehicles met there are still compared), a faulty tank
    // whose fault has no fitted shape left out
    let shift: Vec<Option<f64>> = rows
        .iter()
        .enumerate()
        .map(|(k, r)| {
            if !faulty[r.0] {
                return Some(0.0);
            }
            let level = fault_levels.get(r.0).copied().flatten()?;
            Some(level.fault_part(r.4, sensitivity.get(k).copied().unwrap_or(1.0)))
        })
        .collect();
    let kept_rows: Vec<(usize, usize, f64, f64, i64, usize)> = rows
        .iter()
        .zip(&shift)
        .filter_map(|(r, d)| d.map(|d| (r.0, r.1, r.2 - d, r.3, r.4, r.5)))
        .collect();
    let kept: Vec<Row> = kept_rows.iter().map(|r| (r.0, r.1, r.2)).collect();
    let kept_u: Vec<f64> = kept_rows.iter().map(|r| r.3).collect();
    let kept_at: Vec<usize> = kept_rows.iter().map(|r| r.5).collect();
    // the levels and effects fitted with the set-apart vehicles' fills raised, as above
    let kept_raised: Vec<Row> = fitted
        .raised
        .iter()
        .zip(&shift)
        .filter_map(|(r, d)| d.map(|d| (r.0, r.1, r.2 - d)))
        .collect();
    let kept_fit = two_way_apart(&kept_raised, tanks.len(), vehicle_names.len(), &apart);
    let kept_of_vehicle = groups(kept.iter().map(|r| r.1), vehicle_names.len());

    // each gauge's scale from the tank's other fills, vehicle effects removed; the rows of faulty
    // tanks weigh alike
    if opts.calibrate_gauges {
        let mut obs: Vec<Vec<Obs>> = vec![Vec::new(); tanks.len()];
        let n_of_vehicle: Vec<usize> = kept_of_vehicle.iter().map(Vec::len).collect();
        let mut kept_k = 0;
        for (k, r) in rows.iter().enumerate() {
            let in_fit = shift.get(k).copied().flatten().is_some();
            let weight = if faulty[r.0] {
                1.0
            } else {
                kept_fit.weight.get(kept_k).copied().unwrap_or(1.0)
            };
            kept_k += usize::from(in_fit);
            let veh = kept_fit.vehicle.get(r.1).copied().unwrap_or(0.0);
            let n_v = n_of_vehicle.get(r.1).copied().unwrap_or(0).max(1) as f64;
            let (x, ratio_var) = match mixed_at(k, r) {
                Some((e, v)) => (r.2 - e, r.3.max(1e-4).powi(2) + v),
                None => gauge_point(r, veh),
            };
            let per_span = ratio_per_span.get(r.0).copied().unwrap_or(1.0);
            obs[r.0].push((
                r.5,
                r.4,
                x,
                weight / ratio_var,
                kept_fit.scale.powi(2) / n_v,
                sensitivity.get(k).copied().unwrap_or(1.0) / per_span.max(MIN_SENSITIVITY),
            ));
        }
        for ((t, g), o) in tanks.iter_mut().zip(&gauges).zip(&obs) {
            calibration::apply(t, o, ScaleModel::from_status(g.status, g.step_ms), opts);
        }
    }
    // a loss beyond use at the hour a gauge's span stepped down is the step itself (the readings
    // dropped at once, the tank lost nothing): the gauge's finding reports it
    for (t, g) in tanks.iter_mut().zip(&gauges) {
        if let (GaugeStatus::Step, Some(at_ms)) = (g.status, g.step_ms) {
            drop_losses_at_step(&mut t.findings, at_ms);
        }
    }
    // fills after a gauge fault are marked
    for (t, g) in tanks.iter_mut().zip(&gauges) {
        let drift = Some(g)
            .filter(|g| g.status == GaugeStatus::Drift)
            .and_then(|g| g.drift_percent_per_year);
        let step = Some(g)
            .filter(|g| g.status == GaugeStatus::Step)
            .and_then(|g| Some((g.step_ms?, g.step_percent?)));
        for b in &mut t.balances {
            if drift.is_some() {
                b.gauge_drift_percent_per_year = drift;
                set_verdict(b, opts);
            }
            if let Some((at_ms, size_percent)) = step
                && b.end_ms > at_ms
            {
                b.gauge_step = Some(GaugeStep {
                    at_ms,
                    size_percent,
                });
                set_verdict(b, opts);
            }
        }
    }

    // vehicle bias, on the final verdicts
    // a set-apart vehicle's fills enter its tanks' levels less their expected shortfall, so its
    // short deliveries do not pull the level the other vehicles are compared with
    let kept_mixed: Vec<Option<f64>> = rows
        .iter()
        .enumerate()
        .filter(|(k, _)| shift.get(*k).copied().flatten().is_some())
        .map(|(k, r)| mixed_at(k, r).map(|m| m.0))
        .collect();
    let mut vehicles = crate::vehicles::test(
        &vehicle_names,
        &vehicle_index,
        tanks,
        &kept,
        &kept_u,
        &kept_at,
        &kept_fit,
        &kept_mixed,
        opts,
    );
    if opts.judge_with_vehicle {
        let set_apart = |name: &str| {
            vehicle_index
                .get(name)
                .is_some_and(|&i| apart.get(i).copied().unwrap_or(false))
        };
        // a vehicle set apart whose mixture has no honest deliveries to speak of is short on every
        // delivery: the normal model of its other fills judges its fills
        let judged_by_mixture = |name: &str| {
            let m = vehicle_index
                .get(name)
                .and_then(|&i| mixtures.get(i).copied().flatten());
            crate::with_vehicle::judged_by_mixture(set_apart(name), m, opts.materiality_fraction)
        };
        crate::with_vehicle::apply(tanks, &mut vehicles, &judged_by_mixture, opts);
        // a vehicle set apart as short on only some fills: each fill by the mixture of its
        // deliveries
        let mixture_of = |name: &str| {
            let &i = vehicle_index
                .get(name)
                .filter(|_| judged_by_mixture(name))?;
            mixtures.get(i).copied().flatten()
        };
        crate::with_vehicle::apply_mixture(tanks, &mut vehicles, &mixture_of, opts);
    }
    crate::vehicles::judge_by_record(
        tanks.iter_mut().flat_map(|t| t.balances.iter_mut()),
        &mut vehicles,
        opts,
    );
    (gauges, vehicles, fault_levels)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn finding(kind: FindingKind, from_day: i64, to_day: i64) -> Finding {
        Finding {
            kind,
            tank: "T".into(),
            from_ms: from_day * 86_400_000,
            to_ms: to_day * 86_400_000,
            mass_kg: 100.0,
            excess_rate_kg_per_day: None,
            usage_kg_per_day: 50.0,
            explanation: String::new(),
        }
    }

    fn gauge(status: GaugeStatus, step_ms: Option<i64>) -> GaugeFinding {
        GaugeFinding {
            tank: "T".into(),
            status,
            fills: 0,
            drift_percent_per_year: None,
            drift_se_percent_per_year: None,
            step_percent: None,
            step_ms,
            drift_detectable_percent_per_year: None,
            step_detectable_percent: None,
            p_value: None,
            p_adjusted: None,
            test: GAUGE_TEST,
            ner_setting_percent_per_day: 0.0,
            ner_fitted_percent_per_day: None,
            carried_by_vehicle: None,
        }
    }

    /// Constructed: ten monthly points, 1.00 before a step after the fifth and 0.97 after it (the
    /// fifth weighing three times the rest, exact values, so each side's weighted mean is exact): a
    /// stepped gauge's level is 1.00 then 0.97; points on the line 1 − 0.04·t (t in years) give a
    /// drifting gauge's level on that line; a healthy gauge has none. Against the step's level a
    /// sometimes-short vehicle's honest fill after the step (ratio 0.97, u 1 %, shortfall 3.5 %,
    /// share 0.4) is honest (short probability under 0.1, by hand: the two normal densities'
    /// ratio e^(−0.5·3.5²)·0.4/0.6 ≈ 0.0015), where against the year's one level (1.00, the
    /// fill 3 % below it) it would be taken for short (over 0.9: e^(0.5·(3² − 0.5²))·0.4/0.6 ≈ 53).
    #[test]
    fn a_faulty_gauge_s_level_follows_its_fault() {
        let month = 30 * 86_400_000_i64;
        let step: Vec<Point> = (0..10)
            .map(|i| {
                let w = if i == 4 { 3.0 } else { 1.0 };
                (i * month, if i < 5 { 1.0 } else { 0.97 }, w)
            })
            .collect();
        let at = 4 * month + month / 2;
        let ones = [1.0; 10];
        let level =
            FaultLevel::fit(&gauge(GaugeStatus::Step, Some(at)), &step, &ones, 1.0).unwrap();
        assert!((level.at(0, 1.0) - 1.0).abs() < 1e-12);
        assert!((level.at(9 * month, 1.0) - 0.97).abs() < 1e-12);
        // a fill half as sensitive to the span as the mean one moves half as far
        assert!((level.at(9 * month, 0.5) - 0.985).abs() < 1e-12);
        let line: Vec<Point> = (0..10)
            .map(|i| (i * month, 1.0 - 0.04 * (i * month) as f64 / YEAR_MS, 1.0))
            .collect();
        let drift = FaultLevel::fit(&gauge(GaugeStatus::Drift, None), &line, &ones, 1.0).unwrap();
        let t = 20 * month;
        assert!((drift.at(t, 1.0) - (1.0 - 0.04 * t as f64 / YEAR_MS)).abs() < 1e-9);
        assert!(FaultLevel::fit(&gauge(GaugeStatus::Ok, None), &step, &ones, 1.0).is_none());
        let m = crate::mixture::Mixture {
            honest: 0.0,
            shortfall: 0.035,
            share: 0.4,
        };
        let after = 0.97;
        assert!(m.short_probability(after - level.at(9 * month, 1.0), 0.01) < 0.1);
        assert!(m.short_probability(after - 1.0, 0.01) > 0.9);
    }

    /// Constructed: with a step on day 10, the loss over days 8–10 and the one over days 10.5–12
    /// (within a day) are the step's; a loss over days 2–5, one from day 12, and a gain over days
    /// 9–11 stay.
    #[test]
    fn a_loss_at_a_step_is_the_step() {
        let mut f = vec![
            finding(FindingKind::LossBeyondUse, 2, 5),
            finding(FindingKind::LossBeyondUse, 8, 10),
            finding(FindingKind::UnexplainedGain, 9, 11),
            finding(FindingKind::LossBeyondUse, 12, 14),
        ];
        f.push(Finding {
            from_ms: 10 * 86_400_000 + 43_200_000,
            ..finding(FindingKind::LossBeyondUse, 0, 12)
        });
        drop_losses_at_step(&mut f, 10 * 86_400_000);
        let kept: Vec<(FindingKind, i64)> =
            f.iter().map(|x| (x.kind, x.from_ms / 86_400_000)).collect();
        assert_eq!(
            kept,
            vec![
                (FindingKind::LossBeyondUse, 2),
                (FindingKind::UnexplainedGain, 9),
                (FindingKind::LossBeyondUse, 12)
            ]
        );
    }
}
