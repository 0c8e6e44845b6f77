//! Vehicle bias: each vehicle's fills against the level the other vehicles show at the same tanks,
//! and the count of its fills judged short.
//!
//! Two tests per vehicle, the smaller p-value doubled (Bonferroni), then Holm's correction across
//! the vehicles (Holm, "A simple sequentially rejective multiple test procedure", Scand. J.
//! Statist. 6, 1979):
//! - the bias: the weighted mean of (gained + drawn) / billed less its tank's level fitted from the
//!   other vehicles' fills there (weights 1/u², u that of the ratio and of the level it is compared
//!   with, Σw²u² / (Σw)² for a level of weights w; its standard error from the weighted
//!   scatter, the weights known up to a common factor — the external consistency of a weighted
//!   mean, Birge, Phys. Rev. 40, 1932 — plus what the fills compared with one level share: that
//!   level's error, and the errors of the other vehicles' effects taken out of it, which move
//!   every comparison with those vehicles alike, each such error that of the other vehicle's
//!   comparisons away from this one's tanks — at them it was measured against this one's own
//!   fills), by Student's t;
//! - the short count: a vehicle short by a few percent on only some of its fills has a small mean
//!   bias but many short verdicts; the count is tested against the share an honest vehicle draws
//!   (the fleet's median vehicle, at least the tail 1 − Φ(k) of the verdicts' coverage interval)
//!   by the binomial distribution's upper tail.

use std::collections::BTreeMap;

use serde::Serialize;
use statrs::distribution::{Binomial, DiscreteCDF};

use crate::AuditOptions;
use crate::Verdict;
use crate::balance::rejudge;
use crate::effects::{Effects, LeaveOut, Row, groups};
use crate::records::{Balance, TankAudit};
use crate::stats::{holm_adjust, median, t_critical, t_two_sided_p};

/// Vehicle status.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum VehicleStatus {
    /// No significant bias.
    Ok,
    /// A significant bias beyond the smallest reported bias.
    Biased,
    /// Too few fills to test.
    NotEnoughData,
}

/// The bias test of one vehicle.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VehicleFinding {
    /// Vehicle name.
    pub vehicle: String,
    /// Carrier name.
    pub carrier: String,
    /// Status.
    pub status: VehicleStatus,
    /// Fills tested (on tanks without drift, with other vehicles' fills to compare).
    pub fills: usize,
    /// Mean of (gained + drawn)/billed minus the tank's level from other vehicles, % (negative: short).
    pub bias_percent: Option<f64>,
    /// 95 % confidence interval of the bias, % (Student t).
    pub ci95_low_percent: Option<f64>,
    /// Upper end.
    pub ci95_high_percent: Option<f64>,
    /// The vehicle's p-value: twice the smaller of the bias test's (two-sided t) and the short-count
    /// test's (Bonferroni over the two).
    pub p_value: Option<f64>,
    /// After Holm's correction across the vehicles tested.
    pub p_adjusted: Option<f64>,
    /// The legal tolerance compared with, %.
    pub legal_tolerance_percent: f64,
    /// Whether the estimated bias is beyond the legal tolerance.
    pub exceeds_legal_tolerance: bool,
    /// Whether the whole confidence interval is beyond the legal tolerance.
    pub ci_beyond_legal_tolerance: bool,
    /// Fills by verdict.
    pub verdicts: BTreeMap<Verdict, usize>,
    /// Fills judged short on their own balances, of those with a verdict other than inconclusive
    /// (the count the short-count test is run on).
    pub short_fills: usize,
    /// Further fills judged short with the vehicle's other fills (a vehicle found biased; see
    /// [`crate::VehicleEvidence`], and [`crate::MixtureEvidence`] for one short on only some
    /// fills, judged on the balance of probabilities).
    pub short_with_vehicle: usize,
    /// The share of short verdicts an honest vehicle would draw (the fleet's median vehicle, at
    /// least the one-sided tail of the coverage interval).
    pub short_rate_expected: f64,
    /// One-sided binomial p-value of that many short verdicts (a vehicle short on some fills).
    pub short_count_p_value: Option<f64>,
    /// The test used.
    pub test: &'static str,
    /// Each compared fill: its (gained + drawn) / billed less its tank's level from the other
    /// vehicles' fills, the points whose weighted mean is the bias. Left out of the JSON, whose
    /// `fills` already hold every fill.
    #[serde(skip)]
    pub adjusted: Vec<AdjustedFill>,
}

/// One of a vehicle's fills against the level the other vehicles show at its tank.
#[derive(Debug, Clone, PartialEq)]
pub struct AdjustedFill {
    /// Ticket number.
    pub ticket: String,
    /// Tank name.
    pub tank: String,
    /// Start of the fill, ms.
    pub start_ms: i64,
    /// (gained + drawn) / billed less the tank's level from the other vehicles' fills, %.
    pub percent: f64,
    /// Its standard uncertainty, %.
    pub u_percent: f64,
}

const VEHICLE_TEST: &str = "weighted mean of the ratios less their tank's level from the other vehicles' fills (levels and vehicle effects fitted jointly by Huber-weighted least squares), Student's t; and a binomial test of the count of short verdicts; Bonferroni over the two, Holm across vehicles";

