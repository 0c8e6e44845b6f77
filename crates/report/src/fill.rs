//! The fill report: one disputed fill, traceable to its records.

use audit::{AuditOptions, Balance, BracketReading, FleetAudit};
use store::{RecordRef, Repository, TankRecord};

use crate::ReportError;
use crate::common::{METHOD, Source, Traced, balance_of, data_section, traced, when};
use crate::html::{Cell, Doc, esc};
use crate::rounding::Figure;
use crate::svg;
use crate::vehicle::{vehicle_fills, vehicle_section};

/// The reading a bracket stands for, found by its tank and time.
pub(crate) fn reading_at(
    repo: &dyn Repository,
    t: &TankRecord,
    ms: i64,
) -> Result<Option<store::Reading>, ReportError> {
    Ok(repo.readings(t.id, Some((ms, ms + 1)))?.into_iter().next())
}

/// The bracketing readings side by side: as entered, and the state assumed.
fn readings_table(
    doc: &mut Doc,
    sides: &[(&str, &BracketReading, Option<&store::Reading>)],
    barometer_pa: f64,
) {
    let mut head = vec![""];
    head.extend(sides.iter().map(|s| s.0));
    let row = |label: &str, f: &dyn Fn(&BracketReading, Option<&store::Reading>) -> Cell| {
        let mut v = vec![Cell::t(label)];
        v.extend(sides.iter().map(|(_, r, st)| f(r, *st)));
        v
    };
    let entered = |f: fn(&store::Reading) -> String| {
        move |_: &BracketReading, s: Option<&store::Reading>| Cell::t(s.map_or("—".into(), f))
    };
    let rows = vec![
        row("Reading id", &entered(|s| s.id.0.to_string())),
        row("Time (UTC)", &|r, _| Cell::t(when(r.time_ms))),
        row("DP as entered", &entered(|s| s.entry.dp.to_string())),
        row(
            "Pressure as entered",
            &entered(|s| s.entry.pressure.to_string()),
        ),
        row("Pressure, barg", &|r, _| {
            Cell::Plain(Figure::PressureBar, (r.pressure_pa - barometer_pa) / 1e5)
        }),
        row("Contents, kg", &|r, _| {
            Cell::n("total_mass_kg", Figure::Mass, r.total_mass_kg)
        }),
        row("Level, % of gross volume", &|r, _| {
            Cell::Plain(Figure::FillPercent, 100.0 * r.fill_fraction)
        }),
        row("Liquid temperature assumed, K", &|r, _| {
            Cell::n(
                "liquid_temperature_k",
                Figure::Kelvin,
                r.liquid_temperature_k,
            )
        }),
        row("Saturation temperature at the tank pressure, K", &|r, _| {
            Cell::n(
                "saturation_temperature_k",
                Figure::Kelvin,
                r.saturation_temperature_k,
            )
        }),
        row("Subcooling, K", &|r, _| {
            Cell::Plain(
                Figure::Kelvin,
                r.saturation_temperature_k - r.liquid_temperature_k,
            )
        }),
    ];
    doc.table("", &head, &rows);
}

