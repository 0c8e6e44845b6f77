//! Between fills: gains no ticket explains, losses beyond use, and the forecast of the next fill.

use crate::balance::fmt_kg;
use crate::records::*;
use crate::tank_audit::*;
use crate::thermal::*;
use crate::use_model::{Observed, UseModel};

/// Findings between fills, each interval judged against the tank's weekly use model:
/// - a gain no ticket explains: an interval whose mass rose beyond the model's use by more than
///   `gain_sigmas` standard uncertainties and `gain_min_fraction` of a full tank;
/// - a loss beyond use (a leak or venting): a run of intervals losing more than the model says,
///   found by a one-sided CUSUM of the standardized excess losses (Page, "Continuous inspection
///   schemes", Biometrika 41, 1954) with reference value `leak_cusum_k` and decision interval
///   `leak_cusum_h`; reported once, from the start of the run to its end, with its rate.
pub(crate) fn findings(
    ctx: &Ctx<'_>,
    intervals: &[Interval],
    model: &UseModel,
) -> (Vec<Finding>, Vec<Jump>) {
    let opts = ctx.opts;
    let mut out = Vec::new();
    let mut jumps = Vec::new();
    // (from, to, excess loss kg, standardized excess, use kg/day, loss kg)
    let mut judged: Vec<(i64, i64, f64, f64, f64, f64)> = Vec::new();
    for iv in intervals.iter().filter(|iv| iv.clean) {
        let Some(fit) = model.at(iv.from_ms + (iv.to_ms - iv.from_ms) / 2) else {
            continue;
        };
        let (expected, _) = fit.predict(iv.from_ms, iv.to_ms);
        let sd = fit.interval_sd(iv.from_ms, iv.to_ms).max(1e-9);
        let lost = iv.from_kg - iv.to_kg;
        let usage = fit.weekly_mean_kg_day();
        let z = (lost - expected) / sd;
        if z.abs() >= 3.0 {
            jumps.push(Jump {
                from_ms: iv.from_ms,
                to_ms: iv.to_ms,
                z,
            });
        }
        let gain = expected - lost;
        let limit = (opts.gain_sigmas * sd).max(opts.gain_min_fraction * ctx.full_mass_kg);
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
                    "Unexplained gain: the tank gained {} kg beyond the {} kg its use model expects between two readings with no delivery logged (limit {} kg).",
                    fmt_kg(gain),
                    fmt_kg(expected),
                    fmt_kg(limit)
                ),
            });
            continue;
        }
        judged.push((iv.from_ms, iv.to_ms, lost - expected, z, usage, lost));
    }
    // Consecutive intervals' excesses are correlated where the customer's use swings slowly (a busy
    // fortnight, a slack one): their sums vary more than independent terms would, and a CUSUM
    // tuned for independent terms alarms on every swing. The standardized excesses are scaled by
    // √((1 − ρ)/(1 + ρ)), ρ their lag-one autocorrelation (the variance of a long sum of an AR(1)
    // series relative to independent terms; Montgomery, "Introduction to Statistical Quality
    // Control", 7th ed., §10.4, monitoring autocorrelated data), estimated from this tank's own
    // intervals with each term clipped at ±2.5 so that a leak's own run does not inflate it.
    let rho = lag_one_autocorrelation(&judged);
    let scale = ((1.0 - rho) / (1.0 + rho)).sqrt();
    for j in &mut judged {
        j.3 *= scale;
    }
    // one-sided CUSUM of the standardized excess losses
    let mut s = 0.0;
    let mut run: Option<usize> = None; // first interval of the current run
    let mut i = 0;
    while i < judged.len() {
        let z = judged[i].3;
        let before = s;
        s = (s + z - opts.leak_cusum_k).max(0.0);
        if before == 0.0 && s > 0.0 {
            run = Some(i);
        } else if s == 0.0 {
            run = None;
        }
        if s > opts.leak_cusum_h
            && let Some(first) = run
        {
            // the run goes on while the losses stay above use
            let mut last = i;
            while last + 1 < judged.len() && judged[last + 1].3 > opts.leak_cusum_k {
                last += 1;
            }
            let part = &judged[first..=last];
            let (from, to) = (part[0].0, part[part.len() - 1].1);
            // the use the run's own losses pulled into the model: expected again without them,
            // from the intervals near enough to the run to shape its profiles
            let near = crate::use_model::WINDOW_MS + crate::use_model::ANCHOR_STEP_MS;
            let without: Vec<Observed> = intervals
                .iter()
                .filter(|iv| iv.clean && (iv.to_ms <= from || iv.from_ms >= to))
                .filter(|iv| iv.to_ms >= from - near && iv.from_ms <= to + near)
                .map(|iv| Observed {
                    from_ms: iv.from_ms,
                    to_ms: iv.to_ms,
                    lost_kg: iv.from_kg - iv.to_kg,
                })
                .collect();
            let refit = UseModel::fit(&without, ctx.full_mass_kg);
            let excess: f64 = part
                .iter()
                .map(|p| match refit.predict(p.0, p.1) {
                    Some((expected, _)) => p.5 - expected,
                    None => p.2,
                })
                .sum();
            // the rate over the intervals judged (a fill's own interval in the run is not one)
            let days = part.iter().map(|p| (p.1 - p.0) as f64).sum::<f64>() / (DAY_S * 1000.0);
            let usage = part.iter().map(|p| p.4).sum::<f64>() / part.len() as f64;
            let rate = excess / days.max(1e-9);
            if excess >= opts.leak_min_fraction * ctx.full_mass_kg
                && rate >= opts.leak_min_rate_fraction * usage
            {
                out.push(Finding {
                    kind: FindingKind::LossBeyondUse,
                    tank: ctx.input.name.clone(),
                    from_ms: from,
                    to_ms: to,
                    mass_kg: excess,
                    excess_rate_kg_per_day: Some(rate),
                    usage_kg_per_day: usage,
                    explanation: format!(
                        "Loss beyond use: over {:.0} days the tank lost {} kg more than its use model expects ({} kg/day beside a usual {} kg/day): a leak or venting?",
                        days,
                        fmt_kg(excess),
                        fmt_kg(rate),
                        fmt_kg(usage)
                    ),
                });
            }
            s = 0.0;
            run = None;
            i = last + 1;
            continue;
        }
        i += 1;
    }
    out.sort_by(|a, b| a.from_ms.cmp(&b.from_ms).then(a.kind.cmp(&b.kind)));
    (out, jumps)
}