/// P(X ≥ x) for X ~ Binomial(n, p).
fn binomial_upper(x: usize, n: usize, p: f64) -> f64 {
    if x == 0 {
        return 1.0;
    }
    Binomial::new(p.clamp(0.0, 1.0), n as u64)
        .map(|b| b.sf(x as u64 - 1))
        .unwrap_or(f64::NAN)
}

/// One-sided upper tail of the standard normal at `k` (Abramowitz and Stegun 7.1.26 through
/// statrs' erfc).
fn normal_tail(k: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(k / std::f64::consts::SQRT_2)
}

/// One vehicle's fills compared with the levels the other vehicles show.
struct Compared {
    /// (ratio less the level, weight 1/u²).
    d: Vec<(f64, f64)>,
    adjusted: Vec<AdjustedFill>,
    /// The weighted mean and its standard error without the other vehicles' effects' errors.
    first: Option<(f64, f64)>,
    /// Each other vehicle's share of the levels compared with (Σ over the tanks of this vehicle's
    /// weight there times the other's share of the level).
    share_of: BTreeMap<usize, f64>,
    /// The tank of each point of `d`.
    at: Vec<usize>,
    /// Per tank: (Σw and Σw² of this vehicle's points there, the variance of the level they share).
    shared: BTreeMap<usize, (f64, f64, f64)>,
}

impl Compared {
    /// The standard error of this vehicle's comparison from its points at tanks other than
    /// `away` (None with fewer than two).
    fn se_away_from(&self, away: &std::collections::BTreeSet<usize>) -> Option<f64> {
        let d: Vec<(f64, f64)> = self
            .d
            .iter()
            .zip(&self.at)
            .filter(|(_, t)| !away.contains(t))
            .map(|(p, _)| *p)
            .collect();
        let shared = self
            .shared
            .iter()
            .filter(|(t, _)| !away.contains(t))
            .map(|(_, s)| s);
        (d.len() >= 2).then(|| mean_and_se(&d, shared).1)
    }
}

/// How much each other vehicle weighs in the levels vehicle `vi` is compared with: Σ_t (W_t / ΣW)
/// × its share of tank t's level, W_t this vehicle's weight at tank t (`at_tank`), the level's
/// shares from `weight_at` (each vehicle's weight in each tank's level, by (tank, vehicle)).
fn level_shares(
    vi: usize,
    at_tank: impl Iterator<Item = (usize, f64)> + Clone,
    weight_at: &BTreeMap<(usize, usize), f64>,
) -> BTreeMap<usize, f64> {
    let total: f64 = at_tank.clone().map(|t| t.1).sum();
    let mut share_of: BTreeMap<usize, f64> = BTreeMap::new();
    if total <= 0.0 {
        return share_of;
    }
    for (ti, w_t) in at_tank {
        let others = || {
            weight_at
                .range((ti, 0)..(ti + 1, 0))
                .filter(|((_, v), _)| *v != vi)
        };
        let sw: f64 = others().map(|(_, w)| w).sum();
        if sw > 0.0 {
            for ((_, v), w) in others() {
                *share_of.entry(*v).or_default() += w_t / total * w / sw;
            }
        }
    }
    share_of
}

/// The variance a vehicle's mean takes from the errors of the other vehicles' effects removed from
/// the levels it is compared with: Σ (a_v · se_v)², a_v their shares ([`level_shares`]), se_v the
/// standard error of each one's comparison away from this vehicle's tanks (`se_of`; its effect's,
/// the effects taken as independent).
fn effects_variance(share_of: &BTreeMap<usize, f64>, se_of: impl Fn(usize) -> Option<f64>) -> f64 {
    share_of
        .iter()
        .filter_map(|(v, a)| Some((a * se_of(*v)?).powi(2)))
        .sum()
}

/// The weighted mean of a vehicle's points `d` (x, w = 1/u²) and its standard error: the scatter's
/// (Birge's external consistency) plus the covariance of the fills compared with one tank's level,
/// whose error moves them together and does not show in their scatter: v_t (W_t² − Σ_t w²) at each
/// tank over (Σw)², from `shared` (W_t = Σ_t w, Σ_t w², v_t the level's variance).
fn mean_and_se<'a>(
    d: &[(f64, f64)],
    shared: impl Iterator<Item = &'a (f64, f64, f64)>,
) -> (f64, f64) {
    let n = d.len() as f64;
    let sw: f64 = d.iter().map(|x| x.1).sum();
    let mean = d.iter().map(|x| x.0 * x.1).sum::<f64>() / sw;
    let chi2: f64 = d.iter().map(|x| x.1 * (x.0 - mean).powi(2)).sum();
    let covariance: f64 = shared
        .map(|(w_t, w2_t, v_t)| v_t * (w_t * w_t - w2_t))
        .sum::<f64>()
        / (sw * sw);
    (mean, (chi2 / (n - 1.0) / sw + covariance.max(0.0)).sqrt())
}

