//! A fill of a biased vehicle judged with the vehicle's other fills.
//!
//! A single balance from routine readings a day either side of a fill carries about 1 % of the
//! ticket in standard uncertainty (mostly the customer's use in between), so by itself it cannot
//! show a meter that over-registers by 1.5 %. When the vehicle test has found the vehicle biased,
//! its other fills are evidence about this one: every delivery through a meter that over-registers
//! was short by about that much. The fill's shortfall θ is estimated in a normal random-effects
//! model of the vehicle's fills (DerSimonian and Laird, "Meta-analysis in clinical trials",
//! Controlled Clinical Trials 7, 1986, for the between-fill variance τ²; the estimate of one unit
//! is the empirical-Bayes posterior, Morris, "Parametric empirical Bayes inference: theory and
//! applications", JASA 78, 1983):
//!
//! - each compared fill j gives x_j, its (gained + drawn) / billed less its tank's level from the
//!   other vehicles' fills, with standard uncertainty u_j (the vehicle test's points);
//! - τ² = max(0, (Q − (n − 1)) / (Σw − Σw²/Σw)), w_j = 1/u_j², Q the weighted sum of squares about
//!   the weighted mean, each term held within 2.5² (one fill at a tank with an unfound fault is not
//!   the meter's spread): the spread of the vehicle's shortfalls beyond the stated uncertainties. A
//!   meter that is off by the same on every fill has τ ≈ 0; a vehicle short on only some fills has a
//!   large τ, so its honest fills are not pulled toward its mean;
//! - the prior of this fill is the vehicle's mean of its *other* fills (weights 1/(u_j² + τ²)), with
//!   variance τ² + that mean's own variance; the fill's own point, when it has one, updates it.
//!
//! A vehicle set apart as short on only some fills is not judged that way: its shortfalls are one
//! of two values, honest or short, not a normal spread (unless its mixture has no honest
//! deliveries to speak of: see [`judged_by_mixture`]). Its fills are judged by the mixture of its
//! deliveries instead (see [`apply_mixture`]): a fill whose balance alone could not show it short is
//! short when it was more likely a short delivery than an honest one, by a material shortfall.
//!
//! The combined estimate is used only to find a short the balance alone could not show, and only
//! for a vehicle the fleet test found biased: it never clears a fill its own balance found short or
//! in excess, and it never touches an honest vehicle's fills (whose one-off short must stand on its
//! own balance). The fill's own residual, uncertainty and limit stay as they were, and its
//! explanation says what the verdict rests on.

use std::collections::HashMap;

use serde::Serialize;

use crate::AuditOptions;
use crate::Verdict;
use crate::balance::set_verdict;
use crate::records::TankAudit;
use crate::vehicles::{VehicleFinding, VehicleStatus};

/// Fewest other compared fills of the vehicle for its evidence to be used (common practice, no
/// source: fewer leave τ² undetermined).
const MIN_OTHER_FILLS: usize = 5;

/// A fill's standardized residual counts toward the spread up to this many standard uncertainties.
const CLIP_Z: f64 = 2.5;

/// What a fill's verdict drew from its vehicle's other fills.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct VehicleEvidence {
    /// The vehicle's shortfall from its other compared fills, % of the ticket (positive: short).
    pub vehicle_shortfall_percent: f64,
    /// Its standard uncertainty, %.
    pub vehicle_u_percent: f64,
    /// The spread of the vehicle's fills beyond their stated uncertainties (τ), %.
    pub spread_percent: f64,
    /// The other fills it was estimated from.
    pub fills: usize,
    /// This fill's own shortfall against its tank's level, % (None: the fill has no balance).
    pub own_shortfall_percent: Option<f64>,
    /// Its standard uncertainty, %.
    pub own_u_percent: Option<f64>,
    /// The combined estimate of this fill's shortfall, %.
    pub shortfall_percent: f64,
    /// Its standard uncertainty, %.
    pub shortfall_u_percent: f64,
}

impl VehicleEvidence {
    /// Whether the combined estimate shows the fill short: beyond k standard uncertainties and
    /// beyond the materiality threshold.
    pub fn shows_short(&self, k: f64, materiality_fraction: f64) -> bool {
        self.shortfall_percent > k * self.shortfall_u_percent
            && self.shortfall_percent > 100.0 * materiality_fraction
    }
}

