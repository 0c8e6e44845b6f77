//! Period stock statements: per month or week, what came in, what went out and what cannot be
//! accounted for, with the running sum of fill residuals against its k = 2 band.
//!
//! The running sum of inventory differences, judged against its own growing uncertainty, is the
//! method of statistical inventory reconciliation (SIR) for storage tanks: US EPA, "Standard Test
//! Procedures for Evaluating Leak Detection Methods: Statistical Inventory Reconciliation Methods",
//! EPA/530/UST-90/007 (1990); here the differences are the fills' residuals billed − gained − drawn
//! and their uncertainties come from each balance's budget rather than from a fitted scatter.
//!
//! The books open and close at readings: each period opens at the first reading at or after its
//! start and closes at the next period's opening reading, so one period's closing contents are the
//! next one's opening by construction, and a fill belongs to the period in which its start falls
//! between those two readings. Out (use) is what the books leave: opening + gained − closing.

use std::collections::HashSet;

use audit::{AuditOptions, FindingKind, FleetAudit, GaugeStatus};
use chrono::{Datelike, Duration, NaiveDate};
use store::Repository;

use crate::ReportError;
use crate::common::{Source, data_section, day, when};
use crate::html::{Cell, Doc};
use crate::rounding::Figure;
use crate::svg;

const DAY_MS: i64 = 86_400_000;

/// How long each period of a statement is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Period {
    /// Calendar months (UTC).
    Month,
    /// Weeks starting on Monday (UTC).
    Week,
}

/// What a statement covers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Scope {
    /// One tank, by name.
    Tank(String),
    /// Every tank of a site, by name.
    Site(String),
}

/// One period's row.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct StatementRow {
    /// The period's label (YYYY-MM, or the Monday's date).
    pub label: String,
    /// Calendar start, ms (UTC midnight).
    pub start_ms: i64,
    /// Calendar end, ms (exclusive).
    pub end_ms: i64,
    /// Time of the opening reading (one tank; the earliest of the tanks' for a site).
    pub opened_ms: Option<i64>,
    /// Time of the closing reading.
    pub closed_ms: Option<i64>,
    /// Contents at the opening reading, kg.
    pub opening_kg: f64,
    /// Fills whose start falls in the period.
    pub fills: usize,
    /// Billed on them, kg.
    pub billed_kg: f64,
    /// Gained by level across them (each bracket once), kg.
    pub gained_kg: f64,
    /// Out: opening + gained − closing, kg.
    pub use_kg: f64,
    /// Use per day between the opening and closing readings, kg/day.
    pub use_per_day_kg: f64,
    /// Heat leak at the tank's NER (fitted where the audit fitted it), kg.
    pub heat_leak_kg: f64,
    /// Losses beyond use found between fills, the part inside the period, kg.
    pub losses_found_kg: f64,
    /// Gains with no ticket found between fills, the part inside the period, kg.
    pub gains_found_kg: f64,
    /// Contents at the closing reading, kg.
    pub closing_kg: f64,
    /// Fills whose residual is summed (both readings present).
    pub fills_judged: usize,
    /// Sum of billed − gained − drawn over them, kg.
    pub residual_sum_kg: f64,
    /// Its standard uncertainty, kg: the balances' own (independent from fill to fill) and the
    /// tank's systematic part.
    pub residual_u_kg: f64,
    /// The systematic part: common to every fill of a tank, so it adds linearly over periods, kg.
    pub systematic_u_kg: f64,
    /// Running sum of the residuals from the first period, kg.
    pub running_sum_kg: f64,
    /// k = 2 times the running sum's standard uncertainty, kg.
    pub running_band_kg: f64,
}

impl StatementRow {
    /// Whether the running sum lies inside its band.
    pub fn inside_band(&self) -> bool {
        self.running_sum_kg.abs() <= self.running_band_kg
    }
}

/// A stock statement.
#[derive(Debug, Clone, PartialEq)]
pub struct Statement {
    /// What it covers, in words ("tank X" or "site Y (3 tanks)").
    pub title: String,
    /// The tanks it covers.
    pub tanks: Vec<String>,
    /// Period length.
    pub period: Period,
    /// One row per period with readings.
    pub rows: Vec<StatementRow>,
    /// Labels of the periods with no reading of any tank (their fills and use are in the period
    /// before).
    pub empty: Vec<String>,
}