/// The balance's own sections: summary, chain, budget, readings. Shared with nothing else, but kept
/// apart from the page shell for reading.
fn balance_sections(
    doc: &mut Doc,
    b: &Balance,
    t: &TankRecord,
    stored: (&Option<store::Reading>, &Option<store::Reading>),
) {
    doc.heading(2, "Verdict");
    doc.raw(&format!(
        "<p><span class=\"verdict v-{v}\" data-field=\"verdict\">{v}</span> {}</p>\n",
        esc(&b.explanation),
        v = b.verdict.as_str()
    ));

    doc.heading(2, "Balance");
    let mut rows: Vec<(&str, Cell)> = vec![
        (
            "Billed, kg",
            Cell::n("billed_kg", Figure::Mass, b.billed_kg),
        ),
        (
            "Gained by level between the two readings, kg",
            Cell::n("gained_kg", Figure::Mass, b.gained_kg),
        ),
        (
            "Drawn by the site between the two readings, kg",
            Cell::n("drawn_kg", Figure::Mass, b.drawn_kg),
        ),
    ];
    if b.lost_beyond_use_kg > 0.0 {
        rows.push((
            "Lost beyond use between the two readings (a found leak or venting), kg",
            Cell::n("lost_beyond_use_kg", Figure::Mass, b.lost_beyond_use_kg),
        ));
    }
    if b.other_fills_kg > 0.0 {
        rows.push((
            "Billed on other tickets between the same readings, kg",
            Cell::n("other_fills_kg", Figure::Mass, b.other_fills_kg),
        ));
    }
    if let Some(s) = b.gauge_scale {
        rows.push((
            "Gauge scale from the tank's other fills",
            Cell::n("gauge_scale", Figure::Ratio, s.scale),
        ));
    }
    let ratio_label = if b.lost_beyond_use_kg > 0.0 {
        "(gained + drawn + lost) / billed"
    } else {
        "(gained + drawn) / billed"
    };
    rows.extend([
        (ratio_label, Cell::n("ratio", Figure::Ratio, b.ratio)),
        (
            "Residual, kg",
            Cell::n("residual_kg", Figure::Mass, b.residual_kg),
        ),
        (
            "Residual, % of billed",
            Cell::n("residual_percent", Figure::Percent, b.residual_percent),
        ),
        (
            "Standard uncertainty, kg",
            Cell::n("sigma_kg", Figure::Mass, b.sigma_kg),
        ),
        (
            "Coverage factor k",
            Cell::n("coverage_factor", Figure::Factor, b.coverage_factor),
        ),
    ]);
    if (b.excess_limit_kg - b.limit_kg).abs() > 1e-9 {
        rows.extend([
            (
                "Limit to pass for short, kg",
                Cell::n("limit_kg", Figure::Mass, b.limit_kg),
            ),
            (
                "Coverage factor k for an over-delivery (its vehicle found short)",
                Cell::n(
                    "excess_coverage_factor",
                    Figure::Factor,
                    b.excess_coverage_factor,
                ),
            ),
            (
                "Limit to pass for excess, kg",
                Cell::n("excess_limit_kg", Figure::Mass, b.excess_limit_kg),
            ),
        ]);
    } else {
        rows.push((
            "Limit to pass for short or excess, kg",
            Cell::n("limit_kg", Figure::Mass, b.limit_kg),
        ));
    }
    rows.push((
        "Use rate of the tank's use model, kg/day",
        Cell::n("usage_kg_per_day", Figure::MassRate, b.usage_kg_per_day),
    ));
    if let Some(e) = b.with_vehicle {
        rows.extend([
            (
                "Short with the vehicle's other fills: their shortfall, %",
                Cell::n(
                    "vehicle_shortfall_percent",
                    Figure::Percent,
                    e.vehicle_shortfall_percent,
                ),
            ),
            (
                "Other fills of the vehicle compared",
                Cell::Plain(Figure::Count, e.fills as f64),
            ),
            (
                "This fill's shortfall with them, %",
                Cell::n("shortfall_percent", Figure::Percent, e.shortfall_percent),
            ),
            (
                "Its standard uncertainty, %",
                Cell::n(
                    "shortfall_u_percent",
                    Figure::Percent,
                    e.shortfall_u_percent,
                ),
            ),
        ]);
    }
    if let Some(e) = b.with_mixture {
        rows.extend([
            (
                "Short on the balance of probabilities: the vehicle's short deliveries, % short",
                Cell::n(
                    "mixture_shortfall_percent",
                    Figure::Percent,
                    e.shortfall_percent,
                ),
            ),
            (
                "Their share of its deliveries",
                Cell::n("mixture_share", Figure::Ratio, e.share),
            ),
            (
                "Probability this fill was one of them",
                Cell::n("short_probability", Figure::Ratio, e.short_probability),
            ),
        ]);
    }
    doc.key_values(&rows);
    let residual_shown = b.residual_kg;
    doc.figure(
        &svg::chain(&svg::Chain {
            billed: b.billed_kg,
            gained: b.gained_kg,
            drawn: b.drawn_kg + b.lost_beyond_use_kg,
            residual: residual_shown,
            k_sigma: b.coverage_factor * b.sigma_kg,
            limit: b.limit_kg,
            excess_limit: b.excess_limit_kg,
            k: b.coverage_factor,
        }),
        "Top: billed against gained and drawn. Bottom: the residual (dot) with k standard uncertainties (whiskers); inside the shaded limit a fill cannot be short or excess.",
    );

    doc.heading(2, "Uncertainty budget");
    let mut items: Vec<(&str, &'static str, f64)> = vec![
        (
            "readings, shared inputs",
            "sigma_readings_shared_kg",
            b.sigma_readings_shared_kg,
        ),
        (
            "readings, independent inputs",
            "sigma_readings_independent_kg",
            b.sigma_readings_independent_kg,
        ),
        ("use drawn in the gap", "sigma_usage_kg", b.sigma_usage_kg),
        ("delivering meter", "sigma_meter_kg", b.sigma_meter_kg),
    ];
    if b.sigma_other_tickets_kg > 0.0 {
        items.push((
            "other tickets' meters",
            "sigma_other_tickets_kg",
            b.sigma_other_tickets_kg,
        ));
    }
    if b.sigma_gauge_scale_kg > 0.0 {
        items.push((
            "gauge scale",
            "sigma_gauge_scale_kg",
            b.sigma_gauge_scale_kg,
        ));
    }
    items.push(("combined", "sigma_kg", b.sigma_kg));
    let rows: Vec<Vec<Cell>> = items
        .iter()
        .map(|(label, field, v)| {
            vec![
                Cell::t(*label),
                Cell::n(field, Figure::Mass, *v),
                Cell::Plain(
                    Figure::Percent,
                    if b.sigma_kg > 0.0 {
                        100.0 * v * v / (b.sigma_kg * b.sigma_kg)
                    } else {
                        f64::NAN
                    },
                ),
            ]
        })
        .collect();
    doc.table(
        "",
        &["Source", "Standard uncertainty, kg", "Share of variance, %"],
        &rows,
    );
    let bars: Vec<(&str, f64)> = items.iter().map(|(l, _, v)| (*l, *v)).collect();
    doc.figure(
        &svg::budget(&bars),
        "Standard uncertainties, kg; the combined one is the root sum of squares.",
    );
    doc.para_class(
        "small",
        &format!(
            "Meter repeatability judged with: {} % (standard uncertainty).",
            Figure::Percent.text(b.meter_percent)
        ),
    );

    doc.heading(2, "The readings used");
    let mut sides = Vec::new();
    if let Some(r) = &b.before {
        sides.push(("before the fill", r, stored.0.as_ref()));
    }
    if let Some(r) = &b.after {
        sides.push(("after the fill", r, stored.1.as_ref()));
    }
    if sides.is_empty() {
        doc.para("No usable reading brackets this fill.");
    } else {
        readings_table(doc, &sides, t.barometer_pa);
        doc.para_class(
            "small",
            "The liquid temperature assumed follows the liquid's history: each fill mixes the delivered liquid with what was in the tank, and heat leak warms it between fills. Subcooled liquid is denser than liquid saturated at the tank pressure, so the same DP means more mass.",
        );
    }
    if let (Some(h), Some(a)) = (b.before_hours, b.after_hours) {
        doc.para_class(
            "small",
            &format!(
                "The reading before is {} h before the fill's start; the reading after {} h after its end.",
                Figure::Hours.text(h),
                Figure::Hours.text(a)
            ),
        );
    }
}

