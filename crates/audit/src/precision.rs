//! The balances' precision from the data as well as from the settings (a Type A evaluation, JCGM
//! 100:2008 §4.2): the scatter of the fleet's honest-looking balances estimates each vehicle's meter
//! noise, each tank's reading noise and its use model's, with the stated figures as priors.
//!
//! For a balance f of tank t and vehicle v, with its vehicle's and tank's systematic levels removed
//! (the residual e inflated by the leverage of those levels, 1 / (1 − 1/n_t − 1/n_v)),
//! E[e²] = s_t R_f + m_v² b_f² + q_t U_f, where R_f is the readings' stated variance (GUM), U_f the use
//! model's, b_f the billed mass, s_t and q_t a tank's factors on them and m_v a vehicle's meter noise
//! (fraction). Each is estimated by the method of moments from the balances it dominates — s_t from
//! those whose use variance is under a fifth of the stated total, q_t from those where it is over half
//! (estimating both from every balance alternately lets a use model's misfit pass for reading noise) —
//! and shrunk as if the prior were `PRIOR_WEIGHT` more observations (a conjugate, scaled inverse-χ²
//! prior; Gelman et al., "Bayesian Data Analysis", 3rd ed., 2013, §2.6): a tank's toward the fleet's
//! figure, the fleet's toward the settings (1), a meter's toward its setting or the audit's default (an
//! empirical-Bayes hierarchy, ibid. §5.1). A meter is never judged looser than its stated figure (a
//! vehicle short on some fills scatters like a poor meter). Balances beyond 3 standard uncertainties
//! of the first estimate are left out (robustness), so a short fill does not pass for noise. Then
//! every balance's uncertainty, limit and verdict are recomputed.

use crate::AuditOptions;
use crate::balance::rejudge;
use crate::effects::{Row, two_way};
use crate::records::{Balance, TankAudit};

/// The prior's weight, in balances (common practice, no source).
const PRIOR_WEIGHT: f64 = 4.0;
/// Balances further than this many standard uncertainties from their level are not used.
const TRIM_Z: f64 = 3.0;

/// A balance speaks for the readings' precision when the use model's share of its stated variance is
/// below this ...
const READINGS_CLASS: f64 = 0.2;
/// ... and for the use model's when above this (common practice, no source).
const USE_CLASS: f64 = 0.5;

/// (tank, vehicle, e², R, U, b²) of one balance.
type Sample = (usize, usize, f64, f64, f64, f64);