fn date_ms(d: NaiveDate) -> i64 {
    d.and_hms_opt(0, 0, 0)
        .map_or(0, |t| t.and_utc().timestamp_millis())
}

/// The window's statement period: from the first day of the month twelve months before the one
/// holding `now_ms` to the day after `now_ms` (twelve whole months and this month so far), UTC.
pub fn recent_months(now_ms: i64) -> (NaiveDate, NaiveDate) {
    let today =
        chrono::DateTime::from_timestamp_millis(now_ms).map_or(NaiveDate::MIN, |t| t.date_naive());
    let months = today.year() * 12 + today.month0() as i32 - 12;
    let from = NaiveDate::from_ymd_opt(months.div_euclid(12), months.rem_euclid(12) as u32 + 1, 1)
        .unwrap_or(today);
    (from, today + Duration::days(1))
}

/// Period starts from `from` (inclusive) to `to` (exclusive), each at a month's first or a Monday,
/// the first and last possibly partial.
pub(crate) fn boundaries(from: NaiveDate, to: NaiveDate, period: Period) -> Vec<NaiveDate> {
    let mut out = vec![from];
    let mut d = from;
    loop {
        d = match period {
            Period::Month => {
                let (y, m) = if d.month() == 12 {
                    (d.year() + 1, 1)
                } else {
                    (d.year(), d.month() + 1)
                };
                match NaiveDate::from_ymd_opt(y, m, 1) {
                    Some(n) => n,
                    None => break,
                }
            }
            Period::Week => {
                let back = d.weekday().num_days_from_monday() as i64;
                d - Duration::days(back) + Duration::days(7)
            }
        };
        if d >= to {
            break;
        }
        out.push(d);
    }
    out.push(to);
    out
}

fn label(d: NaiveDate, period: Period) -> String {
    match period {
        Period::Month => format!("{:04}-{:02}", d.year(), d.month()),
        Period::Week => d.format("%Y-%m-%d").to_string(),
    }
}

/// A tank's accepted readings: (time, total mass).
type Series = Vec<(i64, f64)>;

/// The part of [a, b) that lies in [c, d), as a fraction of [a, b).
fn overlap(a: i64, b: i64, c: i64, d: i64) -> f64 {
    if b <= a {
        return if a >= c && a < d { 1.0 } else { 0.0 };
    }
    let lo = a.max(c);
    let hi = b.min(d);
    ((hi - lo).max(0) as f64) / ((b - a) as f64)
}

