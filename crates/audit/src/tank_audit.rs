//! One tank: thermal history, contents of every reading, balances, findings between fills, forecast.

use fluids::{Fluid, FluidId};
use serde::Serialize;
use tank::{Conditions, Contents, ContentsOptions, LiquidState, UncertaintyInputs};

use crate::props::{AuditFluid, saturation_pressure_from_liquid_enthalpy};
use crate::stats::{mad_sigma, median};
use crate::{AuditError, AuditOptions, DeliveryInput, ReadingInput, TankInput, Verdict};

const DAY_S: f64 = 86_400.0;

/// The state behind one reading.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ReadingState {
    /// Time, ms.
    pub time_ms: i64,
    /// Total mass, kg.
    pub total_mass_kg: f64,
    /// Liquid volume over gross volume.
    pub fill_fraction: f64,
    /// The liquid's saturation pressure (tracked), Pa.
    pub liquid_saturation_pa: f64,
    /// Liquid temperature, K.
    pub liquid_temperature_k: f64,
}

/// A reading bracketing a fill.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BracketReading {
    /// Time, ms.
    pub time_ms: i64,
    /// Total mass, kg.
    pub total_mass_kg: f64,
    /// Liquid volume over gross volume.
    pub fill_fraction: f64,
    /// Tank pressure, Pa absolute.
    pub pressure_pa: f64,
    /// Liquid temperature used, K.
    pub liquid_temperature_k: f64,
    /// Saturation temperature at the tank pressure, K.
    pub saturation_temperature_k: f64,
}

/// One delivery's reconciliation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Balance {
    /// Ticket number.
    pub ticket: String,
    /// Tank name.
    pub tank: String,
    /// Vehicle name.
    pub vehicle: String,
    /// Carrier name.
    pub carrier: String,
    /// Start of the fill, ms.
    pub start_ms: i64,
    /// End of the fill, ms.
    pub end_ms: i64,
    /// The verdict.
    pub verdict: Verdict,
    /// Billed, kg.
    pub billed_kg: f64,
    /// Tank mass change between the bracketing readings, kg.
    pub gained_kg: f64,
    /// Use between the bracketing readings, kg.
    pub drawn_kg: f64,
    /// billed − (gained + drawn), kg.
    pub residual_kg: f64,
    /// Residual as a percentage of billed.
    pub residual_percent: f64,
    /// Standard uncertainty of the residual, kg.
    pub sigma_kg: f64,
    /// Part of sigma from the two readings' shared inputs (after cancellation), kg.
    pub sigma_readings_shared_kg: f64,
    /// Part of sigma from the two readings' independent inputs, kg.
    pub sigma_readings_independent_kg: f64,
    /// Part of sigma from the usage model, kg.
    pub sigma_usage_kg: f64,
    /// Part of sigma from the delivering meter, kg.
    pub sigma_meter_kg: f64,
    /// Coverage factor k.
    pub coverage_factor: f64,
    /// The limit a residual must pass to be short or excess: max(k sigma, materiality), kg.
    pub limit_kg: f64,
    /// k sigma as a percentage of billed, beyond which an unflagged balance is inconclusive.
    pub inconclusive_limit_percent: f64,
    /// (gained + drawn) / billed.
    pub ratio: f64,
    /// Use rate of the usage model, kg/day.
    pub usage_kg_per_day: f64,
    /// The reading before the fill.
    pub before: Option<BracketReading>,
    /// The reading after the fill.
    pub after: Option<BracketReading>,
    /// How far a bracketing reading may be from the fill, h.
    pub bracket_window_h: f64,
    /// The tank's gauge drift, % of span per year, when its gauge was found drifting.
    pub gauge_drift_percent_per_year: Option<f64>,
    /// One sentence with the numbers, to hand to a carrier.
    pub explanation: String,
}

/// What a finding between fills is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FindingKind {
    /// The tank gained with no ticket (an unlogged delivery?).
    UnexplainedGain,
    /// The tank lost more than its usual use (a leak or venting?).
    LossBeyondUse,
}

