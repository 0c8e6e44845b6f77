//! One tank: thermal history, contents of every reading, balances, findings between fills, forecast.

use fluids::{Fluid, FluidId};
use tank::ContentsOptions;

use crate::balance::{balance, count_losses};
use crate::between_fills::{findings, forecast};
use crate::props::AuditFluid;
use crate::records::*;
use crate::stats::median;
use crate::thermal::*;
use crate::use_model::{Observed, UseModel};
use crate::{AuditError, AuditOptions, ReadingInput, TankInput};

pub(crate) const DAY_S: f64 = 86_400.0;

/// Index of the last reading at or before `t` (within `window`), and of the first at or after `t2`.
pub(crate) fn bracket(
    times: &[i64],
    start: i64,
    end: i64,
    window_ms: i64,
) -> (Option<usize>, Option<usize>) {
    let before = times.partition_point(|&t| t <= start);
    let b = before
        .checked_sub(1)
        .filter(|&i| times.get(i).is_some_and(|&t| start - t <= window_ms));
    let after = times.partition_point(|&t| t < end);
    let a = Some(after).filter(|&i| times.get(i).is_some_and(|&t| t - end <= window_ms));
    (b, a)
}

/// An interval between consecutive readings and the use rate over it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Interval {
    pub(crate) from_ms: i64,
    pub(crate) to_ms: i64,
    pub(crate) from_kg: f64,
    pub(crate) to_kg: f64,
    /// The start's mass per unit relative error of the span, kg (see [`Eval::span_kg`]).
    pub(crate) from_span_kg: f64,
    /// No delivery touches it.
    pub(crate) clean: bool,
    /// The tickets of the fills that lie wholly inside it and the variance of their meters, kg and
    /// kg² (None when a fill straddles one of its readings).
    pub(crate) billed_kg: Option<(f64, f64)>,
}

/// Half the 95th percentile of χ² with one degree of freedom (3.841 / 2; a standard table value).
const NER_LR_MIN: f64 = 1.92;

pub(crate) fn huber(x: f64) -> f64 {
    const C: f64 = 1.5;
    let a = x.abs();
    if a <= C {
        0.5 * a * a
    } else {
        C * (a - 0.5 * C)
    }
}