/// What a fill's verdict drew from the mixture of its vehicle's deliveries (a vehicle short on
/// only some fills, its deliveries a mixture of honest and short ones).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MixtureEvidence {
    /// The probability that this fill was one of the short deliveries, given its balance.
    pub short_probability: f64,
    /// How far the vehicle's short deliveries fall short of the ticket, % (its honest deliveries'
    /// effect less the short ones' shortfall, negated).
    pub shortfall_percent: f64,
    /// The share of the vehicle's deliveries that are short.
    pub share: f64,
    /// This fill's own shortfall against its tank's level, % (positive: short).
    pub own_shortfall_percent: f64,
    /// Its standard uncertainty, %.
    pub own_u_percent: f64,
}

impl MixtureEvidence {
    /// Whether it shows the fill short: more likely short than not (the balance of probabilities),
    /// by a shortfall beyond the materiality threshold.
    pub fn shows_short(&self, materiality_fraction: f64) -> bool {
        self.short_probability > 0.5 && self.shortfall_percent > 100.0 * materiality_fraction
    }
}

/// DerSimonian–Laird τ² of points (x, u).
fn between_variance(points: &[(f64, f64)]) -> f64 {
    let n = points.len();
    if n < 2 {
        return 0.0;
    }
    let w: Vec<f64> = points.iter().map(|p| 1.0 / p.1.powi(2)).collect();
    let sw: f64 = w.iter().sum();
    let sw2: f64 = w.iter().map(|w| w * w).sum();
    let mean = points.iter().zip(&w).map(|(p, w)| w * p.0).sum::<f64>() / sw;
    // each term's standardized residual held within ±CLIP_Z, so that a few fills at a tank with a
    // fault nobody found (an undetected gauge step, a misfit use model) do not pass for a spread
    // of the meter itself (a Huber-type bound on Q; common practice, no source)
    let q: f64 = points
        .iter()
        .zip(&w)
        .map(|(p, w)| (w * (p.0 - mean).powi(2)).min(CLIP_Z * CLIP_Z))
        .sum();
    let c = sw - sw2 / sw;
    if c <= 0.0 {
        return 0.0;
    }
    ((q - (n as f64 - 1.0)) / c).max(0.0)
}

/// The weighted sums of a vehicle's fills as shortfalls (x, u), fractions, weights 1/(u² + τ²):
/// (Σw, Σw·x, n). A fill's "others" are these less its own term.
#[derive(Debug, Clone, Copy, Default)]
struct Sums {
    w: f64,
    wx: f64,
    n: usize,
}

impl Sums {
    fn of(points: &[(f64, f64)], tau2: f64) -> Sums {
        points
            .iter()
            .fold(Sums::default(), |s, p| s.plus(*p, tau2, 1.0))
    }

    /// These sums with `p` added (sign 1) or taken out (sign −1).
    fn plus(self, p: (f64, f64), tau2: f64, sign: f64) -> Sums {
        let w = 1.0 / (p.1.powi(2) + tau2);
        Sums {
            w: self.w + sign * w,
            wx: self.wx + sign * w * p.0,
            n: if sign > 0.0 {
                self.n + 1
            } else {
                self.n.saturating_sub(1)
            },
        }
    }
}

/// The evidence for one fill from the sums of the vehicle's *other* compared fills, and the fill's
/// own point, when it has a balance.
fn evidence(others: Sums, tau2: f64, own: Option<(f64, f64)>) -> Option<VehicleEvidence> {
    if others.n < MIN_OTHER_FILLS || others.w <= 0.0 {
        return None;
    }
    let mean = others.wx / others.w;
    let prior_var = tau2 + 1.0 / others.w;
    let (m, var) = match own {
        Some((y, u)) if u > 0.0 => {
            let (a, b) = (1.0 / prior_var, 1.0 / (u * u));
            ((a * mean + b * y) / (a + b), 1.0 / (a + b))
        }
        _ => (mean, prior_var),
    };
    Some(VehicleEvidence {
        vehicle_shortfall_percent: 100.0 * mean,
        vehicle_u_percent: 100.0 * others.w.recip().sqrt(),
        spread_percent: 100.0 * tau2.sqrt(),
        fills: others.n,
        own_shortfall_percent: own.map(|o| 100.0 * o.0),
        own_u_percent: own.map(|o| 100.0 * o.1),
        shortfall_percent: 100.0 * m,
        shortfall_u_percent: 100.0 * var.sqrt(),
    })
}