/// Test every vehicle. `kept` are the fills at tanks without a gauge fault, `kept_u` their ratios'
/// standard uncertainties, `kept_at` each one's balance (its index in its tank's balances), `fit`
/// the levels and effects fitted from them, `mixed` what a fill of a vehicle set apart as short on
/// some fills adds to its ratio (its honest deliveries' effect less its expected shortfall; see the
/// mixture module), used in its tank's level in place of the vehicle's effect (its short share
/// differs from tank to tank, so one effect per vehicle leaves the levels it fills wrong).
#[allow(clippy::too_many_arguments)]
pub(crate) fn test(
    names: &[(String, String)],
    index: &BTreeMap<&str, usize>,
    tanks: &[TankAudit],
    kept: &[Row],
    kept_u: &[f64],
    kept_at: &[usize],
    fit: &Effects,
    mixed: &[Option<f64>],
    opts: &AuditOptions,
) -> Vec<VehicleFinding> {
    // each tank's level from its fills, vehicle effects removed, robust weights: (Σw x, Σw, n) per
    // tank and per (tank, vehicle), so a vehicle is compared with the level the others show; and
    // (Σw²u²) likewise, the variance of that level being Σw²u² / (Σw)²
    let mut levels = LeaveOut::new(tanks.len());
    let mut spread = LeaveOut::new(tanks.len());
    for (k, r) in kept.iter().enumerate() {
        let w = fit.weight.get(k).copied().unwrap_or(1.0);
        let effect = mixed.get(k).copied().flatten();
        let x = r.2 - effect.unwrap_or_else(|| fit.vehicle.get(r.1).copied().unwrap_or(0.0));
        levels.add(r.0, r.1, w * x, w);
        let u = kept_u.get(k).copied().unwrap_or(0.0);
        spread.add(r.0, r.1, (w * u).powi(2), 0.0);
    }
    // (level, its variance) at tank `ti` from the vehicles other than `vi`
    let level_without = |ti: usize, vi: usize| -> Option<(f64, f64)> {
        let (sx, sw, n) = levels.without(ti, vi)?;
        let (s2, _, _) = spread.without(ti, vi)?;
        (n >= 2 && sw > 1e-9).then(|| (sx / sw, s2 / (sw * sw)))
    };
    let kept_of_vehicle = groups(kept.iter().map(|r| r.1), names.len());
    // verdicts per vehicle
    let mut verdict_counts: Vec<BTreeMap<Verdict, usize>> = vec![BTreeMap::new(); names.len()];
    for b in tanks.iter().flat_map(|t| &t.balances) {
        if let Some(c) = index
            .get(b.vehicle.as_str())
            .and_then(|&v| verdict_counts.get_mut(v))
        {
            *c.entry(b.verdict).or_default() += 1;
        }
    }
    let judged = |c: &BTreeMap<Verdict, usize>| -> (usize, usize) {
        let short = c.get(&Verdict::Short).copied().unwrap_or(0);
        let n = short
            + c.get(&Verdict::Consistent).copied().unwrap_or(0)
            + c.get(&Verdict::Excess).copied().unwrap_or(0);
        (short, n)
    };
    let rates: Vec<f64> = verdict_counts
        .iter()
        .map(judged)
        .filter(|(_, n)| *n >= opts.vehicle_min_fills.max(1))
        .map(|(s, n)| s as f64 / n as f64)
        .collect();
    let expected = median(&rates)
        .unwrap_or(0.0)
        .max(normal_tail(opts.coverage_factor));

    // each tank's level weight by vehicle: a level from the other vehicles' fills carries their
    // fitted effects' errors, shared by every fill compared with it
    let mut weight_at: BTreeMap<(usize, usize), f64> = BTreeMap::new();
    for (k, r) in kept.iter().enumerate() {
        *weight_at.entry((r.0, r.1)).or_default() += fit.weight.get(k).copied().unwrap_or(1.0);
    }
    let mut compared: Vec<Compared> = Vec::with_capacity(names.len());
    for (vi, of_vehicle) in kept_of_vehicle.iter().enumerate() {
        // (ratio less its tank's level from the other vehicles' fills, weight 1/u² with u that of
        // the ratio and of the level together); fills at tanks no other vehicle filled often
        // enough have nothing to compare with
        let mut adjusted = Vec::new();
        // per tank: (Σw and Σw² of this vehicle's fills there, the variance of the level they share)
        let mut shared: BTreeMap<usize, (f64, f64, f64)> = BTreeMap::new();
        let (d, at): (Vec<(f64, f64)>, Vec<usize>) = of_vehicle
            .iter()
            .filter_map(|&k| {
                let (level, level_var) = level_without(kept[k].0, vi)?;
                let u = (kept_u.get(k)?.powi(2) + level_var).sqrt().max(1e-4);
                let at = shared.entry(kept[k].0).or_insert((0.0, 0.0, level_var));
                at.0 += u.powi(-2);
                at.1 += u.powi(-4);
                let t = tanks.get(kept[k].0)?;
                if let Some(b) = kept_at.get(k).and_then(|&bi| t.balances.get(bi)) {
                    adjusted.push(AdjustedFill {
                        ticket: b.ticket.clone(),
                        tank: t.tank.clone(),
                        start_ms: b.start_ms,
                        percent: 100.0 * (kept[k].2 - level),
                        u_percent: 100.0 * u,
                    });
                }
                Some(((kept[k].2 - level, 1.0 / u.powi(2)), kept[k].0))
            })
            .unzip();
        adjusted.sort_by_key(|a| a.start_ms);
        let share_of = level_shares(vi, shared.iter().map(|(t, at)| (*t, at.0)), &weight_at);
        let first =
            (d.len() >= opts.vehicle_min_fills.max(2)).then(|| mean_and_se(&d, shared.values()));
        compared.push(Compared {
            d,
            adjusted,
            first,
            share_of,
            at,
            shared,
        });
    }
    // each vehicle's own comparison's standard error, taken as that of its effect
    let se_first: Vec<Option<f64>> = compared.iter().map(|c| c.first.map(|f| f.1)).collect();
    // the tanks each vehicle filled: another vehicle's effect, as it bears on this one's levels, is
    // known only from its comparisons away from them (at this one's tanks it was measured against
    // this one's own fills)
    let tanks_of: Vec<std::collections::BTreeSet<usize>> = kept_of_vehicle
        .iter()
        .map(|ks| ks.iter().map(|&k| kept[k].0).collect())
        .collect();
    let se_of_for: Vec<BTreeMap<usize, Option<f64>>> = compared
        .iter()
        .enumerate()
        .map(|(vi, c)| {
            c.share_of
                .keys()
                .map(|&v| {
                    let away = compared
                        .get(v)
                        .zip(tanks_of.get(vi))
                        .and_then(|(o, t)| o.se_away_from(t));
                    (v, away.or_else(|| se_first.get(v).copied().flatten()))
                })
                .collect()
        })
        .collect();
    let mut vehicles: Vec<VehicleFinding> = Vec::new();
    let mut vp: Vec<(usize, f64)> = Vec::new();
    for (vi, ((name, carrier), c)) in names.iter().zip(compared).enumerate() {
        let Compared {
            d,
            adjusted,
            first,
            share_of,
            ..
        } = c;
        let verdicts = std::mem::take(&mut verdict_counts[vi]);
        let (short, judged_n) = judged(&verdicts);
        let mut f = VehicleFinding {
            vehicle: name.clone(),
            carrier: carrier.clone(),
            status: VehicleStatus::NotEnoughData,
            fills: d.len(),
            bias_percent: None,
            ci95_low_percent: None,
            ci95_high_percent: None,
            p_value: None,
            p_adjusted: None,
            legal_tolerance_percent: 100.0 * opts.legal_tolerance,
            exceeds_legal_tolerance: false,
            ci_beyond_legal_tolerance: false,
            verdicts,
            short_fills: short,
            short_with_vehicle: 0,
            short_rate_expected: expected,
            short_count_p_value: None,
            test: VEHICLE_TEST,
            adjusted,
        };
        let n = d.len();
        if let Some((mean, se)) = first {
            // the other vehicles' effects' errors, weighed by their share of the levels compared
            // with
            let se = (se * se
                + effects_variance(&share_of, |v| {
                    se_of_for.get(vi).and_then(|m| m.get(&v)).copied().flatten()
                }))
            .sqrt();
            let dof = n as f64 - 1.0;
            let tstat = if se > 0.0 { mean / se } else { 0.0 };
            let p_bias = t_two_sided_p(tstat, dof);
            let p_count = binomial_upper(short, judged_n, expected);
            let half = t_critical(0.05, dof) * se;
            f.bias_percent = Some(100.0 * mean);
            f.ci95_low_percent = Some(100.0 * (mean - half));
            f.ci95_high_percent = Some(100.0 * (mean + half));
            f.short_count_p_value = Some(p_count);
            // a bias too small to report is no finding, however significant; a count of short
            // verdicts is one by itself
            let p_bias_reportable = if mean.abs() >= opts.vehicle_min_bias {
                p_bias
            } else {
                1.0
            };
            let p = (2.0 * p_bias_reportable.min(p_count)).min(1.0);
            f.p_value = Some(p);
            f.exceeds_legal_tolerance = mean.abs() > opts.legal_tolerance;
            f.ci_beyond_legal_tolerance =
                (mean - half) > opts.legal_tolerance || (mean + half) < -opts.legal_tolerance;
            f.status = VehicleStatus::Ok;
            vp.push((vehicles.len(), p));
        }
        vehicles.push(f);
    }
    let adjusted = holm_adjust(&vp.iter().map(|x| x.1).collect::<Vec<_>>());
    for ((i, _), pa) in vp.iter().zip(adjusted) {
        let f = &mut vehicles[*i];
        f.p_adjusted = Some(pa);
        if pa < opts.vehicle_alpha {
            f.status = VehicleStatus::Biased;
        }
    }
    vehicles
}