/// The lag-one autocorrelation of the standardized excesses of adjacent intervals (sharing a
/// reading), each clipped at ±2.5, within [0, 0.9]: none is assumed below 12 adjacent pairs.
fn lag_one_autocorrelation(judged: &[(i64, i64, f64, f64, f64, f64)]) -> f64 {
    let clip = |z: f64| z.clamp(-2.5, 2.5);
    let pairs: Vec<(f64, f64)> = judged
        .windows(2)
        .filter(|w| w[0].1 == w[1].0)
        .map(|w| (clip(w[0].3), clip(w[1].3)))
        .collect();
    if pairs.len() < 12 {
        return 0.0;
    }
    let n = pairs.len() as f64;
    let (ma, mb) = pairs
        .iter()
        .fold((0.0, 0.0), |acc, p| (acc.0 + p.0 / n, acc.1 + p.1 / n));
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for (a, b) in &pairs {
        sab += (a - ma) * (b - mb);
        saa += (a - ma).powi(2);
        sbb += (b - mb).powi(2);
    }
    if saa <= 0.0 || sbb <= 0.0 {
        return 0.0;
    }
    (sab / (saa * sbb).sqrt()).clamp(0.0, 0.9)
}

pub(crate) fn forecast(
    ctx: &Ctx<'_>,
    evals: &[Option<Eval>],
    model: &UseModel,
) -> Option<Forecast> {
    let reorder = ctx.input.reorder_percent?;
    let (i, e) = evals
        .iter()
        .enumerate()
        .rev()
        .find_map(|(i, e)| e.map(|e| (i, e)))?;
    let r = ctx.readings.get(i)?;
    // the weekly mean use, kg/s
    let rate = model.at(r.time_ms)?.weekly_mean_kg_day() / DAY_S;
    if rate <= 0.0 {
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

#[cfg(test)]
mod tests {
    use super::*;

    fn series(z: &[f64], adjacent: bool) -> Vec<(i64, i64, f64, f64, f64, f64)> {
        z.iter()
            .enumerate()
            .map(|(i, &z)| {
                let from = i as i64 * 10 + if adjacent { 0 } else { i as i64 };
                (from, from + 10, 0.0, z, 0.0, 0.0)
            })
            .collect()
    }

    /// Worked by hand: a rising run 0, 0.1, …, 1.3 pairs each term with the next, a perfect
    /// correlation (r = 1, held at 0.9); alternating ±1 gives r = −1 (held at 0); the same terms
    /// from intervals that share no reading give no pairs, so none is assumed.
    #[test]
    fn lag_one_autocorrelation_by_hand() {
        let rising: Vec<f64> = (0..14).map(|i| i as f64 / 10.0).collect();
        assert!((lag_one_autocorrelation(&series(&rising, true)) - 0.9).abs() < 1e-12);
        let alternating: Vec<f64> = (0..14)
            .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        assert_eq!(lag_one_autocorrelation(&series(&alternating, true)), 0.0);
        assert_eq!(lag_one_autocorrelation(&series(&rising, false)), 0.0);
    }
}
