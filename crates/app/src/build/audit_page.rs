//! The audit page from the fleet audit (the same `cryoledger audit` gives): every balance with its
//! budget and bracketing readings, vehicles, gauges and findings; the filter and the order of the fill
//! list are applied here, when they change, never per frame.

use std::collections::{BTreeSet, HashMap};

use audit::{Balance, FindingKind, FleetAudit, GaugeStatus, VehicleStatus, Verdict};

use crate::fmt::{self, UnitSystem};
use crate::view::*;

/// The window's words for a finding between fills.
pub fn finding_words(k: FindingKind) -> &'static str {
    match k {
        FindingKind::UnexplainedGain => "gain no ticket explains",
        FindingKind::LossBeyondUse => "loss beyond use",
    }
}

/// The window's word for a verdict.
pub fn verdict_word(v: Verdict) -> VerdictWord {
    match v {
        Verdict::Short => VerdictWord::Short,
        Verdict::Excess => VerdictWord::Excess,
        Verdict::Inconclusive => VerdictWord::Inconclusive,
        Verdict::Consistent => VerdictWord::Consistent,
    }
}

fn bracket(r: &Option<audit::BracketReading>) -> Option<BracketView> {
    r.as_ref().map(|r| BracketView {
        time_ms: r.time_ms,
        mass_kg: r.total_mass_kg,
        fill: r.fill_fraction,
        liquid_temperature_k: r.liquid_temperature_k,
        saturation_temperature_k: r.saturation_temperature_k,
    })
}

fn balance_row(
    b: &Balance,
    (site, zone): (&str, units::Zone),
    tank_id: Option<i64>,
    materiality: f64,
) -> BalanceRow {
    BalanceRow {
        ticket: b.ticket.clone(),
        zone,
        site: site.to_owned(),
        tank: b.tank.clone(),
        tank_id,
        carrier: b.carrier.clone(),
        vehicle: b.vehicle.clone(),
        start_ms: b.start_ms,
        verdict: verdict_word(b.verdict),
        billed_kg: b.billed_kg,
        gained_kg: b.gained_kg,
        drawn_kg: b.drawn_kg,
        lost_kg: b.lost_beyond_use_kg,
        residual_kg: b.residual_kg,
        residual_percent: b.residual_percent,
        sigma_kg: b.sigma_kg,
        limit_kg: b.limit_kg,
        excess_limit_kg: b.excess_limit_kg,
        materiality_kg: materiality * b.billed_kg.abs(),
        budget: vec![
            BudgetPart {
                label: "readings, shared",
                kg: b.sigma_readings_shared_kg,
            },
            BudgetPart {
                label: "readings, independent",
                kg: b.sigma_readings_independent_kg,
            },
            BudgetPart {
                label: "use between the readings",
                kg: b.sigma_usage_kg,
            },
            BudgetPart {
                label: "meters",
                kg: b.sigma_meter_kg,
            },
            BudgetPart {
                label: "gauge scale",
                kg: b.sigma_gauge_scale_kg,
            },
        ],
        before: bracket(&b.before),
        after: bracket(&b.after),
        scale: b
            .gauge_scale
            .map(|g| {
                format!(
                    "{:.4} ± {:.4} ({}, from {} other fills)",
                    g.scale, g.u, g.model, g.fills
                )
            })
            .unwrap_or_else(|| "as the gauge reads (too few other fills to fit its scale)".into()),
        with_vehicle: b
            .with_vehicle
            .map(|e| {
                format!(
                    "short with the vehicle's other fills: {} other fills show its deliveries {:.2} % ± {:.2} % short; with this balance, this fill {:.2} % ± {:.2} % short",
                    e.fills,
                    e.vehicle_shortfall_percent,
                    e.vehicle_u_percent,
                    e.shortfall_percent,
                    e.shortfall_u_percent
                )
            })
            .or_else(|| {
                b.with_mixture.map(|e| {
                    format!(
                        "short on the balance of probabilities: the vehicle's deliveries are honest or about {:.2} % short ({:.0} % of them); this fill, {:.2} % ± {:.2} % short by its balance, was a short one with probability {:.2}",
                        e.shortfall_percent,
                        100.0 * e.share,
                        e.own_shortfall_percent,
                        e.own_u_percent,
                        e.short_probability
                    )
                })
            }),
        explanation: b.explanation.clone(),
    }
}

