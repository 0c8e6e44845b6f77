//! Fleet statistics: gauge drift per tank, vehicle bias across the fleet.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::balance::set_verdict;
use crate::records::{Balance, Finding, Forecast, TankAudit};
use crate::stats::{holm_adjust, median, t_critical, t_two_sided_p, weighted_line};
use crate::{AuditOptions, Verdict};

const YEAR_MS: f64 = 365.0 * 86_400_000.0;

/// Gauge status.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum GaugeStatus {
    /// No significant trend.
    Ok,
    /// A significant trend beyond the smallest reported drift.
    Drift,
    /// Too few fills, or too short a period, to test.
    NotEnoughData,
}

/// Vehicle status.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum VehicleStatus {
    /// No significant bias.
    Ok,
    /// A significant bias beyond the smallest reported bias.
    Biased,
    /// Too few fills to test.
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
    /// Trend of (gained + drawn)/billed after vehicle effects, % per year (≈ the span's drift).
    pub drift_percent_per_year: Option<f64>,
    /// Its standard error, % per year.
    pub drift_se_percent_per_year: Option<f64>,
    /// Two-sided p-value of the weighted least-squares slope t-test.
    pub p_value: Option<f64>,
    /// The p-value after Holm's correction across the tanks tested.
    pub p_adjusted: Option<f64>,
    /// The test used.
    pub test: &'static str,
    /// NER setting and fitted NER, % per day.
    pub ner_setting_percent_per_day: f64,
    /// Fitted NER, % per day.
    pub ner_fitted_percent_per_day: Option<f64>,
}

/// The bias test of one vehicle.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VehicleFinding {
    /// Vehicle name.
    pub vehicle: String,
    /// Carrier name.
    pub carrier: String,
    /// Status.
    pub status: VehicleStatus,
    /// Fills tested (on tanks without drift, with other vehicles' fills to compare).
    pub fills: usize,
    /// Mean of (gained + drawn)/billed minus the tank's level from other vehicles, % (negative: short).
    pub bias_percent: Option<f64>,
    /// 95 % confidence interval of the bias, % (Student t).
    pub ci95_low_percent: Option<f64>,
    /// Upper end.
    pub ci95_high_percent: Option<f64>,
    /// Two-sided p-value of the one-sample t-test.
    pub p_value: Option<f64>,
    /// After Holm's correction across the vehicles tested.
    pub p_adjusted: Option<f64>,
    /// The legal tolerance compared with, %.
    pub legal_tolerance_percent: f64,
    /// Whether the estimated bias is beyond the legal tolerance.
    pub exceeds_legal_tolerance: bool,
    /// Whether the whole confidence interval is beyond the legal tolerance.
    pub ci_beyond_legal_tolerance: bool,
    /// Fills by verdict.
    pub verdicts: BTreeMap<Verdict, usize>,
    /// The test used.
    pub test: &'static str,
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

const DRIFT_TEST: &str = "weighted least-squares slope t-test of (gained+drawn)/billed on time, vehicle effects removed; Holm across tanks";
const VEHICLE_TEST: &str = "one-sample t-test of tank-adjusted ratios (tank levels by Tukey's median polish, leaving the vehicle out); Holm across vehicles";

fn usable(b: &Balance) -> bool {
    b.ratio.is_finite() && b.before.is_some() && b.after.is_some() && b.billed_kg > 0.0
}

/// Tukey's median polish of ratio = tank level + vehicle effect (Tukey, Exploratory Data Analysis,
/// 1977). Returns the vehicle effects, centred on their median.
fn median_polish(
    rows: &[(usize, usize, f64)],
    tanks: usize,
    vehicles: usize,
) -> (Vec<f64>, Vec<f64>) {
    let by_tank = groups(rows.iter().map(|r| r.0), tanks);
    let by_vehicle = groups(rows.iter().map(|r| r.1), vehicles);
    let mut a = vec![0.0; tanks];
    let mut b = vec![0.0; vehicles];
    let mut buf: Vec<f64> = Vec::new();
    for _ in 0..10 {
        for (at, idx) in a.iter_mut().zip(&by_tank) {
            buf.clear();
            buf.extend(idx.iter().map(|&k| rows[k].2 - b[rows[k].1]));
            *at = median(&buf).unwrap_or(1.0);
        }
        for (bw, idx) in b.iter_mut().zip(&by_vehicle) {
            buf.clear();
            buf.extend(idx.iter().map(|&k| rows[k].2 - a[rows[k].0]));
            *bw = median(&buf).unwrap_or(0.0);
        }
        let centre = median(&b).unwrap_or(0.0);
        for x in &mut b {
            *x -= centre;
        }
        for x in &mut a {
            *x += centre;
        }
    }
    (a, b)
}