/// A finding in the readings between fills.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    /// What it is.
    pub kind: FindingKind,
    /// Tank name.
    pub tank: String,
    /// From, ms.
    pub from_ms: i64,
    /// To, ms.
    pub to_ms: i64,
    /// Mass gained, or lost beyond use, kg.
    pub mass_kg: f64,
    /// Loss rate beyond use, kg/day (losses only).
    pub excess_rate_kg_per_day: Option<f64>,
    /// The usual use, kg/day.
    pub usage_kg_per_day: f64,
    /// One sentence with the numbers.
    pub explanation: String,
}

/// Use rate and the next fill.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Forecast {
    /// Recent use, kg/day (median over the last usage window).
    pub usage_kg_per_day: f64,
    /// The last reading, ms.
    pub last_reading_ms: i64,
    /// Total mass at the last reading, kg.
    pub total_mass_kg: f64,
    /// Liquid above the reorder level, kg (negative: below it).
    pub above_reorder_kg: f64,
    /// Days from the last reading to the reorder level.
    pub days_to_reorder: f64,
    /// When the reorder level is reached, ms.
    pub reorder_at_ms: i64,
    /// The expected next fill, ms.
    pub next_fill_ms: i64,
}

/// One tank's audit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TankAudit {
    /// Tank name.
    pub tank: String,
    /// Fluid.
    pub fluid: FluidId,
    /// The NER setting used as the start, % per day.
    pub ner_setting_percent_per_day: f64,
    /// The NER that best closes the tank's fill balances, % per day (None: not fitted).
    pub ner_fitted_percent_per_day: Option<f64>,
    /// A full tank's mass, kg (liquid saturated at 1 atm; CO2 at the tank's usual pressure).
    pub full_mass_kg: f64,
    /// Readings evaluated.
    pub readings_used: usize,
    /// Readings the contents engine refused (e.g. beyond empty or full).
    pub readings_refused: usize,
    /// Balances, by fill start.
    pub balances: Vec<Balance>,
    /// Findings between fills, by time.
    pub findings: Vec<Finding>,
    /// Use rate and the next fill.
    pub forecast: Option<Forecast>,
    /// Every reading's state when [`AuditOptions::keep_readings`].
    pub readings: Vec<ReadingState>,
}

/// Default NER by fluid and gross volume, % per day, when a tank has none: smaller tanks lose a larger
/// share; carbon dioxide about half. Common practice, no source.
pub fn default_ner_percent_per_day(fluid: FluidId, gross_volume_m3: f64) -> f64 {
    let base = (0.6 * (gross_volume_m3.max(0.1) / 5.0).powf(-0.4)).clamp(0.12, 1.0);
    if fluid == FluidId::CarbonDioxide {
        0.5 * base
    } else {
        base
    }
}

/// Default pressure of a trailer's liquid, Pa absolute, when the ticket has none: 2.5 bar for the
/// cryogens, 12 bar for carbon dioxide. Common practice, no source.
pub fn default_supply_pressure_pa(fluid: FluidId) -> f64 {
    match fluid {
        FluidId::CarbonDioxide => 12e5,
        _ => 2.5e5,
    }
}

/// Adiabatic mixing by enthalpy: `m1` kg of liquid at specific enthalpy `h1` with `m2` kg at `h2`;
/// returns the mixture's specific enthalpy, J/kg.
pub fn mix_liquids(m1_kg: f64, h1_j_kg: f64, m2_kg: f64, h2_j_kg: f64) -> f64 {
    let m = m1_kg + m2_kg;
    if m <= 0.0 {
        return h1_j_kg;
    }
    (m1_kg * h1_j_kg + m2_kg * h2_j_kg) / m
}

/// The outcome of one reading in a history pass.
#[derive(Debug, Clone, Copy)]
struct Eval {
    contents_total_kg: f64,
    liquid_kg: f64,
    fill_fraction: f64,
    liquid: LiquidState,
    liquid_saturation_pa: f64,
    liquid_temperature_k: f64,
    saturation_temperature_k: f64,
    liquid_cap_j_kg: f64,
}

struct Ctx<'a> {
    input: &'a TankInput,
    tank: tank::Tank<AuditFluid>,
    opts: &'a AuditOptions,
    f: &'static Fluid,
    readings: Vec<ReadingInput>,
    deliveries: Vec<DeliveryInput>,
    contents_opts: ContentsOptions,
    full_mass_kg: f64,
    latent_j_kg: f64,
}