/// Judge the fills of every biased vehicle with its other fills; a fill whose combined estimate
/// shows it short, and whose own balance did not, becomes short with the reason in its sentence.
/// A vehicle `set_apart` as short on only some fills is left out: its shortfalls are one of two
/// values, not a normal spread about their mean, and the normal model's prior, that mean, pulled
/// its honest fills over the limit (on 67 independent fleets 41 of its honest fills were called
/// short that way against 17 of its short ones).
pub(crate) fn apply(
    tanks: &mut [TankAudit],
    vehicles: &mut [VehicleFinding],
    set_apart: &dyn Fn(&str) -> bool,
    opts: &AuditOptions,
) {
    for v in vehicles
        .iter_mut()
        .filter(|v| v.status == VehicleStatus::Biased && !set_apart(&v.vehicle))
    {
        // the vehicle test's points, as shortfalls
        let points: Vec<(&str, f64, f64)> = v
            .adjusted
            .iter()
            .map(|a| {
                (
                    a.ticket.as_str(),
                    -a.percent / 100.0,
                    (a.u_percent / 100.0).max(1e-4),
                )
            })
            .collect();
        let all: Vec<(f64, f64)> = points.iter().map(|p| (p.1, p.2)).collect();
        let tau2 = between_variance(&all);
        let total = Sums::of(&all, tau2);
        let compared: HashMap<&str, (f64, f64)> =
            points.iter().map(|p| (p.0, (p.1, p.2))).collect();
        for b in tanks
            .iter_mut()
            .flat_map(|t| t.balances.iter_mut())
            .filter(|b| b.vehicle == v.vehicle && b.billed_kg > 0.0)
        {
            if matches!(b.verdict, Verdict::Short | Verdict::Excess) {
                continue;
            }
            // the fill's own point: the vehicle test's when it was compared (and then left out of
            // the others), else its own balance (a fill at a tank no other vehicle fills, or whose
            // gauge was found at fault and judged against its fitted scale)
            let mine = compared.get(b.ticket.as_str()).copied();
            let others = mine.map_or(total, |p| total.plus(p, tau2, -1.0));
            let own = mine.or_else(|| {
                (b.before.is_some() && b.after.is_some() && b.sigma_kg > 0.0)
                    .then(|| (b.residual_kg / b.billed_kg, b.sigma_kg / b.billed_kg))
            });
            let Some(e) = evidence(others, tau2, own) else {
                continue;
            };
            if e.shows_short(b.coverage_factor, opts.materiality_fraction) {
                b.with_vehicle = Some(e);
                set_verdict(b, opts);
                v.short_with_vehicle += usize::from(b.verdict == Verdict::Short);
            }
        }
    }
}

/// Whether a vehicle's fills are judged by the mixture of its deliveries rather than by the normal
/// model of its other fills: only when it was set apart as short on some fills *and* its mixture
/// has honest deliveries to speak of (their effect short by no more than the materiality
/// threshold). A vehicle short on every delivery whose scatter passed for a sometimes-short one's
/// has no honest component: its "honest" deliveries are short too, and the mixture, judging each
/// fill against them, would find none short.
pub(crate) fn judged_by_mixture(
    set_apart: bool,
    mixture: Option<crate::mixture::Mixture>,
    materiality_fraction: f64,
) -> bool {
    set_apart && mixture.is_some_and(|m| -m.honest <= materiality_fraction)
}