/// Row indexes grouped by a key in 0..n.
fn groups(keys: impl Iterator<Item = usize>, n: usize) -> Vec<Vec<usize>> {
    let mut out: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (k, key) in keys.enumerate() {
        if let Some(v) = out.get_mut(key) {
            v.push(k);
        }
    }
    out
}

/// Fleet statistics over every tank's audit.
pub fn audit_fleet(tanks: Vec<TankAudit>, opts: &AuditOptions) -> FleetAudit {
    let mut tanks = tanks;
    tanks.sort_by(|a, b| a.tank.cmp(&b.tank));
    let tank_names: Vec<String> = tanks.iter().map(|t| t.tank.clone()).collect();
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
    // (tank, vehicle, ratio, u_ratio, time)
    let rows: Vec<(usize, usize, f64, f64, i64)> = tanks
        .iter()
        .enumerate()
        .flat_map(|(ti, t)| {
            let vi = &vehicle_index;
            t.balances
                .iter()
                .filter(|b| usable(b))
                .filter_map(move |b| {
                    vi.get(b.vehicle.as_str())
                        .map(|&v| (ti, v, b.ratio, b.sigma_kg / b.billed_kg, b.start_ms))
                })
        })
        .collect();
    let plain: Vec<(usize, usize, f64)> = rows.iter().map(|r| (r.0, r.1, r.2)).collect();
    let (_, veff) = median_polish(&plain, tanks.len(), vehicle_names.len());

    // gauge drift per tank
    let mut gauges: Vec<GaugeFinding> = Vec::new();
    let mut raw_p: Vec<(usize, f64)> = Vec::new();
    let rows_of_tank = groups(rows.iter().map(|r| r.0), tanks.len());
    for (ti, t) in tanks.iter().enumerate() {
        let pts: Vec<(f64, f64, f64)> = rows_of_tank[ti]
            .iter()
            .map(|&k| &rows[k])
            .map(|r| {
                let w = 1.0 / r.3.max(1e-4).powi(2);
                (r.4 as f64 / YEAR_MS, r.2 - veff[r.1], w)
            })
            .collect();
        let span_years = pts.iter().map(|p| p.0).fold(f64::NEG_INFINITY, f64::max)
            - pts.iter().map(|p| p.0).fold(f64::INFINITY, f64::min);
        let mut g = GaugeFinding {
            tank: t.tank.clone(),
            status: GaugeStatus::NotEnoughData,
            fills: pts.len(),
            drift_percent_per_year: None,
            drift_se_percent_per_year: None,
            p_value: None,
            p_adjusted: None,
            test: DRIFT_TEST,
            ner_setting_percent_per_day: t.ner_setting_percent_per_day,
            ner_fitted_percent_per_day: t.ner_fitted_percent_per_day,
        };
        if pts.len() >= opts.drift_min_fills.max(3)
            && span_years > 60.0 / 365.0
            && let Some(fit) = weighted_line(&pts)
        {
            let tstat = if fit.slope_se > 0.0 {
                fit.slope / fit.slope_se
            } else {
                f64::INFINITY * fit.slope.signum()
            };
            let p = t_two_sided_p(tstat, fit.n as f64 - 2.0);
            g.drift_percent_per_year = Some(100.0 * fit.slope);
            g.drift_se_percent_per_year = Some(100.0 * fit.slope_se);
            g.p_value = Some(p);
            g.status = GaugeStatus::Ok;
            raw_p.push((gauges.len(), p));
        }
        gauges.push(g);
    }
    let adjusted = holm_adjust(&raw_p.iter().map(|x| x.1).collect::<Vec<_>>());
    for ((gi, _), pa) in raw_p.iter().zip(adjusted) {
        let g = &mut gauges[*gi];
        g.p_adjusted = Some(pa);
        if pa < opts.drift_alpha
            && g.drift_percent_per_year
                .is_some_and(|d| d.abs() >= 100.0 * opts.drift_min_per_year)
        {
            g.status = GaugeStatus::Drift;
        }
    }
    let drifting: Vec<bool> = gauges
        .iter()
        .map(|g| g.status == GaugeStatus::Drift)
        .collect();

    // vehicle bias, drifting gauges left out
    let kept: Vec<(usize, usize, f64)> = plain.iter().copied().filter(|r| !drifting[r.0]).collect();
    let (_, veff2) = median_polish(&kept, tanks.len(), vehicle_names.len());
    let mut vehicles: Vec<VehicleFinding> = Vec::new();
    let mut vp: Vec<(usize, f64)> = Vec::new();
    let kept_of_tank = groups(kept.iter().map(|r| r.0), tanks.len());
    let kept_of_vehicle = groups(kept.iter().map(|r| r.1), vehicle_names.len());
    let mut verdict_counts: Vec<BTreeMap<Verdict, usize>> =
        vec![BTreeMap::new(); vehicle_names.len()];
    for b in tanks.iter().flat_map(|t| &t.balances) {
        if let Some(&v) = vehicle_index.get(b.vehicle.as_str()) {
            *verdict_counts[v].entry(b.verdict).or_default() += 1;
        }
    }
    for (vi, (name, carrier)) in vehicle_names.iter().enumerate() {
        let mut d: Vec<f64> = Vec::new();
        for r in kept_of_vehicle[vi].iter().map(|&k| &kept[k]) {
            // the tank's level from the other vehicles' fills, their effects removed
            let others: Vec<f64> = kept_of_tank[r.0]
                .iter()
                .map(|&k| &kept[k])
                .filter(|o| o.1 != vi)
                .map(|o| o.2 - veff2[o.1])
                .collect();
            if let Some(level) = median(&others) {
                d.push(r.2 - level);
            }
        }
        let verdicts = std::mem::take(&mut verdict_counts[vi]);
        let mut f = VehicleFinding {
            vehicle: name.clone(),
            carrier: carrier.clone(),
            status: VehicleStatus::NotEnoughData,
            fills: d.len(),
            bias_percent: None,
            ci95_low_percent: None,
            ci95_high_percent: None,
            p_value: None,
            p_adjusted: None,
            legal_tolerance_percent: 100.0 * opts.legal_tolerance,
            exceeds_legal_tolerance: false,
            ci_beyond_legal_tolerance: false,
            verdicts,
            test: VEHICLE_TEST,
        };
        let n = d.len();
        if n >= opts.vehicle_min_fills.max(2) {
            let mean = d.iter().sum::<f64>() / n as f64;
            let sd = (d.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n as f64 - 1.0)).sqrt();
            let se = sd / (n as f64).sqrt();
            let dof = n as f64 - 1.0;
            let tstat = if se > 0.0 { mean / se } else { 0.0 };
            let p = t_two_sided_p(tstat, dof);
            let half = t_critical(0.05, dof) * se;
            f.bias_percent = Some(100.0 * mean);
            f.ci95_low_percent = Some(100.0 * (mean - half));
            f.ci95_high_percent = Some(100.0 * (mean + half));
            f.p_value = Some(p);
            f.exceeds_legal_tolerance = mean.abs() > opts.legal_tolerance;
            f.ci_beyond_legal_tolerance =
                (mean - half) > opts.legal_tolerance || (mean + half) < -opts.legal_tolerance;
            f.status = VehicleStatus::Ok;
            vp.push((vehicles.len(), p));
        }
        vehicles.push(f);
    }
    let adjusted = holm_adjust(&vp.iter().map(|x| x.1).collect::<Vec<_>>());
    for ((i, _), pa) in vp.iter().zip(adjusted) {
        let f = &mut vehicles[*i];
        f.p_adjusted = Some(pa);
        if pa < opts.vehicle_alpha
            && f.bias_percent
                .is_some_and(|b| b.abs() >= 100.0 * opts.vehicle_min_bias)
        {
            f.status = VehicleStatus::Biased;
        }
    }

    let mut fills = Vec::new();
    let mut findings = Vec::new();
    let mut summaries = Vec::new();
    for (ti, t) in tanks.into_iter().enumerate() {
        let drift = gauges
            .get(ti)
            .filter(|g| g.status == GaugeStatus::Drift)
            .and_then(|g| g.drift_percent_per_year);
        for mut b in t.balances {
            if drift.is_some() {
                b.gauge_drift_percent_per_year = drift;
                set_verdict(&mut b, opts);
            }
            fills.push(b);
        }
        findings.extend(t.findings);
        summaries.push(TankSummary {
            tank: t.tank,
            ner_setting_percent_per_day: t.ner_setting_percent_per_day,
            ner_fitted_percent_per_day: t.ner_fitted_percent_per_day,
            readings_used: t.readings_used,
            readings_refused: t.readings_refused,
            forecast: t.forecast,
            latest: t.latest,
        });
    }
    let _ = tank_names;
    FleetAudit {
        fills,
        gauges,
        vehicles,
        findings,
        tanks: summaries,
    }
}
