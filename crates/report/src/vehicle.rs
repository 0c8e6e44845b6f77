//! The vehicle report, and the vehicle section the fill report shares.

use audit::{AuditOptions, Balance, FleetAudit, Verdict};
use store::{RecordRef, Repository};

use crate::ReportError;
use crate::common::{METHOD, Source, Traced, data_section, day, traced};
use crate::html::{Cell, Doc};
use crate::rounding::Figure;
use crate::svg::{self, Dot};

/// Most fills drawn in the chart (the latest); the table lists them all.
const CHART_FILLS: usize = 60;

/// A vehicle's balances in the audit, oldest first, optionally only those starting in [since, until).
pub(crate) fn vehicle_fills<'a>(
    audit: &'a FleetAudit,
    vehicle: &str,
    since_ms: Option<i64>,
    until_ms: Option<i64>,
) -> Vec<&'a Balance> {
    let mut v: Vec<&Balance> = audit
        .fills
        .iter()
        .filter(|b| b.vehicle == vehicle)
        .filter(|b| since_ms.is_none_or(|s| b.start_ms >= s))
        .filter(|b| until_ms.is_none_or(|u| b.start_ms < u))
        .collect();
    v.sort_by(|a, b| a.start_ms.cmp(&b.start_ms).then(a.ticket.cmp(&b.ticket)));
    v
}

fn status_word(s: audit::VehicleStatus) -> &'static str {
    match s {
        audit::VehicleStatus::Ok => "ok",
        audit::VehicleStatus::Biased => "biased",
        audit::VehicleStatus::NotEnoughData => "not enough data",
    }
}

/// The vehicle's test and its fills: a table, a chart, and the period's plain summary.
pub(crate) fn vehicle_section(
    doc: &mut Doc,
    audit: &FleetAudit,
    vehicle: &str,
    fills: &[&Balance],
    highlight: Option<&str>,
) {
    doc.heading(2, &format!("Vehicle {vehicle}"));
    let finding = audit.vehicles.iter().find(|v| v.vehicle == vehicle);
    match finding {
        Some(v) => {
            doc.raw(&format!(
                "<p>Status: <span class=\"verdict v-{w}\" data-field=\"status\">{t}</span></p>\n",
                w = status_word(v.status).replace(' ', "-"),
                t = status_word(v.status)
            ));
            doc.key_values(&[
                ("Carrier", Cell::t(v.carrier.clone())),
                ("Fills tested", Cell::Plain(Figure::Count, v.fills as f64)),
                (
                    "Bias, % (negative: delivers short)",
                    Cell::on("bias_percent", Figure::Percent, v.bias_percent),
                ),
                (
                    "95 % interval, low, %",
                    Cell::on("ci95_low_percent", Figure::Percent, v.ci95_low_percent),
                ),
                (
                    "95 % interval, high, %",
                    Cell::on("ci95_high_percent", Figure::Percent, v.ci95_high_percent),
                ),
                (
                    "Legal tolerance, ± %",
                    Cell::n(
                        "legal_tolerance_percent",
                        Figure::Percent,
                        v.legal_tolerance_percent,
                    ),
                ),
                (
                    "Beyond the legal tolerance",
                    Cell::t(
                        match (v.ci_beyond_legal_tolerance, v.exceeds_legal_tolerance) {
                            (true, _) => "yes: the whole 95 % interval",
                            (false, true) => "the estimate is, its interval is not wholly",
                            _ => "no",
                        },
                    ),
                ),
                (
                    "p-value",
                    Cell::on("p_value", Figure::Probability, v.p_value),
                ),
                (
                    "p-value after Holm across vehicles",
                    Cell::on("p_adjusted", Figure::Probability, v.p_adjusted),
                ),
                (
                    "Fills judged short on their own balances",
                    Cell::Plain(Figure::Count, v.short_fills as f64),
                ),
                (
                    "Further fills judged short with the vehicle's other fills (its mean, or the mixture of its honest and short deliveries)",
                    Cell::Plain(Figure::Count, v.short_with_vehicle as f64),
                ),
                (
                    "Short fills expected of an honest vehicle, %",
                    Cell::Plain(Figure::Percent, 100.0 * v.short_rate_expected),
                ),
            ]);
            doc.para_class("small", &format!("Test: {}.", v.test));
        }
        None => doc.para("The fleet audit has no test of this vehicle."),
    }

    let rows: Vec<Vec<Cell>> = fills
        .iter()
        .map(|b| {
            let mark = if highlight == Some(b.ticket.as_str()) {
                " (this fill)"
            } else {
                ""
            };
            vec![
                Cell::t(format!("{}{mark}", b.ticket)),
                Cell::t(b.tank.clone()),
                Cell::t(day(b.start_ms)),
                Cell::n("billed_kg", Figure::Mass, b.billed_kg),
                Cell::n("ratio", Figure::Ratio, b.ratio),
                Cell::n("residual_percent", Figure::Percent, b.residual_percent),
                Cell::Plain(
                    Figure::Percent,
                    100.0 * b.coverage_factor * b.sigma_kg / b.billed_kg,
                ),
                Cell::Word(b.verdict.as_str().to_string()),
            ]
        })
        .collect();
    let chart_rows: Vec<Dot> = fills
        .iter()
        .rev()
        .take(CHART_FILLS)
        .rev()
        .map(|b| Dot {
            label: format!("{} · {} · {}", day(b.start_ms), b.tank, b.ticket),
            value: b.residual_percent,
            half: 100.0 * b.coverage_factor * b.sigma_kg / b.billed_kg,
            hollow: b.verdict == Verdict::Inconclusive,
        })
        .collect();
    let tolerance = finding.map_or(1.5, |v| v.legal_tolerance_percent);
    // the bias is of (gained + drawn)/billed; the residual runs the other way
    let estimate = finding.and_then(|v| {
        Some((
            -v.bias_percent?,
            -v.ci95_high_percent?,
            -v.ci95_low_percent?,
        ))
    });
    doc.figure(
        &svg::dots(&chart_rows, estimate, tolerance, "%"),
        &format!(
            "Each fill's residual, % of billed (positive: less arrived than billed), with k standard uncertainties; hollow: inconclusive. Blue line: the vehicle's bias as a shortfall, shaded its 95 % interval.{}",
            if fills.len() > CHART_FILLS {
                format!(" The latest {CHART_FILLS} of {} fills are drawn.", fills.len())
            } else {
                String::new()
            }
        ),
    );
    doc.table(
        "narrow",
        &[
            "Ticket",
            "Tank",
            "Day",
            "Billed, kg",
            "(gained + drawn) / billed",
            "Residual, %",
            "± k σ, %",
            "Verdict",
        ],
        &rows,
    );
    let judged: Vec<&&Balance> = fills
        .iter()
        .filter(|b| b.verdict != Verdict::Inconclusive)
        .collect();
    let billed: f64 = judged.iter().map(|b| b.billed_kg).sum();
    let residual: f64 = judged.iter().map(|b| b.residual_kg).sum();
    let u: f64 = judged
        .iter()
        .map(|b| b.sigma_kg * b.sigma_kg)
        .sum::<f64>()
        .sqrt();
    doc.key_values(&[
        (
            "Fills listed",
            Cell::Plain(Figure::Count, fills.len() as f64),
        ),
        (
            "Of them judged (not inconclusive)",
            Cell::Plain(Figure::Count, judged.len() as f64),
        ),
        (
            "Billed on the judged fills, kg",
            Cell::Plain(Figure::Mass, billed),
        ),
        (
            "Sum of their residuals, kg",
            Cell::Plain(Figure::Mass, residual),
        ),
        (
            "Its standard uncertainty, kg (root sum of squares)",
            Cell::Plain(Figure::Mass, u),
        ),
    ]);
}