const DAY_MS: f64 = 86_400_000.0;

type Segment = [[f64; 2]; 2];

/// What the gauge test found, to draw over the fills' ratios (%): a drift as a line of its slope
/// through the fills' mean, a step as the mean before and the mean after.
fn fault_lines(
    g: &audit::GaugeFinding,
    pts: &[(f64, f64, String)],
) -> (Option<Segment>, Vec<Segment>) {
    let (Some(first), Some(last)) = (pts.first(), pts.last()) else {
        return (None, Vec::new());
    };
    let mean = |p: &[&(f64, f64, String)]| {
        let n = p.len().max(1) as f64;
        (
            p.iter().map(|x| x.0).sum::<f64>() / n,
            p.iter().map(|x| x.1).sum::<f64>() / n,
        )
    };
    match g.status {
        GaugeStatus::Drift => {
            let all: Vec<&(f64, f64, String)> = pts.iter().collect();
            let (mx, my) = mean(&all);
            let slope = g.drift_percent_per_year.unwrap_or(0.0) / 365.0;
            let at = |x: f64| [x, my + slope * (x - mx)];
            (Some([at(first.0), at(last.0)]), Vec::new())
        }
        GaugeStatus::Step => {
            let Some(at) = g.step_ms.map(|ms| ms as f64 / DAY_MS) else {
                return (None, Vec::new());
            };
            let before: Vec<&(f64, f64, String)> = pts.iter().filter(|p| p.0 < at).collect();
            let after: Vec<&(f64, f64, String)> = pts.iter().filter(|p| p.0 >= at).collect();
            let mut out = Vec::new();
            if !before.is_empty() {
                let (_, y) = mean(&before);
                out.push([[first.0, y], [at, y]]);
            }
            if !after.is_empty() {
                let (_, y) = mean(&after);
                out.push([[at, y], [last.0, y]]);
            }
            (None, out)
        }
        _ => (None, Vec::new()),
    }
}