enum Mode<'a> {
    Full,
    Brackets {
        liquid_kg: &'a [f64],
        caps: &'a [f64],
        needed: &'a [bool],
    },
}

impl Ctx<'_> {
    fn conditions(&self, r: &ReadingInput, liquid: LiquidState) -> Conditions {
        let liquid = match r.liquid_temperature_k {
            Some(t) => LiquidState::Temperature { temperature_k: t },
            None => liquid,
        };
        Conditions::saturated(r.pressure_pa)
            .with_liquid(liquid)
            .with_line_temperature_k(self.input.line_temperature_k)
    }

    fn supply_h(&self, d: &DeliveryInput) -> Option<f64> {
        let p = d
            .supply_pressure_pa
            .unwrap_or_else(|| default_supply_pressure_pa(self.f.id()));
        self.f
            .saturation_from_pressure(p)
            .or_else(|_| {
                self.f
                    .saturation_from_pressure(default_supply_pressure_pa(self.f.id()))
            })
            .ok()
            .map(|s| s.liquid_enthalpy_j_kg)
    }

    /// Evaluate one reading with liquid enthalpy `h` (already capped).
    fn evaluate(&self, r: &ReadingInput, h: f64, cap: f64, guess_k: f64) -> Option<Eval> {
        let (liquid, p_s) = if !self.opts.thermal_history || h >= cap - 1e-6 {
            (LiquidState::SaturatedAtTankPressure, r.pressure_pa)
        } else {
            let (ps, _) = saturation_pressure_from_liquid_enthalpy(self.f, h, guess_k)?;
            if ps >= r.pressure_pa {
                (LiquidState::SaturatedAtTankPressure, r.pressure_pa)
            } else {
                (LiquidState::SaturatedAtPressure { pressure_pa: ps }, ps)
            }
        };
        let c = self.conditions(r, liquid);
        let got = self
            .tank
            .contents_from_reading(r.dp_pa, &c, &self.contents_opts)
            .ok()?;
        Some(Eval {
            contents_total_kg: got.total_mass_kg,
            liquid_kg: got.liquid_mass_kg,
            fill_fraction: got.fill_fraction,
            liquid,
            liquid_saturation_pa: p_s,
            liquid_temperature_k: got.liquid_temperature_k,
            saturation_temperature_k: got.saturation_temperature_k,
            liquid_cap_j_kg: cap,
        })
    }

    /// One pass of the thermal history with heat leak `heat_w`.
    fn history(&self, heat_w: f64, mode: &Mode<'_>) -> Vec<Option<Eval>> {
        let n = self.readings.len();
        let mut out: Vec<Option<Eval>> = vec![None; n];
        // fills in order of their end, each applied once the clock passes it
        let mut fills = self.deliveries.iter().peekable();
        let mut h: Option<f64> = None;
        let mut cap_last = f64::INFINITY;
        let mut liquid_kg: f64 = 0.0;
        let mut guess_k = self.f.triple().temperature_k + 10.0;
        let mut t_last: Option<i64> = None;
        for (i, r) in self.readings.iter().enumerate() {
            // apply fills that ended before this reading
            while let Some(d) = fills.peek() {
                if d.end_ms > r.time_ms {
                    break;
                }
                if let (Some(hh), Some(t0)) = (h, t_last) {
                    let dt = (d.end_ms - t0).max(0) as f64 / 1000.0;
                    let warmed = (hh + heat_w * dt / liquid_kg.max(1.0)).min(cap_last);
                    if let Some(hs) = self.supply_h(d) {
                        let delivered = d.billed_kg.max(0.0);
                        h = Some(mix_liquids(liquid_kg, warmed, delivered, hs));
                        liquid_kg += delivered;
                        t_last = Some(d.end_ms);
                    }
                }
                fills.next();
            }
            let (cap, hint_liquid) = match mode {
                Mode::Full => {
                    let Ok(sat) = self.f.saturation_from_pressure(r.pressure_pa) else {
                        continue;
                    };
                    (sat.liquid_enthalpy_j_kg, None)
                }
                Mode::Brackets {
                    liquid_kg, caps, ..
                } => (
                    caps.get(i).copied().unwrap_or(f64::INFINITY),
                    liquid_kg.get(i).copied(),
                ),
            };
            if !cap.is_finite() {
                continue;
            }
            let hh = match (h, t_last) {
                (Some(hh), Some(t0)) => {
                    let dt = (r.time_ms - t0).max(0) as f64 / 1000.0;
                    (hh + heat_w * dt / liquid_kg.max(1.0)).min(cap)
                }
                // no history yet: half-way between the supply's liquid and saturation at the tank
                _ => {
                    let hs = self
                        .deliveries
                        .first()
                        .and_then(|d| self.supply_h(d))
                        .or_else(|| {
                            self.f
                                .saturation_from_pressure(default_supply_pressure_pa(self.f.id()))
                                .ok()
                                .map(|s| s.liquid_enthalpy_j_kg)
                        })
                        .unwrap_or(cap);
                    (0.5 * (hs + cap)).min(cap)
                }
            };
            let evaluate = match mode {
                Mode::Full => true,
                Mode::Brackets { needed, .. } => needed.get(i).copied().unwrap_or(false),
            };
            if evaluate {
                if let Some(e) = self.evaluate(r, hh, cap, guess_k) {
                    liquid_kg = e.liquid_kg;
                    guess_k = e.liquid_temperature_k;
                    out[i] = Some(e);
                }
            } else if let Some(m) = hint_liquid {
                liquid_kg = m;
            }
            h = Some(hh);
            cap_last = cap;
            t_last = Some(r.time_ms);
        }
        out
    }
}

