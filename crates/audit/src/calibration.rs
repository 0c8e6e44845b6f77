//! Each gauge's scale, fitted from the fleet's fills, and every fill judged against it.
//!
//! A DP gauge within its accuracy class can read a few tenths of a percent to a percent high or low
//! over its whole span (a span calibration error), and then every fill at that tank seems that much
//! short or excess. The fleet's own fills measure it: each fill's ratio (gained + drawn) / billed,
//! less its vehicle's effect, is an observation of the tank's gauge scale, and a tank filled by
//! several vehicles (or by a vehicle also seen elsewhere) has its scale fixed by the others (the
//! additive two-way model of [`crate::effects`]; a meter comparison of this kind is the usual
//! practice of checking one instrument against a reference many times, JCGM 100:2008 §4.2).
//!
//! Each fill is judged against the scale fitted from the tank's *other* fills (leave-one-out), so a
//! short fill does not hide in its own tank's scale; the scale follows the gauge model the fleet
//! test chose (constant, a step at the dated instant, or a linear drift). The scale's standard
//! uncertainty (the fit's, plus the vehicle effects' it leans on) enters the balance's budget.

use crate::AuditOptions;
use crate::balance::rejudge;
use crate::fleet::GaugeStatus;
use crate::records::{GaugeScale, TankAudit};

/// The model of a tank's scale over time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum ScaleModel {
    /// One scale.
    Constant,
    /// One scale before the instant, another after.
    Step(i64),
    /// A straight line in time.
    Drift,
}

impl ScaleModel {
    pub(crate) fn from_status(status: GaugeStatus, step_ms: Option<i64>) -> Self {
        match (status, step_ms) {
            (GaugeStatus::Step, Some(at)) => ScaleModel::Step(at),
            (GaugeStatus::Drift, _) => ScaleModel::Drift,
            _ => ScaleModel::Constant,
        }
    }

    fn name(self) -> &'static str {
        match self {
            ScaleModel::Constant => "constant",
            ScaleModel::Step(_) => "step",
            ScaleModel::Drift => "drift",
        }
    }
}

/// One usable fill of a tank: (balance index, time ms, ratio less its vehicle's effect, weight (the
/// robust weight over the ratio's variance), the vehicle effect's variance, its sensitivity to the
/// span over the tank's mean fill's).
pub(crate) type Obs = (usize, i64, f64, f64, f64, f64);

/// A gauge's span step in the mean fill's terms, from the fills before it (ratio, weight) and after
/// it (ratio, weight, sensitivity to the span over the mean fill's, r): the weighted mean before,
/// and the step Σ w r (x − before) / Σ w r² after, with the sums its uncertainty needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct SpanStep {
    pub(crate) before: f64,
    pub(crate) step: f64,
    /// Σ w before the step, and the fills there.
    w_before: f64,
    n_before: usize,
    /// Σ w r and Σ w r² after the step, and the fills there.
    wr: f64,
    wrr: f64,
    n_after: usize,
}

impl SpanStep {
    /// None without a weighted fill on either side.
    pub(crate) fn fit(
        before: impl Iterator<Item = (f64, f64)>,
        after: impl Iterator<Item = (f64, f64, f64)>,
    ) -> Option<SpanStep> {
        let (sb, w_before, n_before) = before.fold((0.0, 0.0, 0), |(s, w, n), (x, wi)| {
            (s + wi * x, w + wi, n + 1)
        });
        if w_before.is_nan() || w_before <= 0.0 || !w_before.is_finite() {
            return None;
        }
        let before = sb / w_before;
        let (num, wr, wrr, n_after) = after.fold((0.0, 0.0, 0.0, 0), |(a, b, c, n), (x, w, r)| {
            (a + w * r * (x - before), b + w * r, c + w * r * r, n + 1)
        });
        if wrr.is_nan() || wrr <= 0.0 {
            return None;
        }
        Some(SpanStep {
            before,
            step: num / wrr,
            w_before,
            n_before,
            wr,
            wrr,
            n_after,
        })
    }

    /// The level after the step for a fill of relative sensitivity `rel`, and its variance (the step
    /// leans on the mean before by −Σwr/Σwr²).
    pub(crate) fn after(&self, rel: f64) -> (f64, f64) {
        let lean = 1.0 - rel * self.wr / self.wrr;
        (
            self.before + rel * self.step,
            lean * lean / self.w_before + rel * rel / self.wrr,
        )
    }
}