/// The fills of every vehicle the test cleared (status ok) judged at the wider coverage factor
/// (see [`AuditOptions::cleared_coverage_factor`]); the vehicles' counts of verdicts and of short
/// fills then follow the fills (the short-count test was run on the counts at the base factor).
/// A vehicle found short keeps the base factor for a short delivery, but its record makes an
/// over-delivery no likelier, so its fills are judged excess at the wider factor, as a cleared
/// vehicle's are; its counts follow the fills that change.
pub(crate) fn judge_by_record<'a>(
    balances: impl Iterator<Item = &'a mut Balance>,
    vehicles: &mut [VehicleFinding],
    opts: &AuditOptions,
) {
    let k = opts.cleared_coverage_factor;
    if k.is_nan() || k <= opts.coverage_factor {
        return;
    }
    // (index, cleared: true; found short: false)
    let judged: BTreeMap<&str, (usize, bool)> = vehicles
        .iter()
        .enumerate()
        .filter_map(|(i, v)| match v.status {
            VehicleStatus::Ok => Some((v.vehicle.as_str(), (i, true))),
            VehicleStatus::Biased if v.bias_percent.is_some_and(|b| b < 0.0) => {
                Some((v.vehicle.as_str(), (i, false)))
            }
            _ => None,
        })
        .collect();
    let mut counts: BTreeMap<usize, BTreeMap<Verdict, usize>> = BTreeMap::new();
    let mut moved: Vec<(usize, Verdict, Verdict)> = Vec::new();
    for b in balances {
        let Some(&(vi, cleared)) = judged.get(b.vehicle.as_str()) else {
            continue;
        };
        let was = b.verdict;
        if cleared {
            b.coverage_factor = k;
        }
        b.excess_coverage_factor = k;
        rejudge(b, opts);
        if cleared {
            *counts.entry(vi).or_default().entry(b.verdict).or_default() += 1;
        } else if b.verdict != was {
            moved.push((vi, was, b.verdict));
        }
    }
    for (vi, c) in counts {
        if let Some(v) = vehicles.get_mut(vi) {
            v.short_fills = c.get(&Verdict::Short).copied().unwrap_or(0);
            v.verdicts = c;
        }
    }
    for (vi, was, now) in moved {
        if let Some(v) = vehicles.get_mut(vi) {
            if let Some(n) = v.verdicts.get_mut(&was) {
                *n = n.saturating_sub(1);
            }
            *v.verdicts.entry(now).or_default() += 1;
            v.verdicts.retain(|_, n| *n > 0);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Two fills of a vehicle at one tank, each ratio known to u_r = 1 % (r² = 1e-4) and compared with
    /// the same level, known to 1 % (v = 1e-4): x = 2 % and 0 %. By hand: w = 1/(r² + v) = 5,000 each,
    /// the mean 1 %, χ² = 2 × 5,000 × 1e-4 = 1 on one degree of freedom, so the scatter's variance is
    /// 1/Σw = 1e-4, and the shared level adds v (W² − Σw²)/(Σw)² = 1e-4 × 5e7 / 1e8 = 5e-5: the
    /// standard error √1.5e-4 = 1.2247 %, the exact variance of (e₁ + e₂)/2 + L, r²/2 + v. The same
    /// two fills at two tanks (levels with independent errors) keep the scatter's 1 %.
    #[test]
    fn fills_compared_with_one_level_share_its_error() {
        let d = [(0.02, 5_000.0), (0.0, 5_000.0)];
        let one_tank = [(10_000.0, 5.0e7, 1e-4)];
        let (mean, se) = mean_and_se(&d, one_tank.iter());
        assert!((mean - 0.01).abs() < 1e-15, "{mean}");
        assert!((se - 1.5e-4_f64.sqrt()).abs() < 1e-12, "{se}");
        let two_tanks = [(5_000.0, 2.5e7, 1e-4), (5_000.0, 2.5e7, 1e-4)];
        let (_, se) = mean_and_se(&d, two_tanks.iter());
        assert!((se - 0.01).abs() < 1e-12, "{se}");
    }

    /// A vehicle compared at tank 0 with weight 3 (its level: vehicles 1 and 2, weight 2 each) and
    /// at tank 1 with weight 1 (its level: vehicle 1 alone): by hand, vehicle 1's share is
    /// 3/4 × 1/2 + 1/4 × 1 = 0.625 and vehicle 2's 3/4 × 1/2 = 0.375; with their effects' standard
    /// errors 0.4 % and 0.2 % the mean takes (0.625 × 0.004)² + (0.375 × 0.002)² = 6.8125e-6.
    /// The vehicle's own weight in a level (tank 1) is left out.
    #[test]
    fn a_level_carries_the_other_vehicles_effects_errors() {
        let weight_at: BTreeMap<(usize, usize), f64> =
            [((0, 1), 2.0), ((0, 2), 2.0), ((1, 0), 5.0), ((1, 1), 4.0)].into();
        let shares = level_shares(0, [(0, 3.0), (1, 1.0)].into_iter(), &weight_at);
        assert_eq!(shares.len(), 2, "{shares:?}");
        assert!((shares[&1] - 0.625).abs() < 1e-15, "{shares:?}");
        assert!((shares[&2] - 0.375).abs() < 1e-15, "{shares:?}");
        let se = |v: usize| [None, Some(0.004), Some(0.002)][v];
        let var = effects_variance(&shares, se);
        assert!((var - 6.8125e-6).abs() < 1e-18, "{var}");
        // a vehicle with no standard error of its own adds nothing
        assert!((effects_variance(&shares, |v| (v == 1).then_some(0.004)) - 6.25e-6).abs() < 1e-18);
    }

    /// Another vehicle's effect as it bears on this one's levels is known from its comparisons away
    /// from this one's tanks. By hand: points 0.01 and −0.01 at tank 0, 0.02 and 0.00 at tank 1,
    /// weight 1e4 each; away from tank 0, mean 0.01, χ² = 1e4 · 2 · 0.01² = 2 on one degree of
    /// freedom over Σw = 2e4: se = √(1e-4) = 0.01, and with tank 1's level of variance 1e-6 shared
    /// by both points (1e-6 · ((2e4)² − 2e8) / (2e4)² = 5e-7) √(1.005e-4) = 0.0100250; away from
    /// neither, mean 0.005, χ² = 1e4 · (2 · 0.005² + 2 · 0.015²) = 5 on three over 4e4: √(5/12e4)
    /// = 0.0064550; away from both, nothing.
    #[test]
    fn an_effect_is_known_from_its_comparisons_elsewhere() {
        let c = |level_var: f64| Compared {
            d: vec![(0.01, 1e4), (-0.01, 1e4), (0.02, 1e4), (0.0, 1e4)],
            adjusted: Vec::new(),
            first: None,
            share_of: BTreeMap::new(),
            at: vec![0, 0, 1, 1],
            shared: [(0, (2e4, 2e8, 0.0)), (1, (2e4, 2e8, level_var))].into(),
        };
        let away = |t: &[usize]| {
            t.iter()
                .copied()
                .collect::<std::collections::BTreeSet<usize>>()
        };
        let se = c(0.0).se_away_from(&away(&[0])).unwrap();
        assert!((se - 0.01).abs() < 1e-12, "{se}");
        let se = c(1e-6).se_away_from(&away(&[0])).unwrap();
        assert!((se - 1.005e-4_f64.sqrt()).abs() < 1e-12, "{se}");
        assert!((se - 0.0100250).abs() < 1e-7, "{se}");
        let se = c(0.0).se_away_from(&away(&[])).unwrap();
        assert!((se - (5.0_f64 / 12e4).sqrt()).abs() < 1e-12, "{se}");
        assert!((se - 0.0064550).abs() < 1e-7, "{se}");
        assert!(c(0.0).se_away_from(&away(&[0, 1])).is_none());
    }

    /// Binomial upper tail: P(X ≥ 2) for n = 3, p = 0.5 is 4/8 = 0.5; P(X ≥ 3) = 1/8 (exact by
    /// enumeration).
    #[test]
    fn binomial_tail_is_exact_on_a_small_case() {
        assert!((binomial_upper(2, 3, 0.5) - 0.5).abs() < 1e-12);
        assert!((binomial_upper(3, 3, 0.5) - 0.125).abs() < 1e-12);
        assert_eq!(binomial_upper(0, 3, 0.5), 1.0);
    }

    /// A balance with the given residual and standard uncertainty (kg) on a 10 t ticket.
    fn balance(vehicle: &str, residual_kg: f64, sigma_kg: f64) -> Balance {
        let d = crate::DeliveryInput {
            ticket: format!("{vehicle}-{residual_kg}"),
            vehicle: vehicle.into(),
            carrier: "C".into(),
            start_ms: 0,
            end_ms: 0,
            billed_kg: 10_000.0,
            supply_pressure_pa: None,
            meter_repeatability_percent: None,
        };
        let opts = AuditOptions::default();
        let mut b = crate::balance::unjudged(&d, "T", &opts);
        b.gained_kg = 10_000.0 - residual_kg;
        b.residual_kg = residual_kg;
        b.residual_percent = residual_kg / 100.0;
        b.sigma_readings_independent_kg = sigma_kg;
        b.ratio = 1.0 - residual_kg / 10_000.0;
        b.before_hours = Some(1.0);
        b.after_hours = Some(1.0);
        rejudge(&mut b, &AuditOptions::default());
        b
    }

    fn finding(vehicle: &str, status: VehicleStatus) -> VehicleFinding {
        VehicleFinding {
            vehicle: vehicle.into(),
            carrier: "C".into(),
            status,
            fills: 0,
            bias_percent: None,
            ci95_low_percent: None,
            ci95_high_percent: None,
            p_value: None,
            p_adjusted: None,
            legal_tolerance_percent: 1.5,
            exceeds_legal_tolerance: false,
            ci_beyond_legal_tolerance: false,
            verdicts: BTreeMap::new(),
            short_fills: 0,
            short_with_vehicle: 0,
            short_rate_expected: 0.0,
            short_count_p_value: None,
            test: VEHICLE_TEST,
            adjusted: Vec::new(),
        }
    }

    /// A biased vehicle whose compared fills are three 3.4 % short and three honest (u 0.5 %): the
    /// random-effects prior of a further fill is their mean, 1.7 %, with τ² = 1.625e-4 (Q held at
    /// 37.5, by hand) and variance 1.94e-4; that fill's own balance, 200 ± 120 kg on 10 t, is
    /// consistent by itself (limit 240 kg) but its posterior, 1.87 ± 0.91 %, is short at k = 2. Set
    /// apart as short on only some fills, the vehicle's other fills are no evidence and the fill
    /// stays consistent (constructed; the posterior worked by hand).
    #[test]
    fn a_sometimes_short_vehicle_s_fills_stand_on_their_own() {
        let opts = AuditOptions::default();
        let run = |apart: bool| {
            let mut v = finding("MIX", VehicleStatus::Biased);
            v.adjusted = (0..6)
                .map(|i| AdjustedFill {
                    ticket: format!("X{i}"),
                    tank: "U".into(),
                    start_ms: 0,
                    percent: if i < 3 { -3.4 } else { 0.0 },
                    u_percent: 0.5,
                })
                .collect();
            let mut vehicles = vec![v];
            let mut tanks = vec![TankAudit {
                tank: "T".into(),
                fluid: fluids::FluidId::Nitrogen,
                ner_setting_percent_per_day: 0.5,
                ner_fitted_percent_per_day: None,
                full_mass_kg: 20_000.0,
                readings_used: 2,
                readings_refused: 0,
                balances: vec![balance("MIX", 200.0, 120.0)],
                findings: Vec::new(),
                leak_detectable_kg_per_day: None,
                forecast: None,
                readings: Vec::new(),
                latest: None,
                clock_offset_hours: None,
                jumps: Vec::new(),
            }];
            let reading = crate::records::BracketReading {
                time_ms: 0,
                total_mass_kg: 5_000.0,
                fill_fraction: 0.3,
                pressure_pa: 8e5,
                liquid_temperature_k: 95.0,
                saturation_temperature_k: 95.0,
                span_kg: 5_000.0,
            };
            tanks[0].balances[0].before = Some(reading);
            tanks[0].balances[0].after = Some(reading);
            let set_apart = move |_: &str| apart;
            crate::with_vehicle::apply(&mut tanks, &mut vehicles, &set_apart, &opts);
            (tanks[0].balances[0].verdict, vehicles[0].short_with_vehicle)
        };
        assert_eq!(run(false), (Verdict::Short, 1));
        assert_eq!(run(true), (Verdict::Consistent, 0));
    }

    /// With σ = 100 kg on a 10 t ticket, a residual of 230 kg is 2.3 σ: short at k = 2, consistent
    /// at k = 2.5 (limit 250 kg); 300 kg (3 σ) is short at either. A vehicle cleared by the fleet
    /// test is judged at 2.5, one found biased (or not tested) at 2; an inconclusive balance
    /// (σ = 300 kg: 2 σ = 6 % > 5 %) stays inconclusive whatever the factor (the limits worked by
    /// hand).
    #[test]
    fn a_cleared_vehicle_s_fills_are_judged_at_the_wider_factor() {
        let opts = AuditOptions::default();
        let mut fills = [
            balance("OK", 230.0, 100.0),
            balance("OK", 300.0, 100.0),
            balance("OK", -230.0, 100.0),
            balance("OK", 100.0, 300.0),
            balance("BIASED", 230.0, 100.0),
            balance("FEW", 230.0, 100.0),
        ];
        let before: Vec<Verdict> = fills.iter().map(|b| b.verdict).collect();
        assert_eq!(
            before,
            [
                Verdict::Short,
                Verdict::Short,
                Verdict::Excess,
                Verdict::Inconclusive,
                Verdict::Short,
                Verdict::Short
            ]
        );
        let mut vehicles = vec![
            finding("OK", VehicleStatus::Ok),
            finding("BIASED", VehicleStatus::Biased),
            finding("FEW", VehicleStatus::NotEnoughData),
        ];
        judge_by_record(fills.iter_mut(), &mut vehicles, &opts);
        let after: Vec<Verdict> = fills.iter().map(|b| b.verdict).collect();
        assert_eq!(
            after,
            [
                Verdict::Consistent,
                Verdict::Short,
                Verdict::Consistent,
                Verdict::Inconclusive,
                Verdict::Short,
                Verdict::Short
            ]
        );
        assert!(
            (fills[0].limit_kg - 250.0).abs() < 1e-9,
            "{}",
            fills[0].limit_kg
        );
        assert!(fills[0].explanation.contains("judged at the wider k = 2.5"));
        // the cleared vehicle's counts follow its fills
        assert_eq!(vehicles[0].short_fills, 1);
        assert_eq!(vehicles[0].verdicts.get(&Verdict::Consistent), Some(&2));
        // equal factors judge every fill alike
        let same = AuditOptions {
            cleared_coverage_factor: 2.0,
            ..AuditOptions::default()
        };
        let mut one = [balance("OK", 230.0, 100.0)];
        judge_by_record(one.iter_mut(), &mut vehicles, &same);
        assert_eq!(one[0].verdict, Verdict::Short);
    }

    /// A vehicle found short (bias −1.5 %) keeps k = 2 for a short delivery but is judged excess at
    /// k = 2.5, as a cleared vehicle is: with σ = 100 kg, −230 kg (2.3 σ more arrived) is excess at
    /// k = 2 and consistent within the excess limit of 250 kg; +230 kg stays short (limit 200 kg);
    /// −300 kg stays excess. Its counts move with the fill that changed. A vehicle found biased the
    /// other way (+1 %) keeps k = 2 on both sides (the limits worked by hand).
    #[test]
    fn a_vehicle_found_short_is_judged_excess_at_the_wider_factor() {
        let opts = AuditOptions::default();
        let mut fills = [
            balance("SHORT", -230.0, 100.0),
            balance("SHORT", 230.0, 100.0),
            balance("SHORT", -300.0, 100.0),
            balance("OVER", -230.0, 100.0),
        ];
        let mut vehicles = vec![
            finding("SHORT", VehicleStatus::Biased),
            finding("OVER", VehicleStatus::Biased),
        ];
        vehicles[0].bias_percent = Some(-1.5);
        vehicles[0].verdicts = [(Verdict::Excess, 2), (Verdict::Short, 1)].into();
        vehicles[1].bias_percent = Some(1.0);
        judge_by_record(fills.iter_mut(), &mut vehicles, &opts);
        let after: Vec<Verdict> = fills.iter().map(|b| b.verdict).collect();
        assert_eq!(
            after,
            [
                Verdict::Consistent,
                Verdict::Short,
                Verdict::Excess,
                Verdict::Excess
            ]
        );
        assert!((fills[0].excess_limit_kg - 250.0).abs() < 1e-9);
        assert!((fills[0].limit_kg - 200.0).abs() < 1e-9);
        assert!((fills[3].excess_limit_kg - 200.0).abs() < 1e-9);
        assert!(
            fills[0]
                .explanation
                .contains("within the limit of 250 kg (k = 2.5")
                && fills[0].explanation.contains("over-delivery"),
            "{}",
            fills[0].explanation
        );
        let want: BTreeMap<Verdict, usize> = [
            (Verdict::Consistent, 1),
            (Verdict::Excess, 1),
            (Verdict::Short, 1),
        ]
        .into();
        assert_eq!(vehicles[0].verdicts, want);
    }

    /// 1 − Φ(2) = 0.0227501 (Abramowitz and Stegun, table 26.1).
    #[test]
    fn normal_tail_at_two() {
        assert!((normal_tail(2.0) - 0.0227501).abs() < 1e-6);
    }

    /// A vehicle's fill is compared with the level its tank's other vehicles show, and carries
    /// that level's uncertainty as well as its own: the level is a mean of the others' ratios with
    /// weights w (here 1) and standard uncertainties u, so its variance is Σw²u² / (Σw)² (the
    /// variance of a weighted mean, worked by hand). Tank T0 has two other fills at u = 1 %:
    /// 0.0002 / 4 = 5e-5, so a fill of u = 1 % carries √(1e-4 + 5e-5) = 1.2247 %; tank T1 has ten:
    /// 0.001 / 100 = 1e-5, √1.1e-4 = 1.0488 %.
    #[test]
    fn a_fill_carries_its_levels_uncertainty() {
        let opts = AuditOptions::default();
        let tank = TankAudit::with_balances;
        // vehicle 0 fills both tanks three times; vehicle 1 fills T0 twice, vehicle 2 T1 ten times
        let mut kept: Vec<Row> = Vec::new();
        let mut kept_at = Vec::new();
        let mut t0 = Vec::new();
        let mut t1 = Vec::new();
        for i in 0..3 {
            kept.push((0, 0, 1.0));
            kept_at.push(t0.len());
            t0.push(balance("A", i as f64, 100.0));
            kept.push((1, 0, 1.0));
            kept_at.push(t1.len());
            t1.push(balance("A", i as f64, 100.0));
        }
        for i in 0..2 {
            kept.push((0, 1, 1.0));
            kept_at.push(t0.len());
            t0.push(balance("B", i as f64, 100.0));
        }
        for i in 0..10 {
            kept.push((1, 2, 1.0));
            kept_at.push(t1.len());
            t1.push(balance("C", i as f64, 100.0));
        }
        let tanks = [tank("T0", t0), tank("T1", t1)];
        let kept_u = vec![0.01; kept.len()];
        let fit = Effects {
            tank: vec![1.0, 1.0],
            vehicle: vec![0.0; 3],
            weight: vec![1.0; kept.len()],
            scale: 0.01,
        };
        let names: Vec<(String, String)> = ["A", "B", "C"]
            .iter()
            .map(|v| (v.to_string(), "C".to_string()))
            .collect();
        let index: BTreeMap<&str, usize> = [("A", 0), ("B", 1), ("C", 2)].into_iter().collect();
        let mixed = vec![None; kept.len()];
        let found = test(
            &names, &index, &tanks, &kept, &kept_u, &kept_at, &fit, &mixed, &opts,
        );
        let a = &found[0];
        assert_eq!(a.adjusted.len(), 6);
        for f in &a.adjusted {
            let want = if f.tank == "T0" {
                (1e-4_f64 + 5e-5).sqrt()
            } else {
                (1e-4_f64 + 1e-5).sqrt()
            };
            assert!((f.u_percent - 100.0 * want).abs() < 1e-9, "{f:?}");
        }
    }
}