/// Index of the last reading at or before `t` (within `window`), and of the first at or after `t2`.
fn bracket(times: &[i64], start: i64, end: i64, window_ms: i64) -> (Option<usize>, Option<usize>) {
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
struct Interval {
    from_ms: i64,
    to_ms: i64,
    from_kg: f64,
    to_kg: f64,
    rate_kg_s: f64,
    /// No delivery touches it.
    clean: bool,
}

fn huber(x: f64) -> f64 {
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
        source: e,
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
    let ner_setting = input
        .ner_percent_per_day
        .unwrap_or_else(|| default_ner_percent_per_day(f.id(), gross));
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
    let mut ner_fitted = None;
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
        // usage per fill from the first pass (NER barely moves it)
        let intervals = intervals(&ctx, &evals);
        let drawn: Vec<f64> = ctx
            .deliveries
            .iter()
            .zip(&brackets)
            .map(|(_, (b, a))| match (b, a) {
                (Some(b), Some(a)) => {
                    let (t0, t1) = (times[*b], times[*a]);
                    usage_near(&intervals, t0, t1, opts).0 * (t1 - t0) as f64 / 1000.0
                }
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
        let best = (0.5 * (lo + hi)).exp();
        ner_fitted = Some(best);
        // the bracketing readings with the fitted NER; the daily readings keep the first pass's
        // state (the NER moves their masses far less than the usage model's scatter)
        let refit = ctx.history(heat_w_of(best), &mode);
        for (e, r) in evals.iter_mut().zip(refit) {
            if r.is_some() {
                *e = r;
            }
        }
    }
    let intervals = intervals(&ctx, &evals);
    let balances: Vec<Balance> = ctx
        .deliveries
        .iter()
        .zip(&brackets)
        .map(|(d, br)| balance(&ctx, d, *br, &evals, &intervals))
        .collect();
    let mut balances = balances;
    balances.sort_by(|a, b| a.start_ms.cmp(&b.start_ms).then(a.ticket.cmp(&b.ticket)));
    let findings = findings(&ctx, &intervals);
    let forecast = forecast(&ctx, &evals, &intervals);
    let readings_used = evals.iter().filter(|e| e.is_some()).count();
    let kept = if opts.keep_readings {
        ctx.readings
            .iter()
            .zip(&evals)
            .filter_map(|(r, e)| {
                e.map(|e| ReadingState {
                    time_ms: r.time_ms,
                    total_mass_kg: e.contents_total_kg,
                    fill_fraction: e.fill_fraction,
                    liquid_saturation_pa: e.liquid_saturation_pa,
                    liquid_temperature_k: e.liquid_temperature_k,
                })
            })
            .collect()
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
        forecast,
        readings: kept,
    })
}

fn intervals(ctx: &Ctx<'_>, evals: &[Option<Eval>]) -> Vec<Interval> {
    let pts: Vec<(i64, f64)> = ctx
        .readings
        .iter()
        .zip(evals)
        .filter_map(|(r, e)| e.map(|e| (r.time_ms, e.contents_total_kg)))
        .collect();
    pts.windows(2)
        .filter_map(|w| {
            let (a, b) = (w[0], w[1]);
            let dt_s = (b.0 - a.0) as f64 / 1000.0;
            if dt_s < 3600.0 {
                return None;
            }
            let touched = ctx
                .deliveries
                .iter()
                .any(|d| d.start_ms < b.0 && d.end_ms > a.0);
            Some(Interval {
                from_ms: a.0,
                to_ms: b.0,
                from_kg: a.1,
                to_kg: b.1,
                rate_kg_s: (a.1 - b.1) / dt_s,
                clean: !touched,
            })
        })
        .collect()
}

/// Robust use rate near [t0, t1]: the median over clean intervals within the usage window (weighted
/// by nothing: outliers such as an unlogged fill fall out of a median). Returns (rate kg/s, its
/// standard error kg/s, intervals used).
fn usage_near(intervals: &[Interval], t0: i64, t1: i64, opts: &AuditOptions) -> (f64, f64, usize) {
    let w = (opts.usage_window_days * DAY_S * 1000.0) as i64;
    let lo = intervals.partition_point(|iv| iv.to_ms < t0 - w);
    let hi = intervals.partition_point(|iv| iv.from_ms <= t1 + w);
    let rates: Vec<f64> = intervals
        .get(lo..hi)
        .unwrap_or(&[])
        .iter()
        .filter(|iv| iv.clean)
        .map(|iv| iv.rate_kg_s)
        .collect();
    let rates = if rates.len() >= 3 {
        rates
    } else {
        intervals
            .iter()
            .filter(|iv| iv.clean)
            .map(|iv| iv.rate_kg_s)
            .collect()
    };
    let n = rates.len();
    match (median(&rates), mad_sigma(&rates)) {
        (Some(m), Some(s)) => (m.max(0.0), 1.2533 * s / (n as f64).sqrt(), n),
        _ => (0.0, 0.0, 0),
    }
}

fn bracket_reading(ctx: &Ctx<'_>, i: usize, e: &Eval) -> Option<BracketReading> {
    let r = ctx.readings.get(i)?;
    Some(BracketReading {
        time_ms: r.time_ms,
        total_mass_kg: e.contents_total_kg,
        fill_fraction: e.fill_fraction,
        pressure_pa: r.pressure_pa,
        liquid_temperature_k: e.liquid_temperature_k,
        saturation_temperature_k: e.saturation_temperature_k,
    })
}

/// The GUM budget of a reading's total mass: (contents, budget, extra independent u from the liquid
/// state, kg).
fn budget(
    ctx: &Ctx<'_>,
    r: &ReadingInput,
    e: &Eval,
) -> Option<(Contents, tank::UncertaintyBudget, f64)> {
    let opts = ctx.opts;
    let inputs = UncertaintyInputs {
        dp_noise_u_pa: ctx.input.dp_noise_u_pa,
        pressure_u_pa: opts.pressure_u_pa,
        ..UncertaintyInputs::default()
    };
    // the budget perturbs the tank pressure: keep the liquid's saturation pressure clear of it
    let liquid = match e.liquid {
        LiquidState::SaturatedAtPressure { pressure_pa }
            if pressure_pa < r.pressure_pa - 1.5 * opts.pressure_u_pa =>
        {
            e.liquid
        }
        LiquidState::Temperature { .. } => e.liquid,
        _ => LiquidState::SaturatedAtTankPressure,
    };
    let c = ctx.conditions(r, liquid);
    let (contents, b) = ctx
        .tank
        .contents_with_uncertainty(r.dp_pa, &c, &inputs, &ctx.contents_opts)
        .ok()?;
    // the tracked liquid state: one-sided difference toward colder liquid
    let mut extra = 0.0;
    if ctx.opts.thermal_history
        && let LiquidState::SaturatedAtPressure { pressure_pa } = liquid
    {
        let u =
            opts.liquid_state_u_fraction * (r.pressure_pa - pressure_pa) + opts.liquid_state_u_pa;
        let colder = (pressure_pa - u).max(ctx.f.triple().pressure_pa * 1.001);
        let c2 = ctx.conditions(
            r,
            LiquidState::SaturatedAtPressure {
                pressure_pa: colder,
            },
        );
        if let Ok(other) = ctx
            .tank
            .contents_from_reading(r.dp_pa, &c2, &ctx.contents_opts)
        {
            extra = (other.total_mass_kg - contents.total_mass_kg).abs();
        }
    } else if ctx.opts.thermal_history
        && matches!(e.liquid, LiquidState::SaturatedAtPressure { .. })
    {
        // saturation pressure within the pressure uncertainty of the tank pressure: no extra term
        // beyond the pressure's own
        extra = 0.0;
    }
    Some((contents, b, extra))
}

fn fmt_kg(x: f64) -> String {
    format!("{:.0}", x)
}

fn balance(
    ctx: &Ctx<'_>,
    d: &DeliveryInput,
    (b, a): (Option<usize>, Option<usize>),
    evals: &[Option<Eval>],
    intervals: &[Interval],
) -> Balance {
    let opts = ctx.opts;
    let k = opts.coverage_factor;
    let window_h = opts.bracket_window_s / 3600.0;
    let mut out = Balance {
        ticket: d.ticket.clone(),
        tank: ctx.input.name.clone(),
        vehicle: d.vehicle.clone(),
        carrier: d.carrier.clone(),
        start_ms: d.start_ms,
        end_ms: d.end_ms,
        verdict: Verdict::Inconclusive,
        billed_kg: d.billed_kg,
        gained_kg: 0.0,
        drawn_kg: 0.0,
        residual_kg: 0.0,
        residual_percent: 0.0,
        sigma_kg: 0.0,
        sigma_readings_shared_kg: 0.0,
        sigma_readings_independent_kg: 0.0,
        sigma_usage_kg: 0.0,
        sigma_meter_kg: 0.0,
        coverage_factor: k,
        limit_kg: 0.0,
        inconclusive_limit_percent: 100.0 * opts.inconclusive_fraction,
        ratio: f64::NAN,
        usage_kg_per_day: 0.0,
        before: None,
        after: None,
        bracket_window_h: window_h,
        gauge_drift_percent_per_year: None,
        explanation: String::new(),
    };
    let eb = b.and_then(|i| evals.get(i).copied().flatten().map(|e| (i, e)));
    let ea = a.and_then(|i| evals.get(i).copied().flatten().map(|e| (i, e)));
    let (Some((ib, eb)), Some((ia, ea))) = (eb, ea) else {
        let side = if eb.is_none() { "before" } else { "after" };
        out.explanation = format!(
            "Inconclusive: no usable reading within {window_h:.0} h {side} the fill, so the {} kg billed cannot be checked.",
            fmt_kg(d.billed_kg)
        );
        return out;
    };
    out.before = bracket_reading(ctx, ib, &eb);
    out.after = bracket_reading(ctx, ia, &ea);
    let (rb, ra) = (ctx.readings[ib], ctx.readings[ia]);
    let dt_s = (ra.time_ms - rb.time_ms) as f64 / 1000.0;
    let (rate, rate_se, _) = usage_near(intervals, rb.time_ms, ra.time_ms, opts);
    out.usage_kg_per_day = rate * DAY_S;
    out.drawn_kg = rate * dt_s;
    out.sigma_usage_kg =
        ((opts.usage_u_rel * out.drawn_kg).powi(2) + (rate_se * dt_s).powi(2)).sqrt();
    let meter_pct = d
        .meter_repeatability_percent
        .unwrap_or(opts.meter_repeatability_percent);
    out.sigma_meter_kg = meter_pct / 100.0 * d.billed_kg.abs();
    match (budget(ctx, &rb, &eb), budget(ctx, &ra, &ea)) {
        (Some((cb, bb, xb)), Some((ca, ba, xa))) => {
            let diff = tank::difference_uncertainty(&bb, &ba);
            // the thermal state's contents come from the tracked state, the budget's from its
            // conditions: use the tracked contents for the gain
            let _ = (cb, ca);
            out.sigma_readings_shared_kg = diff.shared.total_mass_kg;
            out.sigma_readings_independent_kg =
                (diff.independent.total_mass_kg.powi(2) + xb * xb + xa * xa).sqrt();
        }
        _ => {
            out.explanation = format!(
                "Inconclusive: the uncertainty of the readings around the fill cannot be evaluated, so the {} kg billed cannot be checked.",
                fmt_kg(d.billed_kg)
            );
            return out;
        }
    }
    out.gained_kg = ea.contents_total_kg - eb.contents_total_kg;
    out.residual_kg = d.billed_kg - (out.gained_kg + out.drawn_kg);
    out.sigma_kg = (out.sigma_readings_shared_kg.powi(2)
        + out.sigma_readings_independent_kg.powi(2)
        + out.sigma_usage_kg.powi(2)
        + out.sigma_meter_kg.powi(2))
    .sqrt();
    out.ratio = if d.billed_kg > 0.0 {
        (out.gained_kg + out.drawn_kg) / d.billed_kg
    } else {
        f64::NAN
    };
    out.residual_percent = if d.billed_kg > 0.0 {
        100.0 * out.residual_kg / d.billed_kg
    } else {
        0.0
    };
    out.limit_kg = (k * out.sigma_kg).max(opts.materiality_fraction * d.billed_kg.abs());
    set_verdict(&mut out, opts);
    out
}

/// Decide the verdict and write the explanation (also used when a drift note is added).
pub(crate) fn set_verdict(b: &mut Balance, opts: &AuditOptions) {
    let k = b.coverage_factor;
    let numbers = format!(
        "billed {} kg; the tank gained {} kg and the customer drew about {} kg during the fill",
        fmt_kg(b.billed_kg),
        fmt_kg(b.gained_kg),
        fmt_kg(b.drawn_kg)
    );
    let (verdict, text) = if b.residual_kg > b.limit_kg {
        (
            Verdict::Short,
            format!(
                "Short: {numbers}, so {} kg ({:.1} % of the ticket) did not arrive, beyond the limit of {} kg (k = {k} times the standard uncertainty {} kg, at least {:.1} % of the ticket).",
                fmt_kg(b.residual_kg),
                b.residual_percent,
                fmt_kg(b.limit_kg),
                fmt_kg(b.sigma_kg),
                100.0 * opts.materiality_fraction
            ),
        )
    } else if -b.residual_kg > b.limit_kg {
        (
            Verdict::Excess,
            format!(
                "Excess: {numbers}, so {} kg ({:.1} % of the ticket) more arrived than was billed, beyond the limit of {} kg (k = {k} times the standard uncertainty {} kg, at least {:.1} % of the ticket).",
                fmt_kg(-b.residual_kg),
                -b.residual_percent,
                fmt_kg(b.limit_kg),
                fmt_kg(b.sigma_kg),
                100.0 * opts.materiality_fraction
            ),
        )
    } else if k * b.sigma_kg > opts.inconclusive_fraction * b.billed_kg.abs() {
        (
            Verdict::Inconclusive,
            format!(
                "Inconclusive: {numbers}, leaving {} kg ({:.1} % of the ticket), but k = {k} times the standard uncertainty {} kg exceeds {:.1} % of the ticket, too wide to judge.",
                fmt_kg(b.residual_kg),
                b.residual_percent,
                fmt_kg(b.sigma_kg),
                b.inconclusive_limit_percent
            ),
        )
    } else {
        (
            Verdict::Consistent,
            format!(
                "Consistent: {numbers}, leaving {} kg ({:.1} % of the ticket), within the limit of {} kg (k = {k} times the standard uncertainty {} kg, at least {:.1} % of the ticket).",
                fmt_kg(b.residual_kg),
                b.residual_percent,
                fmt_kg(b.limit_kg),
                fmt_kg(b.sigma_kg),
                100.0 * opts.materiality_fraction
            ),
        )
    };
    b.verdict = verdict;
    b.explanation = text;
    if let Some(drift) = b.gauge_drift_percent_per_year {
        b.explanation.push_str(&format!(
            " The tank's gauge is drifting ({drift:.1} % of span per year), so the gain is doubtful."
        ));
    }
}

fn findings(ctx: &Ctx<'_>, intervals: &[Interval]) -> Vec<Finding> {
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

fn forecast(ctx: &Ctx<'_>, evals: &[Option<Eval>], intervals: &[Interval]) -> Option<Forecast> {
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