/// The fill report of `ticket` from a fleet audit of the ledger.
pub fn fill_report(
    repo: &dyn Repository,
    audit: &FleetAudit,
    opts: &AuditOptions,
    src: &Source,
    ticket: &str,
) -> Result<String, ReportError> {
    let b = balance_of(audit, ticket).ok_or_else(|| ReportError::NoTicket(ticket.into()))?;
    let t = repo.tank_by_name(&b.tank)?;
    let delivery = repo
        .deliveries(Some(t.id))?
        .into_iter()
        .find(|d| d.entry.ticket == ticket)
        .ok_or_else(|| ReportError::NoTicket(ticket.into()))?;
    let before = match &b.before {
        Some(r) => reading_at(repo, &t, r.time_ms)?,
        None => None,
    };
    let after = match &b.after {
        Some(r) => reading_at(repo, &t, r.time_ms)?,
        None => None,
    };

    let mut doc = Doc::new(&format!("Fill report: ticket {ticket}"));
    doc.heading(1, &format!("Fill report: ticket {ticket}"));
    doc.para_class(
        "sub",
        &format!(
            "Tank {} at {} ({}), filled {} to {} UTC by vehicle {} of {}.",
            t.spec.name,
            t.spec.site,
            t.spec.fluid.name(),
            when(b.start_ms),
            when(b.end_ms),
            b.vehicle,
            b.carrier
        ),
    );
    doc.key_values(&[
        ("Ticket", Cell::t(ticket)),
        (
            "Billed as entered",
            Cell::t(delivery.entry.quantity.to_string()),
        ),
        (
            "Supply pressure on the ticket",
            Cell::t(
                delivery
                    .entry
                    .supply_pressure
                    .map(|p| p.to_string())
                    .unwrap_or_else(|| "not given".into()),
            ),
        ),
    ]);
    balance_sections(&mut doc, b, &t, (&before, &after));

    let fills = vehicle_fills(audit, &b.vehicle, None, None);
    vehicle_section(&mut doc, audit, &b.vehicle, &fills, Some(ticket));

    doc.heading(2, "Method and assumptions");
    for m in METHOD {
        doc.para(m);
    }

    let mut records: Vec<Traced> = vec![
        traced(repo, format!("tank {}", t.spec.name), RecordRef::Tank(t.id))?,
        traced(
            repo,
            format!("site {}", t.spec.site),
            RecordRef::Site(t.site_id),
        )?,
        traced(
            repo,
            format!("delivery {ticket}"),
            RecordRef::Delivery(delivery.id),
        )?,
    ];
    if let Some(r) = &before {
        records.push(traced(repo, "reading before", RecordRef::Reading(r.id))?);
    }
    if let Some(r) = &after {
        records.push(traced(repo, "reading after", RecordRef::Reading(r.id))?);
    }
    data_section(&mut doc, src, Some(opts), &records);
    Ok(doc.finish(&src.written))
}
