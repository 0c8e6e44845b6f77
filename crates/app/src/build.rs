//! Builds view state from the store's records through the engines (`ledger`, `tank`). Called by the
//! action handler when an input changes, and by the background fleet summary; never by panels.

use crate::fmt::{self, CUBIC_FEET_PER_M3, UnitSystem};
use crate::view::*;
use store::{
    DeliveryFields, DeliveryInput, FieldError, ReadingFields, ReadingInput, Store, StoreError,
    TankFields, TankSpec,
};
use tank::{
    CAUTIONS, Contents, ContentsOptions, DEFAULT_VAPOR_FRACTION, LevelClamp, LiquidState,
    SolverOptions, UncertaintyInputs,
};
use units::{AbsolutePressure, Unit};

/// A reading older than this is stale (common practice for daily telemetry, no source).
pub const STALE_AFTER_MS: i64 = 3 * 86_400_000;
/// Use per day is taken over the readings of this many days before the latest.
pub const USAGE_WINDOW_MS: i64 = 30 * 86_400_000;
/// The navigator evaluates readings of this many days before now (all readings when none).
const FLEET_WINDOW_MS: i64 = 45 * 86_400_000;

/// Days the trend shows at first (the user can widen it or zoom out).
pub const DEFAULT_TREND_DAYS: u32 = 180;

/// What the fleet summary of one tank needs; read from the store, evaluated on a background thread.
#[derive(Debug, Clone)]
pub struct FleetInput {
    /// The stored tank.
    pub tank: store::Tank,
    /// Its recent readings, oldest first (the last is the latest).
    pub recent: Vec<store::Reading>,
    /// Its deliveries over the same period.
    pub deliveries: Vec<store::Delivery>,
}

/// Read what the fleet summary needs (SQL only; the engines run later).
pub fn fleet_inputs(store: &Store, now_ms: i64) -> Result<Vec<FleetInput>, StoreError> {
    store
        .tanks()?
        .into_iter()
        .map(|t| fleet_input_of(store, t, now_ms))
        .collect()
}

/// [`fleet_inputs`] of one tank.
pub fn fleet_input(store: &Store, id: i64, now_ms: i64) -> Result<FleetInput, StoreError> {
    fleet_input_of(store, store.tank(id)?, now_ms)
}

fn fleet_input_of(store: &Store, tank: store::Tank, now_ms: i64) -> Result<FleetInput, StoreError> {
    let mut recent = store.readings(tank.id, Some((now_ms - FLEET_WINDOW_MS, i64::MAX)))?;
    if recent.is_empty() {
        recent = store.readings(tank.id, None)?;
    }
    let from = recent.first().map_or(i64::MAX, |r| r.input.time.ms);
    let mut deliveries = store.deliveries(Some(tank.id))?;
    deliveries.retain(|d| d.input.end.ms >= from);
    Ok(FleetInput {
        tank,
        recent,
        deliveries,
    })
}

/// The liquid state of a reading: its measured temperature (set by `ledger::conditions`), else the
/// saturation pressure the thermal history gives, else saturated at the tank pressure; with the
/// standard uncertainty of that state for the GUM budget.
fn liquid_for(t: &store::Tank, r: &store::ReadingInput, sat_pa: Option<f64>) -> (LiquidState, f64) {
    if r.liquid_temperature_k.is_some() {
        return (LiquidState::SaturatedAtTankPressure, 0.0);
    }
    let p = ledger::pressure_abs_pa(t, r);
    match sat_pa {
        Some(ps) if ps < p * (1.0 - 1e-6) => (
            LiquidState::SaturatedAtPressure { pressure_pa: ps },
            crate::thermal::liquid_state_u_pa(p, ps),
        ),
        _ => (LiquidState::SaturatedAtTankPressure, 0.0),
    }
}

/// What one reading means with the given liquid state, with its GUM uncertainty when `with_u`.
fn contents_for(
    t: &store::Tank,
    engine: &tank::Tank<&'static fluids::Fluid>,
    r: &store::ReadingInput,
    sat_pa: Option<f64>,
    with_u: bool,
) -> Result<RowContents, String> {
    let (liquid, u) = liquid_for(t, r, sat_pa);
    let c = ledger::conditions(t, r, liquid);
    let opts = ContentsOptions::default();
    if with_u {
        let inputs = UncertaintyInputs {
            liquid_state_u: u,
            ..UncertaintyInputs::default()
        };
        engine
            .contents_with_uncertainty(r.dp.si_value(), &c, &inputs, &opts)
            .map(|(c, b)| row_contents(&c, Some(&b.combined)))
            .map_err(|e| e.to_string())
    } else {
        engine
            .contents_from_reading(r.dp.si_value(), &c, &opts)
            .map(|c| row_contents(&c, None))
            .map_err(|e| e.to_string())
    }
}