/// Audit one tank.
pub fn audit_tank(input: &TankInput, opts: &AuditOptions) -> Result<TankAudit, AuditError> {
    let f: &'static Fluid = input.tank.fluid;
    let fluid_err = |e| AuditError::Fluid {
        tank: input.name.clone(),
        cause: e,
    };
    let mut readings = input.readings.clone();
    readings.sort_by_key(|r| r.time_ms);
    readings.dedup_by_key(|r| r.time_ms);
    let mut deliveries = input.deliveries.clone();
    deliveries.sort_by(|a, b| a.end_ms.cmp(&b.end_ms).then(a.ticket.cmp(&b.ticket)));
    let gross = input.tank.geometry.gross_volume_m3();
    // heat leak reference: saturated at 1 atm; CO2 at the tank's usual (median) pressure
    let reference_pa = if f.id() == FluidId::CarbonDioxide {
        let ps: Vec<f64> = readings.iter().map(|r| r.pressure_pa).collect();
        median(&ps).unwrap_or(15e5)
    } else {
        units::STANDARD_ATMOSPHERE_PA
    };
    let reference = f
        .saturation_from_pressure(reference_pa.max(f.triple().pressure_pa * 1.001))
        .map_err(fluid_err)?;
    let full_mass_kg = gross * reference.liquid_density_kg_m3;
    let ner_setting = input.ner_percent_per_day.unwrap_or_else(|| {
        default_ner_percent_per_day(
            f.id(),
            gross,
            full_mass_kg,
            reference.latent_heat_j_kg(),
            reference.temperature_k,
        )
    });
    let heat_w_of = |ner: f64| ner / 100.0 * full_mass_kg * reference.latent_heat_j_kg() / DAY_S;
    let ctx = Ctx {
        input,
        tank: tank::Tank {
            geometry: input.tank.geometry.clone(),
            fluid: AuditFluid::new(f, opts.exact_properties),
            gauge: input.tank.gauge,
        },
        opts,
        f,
        readings,
        deliveries,
        contents_opts: ContentsOptions::default(),
        full_mass_kg,
        latent_j_kg: reference.latent_heat_j_kg(),
    };
    let _ = ctx.latent_j_kg;
    let times: Vec<i64> = ctx.readings.iter().map(|r| r.time_ms).collect();
    let window_ms = (opts.bracket_window_s * 1000.0) as i64;
    let brackets: Vec<(Option<usize>, Option<usize>)> = ctx
        .deliveries
        .iter()
        .map(|d| bracket(&times, d.start_ms, d.end_ms, window_ms))
        .collect();

    let mut evals = ctx.history(heat_w_of(ner_setting), &Mode::Full);
    // the site's clock: its own, or the one its use shows (see `site_clock`)
    let (zone, clock_offset_hours) = match ctx.input.zone {
        Some(z) => (z, None),
        None if !opts.site_clock_from_use => (units::Zone::UTC, None),
        None => {
            let found = crate::site_clock::infer_offset_hours(&observed(&intervals(&ctx, &evals)));
            match found.and_then(units::Zone::fixed_hours_east) {
                Some(z) => (z, found),
                None => (units::Zone::UTC, None),
            }
        }
    };
    let mut ner_fitted = None;
    // the use model fitted before the NER fit, kept when the setting stands: the readings then keep
    // the masses it was fitted on (refitting them gave the same to 1e-12)
    let mut kept_model = None;
    if opts.fit_ner && opts.thermal_history && !ctx.deliveries.is_empty() {
        let liquid: Vec<f64> = evals
            .iter()
            .map(|e| e.map_or(0.0, |e| e.liquid_kg))
            .collect();
        let caps: Vec<f64> = evals
            .iter()
            .map(|e| e.map_or(f64::INFINITY, |e| e.liquid_cap_j_kg))
            .collect();
        let mut needed = vec![false; times.len()];
        for (b, a) in &brackets {
            for i in [b, a].into_iter().flatten() {
                if let Some(n) = needed.get_mut(*i) {
                    *n = true;
                }
            }
        }
        // use per fill from the first pass (the NER barely moves it)
        let model = use_model(&ctx, &intervals(&ctx, &evals), zone);
        let drawn: Vec<f64> = ctx
            .deliveries
            .iter()
            .zip(&brackets)
            .map(|(_, (b, a))| match (b, a) {
                (Some(b), Some(a)) => model.predict(times[*b], times[*a]).map_or(0.0, |p| p.0),
                _ => 0.0,
            })
            .collect();
        let mode = Mode::Brackets {
            liquid_kg: &liquid,
            caps: &caps,
            needed: &needed,
        };
        let objective = |ln_ner: f64| -> f64 {
            let ev = ctx.history(heat_w_of(ln_ner.exp()), &mode);
            let mut rel = Vec::with_capacity(ctx.deliveries.len());
            for ((d, (b, a)), dr) in ctx.deliveries.iter().zip(&brackets).zip(&drawn) {
                if let (Some(b), Some(a)) = (b, a)
                    && let (Some(eb), Some(ea)) = (ev[*b], ev[*a])
                    && d.billed_kg > 0.0
                {
                    let r = d.billed_kg - (ea.contents_total_kg - eb.contents_total_kg + dr);
                    rel.push(r / d.billed_kg);
                }
            }
            // a constant offset (e.g. use during the fill above the day's average) is not the NER's
            // doing: the fit looks at how the residuals vary from fill to fill about their median
            let centre = median(&rel).unwrap_or(0.0);
            let sum: f64 = rel
                .iter()
                .map(|x| huber((x - centre) / opts.ner_fit_scale_fraction))
                .sum();
            // the setting as a prior: ln(NER / setting) ~ N(0, ner_prior_ln_sd²) (a penalized fit)
            sum + 0.5 * ((ln_ner - ner_setting.ln()) / opts.ner_prior_ln_sd).powi(2)
        };
        // golden-section search on ln NER
        let span = opts.ner_fit_range_factor.max(1.0).ln();
        let (mut lo, mut hi) = (ner_setting.ln() - span, ner_setting.ln() + span);
        let g = 0.5 * (5f64.sqrt() - 1.0);
        let mut x1 = hi - g * (hi - lo);
        let mut x2 = lo + g * (hi - lo);
        let (mut f1, mut f2) = (objective(x1), objective(x2));
        for _ in 0..opts.ner_fit_iterations {
            if f1 <= f2 {
                hi = x2;
                x2 = x1;
                f2 = f1;
                x1 = hi - g * (hi - lo);
                f1 = objective(x1);
            } else {
                lo = x1;
                x1 = x2;
                f1 = f2;
                x2 = lo + g * (hi - lo);
                f2 = objective(x2);
            }
        }
        let mut best = (0.5 * (lo + hi)).exp();
        // the setting stands unless the fills support another NER: the objective is a negative
        // log-likelihood (Huber's ρ for a heavy-tailed one), and a fitted NER is kept only where it
        // lowers it by χ²₁(0.95) / 2 = 1.92 from the setting's (Wilks' likelihood-ratio test at the
        // 5 % level; Wilks, Ann. Math. Statist. 9, 1938)
        if objective(ner_setting.ln()) - objective(best.ln()) < NER_LR_MIN {
            best = ner_setting;
        }
        ner_fitted = Some(best);
        if best == ner_setting {
            kept_model = Some(model);
        } else {
            // the bracketing readings with the fitted NER; the daily readings keep the first
            // pass's state (the NER moves their masses far less than the usage model's scatter)
            let refit = ctx.history(heat_w_of(best), &mode);
            for (e, r) in evals.iter_mut().zip(refit) {
                if r.is_some() {
                    *e = r;
                }
            }
        }
    }
    let intervals = intervals(&ctx, &evals);
    let model = kept_model.unwrap_or_else(|| use_model(&ctx, &intervals, zone));
    let balances: Vec<Balance> = ctx
        .deliveries
        .iter()
        .zip(&brackets)
        .map(|(d, br)| balance(&ctx, d, *br, &evals, &model))
        .collect();
    let mut balances = balances;
    balances.sort_by(|a, b| a.start_ms.cmp(&b.start_ms).then(a.ticket.cmp(&b.ticket)));
    let (findings, jumps, leak_detectable) = findings(&ctx, &intervals, &model);
    let losses: Vec<(i64, i64, f64)> = findings
        .iter()
        .filter(|f| f.kind == FindingKind::LossBeyondUse)
        .filter_map(|f| Some((f.from_ms, f.to_ms, f.excess_rate_kg_per_day?)))
        .collect();
    if !losses.is_empty() {
        for b in &mut balances {
            count_losses(b, &losses, opts);
        }
    }
    let forecast = forecast(&ctx, &evals, &model);
    let readings_used = evals.iter().filter(|e| e.is_some()).count();
    let state = |(r, e): (&ReadingInput, &Option<Eval>)| {
        e.map(|e| ReadingState {
            time_ms: r.time_ms,
            total_mass_kg: e.contents_total_kg,
            fill_fraction: e.fill_fraction,
            liquid_saturation_pa: e.liquid_saturation_pa,
            liquid_temperature_k: e.liquid_temperature_k,
        })
    };
    let latest = ctx.readings.iter().zip(&evals).rev().find_map(state);
    let kept = if opts.keep_readings {
        ctx.readings.iter().zip(&evals).filter_map(state).collect()
    } else {
        Vec::new()
    };
    Ok(TankAudit {
        tank: input.name.clone(),
        fluid: f.id(),
        ner_setting_percent_per_day: ner_setting,
        ner_fitted_percent_per_day: ner_fitted,
        full_mass_kg: ctx.full_mass_kg,
        readings_used,
        readings_refused: ctx.readings.len() - readings_used,
        balances,
        findings,
        leak_detectable_kg_per_day: leak_detectable,
        forecast,
        readings: kept,
        latest,
        clock_offset_hours,
        jumps,
    })
}

