//! The Trend tab's series.

use super::*;
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

/// The trend's marks: each delivery with its verdict, and the findings' periods (what a new fleet
/// audit changes; the series stay).
pub fn trend_marks(view: &TankView, tv: &mut TrendView) {
    let day = |ms: i64| ms as f64 / 86_400_000.0;
    tv.deliveries = view
        .deliveries
        .iter()
        .map(|dl| (day(dl.start_ms), dl.ticket.clone(), dl.verdict.map(|v| v.0)))
        .collect();
    tv.findings = view
        .finding_spans
        .iter()
        .map(|(a, b, what)| (day(*a), day(*b), what.clone()))
        .collect();
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
            "{}\nDP {} · {}\n{}: {} {unit}",
            view.zone.text(r.time_ms),
            r.dp_text,
            r.pressure_text,
            q.title(),
            fmt::with_u(f.value, f.u)
        ));
    }
    trend_marks(view, &mut tv);
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
        let mass = c.liquid_density_kg_m3 * vol + c.vapour_density_kg_m3 * (gross - vol);
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