/// The vehicle report: its fills starting in [since, until) from a fleet audit of the ledger.
#[allow(clippy::too_many_arguments)]
pub fn vehicle_report(
    repo: &dyn Repository,
    audit: &FleetAudit,
    opts: &AuditOptions,
    src: &Source,
    vehicle: &str,
    since_ms: Option<i64>,
    until_ms: Option<i64>,
) -> Result<String, ReportError> {
    let fills = vehicle_fills(audit, vehicle, since_ms, until_ms);
    if fills.is_empty() && !audit.vehicles.iter().any(|v| v.vehicle == vehicle) {
        return Err(ReportError::NoVehicle(vehicle.into()));
    }
    let title = format!("Vehicle report: {vehicle}");
    let mut doc = Doc::new(&title);
    doc.heading(1, &title);
    let period = match (since_ms, until_ms) {
        (Some(s), Some(u)) => format!("Fills starting from {} to before {}", day(s), day(u)),
        (Some(s), None) => format!("Fills starting from {}", day(s)),
        (None, Some(u)) => format!("Fills starting before {}", day(u)),
        (None, None) => "Every fill in the ledger".to_string(),
    };
    doc.para_class(
        "sub",
        &format!(
            "{period}. The vehicle's test covers every fill the audit judged{}.",
            if until_ms.is_some() {
                " from the same start, including any after the listed period"
            } else {
                ""
            }
        ),
    );
    vehicle_section(&mut doc, audit, vehicle, &fills, None);
    doc.heading(2, "Method and assumptions");
    for m in METHOD {
        doc.para(m);
    }
    // the deliveries named, with their revision counts
    let mut records: Vec<Traced> = Vec::new();
    let mut by_tank: std::collections::BTreeMap<&str, Vec<&Balance>> = Default::default();
    for b in &fills {
        by_tank.entry(b.tank.as_str()).or_default().push(b);
    }
    for (tank, bs) in by_tank {
        let t = repo.tank_by_name(tank)?;
        let ds = repo.deliveries(Some(t.id))?;
        for b in bs {
            if let Some(d) = ds.iter().find(|d| d.entry.ticket == b.ticket) {
                records.push(traced(
                    repo,
                    format!("delivery {} at {}", b.ticket, tank),
                    RecordRef::Delivery(d.id),
                )?);
            }
        }
    }
    data_section(&mut doc, src, Some(opts), &records);
    Ok(doc.finish(&src.written))
}
