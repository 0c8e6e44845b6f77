//! Tank levels and vehicle effects of the fills' ratios (gained + drawn) / billed, fitted jointly and
//! robustly, so that one vehicle's shortfall does not leak into another's estimate.
//!
//! Vehicle effects are centred on the honest majority of each connected group of tanks and
//! vehicles (vehicles that never share a tank, directly or through others, cannot be compared): the
//! weighted mean of the majority that agree best, each effect weighed by what its comparisons tell
//! of it (see [`typical`]).
//!
//! ratio = tank level + vehicle effect + residual, fitted by iteratively reweighted least squares with
//! Huber's weights on the residuals scaled by their median absolute deviation (Huber, "Robust
//! Statistics", 1981; Holland and Welsch, "Robust regression using iteratively reweighted
//! least-squares", Commun. Statist. A6, 1977), started from Tukey's median polish ("Exploratory Data
//! Analysis", 1977). A vehicle short on only some fills keeps its short fills out of the tank levels
//! (they are outliers of the fit), so the honest vehicles at the same tanks are compared with an
//! honest level.

use crate::stats::{mad_sigma, median};

/// One fill: (tank index, vehicle index, ratio).
pub(crate) type Row = (usize, usize, f64);

/// The fitted levels and effects.
#[derive(Debug, Clone)]
pub(crate) struct Effects {
    /// Each tank's level.
    pub(crate) tank: Vec<f64>,
    /// Each vehicle's effect (centred on its group's honest majority).
    pub(crate) vehicle: Vec<f64>,
    /// Each row's final Huber weight.
    pub(crate) weight: Vec<f64>,
    /// The residuals' robust scale (MAD).
    pub(crate) scale: f64,
}

/// Row indexes grouped by a key in 0..n.
pub(crate) fn groups(keys: impl Iterator<Item = usize>, n: usize) -> Vec<Vec<usize>> {
    let mut out: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (k, key) in keys.enumerate() {
        if let Some(v) = out.get_mut(key) {
            v.push(k);
        }
    }
    out
}

/// Weighted sums per tank and per (tank, vehicle), so that a vehicle at a tank can be compared with
/// what the tank's *other* vehicles show there.
#[derive(Debug, Clone)]
pub(crate) struct LeaveOut {
    /// (Σw·x, Σw, n) per tank ...
    tank: Vec<(f64, f64, usize)>,
    /// ... and per (tank, vehicle).
    pair: std::collections::HashMap<(usize, usize), (f64, f64, usize)>,
}

impl LeaveOut {
    pub(crate) fn new(n_tanks: usize) -> Self {
        LeaveOut {
            tank: vec![(0.0, 0.0, 0); n_tanks],
            pair: Default::default(),
        }
    }

    /// Add w·x and w for vehicle `v` at tank `t` (a tank out of range adds nothing).
    pub(crate) fn add(&mut self, t: usize, v: usize, wx: f64, w: f64) {
        let Some(s) = self.tank.get_mut(t) else {
            return;
        };
        *s = (s.0 + wx, s.1 + w, s.2 + 1);
        let p = self.pair.entry((t, v)).or_default();
        *p = (p.0 + wx, p.1 + w, p.2 + 1);
    }

    /// Each tank's (Σw·x, Σw).
    pub(crate) fn tanks(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.tank.iter().map(|s| (s.0, s.1))
    }

    /// Tank `t`'s (Σw·x, Σw, n) less vehicle `v`'s; None for a tank out of range.
    pub(crate) fn without(&self, t: usize, v: usize) -> Option<(f64, f64, usize)> {
        let s = self.tank.get(t)?;
        let p = self.pair.get(&(t, v)).copied().unwrap_or_default();
        Some((s.0 - p.0, s.1 - p.1, s.2 - p.2))
    }
}