/// What needs attention given the latest reading's time and contents and the audit's open findings.
fn attention_of(
    t: &store::Tank,
    latest: Option<(i64, &Result<RowContents, String>)>,
    findings: &[String],
    now_ms: i64,
) -> Vec<Attention> {
    let reorder = t.spec.reorder_percent.map(|p| p / 100.0);
    let mut attention = Vec::new();
    match latest {
        Some((ms, contents)) => {
            if now_ms - ms > STALE_AFTER_MS {
                attention.push(Attention::StaleReading);
            }
            match contents {
                Ok(c) if reorder.is_some_and(|ro| c.fill.value < ro) => {
                    attention.push(Attention::BelowReorder);
                }
                Ok(_) => {}
                Err(e) => attention.push(Attention::ReadingRefused(e.clone())),
            }
        }
        None => attention.push(Attention::StaleReading),
    }
    attention.extend(findings.iter().cloned().map(Attention::OpenFinding));
    attention
}

/// The navigator line of one tank: its latest contents (with the liquid's thermal history when the
/// audit can follow it) and what needs attention.
pub fn fleet_tank(input: &FleetInput, now_ms: i64) -> FleetTank {
    let t = &input.tank;
    let history = if input.recent.len() >= 2 {
        crate::thermal::tank_history(t, &input.recent, &input.deliveries).ok()
    } else {
        None
    };
    let latest = input.recent.last();
    let contents = latest.map(|r| match ledger::engine_tank(&t.spec) {
        Ok(e) => {
            let sat = history
                .as_ref()
                .and_then(|h| h.liquid_saturation_pa.get(&r.input.time.ms).copied());
            contents_for(t, &e, &r.input, sat, false)
        }
        Err(e) => Err(e.to_string()),
    });
    let findings = history.map(|h| h.open_findings).unwrap_or_default();
    let attention = attention_of(
        t,
        latest.map(|r| r.input.time.ms).zip(contents.as_ref()),
        &findings,
        now_ms,
    );
    FleetTank {
        id: t.id,
        name: t.spec.name.clone(),
        fluid: t.spec.fluid.to_string(),
        fill: contents.and_then(|c| c.ok()).map(|c| c.fill.value),
        reorder: t.spec.reorder_percent.map(|p| p / 100.0),
        last_reading_ms: latest.map(|r| r.input.time.ms),
        attention,
    }
}

/// Group summarised tanks by site (sites in the store's order, tanks by name).
pub fn fleet_sites(
    store: &Store,
    tanks: Vec<(i64, FleetTank)>,
) -> Result<Vec<FleetSite>, StoreError> {
    let mut sites: Vec<FleetSite> = store
        .sites()?
        .into_iter()
        .map(|s| FleetSite {
            id: s.id,
            name: s.name,
            tanks: Vec::new(),
        })
        .collect();
    for (site_id, t) in tanks {
        if let Some(s) = sites.iter_mut().find(|s| s.id == site_id) {
            s.tanks.push(t);
        }
    }
    for s in &mut sites {
        s.tanks.sort_by(|a, b| a.name.cmp(&b.name));
    }
    Ok(sites)
}

/// Recompute the navigator's visible lines from its sites, filter and closed sites.
pub fn fleet_rows(fleet: &mut FleetView) {
    let needle = fleet.filter.trim().to_lowercase();
    let mut rows = Vec::new();
    let (mut count, mut attention) = (0, 0);
    for (si, site) in fleet.sites.iter().enumerate() {
        count += site.tanks.len();
        attention += site
            .tanks
            .iter()
            .filter(|t| !t.attention.is_empty())
            .count();
        let site_hit = needle.is_empty() || site.name.to_lowercase().contains(&needle);
        let hits: Vec<usize> = site
            .tanks
            .iter()
            .enumerate()
            .filter(|(_, t)| {
                site_hit
                    || t.name.to_lowercase().contains(&needle)
                    || t.fluid.to_lowercase().contains(&needle)
            })
            .map(|(i, _)| i)
            .collect();
        if hits.is_empty() && !site_hit {
            continue;
        }
        // A search opens every site it matches in.
        let open = !needle.is_empty() || !fleet.closed.contains(&site.id);
        rows.push(FleetRow::Site(si, open));
        if open {
            rows.extend(hits.into_iter().map(|ti| FleetRow::Tank(si, ti)));
        }
    }
    fleet.rows = rows;
    fleet.counts = (count, attention);
}

fn figure(v: f64, u: f64) -> Figure {
    Figure {
        value: v,
        u: (u > 0.0 && u.is_finite()).then_some(u),
    }
}

