//! The balances' precision from the data as well as from the settings (a Type A evaluation, JCGM
//! 100:2008 §4.2): the scatter of the fleet's honest-looking balances estimates each vehicle's meter
//! noise and each tank's reading noise, with the stated figures as priors.
//!
//! For a balance f of tank t and vehicle v, with its vehicle's and tank's systematic levels removed,
//! E[e²] = s_t² R_f + m_v² b_f² + U_f, where R_f is the readings' stated variance (GUM), U_f the use
//! model's (already fitted to the tank's own intervals), b_f the billed mass, s_t a tank's factor on
//! its readings' variance and m_v a vehicle's meter noise (fraction). Both are estimated by the method
//! of moments, alternately, each shrunk toward its prior (s_t = 1; m_v = the vehicle's setting or the
//! audit's default) as if the prior were `PRIOR_WEIGHT` observations (a conjugate, scaled
//! inverse-χ² prior; Gelman et al., "Bayesian Data Analysis", 3rd ed., 2013, §2.6). A meter is never
//! judged looser than its stated figure (a vehicle short on some fills scatters like a poor meter). Balances beyond 3
//! standard uncertainties are left out of the estimate (robustness), so a short fill does not pass
//! for noise. Then every balance's uncertainty, limit and verdict are recomputed.

use crate::AuditOptions;
use crate::balance::set_verdict;
use crate::effects::{Row, two_way};
use crate::records::{Balance, TankAudit};

/// The prior's weight, in balances (common practice, no source).
const PRIOR_WEIGHT: f64 = 4.0;
/// Balances further than this many standard uncertainties from their level are not used.
const TRIM_Z: f64 = 3.0;

fn readings_var(b: &Balance) -> f64 {
    b.sigma_readings_shared_kg.powi(2) + b.sigma_readings_independent_kg.powi(2)
}

/// Re-estimate the noise of readings and meters from the balances and re-judge every balance.
pub(crate) fn refine(tanks: &mut [TankAudit], opts: &AuditOptions) {
    // vehicle index by name
    let mut names: Vec<String> = tanks
        .iter()
        .flat_map(|t| t.balances.iter().map(|b| b.vehicle.clone()))
        .collect();
    names.sort();
    names.dedup();
    let index = |v: &str| names.binary_search_by(|n| n.as_str().cmp(v)).ok();
    // the systematic levels: tank level and vehicle effect of the ratio
    let mut rows: Vec<Row> = Vec::new();
    for (ti, t) in tanks.iter().enumerate() {
        for b in &t.balances {
            if let Some(vi) = index(&b.vehicle)
                && b.ratio.is_finite()
                && b.sigma_kg > 0.0
            {
                rows.push((ti, vi, b.ratio));
            }
        }
    }
    if rows.len() < 8 {
        return;
    }
    let effects = two_way(&rows, tanks.len(), names.len());
    // priors and starting values
    let mut tank_factor = vec![1.0_f64; tanks.len()];
    let mut meter_prior = vec![opts.meter_repeatability_percent / 100.0; names.len()];
    for t in tanks.iter() {
        for b in &t.balances {
            if let Some(vi) = index(&b.vehicle) {
                meter_prior[vi] = b.meter_percent / 100.0;
            }
        }
    }
    let mut meter = meter_prior.clone();
    // (tank, vehicle, e², R, U, b²)
    let samples: Vec<(usize, usize, f64, f64, f64, f64)> = tanks
        .iter()
        .enumerate()
        .flat_map(|(ti, t)| {
            let effects = &effects;
            let index = &index;
            t.balances.iter().filter_map(move |b| {
                let vi = index(&b.vehicle)?;
                if !(b.ratio.is_finite() && b.sigma_kg > 0.0 && b.billed_kg > 0.0) {
                    return None;
                }
                let level = effects.tank.get(ti)? + effects.vehicle.get(vi)?;
                let e = (b.ratio - level) * b.billed_kg;
                Some((
                    ti,
                    vi,
                    e * e,
                    readings_var(b),
                    b.sigma_usage_kg.powi(2),
                    b.billed_kg * b.billed_kg,
                ))
            })
        })
        .collect();
    for _ in 0..4 {
        let var = |s: &(usize, usize, f64, f64, f64, f64), tf: &[f64], m: &[f64]| {
            tf[s.0] * s.3 + m[s.1].powi(2) * s.5 + s.4
        };
        let kept: Vec<&(usize, usize, f64, f64, f64, f64)> = samples
            .iter()
            .filter(|s| s.2 <= TRIM_Z * TRIM_Z * var(s, &tank_factor, &meter))
            .collect();
        // tanks
        let mut num = vec![PRIOR_WEIGHT; tanks.len()];
        let mut den = vec![PRIOR_WEIGHT; tanks.len()];
        for s in &kept {
            if s.3 > 0.0 {
                let other = meter[s.1].powi(2) * s.5 + s.4;
                num[s.0] += ((s.2 - other) / s.3).max(0.0);
                den[s.0] += 1.0;
            }
        }
        for (f, (n, d)) in tank_factor.iter_mut().zip(num.iter().zip(&den)) {
            *f = (n / d).clamp(0.05, 20.0);
        }
        // vehicles
        let mut num: Vec<f64> = meter_prior.iter().map(|m| PRIOR_WEIGHT * m * m).collect();
        let mut den = vec![PRIOR_WEIGHT; names.len()];
        for s in &kept {
            let other = tank_factor[s.0] * s.3 + s.4;
            num[s.1] += ((s.2 - other) / s.5).max(0.0);
            den[s.1] += 1.0;
        }
        // a meter is judged at most at its stated figure: one that scatters more than it should is a
        // finding about the meter (or its deliveries), not a reason to widen its tolerance
        for ((m, prior), (n, d)) in meter.iter_mut().zip(&meter_prior).zip(num.iter().zip(&den)) {
            *m = (n / d).sqrt().min(*prior);
        }
    }
    // re-judge every balance with its tank's and vehicle's precision
    for (ti, t) in tanks.iter_mut().enumerate() {
        let factor = tank_factor[ti].sqrt();
        for b in &mut t.balances {
            let Some(vi) = index(&b.vehicle) else {
                continue;
            };
            if !(b.sigma_kg > 0.0 && b.billed_kg > 0.0) {
                continue;
            }
            b.sigma_readings_shared_kg *= factor;
            b.sigma_readings_independent_kg *= factor;
            // the other tickets' meters in the same period keep their share
            b.meter_percent = 100.0 * meter[vi];
            b.sigma_meter_kg =
                ((meter[vi] * b.billed_kg).powi(2) + b.sigma_other_tickets_kg.powi(2)).sqrt();
            b.sigma_kg = (b.sigma_readings_shared_kg.powi(2)
                + b.sigma_readings_independent_kg.powi(2)
                + b.sigma_usage_kg.powi(2)
                + b.sigma_meter_kg.powi(2))
            .sqrt();
            b.usage_share_percent = Some(100.0 * (b.sigma_usage_kg / b.sigma_kg).powi(2));
            b.limit_kg =
                (b.coverage_factor * b.sigma_kg).max(opts.materiality_fraction * b.billed_kg.abs());
            set_verdict(b, opts);
        }
    }
}