#[allow(clippy::too_many_arguments)]
fn tank_rows(
    name: &str,
    series: &Series,
    full_mass_kg: f64,
    ner_percent_per_day: f64,
    audit: &FleetAudit,
    systematic_fraction: f64,
    starts: &[i64],
    labels: &[String],
) -> Vec<StatementRow> {
    // anchors: the first reading at or after each boundary, else the last reading
    let last = series.len().saturating_sub(1);
    let anchor = |ms: i64| series.iter().position(|(t, _)| *t >= ms).unwrap_or(last);
    let anchors: Vec<usize> = starts.iter().map(|s| anchor(*s)).collect();
    let fills: Vec<&audit::Balance> = audit.fills.iter().filter(|b| b.tank == name).collect();
    let mut rows = Vec::new();
    for i in 0..starts.len().saturating_sub(1) {
        let (ia, ib) = (anchors[i], anchors[i + 1]);
        if ia == ib {
            // no reading in this period: its fills and use are in the period before
            continue;
        }
        let (Some(&(t_open, m_open)), Some(&(t_close, m_close))) = (series.get(ia), series.get(ib))
        else {
            continue;
        };
        let in_period: Vec<&&audit::Balance> = fills
            .iter()
            .filter(|b| b.start_ms >= t_open && b.start_ms < t_close)
            .collect();
        let mut seen = HashSet::new();
        let mut gained = 0.0;
        let mut residual = 0.0;
        let mut var = 0.0;
        let mut judged = 0;
        let mut through = 0.0;
        for b in &in_period {
            let (Some(bf), Some(af)) = (&b.before, &b.after) else {
                continue;
            };
            if seen.insert((bf.time_ms, af.time_ms)) {
                gained += b.gained_kg;
            }
            judged += 1;
            through += b.measured_kg();
            residual += b.billed_kg - b.measured_kg();
            var += (b.sigma_kg * b.sigma_kg - b.sigma_gauge_scale_kg * b.sigma_gauge_scale_kg)
                .max(0.0);
        }
        let days = (t_close - t_open) as f64 / DAY_MS as f64;
        let use_kg = m_open + gained - m_close;
        let found = |kind: FindingKind| -> f64 {
            audit
                .findings
                .iter()
                .filter(|f| f.tank == name && f.kind == kind)
                .map(|f| f.mass_kg.abs() * overlap(f.from_ms, f.to_ms, t_open, t_close))
                .sum()
        };
        rows.push(StatementRow {
            label: labels[i].clone(),
            start_ms: starts[i],
            end_ms: starts[i + 1],
            opened_ms: Some(t_open),
            closed_ms: Some(t_close),
            opening_kg: m_open,
            fills: in_period.len(),
            billed_kg: in_period.iter().map(|b| b.billed_kg).sum(),
            gained_kg: gained,
            use_kg,
            use_per_day_kg: if days > 0.0 { use_kg / days } else { 0.0 },
            heat_leak_kg: ner_percent_per_day / 100.0 * full_mass_kg * days,
            losses_found_kg: found(FindingKind::LossBeyondUse),
            gains_found_kg: found(FindingKind::UnexplainedGain),
            closing_kg: m_close,
            fills_judged: judged,
            residual_sum_kg: residual,
            residual_u_kg: (var + (systematic_fraction * through).powi(2)).sqrt(),
            systematic_u_kg: systematic_fraction * through,
            running_sum_kg: 0.0,
            running_band_kg: 0.0,
        });
    }
    rows
}