fn row_contents(c: &Contents, u: Option<&tank::OutputSet>) -> RowContents {
    let u = u.copied().unwrap_or_default();
    let scf_per_nm3 = if c.gas_nm3 > 0.0 {
        c.gas_scf / c.gas_nm3
    } else {
        CUBIC_FEET_PER_M3
    };
    RowContents {
        mass_kg: figure(c.total_mass_kg, u.total_mass_kg),
        fill: figure(c.fill_fraction, u.fill_fraction),
        volume_m3: figure(c.liquid_volume_m3, u.liquid_volume_m3),
        gas_nm3: figure(c.gas_nm3, u.gas_nm3),
        gas_scf: figure(c.gas_scf, u.gas_nm3 * scf_per_nm3),
        level_m: c.liquid_height_m,
        liquid_temperature_k: c.liquid_temperature_k,
        saturation_temperature_k: c.saturation_temperature_k,
        liquid_density_kg_m3: c.liquid_density_kg_m3,
        vapor_density_kg_m3: c.vapor_density_kg_m3,
        clamped: c.level_clamp != LevelClamp::None,
    }
}

/// The vessel drawing's inputs for a tank's settings (None when the engine refuses the shape).
pub fn vessel(spec: &TankSpec) -> Option<VesselView> {
    let g = ledger::geometry(spec).ok()?;
    let strapping = matches!(g, tank::Geometry::Strapping(_));
    Some(VesselView {
        horizontal: spec.orientation == store::Orientation::Horizontal,
        strapping,
        diameter_m: spec.diameter_m,
        length_m: spec.length_m,
        head_depth_m: ledger::head(spec).depth_m(spec.diameter_m),
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

/// A reading's row: what was entered and what it means (with its GUM uncertainty).
fn reading_row(
    t: &store::Tank,
    engine: Option<&tank::Tank<&'static fluids::Fluid>>,
    r: &store::Reading,
    sat_pa: Option<f64>,
) -> ReadingRow {
    let contents = match engine {
        Some(e) => contents_for(t, e, &r.input, sat_pa, true),
        None => Err("the tank's settings are refused by the engine".into()),
    };
    let barometer = AbsolutePressure::from_pa(t.barometer_pa);
    ReadingRow {
        id: r.id,
        time_ms: r.input.time.ms,
        dp_text: r.input.dp.to_string(),
        pressure_text: r.input.pressure.to_string(),
        pressure_gauge_pa: r.input.pressure.si().to_absolute(barometer).pa() - t.barometer_pa,
        liquid_temperature_k: r.input.liquid_temperature_k,
        note: r.input.note.clone().unwrap_or_default(),
        contents,
    }
}

/// The whole tank page: every reading evaluated, deliveries, Now figures and the trend.
pub fn tank_view(
    store: &Store,
    id: i64,
    units: UnitSystem,
    quantity: TrendQuantity,
) -> Result<TankView, StoreError> {
    let started = std::time::Instant::now();
    let t = store.tank(id)?;
    let readings = store.readings(id, None)?;
    let deliveries = store.deliveries(Some(id))?;
    let engine = ledger::engine_tank(&t.spec).ok();
    let history = crate::thermal::tank_history(&t, &readings, &deliveries);
    let sat = |r: &store::Reading| {
        history
            .as_ref()
            .ok()
            .and_then(|h| h.liquid_saturation_pa.get(&r.input.time.ms).copied())
    };
    let mut rows: Vec<ReadingRow> = readings
        .iter()
        .map(|r| reading_row(&t, engine.as_ref(), r, sat(r)))
        .collect();
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
            if h.usage_kg_per_day.is_some() {
                now.usage_kg_per_day = h.usage_kg_per_day;
                now.usage_source = "audit use model".into();
                now.days_to_reorder = h.days_to_reorder;
            }
        }
        Err(e) => {
            now.liquid_state_note =
                format!("liquid taken as saturated at the tank pressure (no thermal history: {e})");
        }
    }
    let findings = history.map(|h| h.open_findings).unwrap_or_default();
    let delivery_rows: Vec<DeliveryRow> = deliveries
        .iter()
        .rev()
        .map(|d| DeliveryRow {
            id: d.id,
            ticket: d.input.ticket.clone(),
            start_ms: d.input.start.ms,
            end_ms: d.input.end.ms,
            quantity_text: d.input.quantity.to_string(),
            carrier: d.input.carrier.clone(),
            vehicle: d.input.vehicle.clone(),
            supply_text: d
                .input
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
        name: s.name.clone(),
        site: s.site.clone(),
        fluid: s.fluid.to_string(),
        oxygen: s.fluid == store::Fluid::Oxygen,
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
        now,
        trend: TrendView::default(),
        history: Vec::new(),
        build_ms: 0.0,
    };
    view.trend = trend(&view, units, quantity);
    view.build_ms = started.elapsed().as_secs_f64() * 1e3;
    Ok(view)
}

fn now_view(
    t: &store::Tank,
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
                        + c.vapor_density_kg_m3 * (1.0 - ro) * gross;
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
            let (liquid, _) = liquid_for(t, &reading.input, sat(reading));
            let c = ledger::conditions(t, &reading.input, liquid);
            match e.safe_fill_limit(
                &c,
                relief_pa,
                DEFAULT_VAPOR_FRACTION,
                &ContentsOptions::default(),
            ) {
                Ok(sf) => {
                    vessel.safe_fill_level_m = Some(sf.max_level_m);
                    Ok(SafeFillView {
                        relief_gauge_pa: relief_pa - t.barometer_pa,
                        max_fill: sf.max_fill_fraction,
                        max_liquid_mass_kg: sf.max_liquid_mass_kg,
                        vapor_fraction: sf.vapor_fraction,
                    })
                }
                Err(e) => Err(e.to_string()),
            }
        }
    };
    now.latest = Some(latest.clone());
    now
}