/// A weighted least-squares fit of the scale at `at_ms` for a fill of relative sensitivity `rel`
/// from `obs` (the fill itself left out): (scale, its standard error from the fit, observations
/// used). A gauge's fault moves each fill's ratio by its sensitivity to the span over the mean
/// fill's (a fill into a horizontal tank's heads moves less than one in its middle): after a step,
/// the scale is the mean before it plus the step scaled by `rel`, the step fitted as Σ w r (x −
/// before) / Σ w r² over the others after it; along a drift, the line of the ratios on the
/// sensitivity-scaled time from the others' mean time.
fn fit_at(obs: &[&Obs], model: ScaleModel, at_ms: i64, rel: f64) -> Option<(f64, f64, usize)> {
    let mean = |q: &mut dyn Iterator<Item = &&Obs>| {
        let (s, w, n) = q.fold((0.0, 0.0, 0), |(s, w, n), o| {
            (s + o.3 * o.2, w + o.3, n + 1)
        });
        (w > 0.0 && w.is_finite()).then(|| (s / w, w, n))
    };
    match model {
        ScaleModel::Step(step_ms) if at_ms > step_ms => {
            let fit = SpanStep::fit(
                obs.iter().filter(|o| o.1 <= step_ms).map(|o| (o.2, o.3)),
                obs.iter()
                    .filter(|o| o.1 > step_ms)
                    .map(|o| (o.2, o.3, o.5)),
            )?;
            if fit.n_after < 3 {
                return None;
            }
            let (scale, var) = fit.after(rel);
            // the scale rests on the fills either side
            Some((scale, var.sqrt(), fit.n_before + fit.n_after))
        }
        ScaleModel::Step(step_ms) => {
            let (m, w, n) = mean(&mut obs.iter().filter(|o| o.1 <= step_ms))?;
            (n >= 3).then(|| (m, (1.0 / w).sqrt(), n))
        }
        ScaleModel::Drift => {
            let n = obs.len();
            let sw: f64 = obs.iter().map(|o| o.3).sum();
            if n < 5 || !(sw > 0.0 && sw.is_finite()) {
                return None;
            }
            let t_ref = obs.iter().map(|o| o.3 * o.1 as f64).sum::<f64>() / sw;
            let z = |o: &Obs| o.5 * (o.1 as f64 - t_ref);
            let mean_z = obs.iter().map(|o| o.3 * z(o)).sum::<f64>() / sw;
            let mean_x = obs.iter().map(|o| o.3 * o.2).sum::<f64>() / sw;
            let szz: f64 = obs.iter().map(|o| o.3 * (z(o) - mean_z).powi(2)).sum();
            if szz <= 0.0 {
                return None;
            }
            let szx: f64 = obs
                .iter()
                .map(|o| o.3 * (z(o) - mean_z) * (o.2 - mean_x))
                .sum();
            let dz = rel * (at_ms as f64 - t_ref) - mean_z;
            Some((
                mean_x + szx / szz * dz,
                (1.0 / sw + dz * dz / szz).sqrt(),
                n,
            ))
        }
        ScaleModel::Constant => {
            let (m, w, n) = mean(&mut obs.iter())?;
            (n >= 3).then(|| (m, (1.0 / w).sqrt(), n))
        }
    }
}