/// The evidence of the mixture `m` of a vehicle's deliveries for one fill at `x` ± `u` (its ratio
/// less its tank's level): the probability that it was a short delivery, with the short share as
/// the prior, held at even odds at most (a share fitted high, the honest and short deliveries not
/// well apart, must not make an honest fill's balance pass for short).
fn mixture_evidence(m: crate::mixture::Mixture, x: f64, u: f64) -> MixtureEvidence {
    let prior = crate::mixture::Mixture {
        share: m.share.min(0.5),
        ..m
    };
    MixtureEvidence {
        short_probability: prior.short_probability(x, u),
        shortfall_percent: 100.0 * (m.shortfall - m.honest),
        share: m.share,
        own_shortfall_percent: -100.0 * x,
        own_u_percent: 100.0 * u,
    }
}

/// Judge the fills of every vehicle found biased and set apart as short on only some fills, whose
/// deliveries fit a mixture of honest and short ones (`mixture_of`), by the probability that each
/// was a short one: a fill its own balance could not judge short becomes short when that is more
/// likely than not and the short deliveries' shortfall is material (the posterior of a two-part
/// mixture, McLachlan and Peel, "Finite Mixture Models", Wiley, 2000; the decision at one half is
/// the Bayes rule for equal costs of the two errors). Only fills compared with their tank's level
/// (the vehicle test's points) are judged so; the vehicle counts them with its fills found short
/// with its other fills.
pub(crate) fn apply_mixture(
    tanks: &mut [TankAudit],
    vehicles: &mut [VehicleFinding],
    mixture_of: &dyn Fn(&str) -> Option<crate::mixture::Mixture>,
    opts: &AuditOptions,
) {
    for v in vehicles
        .iter_mut()
        .filter(|v| v.status == VehicleStatus::Biased)
    {
        let Some(m) = mixture_of(&v.vehicle) else {
            continue;
        };
        let points: HashMap<&str, (f64, f64)> = v
            .adjusted
            .iter()
            .map(|a| (a.ticket.as_str(), (a.percent / 100.0, a.u_percent / 100.0)))
            .collect();
        let mut found = 0;
        for b in tanks
            .iter_mut()
            .flat_map(|t| t.balances.iter_mut())
            .filter(|b| b.vehicle == v.vehicle)
        {
            if !matches!(b.verdict, Verdict::Consistent | Verdict::Inconclusive) {
                continue;
            }
            let Some(&(x, u)) = points.get(b.ticket.as_str()) else {
                continue;
            };
            let e = mixture_evidence(m, x, u);
            if e.shows_short(opts.materiality_fraction) {
                b.with_mixture = Some(e);
                set_verdict(b, opts);
                found += usize::from(b.verdict == Verdict::Short);
            }
        }
        v.short_with_vehicle += found;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// τ² of three points with equal u = 1 at 0, 1, 2: Q = 2, n − 1 = 2, so τ² = 0; at 0, 2, 4:
    /// Q = 4 + 0 + 4 = 8, c = 3 − 3/3 = 2, τ² = (8 − 2) / 2 = 3 (the DerSimonian–Laird formula
    /// worked by hand); at 0, 3, 6 each outer term 9 is held at 6.25: Q = 12.5, τ² = 5.25.
    #[test]
    fn between_variance_by_hand() {
        assert!(between_variance(&[(0.0, 1.0), (1.0, 1.0), (2.0, 1.0)]).abs() < 1e-12);
        let t = between_variance(&[(0.0, 1.0), (2.0, 1.0), (4.0, 1.0)]);
        assert!((t - 3.0).abs() < 1e-12, "{t}");
        let t = between_variance(&[(0.0, 1.0), (3.0, 1.0), (6.0, 1.0)]);
        assert!((t - 5.25).abs() < 1e-12, "{t}");
    }

    /// A vehicle whose honest deliveries sit at its tank's level and whose short ones 3.5 % under
    /// it, 40 % of them; a fill at u = 1 %. By hand (normal densities φ(1) = 0.241971,
    /// φ(1.5) = 0.129518, φ(2) = 0.053991, φ(2.5) = 0.017528): at x = −2.5 % the fill is short
    /// with probability 0.4 φ(1) / (0.4 φ(1) + 0.6 φ(2.5)) = 0.9020, shown short; at −1.5 %,
    /// 0.4 φ(2) / (0.4 φ(2) + 0.6 φ(1.5)) = 0.2175, not. A share fitted at 0.8 is held at 0.5: at
    /// −1.5 % φ(2) / (φ(2) + φ(1.5)) = 0.2942 (0.6251 with 0.8), not short; a shortfall under the
    /// materiality never is.
    #[test]
    fn a_fill_judged_by_its_vehicle_s_mixture_by_hand() {
        let m = crate::mixture::Mixture {
            honest: 0.0,
            shortfall: 0.035,
            share: 0.4,
        };
        let e = mixture_evidence(m, -0.025, 0.01);
        assert!((e.short_probability - 0.9020).abs() < 1e-4, "{e:?}");
        assert!(
            (e.shortfall_percent - 3.5).abs() < 1e-12
                && (e.own_shortfall_percent - 2.5).abs() < 1e-12
        );
        assert!(e.shows_short(0.01));
        let e = mixture_evidence(m, -0.015, 0.01);
        assert!((e.short_probability - 0.2175).abs() < 1e-4, "{e:?}");
        assert!(!e.shows_short(0.01));
        let high = crate::mixture::Mixture { share: 0.8, ..m };
        let e = mixture_evidence(high, -0.015, 0.01);
        assert!((e.short_probability - 0.2942).abs() < 1e-4, "{e:?}");
        assert!((e.share - 0.8).abs() < 1e-12);
        assert!(!e.shows_short(0.01));
        let small = crate::mixture::Mixture {
            shortfall: 0.008,
            ..m
        };
        assert!(!mixture_evidence(small, -0.02, 0.005).shows_short(0.01));
    }

    /// The normal-normal posterior worked by hand: prior mean 1.5 % with τ = 0 and five others at
    /// u = 0.5 % (mean's variance 0.05 %²), own point 0.5 ± 1 %: weights 20 and 1, mean
    /// (20·1.5 + 0.5) / 21 = 1.452 %, u = 1/√21 = 0.218 %.
    #[test]
    fn posterior_by_hand() {
        let others = [(0.015, 0.005); 5];
        let sums = |tau2: f64, n: usize| Sums::of(&others[..n], tau2);
        let e = evidence(sums(0.0, 5), 0.0, Some((0.005, 0.01))).expect("five others");
        assert!((e.shortfall_percent - 30.5 / 21.0).abs() < 1e-9, "{e:?}");
        assert!((e.shortfall_u_percent - (1.0 / 21.0_f64).sqrt()).abs() < 1e-9);
        assert!(e.shows_short(2.0, 0.01));
        // a spread of 3 % between the vehicle's fills: the own point dominates and shows nothing
        let tau2 = 0.03_f64.powi(2);
        let e = evidence(sums(tau2, 5), tau2, Some((0.0, 0.01))).expect("five others");
        assert!(e.shortfall_percent < 0.2, "{e:?}");
        assert!(!e.shows_short(2.0, 0.01));
        // too few others: no evidence
        assert!(evidence(sums(0.0, 4), 0.0, None).is_none());
        // one taken out of six leaves the five
        let six = Sums::of(&[(0.015, 0.005); 6], 0.0).plus((0.015, 0.005), 0.0, -1.0);
        let e6 = evidence(six, 0.0, Some((0.005, 0.01))).expect("five others");
        assert!((e6.shortfall_percent - 30.5 / 21.0).abs() < 1e-9, "{e6:?}");
    }

    /// Which vehicles the mixture judges, by hand at the 1 % materiality: set apart with honest
    /// deliveries at −0.3 % (a meter within class), yes; with "honest" deliveries at −1.4 % (a
    /// vehicle short on every fill, its scatter taken for a mixture's), no; at exactly −1 %, yes (no
    /// more than the threshold); not set apart, or without a mixture, no.
    #[test]
    fn only_a_mixture_with_honest_deliveries_judges_a_vehicle() {
        let m = |honest: f64| crate::mixture::Mixture {
            honest,
            shortfall: 0.035,
            share: 0.4,
        };
        assert!(judged_by_mixture(true, Some(m(-0.003)), 0.01));
        assert!(!judged_by_mixture(true, Some(m(-0.014)), 0.01));
        assert!(judged_by_mixture(true, Some(m(-0.01)), 0.01));
        assert!(!judged_by_mixture(false, Some(m(-0.003)), 0.01));
        assert!(!judged_by_mixture(true, None, 0.01));
    }
}