/// The value of `q` in display units for one reading's contents.
pub fn quantity_of(c: &RowContents, q: TrendQuantity, units: UnitSystem) -> Figure {
    let conv = |f: Figure, k: &dyn Fn(f64) -> f64| Figure {
        value: k(f.value),
        u: f.u.map(|u| k(u).abs()),
    };
    match q {
        TrendQuantity::TotalMass => conv(c.mass_kg, &|v| units.mass(v)),
        TrendQuantity::FillFraction => conv(c.fill, &|v| v * 100.0),
        TrendQuantity::LiquidVolume => conv(c.volume_m3, &|v| units.volume(v)),
        TrendQuantity::GasEquivalent => match units {
            UnitSystem::Si => c.gas_nm3,
            UnitSystem::Us => c.gas_scf,
        },
    }
}

/// Unit of `q` in display units.
pub fn quantity_unit(q: TrendQuantity, units: UnitSystem) -> &'static str {
    match q {
        TrendQuantity::TotalMass => units.mass_unit(),
        TrendQuantity::FillFraction => "%",
        TrendQuantity::LiquidVolume => units.volume_unit(),
        TrendQuantity::GasEquivalent => units.gas_unit(),
    }
}

/// The trend's series in display units (cheap: no engine calls; rebuilt on a unit or quantity change).
pub fn trend(view: &TankView, units: UnitSystem, q: TrendQuantity) -> TrendView {
    let unit = quantity_unit(q, units);
    let day = |ms: i64| ms as f64 / 86_400_000.0;
    let n = view.readings.len();
    let mut tv = TrendView {
        quantity: q,
        period_days: Some(DEFAULT_TREND_DAYS),
        y_label: format!("{} ({unit})", q.title()),
        pressure_label: format!("Tank pressure ({})", units.pressure_unit()),
        points: Vec::with_capacity(n),
        band_x: Vec::with_capacity(n),
        band_lo: Vec::with_capacity(n),
        band_hi: Vec::with_capacity(n),
        pressure: Vec::with_capacity(n),
        hover: Vec::with_capacity(n),
        ..Default::default()
    };
    for r in view.readings.iter().rev() {
        let x = day(r.time_ms);
        tv.pressure.push([x, units.pressure(r.pressure_gauge_pa)]);
        let Ok(c) = &r.contents else { continue };
        let f = quantity_of(c, q, units);
        tv.points.push([x, f.value]);
        let u = f.u.unwrap_or(0.0);
        tv.band_x.push(x);
        tv.band_lo.push(f.value - u);
        tv.band_hi.push(f.value + u);
        tv.hover.push(format!(
            "{} UTC\nDP {} · {}\n{}: {} {unit}",
            fmt::date_time(r.time_ms),
            r.dp_text,
            r.pressure_text,
            q.title(),
            fmt::with_u(f.value, f.u)
        ));
    }
    tv.deliveries = view
        .deliveries
        .iter()
        .map(|dl| (day(dl.start_ms), dl.ticket.clone()))
        .collect();
    // Levels as the plotted quantity, with the latest densities.
    let latest = view
        .now
        .latest
        .as_ref()
        .and_then(|r| r.contents.as_ref().ok());
    let gross = view.vessel.gross_volume_m3;
    let as_q = |fraction: f64| -> Option<f64> {
        let c = latest?;
        let vol = fraction * gross;
        let mass = c.liquid_density_kg_m3 * vol + c.vapor_density_kg_m3 * (gross - vol);
        Some(match q {
            TrendQuantity::TotalMass => units.mass(mass),
            TrendQuantity::FillFraction => fraction * 100.0,
            TrendQuantity::LiquidVolume => units.volume(vol),
            TrendQuantity::GasEquivalent => {
                let per_kg = fmt::gas(units, c.gas_nm3.value, c.gas_scf.value) / c.mass_kg.value;
                mass * per_kg
            }
        })
    };
    tv.reorder_y = view.now.reorder.and_then(as_q);
    tv.safe_fill_y = view
        .now
        .safe_fill
        .as_ref()
        .ok()
        .and_then(|s| as_q(s.max_fill));
    tv
}

