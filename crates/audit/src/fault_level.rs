//! A faulty gauge's tank level over time: what its fills' ratios are measured about once the fault
//! is found (see [`crate::fleet`] and [`crate::precision`]).

use crate::calibration::SpanStep;
use crate::fleet::{GaugeFinding, GaugeStatus, MIN_SENSITIVITY};
use crate::gauge_faults::Point;

const YEAR_MS: f64 = 365.0 * 86_400_000.0;

/// A faulty gauge's tank level over time, fitted to the tank's test points (ratios less what the
/// vehicles add), for a fill of sensitivity s to the span: the fault moves a fill's ratio by s over
/// the tank's mean sensitivity `per_span` times what it moves the mean fill's. A step: the weighted
/// mean before it, and after it that plus the step; a drift: the weighted line of the ratios on the
/// sensitivity-scaled time from the points' mean time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum FaultLevel {
    Step {
        at_ms: i64,
        before: f64,
        step: f64,
        per_span: f64,
    },
    Line {
        mean: f64,
        slope_per_year: f64,
        t_ref_years: f64,
        per_span: f64,
    },
}

impl FaultLevel {
    /// From the tank's points `pts` and each one's sensitivity `sens`, the fills' mean sensitivity
    /// being `per_span`.
    pub(crate) fn fit(
        g: &GaugeFinding,
        pts: &[Point],
        sens: &[f64],
        per_span: f64,
    ) -> Option<FaultLevel> {
        let per_span = per_span.max(MIN_SENSITIVITY);
        let rel = |i: usize| sens.get(i).copied().unwrap_or(per_span) / per_span;
        match (g.status, g.step_ms) {
            (GaugeStatus::Step, Some(at_ms)) => {
                let fit = SpanStep::fit(
                    pts.iter().filter(|p| p.0 <= at_ms).map(|p| (p.1, p.2)),
                    pts.iter()
                        .enumerate()
                        .filter(|(_, p)| p.0 > at_ms)
                        .map(|(i, p)| (p.1, p.2, rel(i))),
                )?;
                Some(FaultLevel::Step {
                    at_ms,
                    before: fit.before,
                    step: fit.step,
                    per_span,
                })
            }
            (GaugeStatus::Drift, _) => {
                let sw: f64 = pts.iter().map(|p| p.2).sum();
                if sw.is_nan() || sw <= 0.0 {
                    return None;
                }
                let t_ref_years = pts.iter().map(|p| p.2 * p.0 as f64 / YEAR_MS).sum::<f64>() / sw;
                let line: Vec<(f64, f64, f64)> = pts
                    .iter()
                    .enumerate()
                    .map(|(i, p)| (rel(i) * (p.0 as f64 / YEAR_MS - t_ref_years), p.1, p.2))
                    .collect();
                let fit = crate::stats::weighted_line(&line)?;
                Some(FaultLevel::Line {
                    mean: fit.intercept,
                    slope_per_year: fit.slope,
                    t_ref_years,
                    per_span,
                })
            }
            _ => None,
        }
    }

    /// The level at `t_ms` for a fill of sensitivity `s`.
    pub(crate) fn at(self, t_ms: i64, s: f64) -> f64 {
        match self {
            FaultLevel::Step {
                at_ms,
                before,
                step,
                per_span,
            } => {
                if t_ms > at_ms {
                    before + s / per_span * step
                } else {
                    before
                }
            }
            FaultLevel::Line {
                mean,
                slope_per_year,
                t_ref_years,
                per_span,
            } => mean + s / per_span * slope_per_year * (t_ms as f64 / YEAR_MS - t_ref_years),
        }
    }
}