/// The systematic part of a fill's residual, as a fraction of what the tank took in (gained +
/// drawn): the standard deviation of the fleet's gauge scales (each tank's median of the scales its
/// fills were judged against; tanks whose gauge the audit found drifting or stepped left out) about
/// their mean, at least [`SYSTEMATIC_FLOOR`]. A tank's gauge and
/// model errors repeat on every one of its fills, so this part does not average out in a running
/// sum; the fleet's spread of scales is its type A estimate (a shortfall common to every tank moves
/// the mean, not the spread).
pub fn systematic_fraction(audit: &FleetAudit) -> f64 {
    // a gauge the audit found drifting or stepped is a finding, not the fleet's usual spread
    let faulty: HashSet<&str> = audit
        .gauges
        .iter()
        .filter(|g| matches!(g.status, GaugeStatus::Drift | GaugeStatus::Step))
        .map(|g| g.tank.as_str())
        .collect();
    let mut by_tank: std::collections::BTreeMap<&str, Vec<f64>> = Default::default();
    for b in audit
        .fills
        .iter()
        .filter(|b| !faulty.contains(b.tank.as_str()))
    {
        if let Some(s) = b.gauge_scale {
            by_tank.entry(b.tank.as_str()).or_default().push(s.scale);
        }
    }
    let scales: Vec<f64> = by_tank.into_values().filter_map(median).collect();
    let n = scales.len() as f64;
    let spread = if scales.len() >= 2 {
        let m = scales.iter().sum::<f64>() / n;
        (scales.iter().map(|s| (s - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
    } else {
        0.0
    };
    spread.max(SYSTEMATIC_FLOOR)
}

/// The least systematic part of a fill's residual, fraction of what the tank took in.
pub const SYSTEMATIC_FLOOR: f64 = 0.0;

fn median(mut v: Vec<f64>) -> Option<f64> {
    v.retain(|x| x.is_finite());
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    })
}

/// The statement of a tank or a site from `from` (inclusive) to `to` (exclusive), judged with the
/// fleet audit `audit` (its balances and findings) and the readings' contents from the same engine.
pub fn statement(
    repo: &dyn Repository,
    audit: &FleetAudit,
    opts: &AuditOptions,
    scope: &Scope,
    from: NaiveDate,
    to: NaiveDate,
    period: Period,
) -> Result<Statement, ReportError> {
    if to <= from {
        return Err(ReportError::Period(format!(
            "--to {to} is not after --from {from}"
        )));
    }
    let tanks: Vec<store::TankRecord> = match scope {
        Scope::Tank(name) => vec![repo.tank_by_name(name).map_err(|_| ReportError::NoSuch {
            kind: "tank",
            name: name.clone(),
        })?],
        Scope::Site(name) => {
            let v: Vec<_> = repo
                .tanks()?
                .into_iter()
                .filter(|t| &t.spec.site == name)
                .collect();
            if v.is_empty() {
                return Err(ReportError::NoSuch {
                    kind: "site",
                    name: name.clone(),
                });
            }
            v
        }
    };
    let bounds = boundaries(from, to, period);
    let starts: Vec<i64> = bounds.iter().map(|d| date_ms(*d)).collect();
    let labels: Vec<String> = bounds.iter().map(|d| label(*d, period)).collect();
    let systematic = systematic_fraction(audit);
    let mut per_tank = Vec::new();
    for t in &tanks {
        let a = evaluate::audit_tank(repo, t.id, opts)?;
        let series: Series = a
            .readings
            .iter()
            .map(|r| (r.time_ms, r.total_mass_kg))
            .collect();
        let ner = audit
            .tanks
            .iter()
            .find(|s| s.tank == t.spec.name)
            .and_then(|s| s.ner_fitted_percent_per_day)
            .unwrap_or(a.ner_setting_percent_per_day);
        let mut rows = tank_rows(
            &t.spec.name,
            &series,
            a.full_mass_kg,
            ner,
            audit,
            systematic,
            &starts,
            &labels,
        );
        // the running sum of one tank: its balances' own uncertainties add in quadrature, its
        // systematic part linearly (GUM 5.2: fully correlated inputs)
        let (mut sum, mut var, mut sys) = (0.0, 0.0, 0.0);
        for r in &mut rows {
            sum += r.residual_sum_kg;
            var += r.residual_u_kg.powi(2) - r.systematic_u_kg.powi(2);
            sys += r.systematic_u_kg;
            r.running_sum_kg = sum;
            // held here as the running variance until the tanks are summed
            r.running_band_kg = var.max(0.0) + sys * sys;
        }
        per_tank.push(rows);
    }
    // sum the tanks period by period; a tank with no reading in a period keeps its running figures
    let mut rows: Vec<StatementRow> = Vec::new();
    let mut empty = Vec::new();
    let mut last: Vec<(f64, f64)> = vec![(0.0, 0.0); per_tank.len()];
    for i in 0..starts.len().saturating_sub(1) {
        let mut acc: Option<StatementRow> = None;
        let mut var = 0.0;
        for (j, tr) in per_tank.iter().enumerate() {
            let Some(r) = tr.iter().find(|r| r.start_ms == starts[i]) else {
                continue;
            };
            last[j] = (r.running_sum_kg, r.running_band_kg);
            var += r.residual_u_kg * r.residual_u_kg;
            acc = Some(match acc {
                None => r.clone(),
                Some(mut a) => {
                    a.opened_ms = a.opened_ms.min(r.opened_ms);
                    a.closed_ms = a.closed_ms.max(r.closed_ms);
                    a.opening_kg += r.opening_kg;
                    a.fills += r.fills;
                    a.billed_kg += r.billed_kg;
                    a.gained_kg += r.gained_kg;
                    a.use_kg += r.use_kg;
                    a.use_per_day_kg += r.use_per_day_kg;
                    a.heat_leak_kg += r.heat_leak_kg;
                    a.losses_found_kg += r.losses_found_kg;
                    a.gains_found_kg += r.gains_found_kg;
                    a.closing_kg += r.closing_kg;
                    a.fills_judged += r.fills_judged;
                    a.residual_sum_kg += r.residual_sum_kg;
                    a.systematic_u_kg += r.systematic_u_kg;
                    a
                }
            });
        }
        match acc {
            Some(mut a) => {
                a.residual_u_kg = var.sqrt();
                a.running_sum_kg = last.iter().map(|l| l.0).sum();
                a.running_band_kg = 2.0 * last.iter().map(|l| l.1).sum::<f64>().sqrt();
                rows.push(a);
            }
            None => empty.push(labels[i].clone()),
        }
    }
    let title = match scope {
        Scope::Tank(n) => format!("tank {n}"),
        Scope::Site(n) => format!("site {n} ({} tanks)", tanks.len()),
    };
    Ok(Statement {
        title,
        tanks: tanks.iter().map(|t| t.spec.name.clone()).collect(),
        period,
        rows,
        empty,
    })
}

/// The statement's columns: header, field name, kind of figure, value.
fn columns(r: &StatementRow) -> Vec<(&'static str, &'static str, Figure, f64)> {
    vec![
        ("Opening, kg", "opening_kg", Figure::Mass, r.opening_kg),
        ("Fills", "fills", Figure::Count, r.fills as f64),
        ("Billed, kg", "billed_kg", Figure::Mass, r.billed_kg),
        ("Gained, kg", "gained_kg", Figure::Mass, r.gained_kg),
        ("Use, kg", "use_kg", Figure::Mass, r.use_kg),
        (
            "Use, kg/day",
            "use_per_day_kg",
            Figure::MassRate,
            r.use_per_day_kg,
        ),
        (
            "Heat leak, kg",
            "heat_leak_kg",
            Figure::Mass,
            r.heat_leak_kg,
        ),
        (
            "Losses found, kg",
            "losses_found_kg",
            Figure::Mass,
            r.losses_found_kg,
        ),
        (
            "Gains found, kg",
            "gains_found_kg",
            Figure::Mass,
            r.gains_found_kg,
        ),
        ("Closing, kg", "closing_kg", Figure::Mass, r.closing_kg),
        (
            "Residual sum, kg",
            "residual_sum_kg",
            Figure::Mass,
            r.residual_sum_kg,
        ),
        ("u, kg", "residual_u_kg", Figure::Mass, r.residual_u_kg),
        (
            "Running sum, kg",
            "running_sum_kg",
            Figure::Mass,
            r.running_sum_kg,
        ),
        (
            "±2u, kg",
            "running_band_kg",
            Figure::Mass,
            r.running_band_kg,
        ),
    ]
}

impl Statement {
    /// The statement as CSV: the same table as the HTML, rounded the same way.
    pub fn csv(&self) -> Result<String, ReportError> {
        let mut w = csv::Writer::from_writer(Vec::new());
        let mut head = vec!["period", "opened", "closed"];
        head.extend(columns(&StatementRow::default()).iter().map(|c| c.1));
        head.push("inside_band");
        w.write_record(&head)?;
        for r in &self.rows {
            let mut rec = vec![
                r.label.clone(),
                r.opened_ms.map(when).unwrap_or_default(),
                r.closed_ms.map(when).unwrap_or_default(),
            ];
            rec.extend(columns(r).iter().map(|c| c.2.text(c.3)));
            rec.push(if r.inside_band() { "yes" } else { "no" }.into());
            w.write_record(&rec)?;
        }
        let bytes = w
            .into_inner()
            .map_err(|e| ReportError::Csv(csv::Error::from(e.into_error())))?;
        Ok(String::from_utf8_lossy(&bytes).into_owned())
    }

    /// The statement as a self-contained HTML document.
    pub fn html(&self, src: &Source) -> String {
        let title = format!("Stock statement: {}", self.title);
        let mut doc = Doc::new(&title);
        doc.heading(1, &title);
        if let (Some(f), Some(l)) = (self.rows.first(), self.rows.last()) {
            doc.para_class(
                "sub",
                &format!(
                    "{} to {} by {}; tanks: {}.",
                    day(f.start_ms),
                    day(l.end_ms - DAY_MS),
                    match self.period {
                        Period::Month => "month",
                        Period::Week => "week (from Monday)",
                    },
                    self.tanks.join(", ")
                ),
            );
        }
        let outside: Vec<&StatementRow> = self.rows.iter().filter(|r| !r.inside_band()).collect();
        match outside.first() {
            None => doc.para(
                "The running sum of fill residuals stays inside its k = 2 band in every period: what was billed and what the tank shows agree within their uncertainty.",
            ),
            Some(r) => doc.para(&format!(
                "The running sum of fill residuals leaves its k = 2 band in {} ({} kg against ±{} kg) and is outside it in {} of {} periods: more was billed than the tank shows (positive) or less (negative) beyond what the readings and meters explain. A vehicle's meter, a gauge going off or a leak are the usual causes; the fill and vehicle reports tell them apart.",
                r.label,
                Figure::Mass.text(r.running_sum_kg),
                Figure::Mass.text(r.running_band_kg),
                outside.len(),
                self.rows.len()
            )),
        }
        let labels: Vec<String> = self.rows.iter().map(|r| r.label.clone()).collect();
        let per: Vec<f64> = self.rows.iter().map(|r| r.residual_sum_kg).collect();
        let run: Vec<f64> = self.rows.iter().map(|r| r.running_sum_kg).collect();
        let band: Vec<f64> = self.rows.iter().map(|r| r.running_band_kg).collect();
        doc.figure(
            &svg::running_sum(&labels, &per, &run, &band),
            "Running sum of the fills' residuals (billed − gained − drawn) with ±2 standard uncertainties; each period's own sum as bars.",
        );
        let mut head = vec!["Period"];
        head.extend(columns(&StatementRow::default()).iter().map(|c| c.0));
        let rows: Vec<Vec<Cell>> = self
            .rows
            .iter()
            .map(|r| {
                let mut v = vec![Cell::t(r.label.clone())];
                v.extend(columns(r).into_iter().map(|(_, f, k, x)| Cell::n(f, k, x)));
                v
            })
            .collect();
        doc.table("wide", &head, &rows);
        if !self.empty.is_empty() {
            doc.para_class(
                "small",
                &format!(
                    "No reading in {}: the fills and use of such a period are in the one before it, which closes at the next reading.",
                    self.empty.join(", ")
                ),
            );
        }
        doc.heading(2, "How to read it");
        for p in [
            "Opening and closing contents are the tank's contents at a reading: the first reading at or after the period's start, and the first at or after the next period's start. One period's closing is the next one's opening.",
            "Gained is the rise in contents across each fill, between the readings that bracket it. Use is what the books leave: opening + gained − closing. It holds the site's draw, the heat leak (boil-off at the tank's normal evaporation rate, shown for comparison) and any losses found between fills.",
            "The residual sum is billed − gained − drawn over the period's fills, where drawn is the site's use between each fill's two readings. Each residual's standard uncertainty is its balance's (readings, use in the gap, meter); they are combined as independent. The running sum adds the periods; a true shortfall or a meter reading high grows with every fill and leaves the ±2u band, while honest fills wander inside it (statistical inventory reconciliation: US EPA, EPA/530/UST-90/007, 1990).",
        ] {
            doc.para(p);
        }
        data_section(&mut doc, src, None, &[]);
        doc.finish(&src.written)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Calendar facts: common practice, no source.
    #[test]
    fn months_and_weeks_split_at_their_first_day() {
        let d = |y, m, dd| NaiveDate::from_ymd_opt(y, m, dd).unwrap();
        let b = boundaries(d(2026, 11, 15), d(2027, 2, 1), Period::Month);
        assert_eq!(
            b,
            vec![
                d(2026, 11, 15),
                d(2026, 12, 1),
                d(2027, 1, 1),
                d(2027, 2, 1)
            ]
        );
        // 2026-12-02 is a Wednesday; the next Mondays are the 7th and the 14th
        let w = boundaries(d(2026, 12, 2), d(2026, 12, 16), Period::Week);
        assert_eq!(
            w,
            vec![
                d(2026, 12, 2),
                d(2026, 12, 7),
                d(2026, 12, 14),
                d(2026, 12, 16)
            ]
        );
    }

    #[test]
    fn the_windows_period_is_the_last_twelve_months_and_this_one() {
        let d = |y, m, dd| NaiveDate::from_ymd_opt(y, m, dd).unwrap();
        // 2026-12-04 12:00 UTC
        let (f, t) = recent_months(date_ms(d(2026, 12, 4)) + 43_200_000);
        assert_eq!((f, t), (d(2025, 12, 1), d(2026, 12, 5)));
        let (f, _) = recent_months(date_ms(d(2026, 1, 31)));
        assert_eq!(f, d(2025, 1, 1));
    }

    #[test]
    fn overlap_is_the_share_inside() {
        assert!((overlap(0, 10, 5, 20) - 0.5).abs() < 1e-12);
        assert_eq!(overlap(0, 10, 10, 20), 0.0);
        assert_eq!(overlap(3, 3, 0, 10), 1.0);
    }
}