/// Split `85 inH2O` into `85` and `inH2O` (the unit text is empty when none was typed).
pub fn split_value_unit(text: &str) -> (&str, &str) {
    let t = text.trim();
    let b = t.as_bytes();
    let mut i = 0;
    if matches!(b.first(), Some(b'+' | b'-')) {
        i = 1;
    }
    while b.get(i).is_some_and(|c| c.is_ascii_digit() || *c == b'.') {
        i += 1;
    }
    if matches!(b.get(i), Some(b'e' | b'E')) {
        let mut j = i + 1;
        if matches!(b.get(j), Some(b'+' | b'-')) {
            j += 1;
        }
        if b.get(j).is_some_and(u8::is_ascii_digit) {
            while b.get(j).is_some_and(u8::is_ascii_digit) {
                j += 1;
            }
            i = j;
        }
    }
    let (n, u) = t.split_at(i);
    (n.trim(), u.trim())
}

fn messages(errors: Vec<FieldError>) -> Vec<FieldMessage> {
    errors
        .into_iter()
        .map(|e| FieldMessage {
            field: e.field,
            reason: e.reason,
        })
        .collect()
}

/// The liquid temperature field in K text (`83 K`, `-190 C`, `-310 F`; a bare number is K).
fn liquid_k_text(text: &str) -> Result<String, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(String::new());
    }
    let (n, u) = split_value_unit(t);
    if u.is_empty() {
        return Ok(n.to_owned());
    }
    units::parse_temperature(t)
        .map(|e| e.si_value().to_string())
        .map_err(|e| e.to_string())
}

/// Check the reading form against its tank; on success the checked reading and the preview of what
/// it implies.
pub fn check_reading(
    form: &ReadingForm,
    t: &store::Tank,
    units: UnitSystem,
) -> (FormCheck, Option<ReadingInput>) {
    let (dp, dp_u) = split_value_unit(&form.dp);
    let (p, p_u) = split_value_unit(&form.pressure);
    let dp_unit = if dp_u.is_empty() {
        form.dp_unit.as_str()
    } else {
        dp_u
    };
    let p_unit = if p_u.is_empty() {
        form.pressure_unit.as_str()
    } else {
        p_u
    };
    let mut extra = Vec::new();
    let liquid = match liquid_k_text(&form.liquid_temperature) {
        Ok(k) => k,
        Err(e) => {
            extra.push(FieldMessage {
                field: "liquid_temperature_k".into(),
                reason: e,
            });
            String::new()
        }
    };
    if dp.is_empty() && !form.dp.trim().is_empty() {
        extra.push(FieldMessage {
            field: "dp".into(),
            reason: format!("'{}' is not a number", form.dp.trim()),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this reading is changed (kept in its history)".into(),
        });
    }
    let fields = ReadingFields {
        time: &form.time,
        dp,
        dp_unit,
        pressure: p,
        pressure_unit: p_unit,
        liquid_temperature_k: &liquid,
        note: &form.note,
    };
    let mut check = FormCheck::default();
    let input = match fields.check(t.barometer_pa) {
        Ok(input) => match ledger::check_reading_against_tank(t, &input) {
            Ok(()) => Some(input),
            Err(e) => {
                extra.push(FieldMessage {
                    field: e.field,
                    reason: e.reason,
                });
                None
            }
        },
        Err(errs) => {
            let mut m = messages(errs);
            // One message per field: the typed-text check above says it best.
            m.retain(|e| !extra.iter().any(|x| x.field == e.field));
            extra.extend(m);
            None
        }
    };
    let input = input.and_then(|i| match ledger::contents_of(t, &i) {
        Ok(c) => {
            let rc = row_contents(&c, None);
            check.preview = vec![
                format!(
                    "Total mass {} {}",
                    fmt::num(units.mass(c.total_mass_kg), 0),
                    units.mass_unit()
                ),
                format!(
                    "Fill {} % · liquid {} {}",
                    fmt::num(c.fill_fraction * 100.0, 1),
                    fmt::num(units.volume(c.liquid_volume_m3), 2),
                    units.volume_unit()
                ),
                format!(
                    "Gas equivalent {} {}",
                    fmt::num(fmt::gas(units, c.gas_nm3, c.gas_scf), 0),
                    units.gas_unit()
                ),
            ];
            if rc.clamped {
                check
                    .preview
                    .push("level at the empty or full end (within the gauge tolerance)".into());
            }
            Some(i)
        }
        Err(e) => {
            extra.push(FieldMessage {
                field: "dp".into(),
                reason: e.to_string(),
            });
            None
        }
    });
    check.errors = extra;
    check.ok = input.is_some() && check.errors.is_empty();
    let ok = check.ok;
    (check, input.filter(|_| ok))
}

