//! The tank page: the vessel, every reading's contents with its thermal history, the Now tab.

use super::*;
/// The vessel drawing's inputs for a tank's settings (None when the engine refuses the shape).
pub fn vessel(spec: &TankSpec) -> Option<VesselView> {
    let g = evaluate::geometry(spec).ok()?;
    let strapping = matches!(g, tank::Geometry::Strapping(_));
    Some(VesselView {
        horizontal: spec.orientation == store::Orientation::Horizontal,
        strapping,
        diameter_m: spec.diameter_m,
        length_m: spec.length_m,
        head_depth_m: spec
            .heads
            .head(spec.crown_ratio, spec.knuckle_ratio)
            .depth_m(spec.diameter_m),
        inner_height_m: g.inner_height_m(),
        gross_volume_m3: g.gross_volume_m3(),
        heads: spec.heads.to_string(),
        level_m: None,
        safe_fill_level_m: None,
        reorder_level_m: spec.reorder_percent.and_then(|p| {
            g.level_from_volume(p / 100.0 * g.gross_volume_m3(), &SolverOptions::default())
                .ok()
        }),
    })
}

/// A tank's findings between fills: from, to (ms) and what.
fn spans_of(findings: &[audit::Finding], tank: &str) -> Vec<(i64, i64, String)> {
    findings
        .iter()
        .filter(|f| f.tank == tank)
        .map(|f| (f.from_ms, f.to_ms, super::finding_words(f.kind).to_owned()))
        .collect()
}

/// The whole tank page: every reading evaluated with the liquid's thermal history (the bridge's
/// audit of this tank), deliveries, Now figures and the trend. Open findings come from the fleet audit
/// when there is one (the same the fleet list shows), else from this tank's own audit.
pub fn tank_view(
    repo: &dyn Repository,
    id: i64,
    units: UnitSystem,
    quantity: TrendQuantity,
    fleet_audit: Option<&audit::FleetAudit>,
) -> Result<TankView, StoreError> {
    let started = std::time::Instant::now();
    let tank_id = store::TankId(id);
    let t = repo.tank(tank_id)?;
    let readings = repo.readings(tank_id, None)?;
    let deliveries = repo.deliveries(Some(tank_id))?;
    let engine = evaluate::engine_tank(&t.spec).ok();
    let history = evaluate::meters(repo).and_then(|m| {
        evaluate::audit_tank_records(
            &t,
            &readings,
            &deliveries,
            &m,
            &audit::AuditOptions::default(),
        )
    });
    let saturation: std::collections::HashMap<i64, f64> = history
        .as_ref()
        .map(|h| {
            h.readings
                .iter()
                .map(|r| (r.time_ms, r.liquid_saturation_pa))
                .collect()
        })
        .unwrap_or_default();
    let sat = |r: &store::Reading| saturation.get(&r.entry.time.ms).copied();
    // every reading's contents with its GUM budget: the page's main cost, shared across the cores
    let mut rows: Vec<ReadingRow> =
        parallel_map(&readings, |r| reading_row(&t, engine.as_ref(), r, sat(r)));
    let s = &t.spec;
    let mut vessel = vessel(s).unwrap_or_default();
    let mut now = now_view(&t, engine.as_ref(), &readings, &rows, &mut vessel, sat);
    match &history {
        Ok(h) => {
            if now
                .latest
                .as_ref()
                .is_some_and(|r| r.liquid_temperature_k.is_none())
            {
                now.liquid_state_note = "liquid state from its thermal history: fills mixed by enthalpy, heat leak between them (audit engine)".into();
            }
            if let Some(f) = h.forecast {
                now.usage_kg_per_day = Some(f.usage_kg_per_day);
                now.usage_source = "audit use model".into();
                now.days_to_reorder = Some(f.days_to_reorder);
            }
        }
        Err(e) => {
            now.liquid_state_note = format!(
                "liquid taken as saturated at the tank pressure (no thermal history: {})",
                crate::describe(e)
            );
        }
    }
    let latest_ms = readings.last().map_or(0, |r| r.entry.time.ms);
    let findings = match (fleet_audit, &history) {
        (Some(f), _) => evaluate::open_findings(&f.fills, &f.findings, &s.name, latest_ms),
        (None, Ok(h)) => evaluate::open_findings(&h.balances, &h.findings, &s.name, latest_ms),
        (None, Err(_)) => Vec::new(),
    };
    let balances: &[audit::Balance] = match (fleet_audit, &history) {
        (Some(f), _) => &f.fills,
        (None, Ok(h)) => &h.balances,
        (None, Err(_)) => &[],
    };
    let by_ticket: std::collections::HashMap<&str, &audit::Balance> = balances
        .iter()
        .filter(|b| b.tank == s.name)
        .map(|b| (b.ticket.as_str(), b))
        .collect();
    let verdict_of = |ticket: &str| {
        by_ticket
            .get(ticket)
            .map(|b| (super::verdict_word(b.verdict), b.residual_percent))
    };
    let all_findings: &[audit::Finding] = match (fleet_audit, &history) {
        (Some(f), _) => &f.findings,
        (None, Ok(h)) => &h.findings,
        (None, Err(_)) => &[],
    };
    let finding_spans = spans_of(all_findings, &s.name);
    let delivery_rows: Vec<DeliveryRow> = deliveries
        .iter()
        .rev()
        .map(|d| DeliveryRow {
            verdict: verdict_of(&d.entry.ticket),
            id: d.id.0,
            ticket: d.entry.ticket.clone(),
            start_ms: d.entry.start.ms,
            end_ms: d.entry.end.ms,
            quantity_text: d.entry.quantity.to_string(),
            carrier: d.entry.carrier.clone(),
            vehicle: d.entry.vehicle.clone(),
            supply_text: d
                .entry
                .supply_pressure
                .map(|p| p.to_string())
                .unwrap_or_default(),
        })
        .collect();
    rows.reverse();
    let attention = attention_of(
        &t,
        rows.first().map(|r| (r.time_ms, &r.contents)),
        &findings,
        fmt::now_ms(),
    );
    let mut view = TankView {
        id,
        zone: store::zone_of(t.time_zone.as_deref()),
        name: s.name.clone(),
        site: s.site.clone(),
        fluid: s.fluid.to_string(),
        oxygen: s.fluid == store::FluidId::Oxygen,
        summary: format!(
            "{} · {}{}",
            if s.strapping.len() >= 2 {
                format!("strapping table of {} points", s.strapping.len())
            } else {
                format!(
                    "{} cylinder, {} heads, D {} m × L {} m",
                    s.orientation, s.heads, s.diameter_m, s.length_m
                )
            },
            s.gauge_span
                .map(|sp| format!("gauge span {sp} {}", s.dp_unit.symbol()))
                .unwrap_or_else(|| format!("gauge in {}", s.dp_unit.symbol())),
            s.gauge_accuracy_percent
                .map(|a| format!(", accuracy {a} % of span"))
                .unwrap_or_default()
        ),
        dp_unit: s.dp_unit.symbol().to_owned(),
        barometer_pa: t.barometer_pa,
        vessel,
        attention,
        readings: rows,
        deliveries: delivery_rows,
        finding_spans,
        now,
        trend: TrendView::default(),
        build_ms: 0.0,
    };
    view.trend = trend(&view, units, quantity);
    view.build_ms = started.elapsed().as_secs_f64() * 1e3;
    Ok(view)
}