pub(crate) fn intervals(ctx: &Ctx<'_>, evals: &[Option<Eval>]) -> Vec<Interval> {
    let pts: Vec<(i64, f64, f64)> = ctx
        .readings
        .iter()
        .zip(evals)
        .filter_map(|(r, e)| e.map(|e| (r.time_ms, e.contents_total_kg, e.span_kg)))
        .collect();
    pts.windows(2)
        .filter_map(|w| {
            let (a, b) = (w[0], w[1]);
            let dt_s = (b.0 - a.0) as f64 / 1000.0;
            if dt_s < 3600.0 {
                return None;
            }
            let mut touching = ctx
                .deliveries
                .iter()
                .filter(|d| d.start_ms < b.0 && d.end_ms > a.0);
            let touched = touching.clone().next().is_some();
            let billed_kg = touching.try_fold((0.0, 0.0), |(kg, var), d| {
                let meter = crate::balance::meter_sigma_kg(d, ctx.opts);
                (d.start_ms >= a.0 && d.end_ms <= b.0)
                    .then_some((kg + d.billed_kg, var + meter * meter))
            });
            Some(Interval {
                from_ms: a.0,
                to_ms: b.0,
                from_kg: a.1,
                to_kg: b.1,
                from_span_kg: a.2,
                clean: !touched,
                billed_kg,
            })
        })
        .collect()
}

/// The mass lost over each interval no logged fill touches.
fn observed(intervals: &[Interval]) -> Vec<Observed> {
    intervals
        .iter()
        .filter(|iv| iv.clean)
        .map(|iv| Observed {
            from_ms: iv.from_ms,
            to_ms: iv.to_ms,
            lost_kg: iv.from_kg - iv.to_kg,
        })
        .collect()
}

/// The tank's use model from the intervals no logged fill touches, on the site's clock `zone`.
pub(crate) fn use_model(ctx: &Ctx<'_>, intervals: &[Interval], zone: units::Zone) -> UseModel {
    UseModel::fit(&observed(intervals), ctx.full_mass_kg, zone)
}
