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

    /// What the fault adds to the level at `t_ms` for a fill of sensitivity `s`: the step after it,
    /// the drift's line from its mean time.
    pub(crate) fn fault_part(self, t_ms: i64, s: f64) -> f64 {
        match self {
            FaultLevel::Step { before, .. } => self.at(t_ms, s) - before,
            FaultLevel::Line { mean, .. } => self.at(t_ms, s) - mean,
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

#[cfg(test)]
mod tests {
    use super::*;

    /// What a fault adds, by hand. A step of −3 % in the mean fill's terms (per_span 0.8) at t = 100
    /// ms: nothing before it, and for a fill of sensitivity 0.4 after it half of it, 0.4/0.8 · −0.03
    /// = −0.015 (the level there 1.01 − 0.015 = 0.995). A drift of −4 %/year about a mean time of
    /// half a year: a year in, for a fill of the mean sensitivity, −0.04 · 0.5 = −0.02; at the mean
    /// time nothing.
    #[test]
    fn what_a_fault_adds_by_hand() {
        let step = FaultLevel::Step {
            at_ms: 100,
            before: 1.01,
            step: -0.03,
            per_span: 0.8,
        };
        assert_eq!(step.fault_part(50, 0.4), 0.0);
        assert!((step.fault_part(150, 0.4) + 0.015).abs() < 1e-12);
        assert!((step.at(150, 0.4) - 0.995).abs() < 1e-12);
        let year = YEAR_MS as i64;
        let drift = FaultLevel::Line {
            mean: 0.99,
            slope_per_year: -0.04,
            t_ref_years: 0.5,
            per_span: 1.0,
        };
        assert!((drift.fault_part(year, 1.0) + 0.02).abs() < 1e-12);
        assert!(drift.fault_part(year / 2, 1.0).abs() < 1e-12);
    }
}