/// Connected components of the tank–vehicle graph (a vehicle and a tank are joined when the vehicle
/// filled the tank): (component of each tank, component of each vehicle). Effects are identified only
/// within a component (a fleet's nitrogen trailers never meet its argon tanks), so each is centred
/// on its own.
fn components(rows: &[Row], tanks: usize, vehicles: usize) -> (Vec<usize>, Vec<usize>) {
    // union-find over tanks 0..tanks and vehicles tanks..tanks+vehicles
    let mut parent: Vec<usize> = (0..tanks + vehicles).collect();
    fn find(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    for r in rows {
        if r.0 < tanks && r.1 < vehicles {
            let (a, b) = (find(&mut parent, r.0), find(&mut parent, tanks + r.1));
            if a != b {
                parent[a] = b;
            }
        }
    }
    let roots: Vec<usize> = (0..tanks + vehicles)
        .map(|x| find(&mut parent, x))
        .collect();
    (roots[..tanks].to_vec(), roots[tanks..].to_vec())
}

/// The reweighting step's cut-off: vehicles within this many standard errors of the trimmed
/// centre join it, √χ²₁(0.975) = 2.2414 (Rousseeuw and Leroy, "Robust Regression and Outlier
/// Detection", Wiley 1987, §4.1's reweighted least squares; the quantile from statistical tables).
const REWEIGHT_Z: f64 = 2.2414;

/// Vehicles this many robust standard deviations (1.4826 × MAD) from their group's median are left
/// out of its centre: Hampel's identifier (Davies and Gather, "The identification of multiple
/// outliers", JASA 88, 1993, with the usual constant 3).
const HAMPEL_Z: f64 = 3.0;

/// The median of the effects Hampel's identifier does not set apart: the centre of a group of
/// fewer than [`LTS_FROM`] compared vehicles.
fn hampel_median(effects: &[f64]) -> f64 {
    let Some(m) = median(effects) else {
        return 0.0;
    };
    let spread = mad_sigma(effects).unwrap_or(0.0);
    if spread <= 0.0 {
        return m;
    }
    let kept: Vec<f64> = effects
        .iter()
        .copied()
        .filter(|x| (x - m).abs() <= HAMPEL_Z * spread)
        .collect();
    median(&kept).unwrap_or(m)
}

/// Groups of at least this many compared vehicles are centred on their best-agreeing majority. Of
/// three, a majority is two, and a pair with one vehicle compared at a single tank agrees with
/// anything (measured on independent fleets: the pair of a vehicle short on some fills and one
/// compared only with it at one tank was taken for the honest majority); their median is kept.
const LTS_FROM: usize = 4;

/// Groups of up to this many compared vehicles have every majority tried.
const EXHAUSTIVE_UP_TO: usize = 16;

/// The centre of a group's vehicle effects, each with its variance: the weighted mean of the
/// majority that agree best, least trimmed squares for a location (Rousseeuw, "Least median of
/// squares regression", JASA 79, 1984): of the subsets of h = ⌊n/2⌋ + 1 effects (every one up to
/// [`EXHAUSTIVE_UP_TO`] vehicles; beyond, concentration steps from each run of h neighbours in
/// order of size, Rousseeuw and Van Driessen's FAST-LTS, 2006), the one of least χ² about its
/// inverse-variance weighted mean; then every vehicle within [`REWEIGHT_Z`] standard errors of
/// that mean joins it and the centre is their weighted mean. Most vehicles are honest: in a group
/// of four, one short on every fill and the next honest one would pull a median halfway towards
/// the short one, and a noisy honest vehicle with few fills between them would move it further; a
/// vehicle with few comparisons weighs little. Fewer than [`LTS_FROM`] keep the Hampel median;
/// effects with no comparison (an infinite or undefined variance) are left out, and if none has
/// one the plain median is the centre.
fn typical(effects: &[(f64, f64)]) -> f64 {
    let mut known: Vec<(f64, f64)> = effects
        .iter()
        .copied()
        .filter(|(x, v)| x.is_finite() && v.is_finite() && *v > 0.0)
        .collect();
    if known.is_empty() {
        let plain: Vec<f64> = effects.iter().map(|e| e.0).collect();
        return median(&plain).unwrap_or(0.0);
    }
    if known.len() < LTS_FROM {
        let plain: Vec<f64> = known.iter().map(|e| e.0).collect();
        return hampel_median(&plain);
    }
    known.sort_by(|a, b| a.0.total_cmp(&b.0));
    let weighted = |set: &[(f64, f64)]| -> (f64, f64) {
        let (sx, sw) = set
            .iter()
            .fold((0.0, 0.0), |(sx, sw), (x, v)| (sx + x / v, sw + 1.0 / v));
        let m = sx / sw;
        (m, set.iter().map(|(x, v)| (x - m).powi(2) / v).sum())
    };
    let h = known.len() / 2 + 1;
    let trimmed = if known.len() <= EXHAUSTIVE_UP_TO {
        // every subset of h (at most C(16, 9) = 11,440)
        (0u32..1 << known.len())
            .filter(|m| m.count_ones() as usize == h)
            .map(|m| {
                let set: Vec<(f64, f64)> = (0..known.len())
                    .filter(|i| m >> i & 1 == 1)
                    .map(|i| known[i])
                    .collect();
                weighted(&set)
            })
            .min_by(|a, b| a.1.total_cmp(&b.1))
    } else {
        // concentration steps from every run of h neighbours in order of size
        known
            .windows(h)
            .map(|start| {
                let mut best = weighted(start);
                for _ in 0..20 {
                    let mut by_distance = known.clone();
                    by_distance.sort_by(|a, b| {
                        ((a.0 - best.0).powi(2) / a.1).total_cmp(&((b.0 - best.0).powi(2) / b.1))
                    });
                    let next = weighted(&by_distance[..h]);
                    if next.1 >= best.1 {
                        break;
                    }
                    best = next;
                }
                best
            })
            .min_by(|a, b| a.1.total_cmp(&b.1))
    }
    .map_or(0.0, |(m, _)| m);
    let joined: Vec<(f64, f64)> = known
        .iter()
        .copied()
        .filter(|(x, v)| (x - trimmed).abs() <= REWEIGHT_Z * v.sqrt())
        .collect();
    if joined.is_empty() {
        trimmed
    } else {
        weighted(&joined).0
    }
}

/// Each vehicle's information on its effect in the two-way layout with weights `w`: the diagonal
/// of the reduced normal equations, Σ_t W_vt − Σ_t W_vt² / W_t (W_vt the weight of its fills at
/// tank t, W_t the tank's), the fills at a tank it alone fills telling nothing. Its effect's
/// variance is about the residuals' variance over it (the other vehicles' effects' errors left
/// out).
fn information(rows: &[Row], w: &[f64], tanks: usize, vehicles: usize) -> Vec<f64> {
    let mut at_tank = vec![0.0; tanks];
    let mut pair: std::collections::BTreeMap<(usize, usize), f64> = Default::default();
    for (r, wk) in rows.iter().zip(w) {
        if r.0 < tanks && r.1 < vehicles {
            at_tank[r.0] += wk;
            *pair.entry((r.0, r.1)).or_default() += wk;
        }
    }
    let mut info = vec![0.0; vehicles];
    for ((t, v), wvt) in pair {
        if at_tank[t] > 0.0 {
            info[v] += wvt - wvt * wvt / at_tank[t];
        }
    }
    info
}

/// Centre each group's vehicle effects on [`typical`] of them (variances `scale² / information`)
/// and move its tanks' levels by as much, so every fitted ratio stays the same.
fn centre(
    vehicle: &mut [f64],
    tank: &mut [f64],
    info: &[f64],
    scale: f64,
    comp: &(Vec<usize>, Vec<usize>),
) {
    let mut by_comp: std::collections::BTreeMap<usize, Vec<(f64, f64)>> = Default::default();
    for ((v, i), c) in vehicle.iter().zip(info).zip(&comp.1) {
        let var = if *i > 1e-9 {
            scale * scale / i
        } else {
            f64::INFINITY
        };
        by_comp.entry(*c).or_default().push((*v, var));
    }
    let shift: std::collections::BTreeMap<usize, f64> =
        by_comp.into_iter().map(|(c, v)| (c, typical(&v))).collect();
    for (x, c) in vehicle.iter_mut().zip(&comp.1) {
        *x -= shift.get(c).copied().unwrap_or(0.0);
    }
    for (x, c) in tank.iter_mut().zip(&comp.0) {
        *x += shift.get(c).copied().unwrap_or(0.0);
    }
}

/// Fit tank levels and vehicle effects.
pub(crate) fn two_way(rows: &[Row], tanks: usize, vehicles: usize) -> Effects {
    two_way_apart(rows, tanks, vehicles, &[])
}

/// Fit tank levels and vehicle effects, the vehicles marked in `apart` (known to be short on some
/// fills) left out of their group's centre: they are no reference for the honest ones.
pub(crate) fn two_way_apart(
    rows: &[Row],
    tanks: usize,
    vehicles: usize,
    apart: &[bool],
) -> Effects {
    const HUBER_C: f64 = 1.5;
    let by_tank = groups(rows.iter().map(|r| r.0), tanks);
    let by_vehicle = groups(rows.iter().map(|r| r.1), vehicles);
    let comp = components(rows, tanks, vehicles);
    let mut a = vec![1.0; tanks];
    let mut b = vec![0.0; vehicles];
    let mut buf: Vec<f64> = Vec::new();
    // median polish to start
    for _ in 0..6 {
        for (at, idx) in a.iter_mut().zip(&by_tank) {
            buf.clear();
            buf.extend(idx.iter().map(|&k| rows[k].2 - b[rows[k].1]));
            *at = median(&buf).unwrap_or(1.0);
        }
        for (bv, idx) in b.iter_mut().zip(&by_vehicle) {
            buf.clear();
            buf.extend(idx.iter().map(|&k| rows[k].2 - a[rows[k].0]));
            *bv = median(&buf).unwrap_or(0.0);
        }
    }
    // (the centre moves no fitted ratio, so it is set once per stage)
    let no_reference = |mut info: Vec<f64>| {
        for (i, a) in info.iter_mut().zip(apart) {
            if *a {
                *i = 0.0;
            }
        }
        info
    };
    let info_plain = no_reference(information(rows, &vec![1.0; rows.len()], tanks, vehicles));
    let resid: Vec<f64> = rows.iter().map(|r| r.2 - a[r.0] - b[r.1]).collect();
    let scale = mad_sigma(&resid).unwrap_or(0.0).max(1e-4);
    centre(&mut b, &mut a, &info_plain, scale, &comp);
    // Huber IRLS
    let mut w = vec![1.0; rows.len()];
    for _ in 0..20 {
        let resid: Vec<f64> = rows.iter().map(|r| r.2 - a[r.0] - b[r.1]).collect();
        let scale = mad_sigma(&resid).unwrap_or(0.0).max(1e-4);
        for (wi, e) in w.iter_mut().zip(&resid) {
            let z = (e / scale).abs();
            *wi = if z <= HUBER_C { 1.0 } else { HUBER_C / z };
        }
        for (at, idx) in a.iter_mut().zip(&by_tank) {
            let (s, sw) = idx.iter().fold((0.0, 0.0), |(s, sw), &k| {
                (s + w[k] * (rows[k].2 - b[rows[k].1]), sw + w[k])
            });
            if sw > 0.0 {
                *at = s / sw;
            }
        }
        for (bv, idx) in b.iter_mut().zip(&by_vehicle) {
            let (s, sw) = idx.iter().fold((0.0, 0.0), |(s, sw), &k| {
                (s + w[k] * (rows[k].2 - a[rows[k].0]), sw + w[k])
            });
            if sw > 0.0 {
                *bv = s / sw;
            }
        }
    }
    // the residuals' scale, which the centre leaves as it is
    let resid: Vec<f64> = rows.iter().map(|r| r.2 - a[r.0] - b[r.1]).collect();
    let scale = mad_sigma(&resid).unwrap_or(0.0);
    let info = no_reference(information(rows, &w, tanks, vehicles));
    centre(&mut b, &mut a, &info, scale.max(1e-4), &comp);
    Effects {
        tank: a,
        vehicle: b,
        weight: w,
        scale,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Tank 0 holds vehicle 0's 1 and 3 (weights 1) and vehicle 1's 2 (weight 2): without vehicle 0
    /// it is (4, 2, 1), without vehicle 1 (4, 2, 2), without an absent vehicle all of it (8, 4, 3);
    /// a tank out of range adds nothing and has no sums (worked by hand).
    #[test]
    fn leave_out_sums_by_hand() {
        let mut s = LeaveOut::new(1);
        s.add(0, 0, 1.0, 1.0);
        s.add(0, 0, 3.0, 1.0);
        s.add(0, 1, 4.0, 2.0);
        s.add(5, 0, 9.0, 1.0);
        assert_eq!(s.without(0, 0), Some((4.0, 2.0, 1)));
        assert_eq!(s.without(0, 1), Some((4.0, 2.0, 2)));
        assert_eq!(s.without(0, 7), Some((8.0, 4.0, 3)));
        assert_eq!(s.without(5, 0), None);
        assert_eq!(s.tanks().collect::<Vec<_>>(), vec![(8.0, 4.0)]);
    }

    /// Three tanks, four vehicles; vehicle 3 is short by 4 % on every other fill and shares tank 0
    /// with vehicle 0 alone. Exact ratios (no noise): the robust fit gives vehicle 0 an effect of 0
    /// within 0.2 % (its shortfall-free level), where a fit by medians leaves about 1 % of vehicle 3's
    /// shortfall in tank 0's level when vehicle 3 makes most of its fills (constructed example).
    #[test]
    fn a_sometimes_short_vehicle_does_not_move_an_honest_one() {
        let mut rows = Vec::new();
        let mut n = 0;
        for t in 0..3 {
            for v in 0..3 {
                for _ in 0..4 {
                    rows.push((t, v, 1.0));
                }
            }
        }
        for k in 0..9 {
            let short = if k % 2 == 0 { 0.04 } else { 0.0 };
            rows.push((0, 3, 1.0 - short));
            n += 1;
        }
        for _ in 0..4 {
            rows.push((0, 0, 1.0));
        }
        let e = two_way(&rows, 3, 4);
        assert!(e.vehicle[0].abs() < 0.002, "{:?} over {n}", e.vehicle);
        assert!((e.tank[0] - 1.0).abs() < 0.002, "{:?}", e.tank);
    }

    /// Two fleets that never meet (say nitrogen and argon trailers): in the first, three vehicles
    /// share two tanks and one is 3 % short; in the second, two vehicles share two tanks whose gauges
    /// read 2 % high. The second group's vehicles cannot be told from its tanks, so their effects are
    /// 0 (centred on their own group's majority), not +2 % against the first group's
    /// (constructed example, exact ratios).
    #[test]
    fn effects_are_centred_within_each_group_of_shared_tanks() {
        let mut rows = Vec::new();
        for t in 0..2 {
            for _ in 0..5 {
                rows.push((t, 0, 1.0));
                rows.push((t, 1, 1.0));
                rows.push((t, 2, 0.97));
            }
        }
        for t in 2..4 {
            for _ in 0..5 {
                rows.push((t, 3, 1.02));
                rows.push((t, 4, 1.02));
            }
        }
        let e = two_way(&rows, 4, 5);
        assert!((e.vehicle[2] + 0.03).abs() < 1e-9, "{:?}", e.vehicle);
        for v in [0, 1, 3, 4] {
            assert!(e.vehicle[v].abs() < 1e-9, "{:?}", e.vehicle);
        }
        assert!((e.tank[2] - 1.02).abs() < 1e-9, "{:?}", e.tank);
        let (tc, vc) = components(&rows, 4, 5);
        assert_eq!(tc[0], tc[1]);
        assert_ne!(tc[0], tc[2]);
        assert_eq!(vc[3], vc[4]);
        assert_eq!(vc[0], tc[0]);
    }

    /// Worked by hand, effects in % with equal standard errors 0.1 %: of four vehicles at −1.35,
    /// −0.09, +0.03 and +0.18, the runs of three have χ² 116.9 (about −0.47) and 3.66 (about
    /// +0.04); all of the second lie within 2.2414 × 0.1 of +0.04 and the short one 13 standard
    /// errors off, so the centre is +0.04, where the plain median, −0.03, is pulled towards the
    /// short vehicle.
    #[test]
    fn a_vehicle_far_from_the_rest_does_not_move_the_centre() {
        let v = 0.001f64.powi(2);
        let c = typical(&[(-0.0135, v), (-0.0009, v), (0.0003, v), (0.0018, v)]);
        assert!((c - 0.0004).abs() < 1e-12, "{c}");
    }

    /// Worked by hand (% and standard errors): the short vehicle at −1.2 (0.15), honest ones at
    /// −0.5 (0.45: few comparisons), +0.1 (0.15) and +0.3 (0.2). The plain median is −0.2, half
    /// the way to the short one; of the runs of three the χ² are 37.57 (weighted mean −0.547) and
    /// 2.722 (+0.12739), the honest three lie 1.39, 0.18 and 0.86 standard errors from it and the
    /// short one 8.85, so the centre is the honest three's weighted mean, 0.127386 %.
    #[test]
    fn a_noisy_honest_vehicle_weighs_little() {
        let e = [
            (-0.012, 0.0015),
            (-0.005, 0.0045),
            (0.001, 0.0015),
            (0.003, 0.002),
        ];
        let e: Vec<(f64, f64)> = e.iter().map(|(x, s)| (*x, s * s)).collect();
        let c = typical(&e);
        assert!((c - 0.001_273_858_921_161_8).abs() < 1e-12, "{c}");
    }

    /// Fewer than four compared vehicles keep the median of those Hampel's identifier does not set
    /// apart (by hand: of −1.35, −0.09 and +0.03 % the median is −0.09, the deviations 1.26, 0,
    /// 0.12 have a median of 0.12 and 3 × 1.4826 × 0.12 = 0.53 % sets the first apart: the mean of
    /// the other two, −0.03 %; two keep their mean), whatever their variances; effects with no
    /// comparison (infinite or undefined variance) are left out, and with none compared the plain
    /// median is the centre; no vehicles, 0.
    #[test]
    fn fewer_than_four_keep_the_median() {
        let c = typical(&[(-0.0135, 1e-6), (-0.0009, 4e-6), (0.0003, 1e-4)]);
        assert!((c + 0.0003).abs() < 1e-12, "{c}");
        assert!((typical(&[(-1.5, 1.0), (0.2, 3.0)]) + 0.65).abs() < 1e-12);
        assert_eq!(typical(&[(0.004, 1e-6)]), 0.004);
        assert!((typical(&[(-1.5, 1.0), (0.2, 3.0), (9.0, f64::INFINITY)]) + 0.65).abs() < 1e-12);
        assert_eq!(
            typical(&[(0.1, f64::INFINITY), (0.3, f64::INFINITY), (0.2, f64::NAN)]),
            0.2
        );
        assert_eq!(typical(&[]), 0.0);
    }

    /// Seventeen vehicles (more than are tried exhaustively): fourteen honest at 0.01 % steps about
    /// 0 and three short at −1.5 %, all with standard error 0.1 %; the concentration steps keep
    /// the honest ones, whose mean is 0.005 % (by hand: the mean of −0.06 … +0.07).
    #[test]
    fn a_large_group_is_centred_on_its_honest_majority() {
        let mut e: Vec<(f64, f64)> = (0..14).map(|i| (f64::from(i - 6) * 1e-4, 1e-6)).collect();
        e.extend([(-0.015, 1e-6), (-0.0151, 1e-6), (-0.0149, 1e-6)]);
        let c = typical(&e);
        assert!((c - 0.00005).abs() < 1e-12, "{c}");
    }

    /// Tank 0: vehicle 0 twice (weight 1 each) and vehicle 1 once (weight 2); tank 1: vehicle 0
    /// alone three times. Vehicle 0: (2 − 2²/4) + (3 − 3²/3) = 1; vehicle 1: 2 − 2²/4 = 1
    /// (by hand): the fills at a tank a vehicle alone fills tell nothing of its effect.
    #[test]
    fn information_by_hand() {
        let rows = [
            (0, 0, 1.0),
            (0, 0, 1.0),
            (0, 1, 1.0),
            (1, 0, 1.0),
            (1, 0, 1.0),
            (1, 0, 1.0),
        ];
        let w = [1.0, 1.0, 2.0, 1.0, 1.0, 1.0];
        let info = information(&rows, &w, 2, 3);
        assert_eq!(info, vec![1.0, 1.0, 0.0]);
    }

    /// Centring moves each group's vehicle effects to a centre of 0 (the short one of three set
    /// apart, 5 standard errors from the other two) and its tanks' levels by the same amount (so
    /// every fitted ratio is unchanged); a single fleet-wide centre would leave the second
    /// group at +3 % (constructed example).
    #[test]
    fn centring_is_per_group_and_keeps_the_fit() {
        let comp = (vec![0, 0, 1], vec![0, 0, 0, 1, 1]);
        let mut v = vec![0.01, 0.01, -0.02, 0.03, 0.03];
        let mut t = vec![1.0, 1.0, 1.0];
        let before: Vec<f64> = [(0, 2), (2, 3)].iter().map(|&(a, b)| t[a] + v[b]).collect();
        centre(&mut v, &mut t, &[3.0; 5], 0.01, &comp);
        let expect = [0.0, 0.0, -0.03, 0.0, 0.0];
        for (x, e) in v.iter().zip(expect) {
            assert!((x - e).abs() < 1e-12, "{v:?}");
        }
        let after: Vec<f64> = [(0, 2), (2, 3)].iter().map(|&(a, b)| t[a] + v[b]).collect();
        for (a, b) in before.iter().zip(&after) {
            assert!((a - b).abs() < 1e-12);
        }
    }
}