/// The audit page from a fleet audit; the filter, order, section and selection of `old` are kept.
pub fn audit_view(
    fa: &FleetAudit,
    sites: &[FleetSite],
    materiality: f64,
    units: UnitSystem,
    old: &AuditView,
) -> AuditView {
    let mut site_of: HashMap<&str, (&str, i64, units::Zone)> = HashMap::new();
    for s in sites {
        for t in &s.tanks {
            site_of.insert(t.name.as_str(), (s.name.as_str(), t.id, s.zone));
        }
    }
    let rows: Vec<BalanceRow> = fa
        .fills
        .iter()
        .map(|b| {
            let (site, id, zone) = site_of
                .get(b.tank.as_str())
                .map_or(("", None, units::Zone::UTC), |(s, id, z)| {
                    (*s, Some(*id), *z)
                });
            balance_row(b, (site, zone), id, materiality)
        })
        .collect();
    let names = |f: &dyn Fn(&BalanceRow) -> &str| -> Vec<String> {
        rows.iter()
            .map(|r| f(r).to_owned())
            .filter(|s| !s.is_empty())
            .collect::<BTreeSet<_>>()
            .into_iter()
            .collect()
    };
    let choices = [
        names(&|r| &r.site),
        names(&|r| &r.tank),
        names(&|r| &r.carrier),
        names(&|r| &r.vehicle),
    ];
    let vehicles = fa
        .vehicles
        .iter()
        .map(|v| VehicleLine {
            vehicle: v.vehicle.clone(),
            carrier: v.carrier.clone(),
            status: match v.status {
                VehicleStatus::Ok => "ok",
                VehicleStatus::Biased => "biased",
                VehicleStatus::NotEnoughData => "too few fills",
            }
            .into(),
            flagged: v.status == VehicleStatus::Biased,
            fills: v.fills,
            bias: match (v.bias_percent, v.ci95_low_percent, v.ci95_high_percent) {
                (Some(b), Some(l), Some(h)) => Some((b, l, h)),
                _ => None,
            },
            short_fills: v.short_fills,
            short_with_vehicle: v.short_with_vehicle,
            p_adjusted: v.p_adjusted,
            tolerance_percent: v.legal_tolerance_percent,
            points: v
                .adjusted
                .iter()
                .map(|a| (a.start_ms as f64 / DAY_MS, a.percent, a.tank.clone()))
                .collect(),
        })
        .collect();
    // each tank's stated leak rate, kg/day
    let leak_seen: HashMap<&str, Option<f64>> = fa
        .tanks
        .iter()
        .map(|t| (t.tank.as_str(), t.leak_detectable_kg_per_day))
        .collect();
    // each tank's fills, grouped once (a fleet has thousands of tanks)
    let mut fills_of: HashMap<&str, Vec<&Balance>> = HashMap::new();
    for b in &fa.fills {
        fills_of.entry(b.tank.as_str()).or_default().push(b);
    }
    let gauges = fa
        .gauges
        .iter()
        .map(|g| {
            let points: Vec<(f64, f64, String)> = fills_of
                .get(g.tank.as_str())
                .map(Vec::as_slice)
                .unwrap_or_default()
                .iter()
                .filter(|b| b.ratio.is_finite() && b.before.is_some())
                .map(|b| {
                    (
                        b.start_ms as f64 / DAY_MS,
                        100.0 * b.ratio,
                        b.vehicle.clone(),
                    )
                })
                .collect();
            let (drift_line, step_lines) = fault_lines(g, &points);
            (g, points, drift_line, step_lines)
        })
        .map(|(g, points, drift_line, step_lines)| GaugeLine {
            tank: g.tank.clone(),
            status: match g.status {
                GaugeStatus::Ok => "ok",
                GaugeStatus::Drift => "drift",
                GaugeStatus::Step => "step",
                GaugeStatus::NotEnoughData => "too few fills",
            }
            .into(),
            flagged: matches!(g.status, GaugeStatus::Drift | GaugeStatus::Step),
            fills: g.fills,
            drift: g.drift_percent_per_year,
            step: g.step_percent.zip(g.step_ms),
            p_adjusted: g.p_adjusted,
            detectable: (
                g.drift_detectable_percent_per_year,
                g.step_detectable_percent,
            ),
            carried_by_vehicle: g.carried_by_vehicle.clone(),
            leak_seen: leak_seen
                .get(g.tank.as_str())
                .copied()
                .flatten()
                .map_or("—".into(), |kg| {
                    format!("{} {}/day", fmt::num(units.mass(kg), 0), units.mass_unit())
                }),
            points,
            drift_line,
            step_lines,
        })
        .collect();
    let findings = fa
        .findings
        .iter()
        .map(|f| FindingLine {
            zone: site_of
                .get(f.tank.as_str())
                .map_or(units::Zone::UTC, |x| x.2),
            tank: f.tank.clone(),
            tank_id: site_of.get(f.tank.as_str()).map(|x| x.1),
            kind: finding_words(f.kind).into(),
            from_ms: f.from_ms,
            to_ms: f.to_ms,
            text: f.explanation.clone(),
        })
        .collect();
    let mut v = AuditView {
        ready: true,
        rows,
        visible: Vec::new(),
        filter: old.filter.clone(),
        sort: old.sort,
        filter_error: None,
        choices,
        summary: String::new(),
        selected: None,
        open_ticket: None,
        section: old.section,
        gauge_open: None,
        open_gauge: None,
        vehicle_open: None,
        open_vehicle: None,
        vehicles,
        gauges,
        findings,
        stopped: false,
    };
    // the open balance, gauge and vehicle stay open when they are still there
    let keep = audit_settings(old);
    v.selected = keep
        .open_ticket
        .and_then(|t| v.rows.iter().position(|r| r.ticket == t));
    v.gauge_open = keep
        .open_gauge
        .and_then(|t| v.gauges.iter().position(|g| g.tank == t));
    v.vehicle_open = keep
        .open_vehicle
        .and_then(|n| v.vehicles.iter().position(|g| g.vehicle == n));
    apply_filter(&mut v, units);
    v
}

