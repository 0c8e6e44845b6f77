//! What the audit of one tank gives: balances, findings between fills, the forecast, reading states.

use fluids::FluidId;
use serde::Serialize;

use crate::Verdict;

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
    /// How far the mass read moves per unit relative error of the gauge's span, kg (the reading
    /// times the liquid surface's area over g; the gauge tests weigh a fill's evidence of the span
    /// by the difference of its two readings').
    #[serde(skip)]
    pub span_kg: f64,
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
    /// Mass lost beyond use between the bracketing readings in a period the audit found (a leak or
    /// venting: its rate over the hours the two share), kg; counted with the use.
    pub lost_beyond_use_kg: f64,
    /// billed − (gained + drawn + lost beyond use), kg.
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
    /// The limit a residual must pass to be short: max(k sigma, materiality), kg (and to be excess,
    /// unless `excess_limit_kg` differs).
    pub limit_kg: f64,
    /// Coverage factor for an over-delivery: k, or the wider cleared factor for a vehicle found short
    /// (its record makes a short delivery likelier, not an over-delivery).
    pub excess_coverage_factor: f64,
    /// The limit a negative residual must pass to be excess: max(k sigma, materiality) with
    /// `excess_coverage_factor`, kg.
    pub excess_limit_kg: f64,
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
    /// Hours from the reading before to the start of the fill.
    pub before_hours: Option<f64>,
    /// Hours from the end of the fill to the reading after.
    pub after_hours: Option<f64>,
    /// Billed on other tickets between the same two readings (taken as delivered), kg.
    pub other_fills_kg: f64,
    /// Their meters' part of the uncertainty, kg.
    pub sigma_other_tickets_kg: f64,
    /// The delivering meter's repeatability the balance is judged with, % (the vehicle's setting or
    /// the default, refined by the fleet's own balances).
    pub meter_percent: f64,
    /// The use model's share of the balance's variance, %.
    pub usage_share_percent: Option<f64>,
    /// The tank's gauge drift, % of span per year, when its gauge was found drifting.
    pub gauge_drift_percent_per_year: Option<f64>,
    /// The step of the tank's gauge before this fill, when one was found.
    pub gauge_step: Option<GaugeStep>,
    /// The gauge's scale the fill was judged against (fitted from the tank's other fills), when
    /// there were enough of them; the residual is then billed − (gained + drawn) / scale.
    pub gauge_scale: Option<GaugeScale>,
    /// Part of sigma from that scale's uncertainty, kg.
    pub sigma_gauge_scale_kg: f64,
    /// When the fill's vehicle was found biased and its other fills, with this balance, show this
    /// fill short where the balance alone could not: what that rests on (see `with_vehicle`).
    /// The residual, sigma and limit above stay the balance's own.
    pub with_vehicle: Option<crate::with_vehicle::VehicleEvidence>,
    /// When the fill's vehicle was found short on only some of its fills (its deliveries a mixture
    /// of honest and short ones) and this fill's balance makes it more likely short than not: what
    /// that rests on (see `with_vehicle`). The residual, sigma and limit above stay the balance's
    /// own.
    pub with_mixture: Option<crate::with_vehicle::MixtureEvidence>,
    /// One sentence with the numbers, to hand to a carrier.
    pub explanation: String,
}

impl Balance {
    /// What the tank's readings say arrived: gained + drawn + lost beyond use, kg (before the
    /// gauge's scale).
    pub fn measured_kg(&self) -> f64 {
        self.gained_kg + self.drawn_kg + self.lost_beyond_use_kg
    }
}

/// A gauge's scale: (gained + drawn) / delivered as the fleet's other fills at the tank show it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GaugeScale {
    /// The scale (1: the gauge reads true).
    pub scale: f64,
    /// Its standard uncertainty.
    pub u: f64,
    /// Fills it was fitted from.
    pub fills: usize,
    /// The gauge model: constant, step or drift.
    pub model: &'static str,
}

/// A step change of a gauge's span or zero (a bad recalibration), dated.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GaugeStep {
    /// When it happened: between the last fill before and the first fill after, ms.
    pub at_ms: i64,
    /// Its size, % of span (the fills' ratios over their sensitivity to the span).
    pub size_percent: f64,
}

/// An interval between readings and its loss's departure from the use model: where a gauge step
/// shows in the readings (a jump of three standard uncertainties or more is evidence of one; every
/// interval helps date it, a still one by saying the step was not there).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Jump {
    /// Start, ms.
    pub from_ms: i64,
    /// End, ms.
    pub to_ms: i64,
    /// (lost − expected) / its standard uncertainty: positive when the tank seemed to lose (single
    /// precision: one is kept for every interval of every tank).
    pub z: f32,
    /// How far the reading at its start moves per unit relative error of the gauge's span, over the
    /// interval's standard uncertainty (dimensionless: a span's step of ε moves the interval's z by
    /// ε times this).
    pub span_per_sd: f32,
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
    /// The rate of a ten-day leak the loss scan finds at this tank with probability 95 %, kg/day
    /// (None where its record is too short to judge).
    pub leak_detectable_kg_per_day: Option<f64>,
    /// Use rate and the next fill.
    pub forecast: Option<Forecast>,
    /// Every reading's state when [`crate::AuditOptions::keep_readings`].
    pub readings: Vec<ReadingState>,
    /// The state behind the latest reading the engine accepted.
    pub latest: Option<ReadingState>,
    /// The site's clock the use model took, hours east of UTC, when the site names no time zone and
    /// the tank's use shows one other than UTC (see [`crate::TankInput::zone`]).
    pub clock_offset_hours: Option<i32>,
    /// Every interval between readings with no fill and no unexplained gain, with its departure
    /// from the use model (to find and date steps).
    #[serde(skip)]
    pub jumps: Vec<Jump>,
}

#[cfg(test)]
impl TankAudit {
    /// A nitrogen tank of 20 t full with only these balances (for the fleet statistics' tests).
    pub(crate) fn with_balances(name: &str, balances: Vec<Balance>) -> TankAudit {
        TankAudit {
            tank: name.into(),
            fluid: fluids::FluidId::Nitrogen,
            ner_setting_percent_per_day: 0.2,
            ner_fitted_percent_per_day: None,
            full_mass_kg: 20_000.0,
            readings_used: 0,
            readings_refused: 0,
            balances,
            findings: Vec::new(),
            leak_detectable_kg_per_day: None,
            forecast: None,
            readings: Vec::new(),
            latest: None,
            clock_offset_hours: None,
            jumps: Vec::new(),
        }
    }
}