/// Check the delivery form.
pub fn check_delivery(form: &DeliveryForm, t: &store::Tank) -> (FormCheck, Option<DeliveryInput>) {
    let (q, q_u) = split_value_unit(&form.quantity);
    let (sp, sp_u) = split_value_unit(&form.supply_pressure);
    let q_unit = if q_u.is_empty() {
        form.quantity_unit.as_str()
    } else {
        q_u
    };
    let sp_unit = if sp.is_empty() {
        ""
    } else if sp_u.is_empty() {
        form.supply_pressure_unit.as_str()
    } else {
        sp_u
    };
    let mut extra = Vec::new();
    if q.is_empty() && !form.quantity.trim().is_empty() {
        extra.push(FieldMessage {
            field: "quantity".into(),
            reason: format!("'{}' is not a number", form.quantity.trim()),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this delivery is changed (kept in its history)".into(),
        });
    }
    let fields = DeliveryFields {
        ticket: &form.ticket,
        start: &form.start,
        end: &form.end,
        quantity: q,
        quantity_unit: q_unit,
        carrier: &form.carrier,
        vehicle: &form.vehicle,
        supply_pressure: sp,
        supply_pressure_unit: sp_unit,
    };
    let input = match fields.check(t.barometer_pa) {
        Ok(i) => Some(i),
        Err(errs) => {
            let mut m = messages(errs);
            m.retain(|e| !extra.iter().any(|x| x.field == e.field));
            extra.extend(m);
            None
        }
    };
    let mut check = FormCheck {
        errors: extra,
        ..Default::default()
    };
    if let Some(i) = &input {
        check.preview = vec![format!(
            "{} over {} min",
            i.quantity,
            (i.end.ms - i.start.ms) / 60_000
        )];
    }
    check.ok = input.is_some() && check.errors.is_empty();
    let ok = check.ok;
    (check, input.filter(|_| ok))
}

/// Site settings typed in the setup form.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SiteSettings {
    /// Elevation, m.
    pub elevation_m: Option<f64>,
    /// Barometer, kPa absolute.
    pub barometer_kpa: Option<f64>,
}

/// Check the setup form; the preview draws the vessel and the full-tank DP whenever the shape checks.
pub fn check_setup(
    form: &SetupForm,
    units: UnitSystem,
) -> (FormCheck, SetupPreview, Option<(TankSpec, SiteSettings)>) {
    let mut extra = Vec::new();
    let opt = |field: &str, text: &str, extra: &mut Vec<FieldMessage>| -> Option<f64> {
        let t = text.trim();
        if t.is_empty() {
            return None;
        }
        match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            _ => {
                extra.push(FieldMessage {
                    field: field.into(),
                    reason: format!("'{t}' is not a number"),
                });
                None
            }
        }
    };
    let site = SiteSettings {
        elevation_m: opt("elevation_m", &form.elevation_m, &mut extra),
        barometer_kpa: opt("barometer_kpa", &form.barometer_kpa, &mut extra),
    };
    if site
        .barometer_kpa
        .is_some_and(|b| !(50.0..=110.0).contains(&b))
    {
        extra.push(FieldMessage {
            field: "barometer_kpa".into(),
            reason: "a barometer is between 50 and 110 kPa".into(),
        });
    }
    if form.editing.is_some() && form.reason.trim().is_empty() {
        extra.push(FieldMessage {
            field: "reason".into(),
            reason: "say why this tank is changed (kept in its history)".into(),
        });
    }
    let (rp, rp_u) = split_value_unit(&form.relief_pressure);
    let fields = TankFields {
        site: &form.site,
        tank: &form.tank,
        fluid: &form.fluid,
        orientation: &form.orientation,
        diameter_m: &form.diameter_m,
        length_m: &form.length_m,
        heads: &form.heads,
        line_temperature_c: &form.line_temperature_c,
        crown_ratio: "",
        knuckle_ratio: "",
        dp_unit: &form.dp_unit,
        gauge_span: &form.gauge_span,
        gauge_accuracy_percent: &form.gauge_accuracy_percent,
        relief_pressure: rp,
        relief_pressure_unit: if rp_u.is_empty() {
            &form.relief_pressure_unit
        } else {
            rp_u
        },
        reorder_percent: &form.reorder_percent,
        ner_percent_per_day: &form.ner_percent_per_day,
        strapping: "",
    };
    let mut preview = SetupPreview::default();
    let spec = match fields.check() {
        Ok(s) => Some(s),
        Err(errs) => {
            extra.extend(messages(errs));
            None
        }
    };
    // The drawing follows the shape even while other fields are incomplete.
    let shape = TankFields {
        site: "preview",
        tank: "preview",
        fluid: if form.fluid.trim().is_empty() {
            "nitrogen"
        } else {
            &form.fluid
        },
        orientation: &form.orientation,
        diameter_m: &form.diameter_m,
        length_m: &form.length_m,
        heads: &form.heads,
        line_temperature_c: "15",
        reorder_percent: &form.reorder_percent,
        ..Default::default()
    }
    .check();
    if let Ok(s) = &shape {
        preview.vessel = vessel(s);
    }
    if let Some(s) = &spec {
        match full_dp_lines(s, units) {
            Ok((lines, warn)) => {
                preview.full_dp = lines;
                preview.span_warning = warn;
            }
            Err(e) => extra.push(FieldMessage {
                field: "diameter_m".into(),
                reason: e,
            }),
        }
    }
    let check = FormCheck {
        ok: spec.is_some() && extra.is_empty(),
        errors: extra,
        preview: Vec::new(),
    };
    let out = spec.filter(|_| check.ok).map(|s| (s, site));
    (check, preview, out)
}