fn now_view(
    t: &store::TankRecord,
    engine: Option<&tank::Tank<&'static fluids::Fluid>>,
    readings: &[store::Reading],
    rows: &[ReadingRow],
    vessel: &mut VesselView,
    sat: impl Fn(&store::Reading) -> Option<f64>,
) -> NowView {
    let reorder = t.spec.reorder_percent.map(|p| p / 100.0);
    let latest_i = rows.iter().rposition(|r| r.contents.is_ok());
    let mut now = NowView {
        reorder,
        safe_fill: Err("no evaluated reading yet".into()),
        liquid_state_note: "liquid taken as saturated at the tank pressure (no thermal history)"
            .into(),
        ..Default::default()
    };
    let Some(li) = latest_i else {
        return now;
    };
    let (Some(latest), Some(reading)) = (rows.get(li), readings.get(li)) else {
        return now;
    };
    if latest.liquid_temperature_k.is_some() {
        now.liquid_state_note = "liquid at its measured temperature".into();
    }
    if let Ok(c) = &latest.contents {
        vessel.level_m = Some(c.level_m);
        // Use: the sum of falls between readings over the window (rises are fills), per day.
        let from = latest.time_ms - USAGE_WINDOW_MS;
        let window: Vec<(i64, f64)> = rows
            .iter()
            .filter(|r| r.time_ms >= from && r.time_ms <= latest.time_ms)
            .filter_map(|r| {
                r.contents
                    .as_ref()
                    .ok()
                    .map(|c| (r.time_ms, c.mass_kg.value))
            })
            .collect();
        if let (Some(first), Some(last)) = (window.first(), window.last()) {
            let days = (last.0 - first.0) as f64 / 86_400_000.0;
            if days >= 1.0 {
                let fall: f64 = window
                    .windows(2)
                    .filter_map(|w| match w {
                        [a, b] => Some((a.1 - b.1).max(0.0)),
                        _ => None,
                    })
                    .sum();
                let rate = fall / days;
                now.usage_kg_per_day = Some(rate);
                now.usage_days = days;
                now.usage_source = format!("falls between readings over {days:.0} d");
                if let Some(ro) = reorder {
                    let gross = vessel.gross_volume_m3;
                    let reorder_mass = c.liquid_density_kg_m3 * ro * gross
                        + c.vapour_density_kg_m3 * (1.0 - ro) * gross;
                    if rate > 0.0 {
                        now.days_to_reorder = Some((c.mass_kg.value - reorder_mass) / rate);
                    }
                }
            }
        }
    }
    now.safe_fill = match (&t.spec.relief_pressure, engine) {
        (None, _) => Err("no relief pressure set for this tank (Tank setup)".into()),
        (Some(_), None) => Err("the tank's settings are refused by the engine".into()),
        (Some(relief), Some(e)) => {
            let barometer = AbsolutePressure::from_pa(t.barometer_pa);
            let relief_pa = relief.si().to_absolute(barometer).pa();
            let (liquid, _) = liquid_for(t, &reading.entry, sat(reading));
            let c = evaluate::conditions(t, &reading.entry, liquid);
            match e.safe_fill_limit(
                &c,
                relief_pa,
                DEFAULT_VAPOUR_FRACTION,
                &ContentsOptions::default(),
            ) {
                Ok(sf) => {
                    vessel.safe_fill_level_m = Some(sf.max_level_m);
                    Ok(SafeFillView {
                        relief_gauge_pa: relief_pa - t.barometer_pa,
                        max_fill: sf.max_fill_fraction,
                        max_liquid_mass_kg: sf.max_liquid_mass_kg,
                        vapour_fraction: sf.vapour_fraction,
                    })
                }
                Err(e) => Err(e.to_string()),
            }
        }
    };
    now.latest = Some(latest.clone());
    now
}

