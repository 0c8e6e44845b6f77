//! Between fills: gains no ticket explains, losses beyond use, and the forecast of the next fill.

use crate::balance::fmt_kg;
use crate::records::*;
use crate::stats::{mad_sigma, median};
use crate::tank_audit::*;
use crate::thermal::*;

pub(crate) fn findings(ctx: &Ctx<'_>, intervals: &[Interval]) -> Vec<Finding> {
    let opts = ctx.opts;
    let clean: Vec<&Interval> = intervals.iter().filter(|iv| iv.clean).collect();
    let rates: Vec<f64> = clean.iter().map(|iv| iv.rate_kg_s).collect();
    let (Some(r0), Some(sr)) = (median(&rates), mad_sigma(&rates)) else {
        return Vec::new();
    };
    let r0 = r0.max(0.0);
    let usage = r0 * DAY_S;
    // scatter of the change over an interval about the usual use
    let dev: Vec<f64> = clean
        .iter()
        .map(|iv| {
            let dt = (iv.to_ms - iv.from_ms) as f64 / 1000.0;
            (iv.to_kg - iv.from_kg) + r0 * dt
        })
        .collect();
    let s_pair = mad_sigma(&dev).unwrap_or(0.0);
    let mut out = Vec::new();
    for iv in &clean {
        let dt = (iv.to_ms - iv.from_ms) as f64 / 1000.0;
        let gain = (iv.to_kg - iv.from_kg) + r0 * dt;
        let limit = (opts.gain_sigmas * s_pair).max(opts.gain_min_fraction * ctx.full_mass_kg);
        if gain > limit {
            out.push(Finding {
                kind: FindingKind::UnexplainedGain,
                tank: ctx.input.name.clone(),
                from_ms: iv.from_ms,
                to_ms: iv.to_ms,
                mass_kg: gain,
                excess_rate_kg_per_day: None,
                usage_kg_per_day: usage,
                explanation: format!(
                    "Unexplained gain: the tank gained {} kg beyond its usual use of {} kg/day between two readings with no delivery logged (limit {} kg).",
                    fmt_kg(gain),
                    fmt_kg(usage),
                    fmt_kg(limit)
                ),
            });
        }
    }
    // losses beyond use: windows of consecutive clean intervals (gains removed)
    let w = opts.loss_window.max(2);
    let usable: Vec<&Interval> = clean
        .iter()
        .copied()
        .filter(|iv| {
            let dt = (iv.to_ms - iv.from_ms) as f64 / 1000.0;
            (iv.to_kg - iv.from_kg) + r0 * dt
                <= (opts.gain_sigmas * s_pair).max(opts.gain_min_fraction * ctx.full_mass_kg)
        })
        .collect();
    let mut open: Option<(i64, i64, f64, f64)> = None; // from, to, excess kg, seconds
    let close = |o: (i64, i64, f64, f64), out: &mut Vec<Finding>| {
        let days = o.3 / DAY_S;
        let excess_rate = o.2 / days.max(1e-9);
        out.push(Finding {
            kind: FindingKind::LossBeyondUse,
            tank: ctx.input.name.clone(),
            from_ms: o.0,
            to_ms: o.1,
            mass_kg: o.2,
            excess_rate_kg_per_day: Some(excess_rate),
            usage_kg_per_day: usage,
            explanation: format!(
                "Loss beyond use: over {:.0} days the tank lost {} kg more than its usual use of {} kg/day ({} kg/day extra): a leak or venting?",
                days,
                fmt_kg(o.2),
                fmt_kg(usage),
                fmt_kg(excess_rate)
            ),
        });
    };
    for chunk in usable.chunks(w) {
        if chunk.len() < w {
            break;
        }
        let secs: f64 = chunk
            .iter()
            .map(|iv| (iv.to_ms - iv.from_ms) as f64 / 1000.0)
            .sum();
        let lost: f64 = chunk.iter().map(|iv| iv.from_kg - iv.to_kg).sum();
        let rate = lost / secs;
        let se = sr / (chunk.len() as f64).sqrt();
        let flagged = rate - r0 > (opts.loss_excess_fraction * r0).max(4.0 * se);
        let (from, to) = (chunk[0].from_ms, chunk[chunk.len() - 1].to_ms);
        if flagged {
            let excess = (rate - r0) * secs;
            open = Some(match open {
                Some(o) => (o.0, to, o.2 + excess, o.3 + secs),
                None => (from, to, excess, secs),
            });
        } else if let Some(o) = open.take() {
            close(o, &mut out);
        }
    }
    if let Some(o) = open.take() {
        close(o, &mut out);
    }
    out.sort_by(|a, b| a.from_ms.cmp(&b.from_ms).then(a.kind.cmp(&b.kind)));
    out
}

pub(crate) fn forecast(
    ctx: &Ctx<'_>,
    evals: &[Option<Eval>],
    intervals: &[Interval],
) -> Option<Forecast> {
    let reorder = ctx.input.reorder_percent?;
    let (i, e) = evals
        .iter()
        .enumerate()
        .rev()
        .find_map(|(i, e)| e.map(|e| (i, e)))?;
    let r = ctx.readings.get(i)?;
    let (rate, _, n) = usage_near(intervals, r.time_ms, r.time_ms, ctx.opts);
    if n == 0 || rate <= 0.0 {
        return None;
    }
    let gross = ctx.tank.geometry.gross_volume_m3();
    let liquid_density = if e.fill_fraction > 0.0 {
        e.liquid_kg / (e.fill_fraction * gross)
    } else {
        ctx.full_mass_kg / gross
    };
    let above = (e.fill_fraction - reorder / 100.0) * gross * liquid_density;
    let days = above / (rate * DAY_S);
    // to the minute: a forecast is not more precise than that
    let reorder_at = (r.time_ms + (days * DAY_S * 1000.0) as i64) / 60_000 * 60_000;
    Some(Forecast {
        usage_kg_per_day: rate * DAY_S,
        last_reading_ms: r.time_ms,
        total_mass_kg: e.contents_total_kg,
        above_reorder_kg: above,
        days_to_reorder: days,
        reorder_at_ms: reorder_at,
        next_fill_ms: (reorder_at.max(r.time_ms)
            + (ctx.opts.fill_lead_days * DAY_S * 1000.0) as i64)
            / 60_000
            * 60_000,
    })
}