/// Full-tank DP of a spec at 1 atm saturation (coldest usual liquid) and at the relief pressure,
/// in the gauge's unit, and a warning when the span is too small.
fn full_dp_lines(s: &TankSpec, units: UnitSystem) -> Result<(Vec<String>, Option<String>), String> {
    let e = ledger::engine_tank(s).map_err(|e| e.to_string())?;
    let opts = ContentsOptions::default();
    let u = s.dp_unit;
    let mut lines = Vec::new();
    let mut max_dp: f64 = 0.0;
    let mut cases = vec![("saturated at 1 atm".to_owned(), fmt::ATMOSPHERE_PA * 1.001)];
    if let Some(r) = &s.relief_pressure {
        let p = r
            .si()
            .to_absolute(AbsolutePressure::STANDARD_ATMOSPHERE)
            .pa();
        cases.push((
            format!(
                "saturated at relief, {} {}",
                fmt::num(units.pressure(p - fmt::ATMOSPHERE_PA), 1),
                units.pressure_unit()
            ),
            p,
        ));
    }
    for (what, p) in cases {
        let c = tank::Conditions::saturated(p).with_line_temperature_k(s.line_temperature_k());
        match e.full_tank_dp(&c, &opts) {
            Ok(f) => {
                max_dp = max_dp.max(f.reading_pa);
                lines.push(format!(
                    "Full tank, {what}: {} {}",
                    fmt::num(u.value_from_si(f.reading_pa), 1),
                    u.symbol()
                ));
            }
            Err(err) => lines.push(format!("Full tank, {what}: {err}")),
        }
    }
    let warn = s.gauge_span_pa().and_then(|span| {
        (span < max_dp).then(|| {
            format!(
                "The gauge span ({} {}) is below the full-tank DP: a full tank would read off scale.",
                fmt::num(u.value_from_si(span), 1),
                u.symbol()
            )
        })
    });
    Ok((lines, warn))
}

/// The setup form filled from a stored tank (and its site).
pub fn setup_form_for(store: &Store, id: i64) -> Result<SetupForm, StoreError> {
    let t = store.tank(id)?;
    let site = store.sites()?.into_iter().find(|s| s.id == t.site_id);
    let s = &t.spec;
    let o = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    Ok(SetupForm {
        editing: Some(id),
        site: s.site.clone(),
        elevation_m: o(site.as_ref().and_then(|s| s.elevation_m)),
        barometer_kpa: o(site.as_ref().and_then(|s| s.barometer_kpa)),
        tank: s.name.clone(),
        fluid: s.fluid.to_string(),
        orientation: s.orientation.to_string(),
        diameter_m: s.diameter_m.to_string(),
        length_m: s.length_m.to_string(),
        heads: s.heads.to_string(),
        line_temperature_c: s.line_temperature_c.to_string(),
        dp_unit: s.dp_unit.symbol().to_owned(),
        gauge_span: o(s.gauge_span),
        gauge_accuracy_percent: o(s.gauge_accuracy_percent),
        relief_pressure: s
            .relief_pressure
            .map(|r| r.value.to_string())
            .unwrap_or_default(),
        relief_pressure_unit: s
            .relief_pressure
            .map(|r| r.unit.symbol().to_owned())
            .unwrap_or_else(|| "barg".into()),
        reorder_percent: o(s.reorder_percent),
        ner_percent_per_day: o(s.ner_percent_per_day),
        reason: String::new(),
    })
}

/// A blank setup form with sensible starting values for a new tank.
pub fn new_setup_form(site: &str) -> SetupForm {
    SetupForm {
        site: site.to_owned(),
        fluid: "nitrogen".into(),
        orientation: "vertical".into(),
        diameter_m: "2.0".into(),
        length_m: "5.0".into(),
        heads: "torispherical".into(),
        line_temperature_c: "15".into(),
        dp_unit: "inH2O".into(),
        relief_pressure_unit: "barg".into(),
        ..Default::default()
    }
}

/// The reading form filled from a stored reading, for editing.
pub fn reading_form_for(store: &Store, id: i64) -> Result<ReadingForm, StoreError> {
    let r = store.reading(id)?;
    Ok(ReadingForm {
        editing: Some(id),
        time: r.input.time.text.clone(),
        dp: r.input.dp.value.to_string(),
        dp_unit: r.input.dp.unit.symbol().to_owned(),
        pressure: r.input.pressure.value.to_string(),
        pressure_unit: r.input.pressure.unit.symbol().to_owned(),
        liquid_temperature: r
            .input
            .liquid_temperature_k
            .map(|k| format!("{k} K"))
            .unwrap_or_default(),
        note: r.input.note.unwrap_or_default(),
        reason: String::new(),
    })
}