/// A mean of ratio estimates, (sum, count) pairs pooled, shrunk toward `prior` as if it were
/// `PRIOR_WEIGHT` more estimates.
fn shrink(parts: impl Iterator<Item = (f64, f64)>, prior: f64) -> f64 {
    let (sum, n) = parts.fold((0.0, 0.0), |a, x| (a.0 + x.0, a.1 + x.1));
    (sum + PRIOR_WEIGHT * prior) / (n + PRIOR_WEIGHT)
}

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
    let mut n_tank = vec![0usize; tanks.len()];
    let mut n_vehicle = vec![0usize; names.len()];
    for r in &rows {
        n_tank[r.0] += 1;
        n_vehicle[r.1] += 1;
    }
    let samples: Vec<Sample> = tanks
        .iter()
        .enumerate()
        .flat_map(|(ti, t)| {
            let effects = &effects;
            let index = &index;
            let (n_tank, n_vehicle) = (&n_tank, &n_vehicle);
            t.balances.iter().filter_map(move |b| {
                let vi = index(&b.vehicle)?;
                if !(b.ratio.is_finite() && b.sigma_kg > 0.0 && b.billed_kg > 0.0) {
                    return None;
                }
                let level = effects.tank.get(ti)? + effects.vehicle.get(vi)?;
                // the fitted level includes this balance, so its residual falls short of the error
                // by about the leverage 1/n_tank + 1/n_vehicle
                let leverage = 1.0 / n_tank[ti].max(1) as f64 + 1.0 / n_vehicle[vi].max(1) as f64;
                let e = (b.ratio - level) * b.billed_kg;
                Some((
                    ti,
                    vi,
                    e * e / (1.0 - leverage).max(0.5),
                    readings_var(b),
                    b.sigma_usage_kg.powi(2),
                    b.billed_kg * b.billed_kg,
                ))
            })
        })
        .collect();
    // which balances speak for the readings (the use model's share of the stated variance small)
    // and which for the use model (its share large); fixed from the stated figures
    let stated = |s: &Sample| s.3 + meter_prior[s.1].powi(2) * s.5 + s.4;
    let class: Vec<(bool, bool)> = samples
        .iter()
        .map(|s| {
            let v = stated(s);
            (s.3 > 0.0 && s.4 < READINGS_CLASS * v, s.4 > USE_CLASS * v)
        })
        .collect();
    let mut use_factor = vec![1.0_f64; tanks.len()];
    let mut mask: Vec<bool> = Vec::new();
    for it in 0..4 {
        let var =
            |s: &Sample| tank_factor[s.0] * s.3 + meter[s.1].powi(2) * s.5 + use_factor[s.0] * s.4;
        // balances beyond TRIM_Z of the current figures are left out; the set is fixed after the
        // first refinement (a set that followed ever tighter figures would trim ever more)
        if it <= 1 {
            mask = samples
                .iter()
                .map(|s| s.2 <= TRIM_Z * TRIM_Z * var(s))
                .collect();
        }
        let kept = || {
            samples
                .iter()
                .zip(&class)
                .zip(&mask)
                .filter(|(_, k)| **k)
                .map(|(x, _)| x)
        };
        // the readings' factor, then the use model's, per tank shrunk toward the fleet's (an
        // empirical-Bayes hierarchy), the fleet's toward the settings
        let mut sums = vec![[0.0; 4]; tanks.len()];
        for (s, c) in kept() {
            if c.0 {
                let other = meter[s.1].powi(2) * s.5 + use_factor[s.0] * s.4;
                sums[s.0][0] += ((s.2 - other) / s.3).max(0.0);
                sums[s.0][1] += 1.0;
            }
        }
        let fleet_s = shrink(sums.iter().map(|x| (x[0], x[1])), 1.0);
        for (f, x) in tank_factor.iter_mut().zip(&sums) {
            *f = shrink(std::iter::once((x[0], x[1])), fleet_s).clamp(0.05, 20.0);
        }
        for (s, c) in kept() {
            if c.1 {
                let other = meter[s.1].powi(2) * s.5 + tank_factor[s.0] * s.3;
                sums[s.0][2] += ((s.2 - other) / s.4).max(0.0);
                sums[s.0][3] += 1.0;
            }
        }
        let fleet_q = shrink(sums.iter().map(|x| (x[2], x[3])), 1.0);
        for (q, x) in use_factor.iter_mut().zip(&sums) {
            *q = shrink(std::iter::once((x[2], x[3])), fleet_q).clamp(0.1, 20.0);
        }
        // vehicles
        let mut num: Vec<f64> = meter_prior.iter().map(|m| PRIOR_WEIGHT * m * m).collect();
        let mut den = vec![PRIOR_WEIGHT; names.len()];
        for (s, _) in kept() {
            let other = tank_factor[s.0] * s.3 + use_factor[s.0] * s.4;
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
        let use_scale = use_factor[ti].sqrt();
        for b in &mut t.balances {
            let Some(vi) = index(&b.vehicle) else {
                continue;
            };
            if !(b.sigma_kg > 0.0 && b.billed_kg > 0.0) {
                continue;
            }
            b.sigma_readings_shared_kg *= factor;
            b.sigma_readings_independent_kg *= factor;
            b.sigma_usage_kg *= use_scale;
            // the other tickets' meters in the same period keep their share
            b.meter_percent = 100.0 * meter[vi];
            b.sigma_meter_kg =
                ((meter[vi] * b.billed_kg).powi(2) + b.sigma_other_tickets_kg.powi(2)).sqrt();
            rejudge(b, opts);
        }
    }
}