/// Bring an open tank page up to a new fleet audit without evaluating its readings again: its open
/// findings and attention marks, each delivery's verdict, the findings' periods and the trend's marks.
pub fn apply_fleet_audit(
    tv: &mut TankView,
    repo: &dyn Repository,
    fa: &audit::FleetAudit,
) -> Result<(), StoreError> {
    let t = repo.tank(store::TankId(tv.id))?;
    // rows are newest first
    let latest_ms = tv.readings.first().map_or(0, |r| r.time_ms);
    let findings = evaluate::open_findings(&fa.fills, &fa.findings, &tv.name, latest_ms);
    tv.attention = attention_of(
        &t,
        tv.readings.first().map(|r| (r.time_ms, &r.contents)),
        &findings,
        fmt::now_ms(),
    );
    let by_ticket: std::collections::HashMap<&str, &audit::Balance> = fa
        .fills
        .iter()
        .filter(|b| b.tank == tv.name)
        .map(|b| (b.ticket.as_str(), b))
        .collect();
    for d in &mut tv.deliveries {
        d.verdict = by_ticket
            .get(d.ticket.as_str())
            .map(|b| (super::verdict_word(b.verdict), b.residual_percent));
    }
    tv.finding_spans = spans_of(&fa.findings, &tv.name);
    // only the marks change: the series (thousands of points and their hover texts) stay
    let mut marks = std::mem::take(&mut tv.trend);
    super::trend::trend_marks(tv, &mut marks);
    tv.trend = marks;
    Ok(())
}

/// `f` over `items` in order, the items split into one contiguous chunk per core.
fn parallel_map<T: Sync, R: Send>(items: &[T], f: impl Fn(&T) -> R + Sync) -> Vec<R> {
    let cores = std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get);
    if cores < 2 || items.len() < 256 {
        return items.iter().map(&f).collect();
    }
    let chunk = items.len().div_ceil(cores);
    std::thread::scope(|s| {
        let f = &f;
        let parts: Vec<_> = items
            .chunks(chunk)
            .map(|c| s.spawn(move || c.iter().map(f).collect::<Vec<R>>()))
            .collect();
        // a chunk that panicked: evaluate it here, where the panic is the caller's
        parts
            .into_iter()
            .zip(items.chunks(chunk))
            .flat_map(|(p, c)| p.join().unwrap_or_else(|_| c.iter().map(f).collect()))
            .collect()
    })
}