/// A blank reading form for a tank: time now, the gauge's unit, the display pressure unit.
pub fn new_reading_form(t: Option<&store::Tank>, units: UnitSystem) -> ReadingForm {
    ReadingForm {
        time: fmt::rfc3339(fmt::now_ms()),
        dp_unit: t
            .map(|t| t.spec.dp_unit.symbol().to_owned())
            .unwrap_or_else(|| "inH2O".into()),
        pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}

/// The delivery form filled from a stored delivery.
pub fn delivery_form_for(store: &Store, id: i64) -> Result<DeliveryForm, StoreError> {
    let d = store.delivery(id)?.input;
    Ok(DeliveryForm {
        editing: Some(id),
        ticket: d.ticket,
        start: d.start.text,
        end: d.end.text,
        quantity: d.quantity.value.to_string(),
        quantity_unit: d.quantity.unit.symbol().to_owned(),
        carrier: d.carrier,
        vehicle: d.vehicle,
        supply_pressure: d
            .supply_pressure
            .map(|p| p.value.to_string())
            .unwrap_or_default(),
        supply_pressure_unit: d
            .supply_pressure
            .map(|p| p.unit.symbol().to_owned())
            .unwrap_or_else(|| "barg".into()),
        reason: String::new(),
    })
}

/// A blank delivery form: start and end one hour ago and now.
pub fn new_delivery_form(units: UnitSystem) -> DeliveryForm {
    let now = fmt::now_ms();
    DeliveryForm {
        start: fmt::rfc3339(now - 3_600_000),
        end: fmt::rfc3339(now),
        quantity_unit: units.default_quantity_entry_unit().to_owned(),
        supply_pressure_unit: units.default_pressure_entry_unit().to_owned(),
        ..Default::default()
    }
}

/// The revision history of a reading or delivery, oldest first, with the earlier values summarised.
pub fn history(store: &Store, table: &str, id: i64) -> Result<Vec<HistoryRow>, StoreError> {
    Ok(store
        .revisions(table, id)?
        .into_iter()
        .map(|r| HistoryRow {
            old: summarise_old(&r.old_row),
            when: store::Stamp::parse(&r.revised_at)
                .map(|s| format!("{} UTC", fmt::date_time(s.ms)))
                .unwrap_or(r.revised_at),
            action: r.action,
            reason: r.reason,
        })
        .collect())
}

fn summarise_old(json: &str) -> String {
    let Ok(v) = serde_json::from_str::<serde_json::Value>(json) else {
        return json.to_owned();
    };
    let entered = |key: &str| -> Option<String> {
        let e = v.get(key)?;
        let value = e.get("value")?.as_f64()?;
        let unit = e.get("unit")?;
        let sym = serde_json::from_value::<units::DpUnit>(unit.clone())
            .map(|u| u.symbol().to_owned())
            .or_else(|_| {
                serde_json::from_value::<units::TankPressureUnit>(unit.clone())
                    .map(|u| u.symbol().to_owned())
            })
            .or_else(|_| {
                serde_json::from_value::<units::QuantityUnit>(unit.clone())
                    .map(|u| u.symbol().to_owned())
            })
            .unwrap_or_default();
        Some(format!("{value} {sym}"))
    };
    let text = |key: &str| -> Option<String> {
        let e = v.get(key)?;
        e.get("text")
            .and_then(|t| t.as_str())
            .or_else(|| e.as_str())
            .map(str::to_owned)
    };
    let mut parts = Vec::new();
    for (label, key) in [("time", "time"), ("ticket", "ticket"), ("start", "start")] {
        if let Some(t) = text(key) {
            parts.push(format!("{label} {t}"));
        }
    }
    for (label, key) in [
        ("DP", "dp"),
        ("pressure", "pressure"),
        ("quantity", "quantity"),
    ] {
        if let Some(t) = entered(key) {
            parts.push(format!("{label} {t}"));
        }
    }
    if let Some(k) = v.get("liquid_temperature_k").and_then(|k| k.as_f64()) {
        parts.push(format!("liquid {k} K"));
    }
    if let Some(n) = v.get("note").and_then(|n| n.as_str()) {
        parts.push(format!("note \"{n}\""));
    }
    parts.join(" · ")
}

/// The caution texts shown beside the safe-fill limit and in help (from the contents engine).
pub fn cautions() -> &'static [&'static str] {
    &CAUTIONS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splits_numbers_from_units() {
        assert_eq!(split_value_unit(" 85 inH2O "), ("85", "inH2O"));
        assert_eq!(split_value_unit("-1.5e2mbar"), ("-1.5e2", "mbar"));
        assert_eq!(split_value_unit("12"), ("12", ""));
        assert_eq!(split_value_unit("abc"), ("", "abc"));
    }
}