/// Judge every fill of one tank against its gauge's fitted scale. `obs` are the tank's usable fills;
/// fills without enough others to fit from keep their plain verdict.
pub(crate) fn apply(t: &mut TankAudit, obs: &[Obs], model: ScaleModel, opts: &AuditOptions) {
    if obs.len() < opts.calibration_min_fills.max(4) {
        return;
    }
    for o in obs {
        let others: Vec<&Obs> = obs.iter().filter(|x| x.0 != o.0).collect();
        let Some((scale, se_fit, n)) = fit_at(&others, model, o.1, o.5) else {
            continue;
        };
        if n + 1 < opts.calibration_min_fills || !(scale > 0.5 && scale < 1.5) {
            continue;
        }
        // the vehicle effects the others' ratios were corrected by, weighted alike
        let sw: f64 = others.iter().map(|x| x.3).sum();
        let veh_var = others.iter().map(|x| (x.3 / sw).powi(2) * x.4).sum::<f64>();
        let u = (se_fit * se_fit + veh_var).sqrt();
        let Some(b) = t.balances.get_mut(o.0) else {
            continue;
        };
        let measured = b.measured_kg();
        b.gauge_scale = Some(GaugeScale {
            scale,
            u,
            fills: n,
            model: model.name(),
        });
        b.residual_kg = b.billed_kg - measured / scale;
        b.residual_percent = 100.0 * b.residual_kg / b.billed_kg;
        b.sigma_gauge_scale_kg = measured / scale * u / scale;
        rejudge(b, opts);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A constant scale from observations of weight 1/σ² (σ = 1 %) is their mean, with the standard
    /// error σ / √n (the weighted mean's variance 1 / Σw; any statistics text).
    #[test]
    fn constant_scale_is_the_mean_of_the_others() {
        let obs: Vec<Obs> = (0..5)
            .map(|i| (i, i as i64 * 1000, 1.0 + 0.001 * i as f64, 1e4, 0.0, 1.0))
            .collect();
        let refs: Vec<&Obs> = obs.iter().collect();
        let (s, se, n) = fit_at(&refs, ScaleModel::Constant, 0, 1.0).expect("fit");
        assert!((s - 1.002).abs() < 1e-12, "{s}");
        assert!((se - 0.01 / 5f64.sqrt()).abs() < 1e-12, "{se}");
        assert_eq!(n, 5);
    }

    /// A step model uses only the fills on the same side of the step; a drift model extrapolates
    /// the line (exact data on a line of slope 1e-3 per 1000 ms).
    #[test]
    fn step_and_drift_follow_the_gauge() {
        let obs: Vec<Obs> = (0..8)
            .map(|i| {
                let x = if i < 4 { 1.0 } else { 0.97 };
                (i, i as i64 * 1000, x, 1.0, 0.0, 1.0)
            })
            .collect();
        let refs: Vec<&Obs> = obs.iter().collect();
        let (before, ..) = fit_at(&refs, ScaleModel::Step(3500), 1000, 1.0).expect("fit");
        let (after, ..) = fit_at(&refs, ScaleModel::Step(3500), 6000, 1.0).expect("fit");
        assert!((before - 1.0).abs() < 1e-12 && (after - 0.97).abs() < 1e-12);
        let line: Vec<Obs> = (0..8)
            .map(|i| (i, i as i64 * 1000, 1.0 + 1e-3 * i as f64, 1.0, 0.0, 1.0))
            .collect();
        let refs: Vec<&Obs> = line.iter().collect();
        let (at10, ..) = fit_at(&refs, ScaleModel::Drift, 10_000, 1.0).expect("fit");
        assert!((at10 - 1.010).abs() < 1e-12, "{at10}");
    }

    /// A fault moves each fill's ratio by its sensitivity to the span over the mean fill's
    /// (constructed, exact): four fills at 1.00 before a step and four after it at 1 − 0.03·r, r
    /// alternately 0.5 and 1.5; a fill after the step with r = 0.8 is judged at 1 − 0.024, one with
    /// r = 1 at 0.97 (the mean fill's step). Along a drift with ratios 1 − 0.04·r·(t − t̄) per 1000
    /// ms, the line is recovered at any r.
    #[test]
    fn a_fault_moves_each_fill_by_its_sensitivity() {
        let rel = |i: usize| if i.is_multiple_of(2) { 0.5 } else { 1.5 };
        let obs: Vec<Obs> = (0..8)
            .map(|i| {
                let x = if i < 4 { 1.0 } else { 1.0 - 0.03 * rel(i) };
                (i, i as i64 * 1000, x, 1.0, 0.0, rel(i))
            })
            .collect();
        let refs: Vec<&Obs> = obs.iter().collect();
        let (at_08, ..) = fit_at(&refs, ScaleModel::Step(3500), 9000, 0.8).expect("fit");
        let (at_1, ..) = fit_at(&refs, ScaleModel::Step(3500), 9000, 1.0).expect("fit");
        assert!((at_08 - 0.976).abs() < 1e-12, "{at_08}");
        assert!((at_1 - 0.97).abs() < 1e-12, "{at_1}");
        let line: Vec<Obs> = (0..8)
            .map(|i| {
                let x = 1.0 - 0.04 * rel(i) * (i as f64 - 3.5);
                (i, i as i64 * 1000, x, 1.0, 0.0, rel(i))
            })
            .collect();
        let refs: Vec<&Obs> = line.iter().collect();
        let (at10, ..) = fit_at(&refs, ScaleModel::Drift, 10_000, 0.8).expect("fit");
        assert!((at10 - (1.0 - 0.04 * 0.8 * 6.5)).abs() < 1e-12, "{at10}");
    }
}