/// What of the audit page outlives a new audit (its filter, order, section, and the balance and
/// gauge open), without its rows: a small copy to build the next page from on another thread.
pub fn audit_settings(old: &AuditView) -> AuditView {
    AuditView {
        filter: old.filter.clone(),
        sort: old.sort,
        section: old.section,
        open_ticket: old
            .selected
            .and_then(|i| old.rows.get(i))
            .map(|r| r.ticket.clone())
            .or_else(|| old.open_ticket.clone()),
        open_gauge: old
            .gauge_open
            .and_then(|i| old.gauges.get(i))
            .map(|g| g.tank.clone())
            .or_else(|| old.open_gauge.clone()),
        open_vehicle: old
            .vehicle_open
            .and_then(|i| old.vehicles.get(i))
            .map(|g| g.vehicle.clone())
            .or_else(|| old.open_vehicle.clone()),
        ..AuditView::default()
    }
}

/// ms since the epoch of the start of a day, YYYY-MM-DD (UTC).
fn day_ms(text: &str) -> Result<Option<i64>, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(None);
    }
    store::Stamp::parse(&format!("{t}T00:00:00Z"))
        .map(|s| Some(s.ms))
        .map_err(|_| format!("'{t}' is not a date: write YYYY-MM-DD"))
}

/// Keep the rows the filter asks for, in the chosen order, and write the summary line.
pub fn apply_filter(v: &mut AuditView, units: UnitSystem) {
    let f = &v.filter;
    let from = day_ms(&f.from);
    let to = day_ms(&f.to);
    v.filter_error = from.as_ref().err().or(to.as_ref().err()).cloned();
    let from = from.ok().flatten().unwrap_or(i64::MIN);
    let to = to
        .ok()
        .flatten()
        .map_or(i64::MAX, |ms| ms.saturating_add(86_400_000));
    let same = |want: &str, have: &str| want.is_empty() || want == have;
    let mut kept: Vec<usize> = v
        .rows
        .iter()
        .enumerate()
        .filter(|(_, r)| {
            same(&f.site, &r.site)
                && same(&f.tank, &r.tank)
                && same(&f.carrier, &r.carrier)
                && same(&f.vehicle, &r.vehicle)
                && f.verdict.is_none_or(|w| w == r.verdict)
                && r.start_ms >= from
                && r.start_ms < to
        })
        .map(|(i, _)| i)
        .collect();
    let rows = &v.rows;
    let (col, descending) = v.sort;
    kept.sort_by(|&a, &b| {
        let (x, y) = (&rows[a], &rows[b]);
        let o = match col {
            AuditColumn::Start => x.start_ms.cmp(&y.start_ms),
            AuditColumn::Ticket => x.ticket.cmp(&y.ticket),
            AuditColumn::Tank => x.tank.cmp(&y.tank).then(x.start_ms.cmp(&y.start_ms)),
            AuditColumn::Vehicle => x.vehicle.cmp(&y.vehicle).then(x.start_ms.cmp(&y.start_ms)),
            AuditColumn::Verdict => x.verdict.cmp(&y.verdict).then(x.start_ms.cmp(&y.start_ms)),
            AuditColumn::Billed => x.billed_kg.total_cmp(&y.billed_kg),
            AuditColumn::Residual => x.residual_percent.total_cmp(&y.residual_percent),
        };
        if descending { o.reverse() } else { o }
    });
    let count = |w: VerdictWord| kept.iter().filter(|&&i| rows[i].verdict == w).count();
    let judged: Vec<&BalanceRow> = kept
        .iter()
        .map(|&i| &rows[i])
        .filter(|r| r.verdict != VerdictWord::Inconclusive)
        .collect();
    let billed: f64 = judged.iter().map(|r| r.billed_kg).sum();
    let arrived: f64 = judged.iter().map(|r| r.billed_kg - r.residual_kg).sum();
    let unit = units.mass_unit();
    v.summary = format!(
        "{} fills: {} short, {} excess, {} inconclusive. Judged fills billed {} {unit}; the tanks show {} {unit} arrived ({}{} %).",
        kept.len(),
        count(VerdictWord::Short),
        count(VerdictWord::Excess),
        count(VerdictWord::Inconclusive),
        fmt::num(units.mass(billed), 0),
        fmt::num(units.mass(arrived), 0),
        if arrived >= billed { "+" } else { "" },
        fmt::num(
            if billed > 0.0 {
                100.0 * (arrived - billed) / billed
            } else {
                0.0
            },
            2
        ),
    );
    v.visible = kept;
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(ticket: &str, tank: &str, vehicle: &str, start_ms: i64, w: VerdictWord) -> BalanceRow {
        BalanceRow {
            ticket: ticket.into(),
            zone: units::Zone::UTC,
            site: "Yard".into(),
            tank: tank.into(),
            tank_id: Some(1),
            carrier: "Carrier".into(),
            vehicle: vehicle.into(),
            start_ms,
            verdict: w,
            billed_kg: 1000.0,
            gained_kg: 980.0,
            drawn_kg: 0.0,
            lost_kg: 0.0,
            residual_kg: 20.0,
            residual_percent: 2.0,
            sigma_kg: 5.0,
            limit_kg: 10.0,
            excess_limit_kg: 10.0,
            materiality_kg: 10.0,
            budget: Vec::new(),
            before: None,
            after: None,
            scale: String::new(),
            with_vehicle: None,
            explanation: String::new(),
        }
    }

    /// The filter keeps what it names and a period counts whole days; the order follows the column;
    /// the summary counts the kept fills (constructed rows).
    #[test]
    fn filter_sort_and_summary() {
        let day = 86_400_000;
        let base = day_ms("2026-03-01").unwrap().unwrap();
        let mut v = AuditView {
            rows: vec![
                row("T1", "A", "V1", base, VerdictWord::Consistent),
                row("T2", "A", "V2", base + day, VerdictWord::Short),
                row("T3", "B", "V2", base + 2 * day + 1, VerdictWord::Short),
            ],
            ..Default::default()
        };
        v.filter.vehicle = "V2".into();
        apply_filter(&mut v, UnitSystem::Si);
        assert_eq!(v.visible, vec![1, 2]);
        assert!(v.summary.starts_with("2 fills: 2 short"), "{}", v.summary);
        v.filter.to = "2026-03-02".into();
        apply_filter(&mut v, UnitSystem::Si);
        assert_eq!(v.visible, vec![1]);
        v.filter = AuditFilter::default();
        v.sort = (AuditColumn::Start, true);
        apply_filter(&mut v, UnitSystem::Si);
        assert_eq!(v.visible, vec![2, 1, 0]);
        v.filter.from = "March".into();
        apply_filter(&mut v, UnitSystem::Si);
        assert!(
            v.filter_error
                .as_deref()
                .is_some_and(|e| e.contains("YYYY-MM-DD"))
        );
    }
}
