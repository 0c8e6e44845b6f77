//! Tank levels and vehicle effects of the fills' ratios (gained + drawn) / billed, fitted jointly and
//! robustly, so that one vehicle's shortfall does not leak into another's estimate.
//!
//! Vehicle effects are centred on the median vehicle of each connected group of tanks and vehicles
//! (vehicles that never share a tank, directly or through others, cannot be compared), a vehicle far
//! from the rest left out of that median (Hampel's identifier).
//!
//! ratio = tank level + vehicle effect + residual, fitted by iteratively reweighted least squares with
//! Huber's weights on the residuals scaled by their median absolute deviation (Huber, "Robust
//! Statistics", 1981; Holland and Welsch, "Robust regression using iteratively reweighted
//! least-squares", Commun. Statist. A6, 1977), started from Tukey's median polish ("Exploratory Data
//! Analysis", 1977). Vehicle effects are centred on their median (most vehicles are honest). A vehicle
//! short on only some fills keeps its short fills out of the tank levels (they are outliers of the
//! fit), so the honest vehicles at the same tanks are compared with an honest level.

use crate::stats::{mad_sigma, median};

/// One fill: (tank index, vehicle index, ratio).
pub(crate) type Row = (usize, usize, f64);

/// The fitted levels and effects.
#[derive(Debug, Clone)]
pub(crate) struct Effects {
    /// Each tank's level.
    pub(crate) tank: Vec<f64>,
    /// Each vehicle's effect (centred on the median vehicle).
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

/// Vehicles this many robust standard deviations (1.4826 × MAD) from their group's median are left
/// out of its centre: Hampel's identifier (Davies and Gather, "The identification of multiple
/// outliers", JASA 88, 1993, with the usual constant 3).
const HAMPEL_Z: f64 = 3.0;

/// The centre of a group's vehicle effects: the median of those Hampel's identifier does not set
/// apart. In a group of a few vehicles, one short on every fill would otherwise pull the plain
/// median towards itself (of four, the median is the mean of the two middle ones, one honest vehicle
/// and the next), and the short vehicle's own effect towards zero by half their difference.
fn typical(effects: &[f64]) -> f64 {
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

fn centre(
    vehicle: &mut [f64],
    tank: &mut [f64],
    counts: &[usize],
    comp: &(Vec<usize>, Vec<usize>),
) {
    let mut by_comp: std::collections::BTreeMap<usize, Vec<f64>> = Default::default();
    for ((v, n), c) in vehicle.iter().zip(counts).zip(&comp.1) {
        if *n > 0 {
            by_comp.entry(*c).or_default().push(*v);
        }
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
    const HUBER_C: f64 = 1.5;
    let by_tank = groups(rows.iter().map(|r| r.0), tanks);
    let by_vehicle = groups(rows.iter().map(|r| r.1), vehicles);
    let counts: Vec<usize> = by_vehicle.iter().map(Vec::len).collect();
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
        centre(&mut b, &mut a, &counts, &comp);
    }
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
        centre(&mut b, &mut a, &counts, &comp);
    }
    let resid: Vec<f64> = rows.iter().map(|r| r.2 - a[r.0] - b[r.1]).collect();
    Effects {
        tank: a,
        vehicle: b,
        weight: w,
        scale: mad_sigma(&resid).unwrap_or(0.0),
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
    /// 0 (centred on their own group's median), not +2 % against the first group's median
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

    /// Worked by hand: of four vehicles at −1.35, −0.09, +0.03 and +0.18 %, the plain median is
    /// −0.03 % (the short vehicle pulls it down by half the gap between the two middle honest ones);
    /// the deviations from it 1.32, 0.06, 0.06, 0.21 % have a median of 0.135 %, so 3 × 1.4826 ×
    /// 0.135 = 0.60 % sets the first apart and the centre is the median of the other three, +0.03 %.
    /// Two vehicles keep their mean; equal effects are their own centre.
    #[test]
    fn a_vehicle_far_from_the_rest_does_not_move_the_centre() {
        let c = typical(&[-0.0135, -0.0009, 0.0003, 0.0018]);
        assert!((c - 0.0003).abs() < 1e-12, "{c}");
        let c = typical(&[-0.015, 0.002]);
        assert!((c + 0.0065).abs() < 1e-12, "{c}");
        assert_eq!(typical(&[0.004, 0.004, 0.004]), 0.004);
        assert_eq!(typical(&[]), 0.0);
    }

    /// Centring moves each group's vehicle effects to a median of 0 and its tanks' levels by the same
    /// amount (so every fitted ratio is unchanged); a single fleet-wide median would leave the second
    /// group at +3 % (constructed example).
    #[test]
    fn centring_is_per_group_and_keeps_the_fit() {
        let comp = (vec![0, 0, 1], vec![0, 0, 0, 1, 1]);
        let mut v = vec![0.01, 0.01, -0.02, 0.03, 0.03];
        let mut t = vec![1.0, 1.0, 1.0];
        let before: Vec<f64> = [(0, 2), (2, 3)].iter().map(|&(a, b)| t[a] + v[b]).collect();
        centre(&mut v, &mut t, &[3, 3, 3, 3, 3], &comp);
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
