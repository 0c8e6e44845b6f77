//! Fast saturation curves ("superancillaries", Bell and Deiters' method): piecewise Chebyshev expansions of
//! ln p_sat, rho_L, ln rho_V, h_L and h_V, fitted to the full solution and bisected until the last
//! coefficients vanish; the inverse T(ln p) is fitted the same way to the forward curve.
//!
//! Below T_split the variable is T. Between T_split and T_c it is x = sqrt(T_c - T): along an analytic
//! equation the coexisting densities go as rho_c ± a x + b x² ..., which is smooth in x but not in T.
//! The nodes there come from the double-double refinement of the full solution (see `extended`), so the
//! octaves of x reach to 1e-12 T_c below T_c.

use crate::SolverOptions;
use crate::chebyshev::{self, LEN};
use crate::double_double::Dd;
use crate::error::FluidError;
use crate::fluid::Fluid;
use crate::helmholtz::ResidualAtTau;
use crate::saturation::{Saturation, bracketed_root};

/// ln p, rho_L, ln rho_V, h_L, h_V
const N_FUN: usize = 5;
/// The liquid side for density solves: ln p, rho_L, dp/drho and d2p/drho2 of the saturated liquid (mass
/// units). The slopes only start Newton's method, so their fit is not held to the tolerance.
const N_LIQ: usize = 4;
/// Relative size below which the two last coefficients count as converged.
const TOL: f64 = 1e-12;
/// Deepest bisection of a starting interval.
const MAX_DEPTH: u32 = 12;
/// Width of the near-critical region fitted in x = sqrt(T_c - T), as a fraction of T_c.
const SPLIT_FRACTION: f64 = 0.03;
/// Distance below T_c (fraction of T_c) within which a node starts from its neighbour.
const NEAR_CRITICAL_FIT: f64 = 1e-3;
/// Width of the last sliver below T_c (fraction of T_c) where the curves interpolate to the critical point.
const CRITICAL_PIECE: f64 = 1e-12;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Var {
    /// Chebyshev in T
    T,
    /// Chebyshev in x = sqrt(T_c - T)
    SqrtFromCritical,
    /// the sliver \[0, hi\] in x next to T_c: c\[0\] at the critical point, c\[0\] + c\[1\] at x = hi; ln p goes
    /// linearly in T, the others linearly in x
    Critical,
}

/// Per-function Chebyshev coefficients turned into monomial ones on [-1, 1].
fn monomial<const M: usize>(c: &[[f64; M]; LEN]) -> [[f64; M]; LEN] {
    let mut out = [[0.0; M]; LEN];
    for f in 0..M {
        let column: [f64; LEN] = std::array::from_fn(|k| c[k][f]);
        for (k, a) in chebyshev::to_monomial(&column).iter().enumerate() {
            out[k][f] = *a;
        }
    }
    out
}

/// One piece; `c` holds monomial coefficients in the piece's variable mapped to [-1, 1] (fitted as
/// Chebyshev series, evaluated by Estrin's scheme), except for `Var::Critical`.
#[derive(Debug, Clone)]
struct Piece {
    var: Var,
    /// bounds in the expansion's own variable
    lo: f64,
    hi: f64,
    /// [lo, hi] onto [-1, 1]
    map: chebyshev::UnitMap,
    c: [[f64; N_FUN]; LEN],
    /// the same for the [`N_LIQ`] liquid functions, kept apart so that the saturation lookups' table
    /// stays compact in cache
    liq: Box<[[f64; N_LIQ]; LEN]>,
}

#[derive(Debug, Clone)]
struct InversePiece {
    hi: f64,
    /// [lo, hi] onto [-1, 1]
    map: chebyshev::UnitMap,
    c: [[f64; 1]; LEN],
}

/// Size of the fitted curves, for reports and benchmarks.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CurveInfo {
    /// Degree of every expansion.
    pub degree: usize,
    /// Pieces of the forward curves (functions of T).
    pub forward_pieces: usize,
    /// Pieces of the inverse curve T(ln p).
    pub inverse_pieces: usize,
    /// Full saturation solutions used for the fit.
    pub full_solutions: usize,
}

/// The fitted curves of one fluid.
#[derive(Debug, Clone)]
pub(crate) struct SatCurves {
    tc: f64,
    /// upper T bound of each forward piece, ascending
    t_upper: Vec<f64>,
    /// finds the piece of a T without a binary search
    t_index: PieceIndex,
    pieces: Vec<Piece>,
    lnp_upper: Vec<f64>,
    lnp_index: PieceIndex,
    inverse: Vec<InversePiece>,
    pub(crate) info: CurveInfo,
}

impl SatCurves {
    pub(crate) fn fit(fluid: &Fluid) -> Result<SatCurves, FluidError> {
        let tt = fluid.triple.temperature_k;
        let tc = fluid.critical.temperature_k;
        let m = fluid.m;
        let e_scale = fluid.r * tc / m;
        let scale = [1.0, fluid.critical.density_kg_m3, 1.0, e_scale, e_scale];
        let opts = SolverOptions {
            max_iter: 200,
            tol: 1e-13,
        };
        let mut solutions = 0usize;
        let mut last: Option<crate::saturation::SatMolar> = None;
        // the node's temperature in double-double: next to T_c, T = T_c - x² rounded to f64 would move the
        // node off its x by up to 1e-5 of the distance to T_c (1e-9 in the densities at 1e-11 T_c)
        let mut values = |t_exact: Dd| -> Result<([f64; N_FUN], [f64; 2]), FluidError> {
            solutions += 1;
            let t = t_exact.to_f64();
            // near T_c the neighbouring node's solution, scaled, is a close start (one double-double
            // solve instead of the solver's chain of solutions farther out)
            let near_critical = |t: f64| tc - t < NEAR_CRITICAL_FIT * tc;
            let from_last = match last {
                Some(prev) if near_critical(t) && near_critical(prev.t) => {
                    fluid.solve_saturation_near(t_exact, &prev, &opts)
                }
                _ => None,
            };
            let s = match from_last {
                Some(s) => s,
                None => {
                    let s = match fluid.solve_saturation_molar(t, &opts) {
                        Ok(s) => s,
                        // a neighbouring node's solution is the better start
                        Err(e) => match last {
                            Some(prev) => fluid
                                .solve_saturation_near(t_exact, &prev, &opts)
                                .ok_or(e)?,
                            None => return Err(e),
                        },
                    };
                    fluid.refine_saturation_at(s, t_exact)
                }
            };
            last = Some(s);
            let slopes = liquid_slopes(fluid, s.t, s.rho_l);
            let s = s.to_mass(m);
            Ok((
                [
                    s.pressure_pa.ln(),
                    s.liquid_density_kg_m3,
                    s.vapour_density_kg_m3.ln(),
                    s.liquid_enthalpy_j_kg,
                    s.vapour_enthalpy_j_kg,
                ],
                slopes,
            ))
        };
        let t_split = tc * (1.0 - SPLIT_FRACTION);
        let x_split = (tc - t_split).sqrt();
        let x_min = (CRITICAL_PIECE * tc).sqrt();
        // (variable, lo, hi, depth) still to fit: T below the split, then octaves of x toward T_c
        // the last field is the parent's tail over its tolerance (infinite for a starting interval)
        let mut todo = vec![(Var::T, tt, t_split, 0u32, f64::INFINITY)];
        let x_kink = non_analytic_kink(fluid, &opts);
        let mut x_hi = x_split;
        while x_hi > x_min {
            let lo = 0.5 * x_hi;
            if x_kink > lo && x_kink < x_hi {
                todo.push((Var::SqrtFromCritical, lo, x_kink, 0, f64::INFINITY));
                todo.push((Var::SqrtFromCritical, x_kink, x_hi, 0, f64::INFINITY));
            } else {
                todo.push((Var::SqrtFromCritical, lo, x_hi, 0, f64::INFINITY));
            }
            x_hi = lo;
        }
        let x_last = x_hi;
        let nodes = chebyshev::lobatto_nodes();
        let mut pieces = Vec::new();
        while let Some((var, lo, hi, depth, parent_excess)) = todo.pop() {
            let mut table = [[0.0; N_FUN]; LEN];
            let mut slopes = [[0.0; 2]; LEN];
            for ((row, slope), u) in table.iter_mut().zip(&mut slopes).zip(nodes) {
                let v = chebyshev::from_unit(u, lo, hi);
                let t = match var {
                    Var::T => Dd::from(v.clamp(tt, tc)),
                    Var::SqrtFromCritical | Var::Critical => tc_minus_square(tc, v),
                };
                (*row, *slope) = values(t)?;
            }
            // close to T_c the full solution is refined in double-double and good to ~2e-30 / (separation
            // of the reduced densities)^3 (an ill-conditioned Newton system): do not chase noise below that
            let separation = table
                .iter()
                .map(|r| (r[1] - r[2].exp()) / fluid.critical.density_kg_m3)
                .fold(f64::INFINITY, f64::min);
            let noise = (2e-30 / separation.powi(3)).max(TOL);
            let mut c = [[0.0; N_FUN]; LEN];
            let mut excess: f64 = 0.0;
            for f in 0..N_FUN {
                let column: [f64; LEN] = std::array::from_fn(|k| table[k][f]);
                let cf = chebyshev::coefficients(&column);
                let tail = cf[LEN - 1].abs().max(cf[LEN - 2].abs());
                let tol = if f == 0 { TOL } else { noise };
                excess = excess.max(tail / (tol * scale[f]));
                for (k, ck) in cf.iter().enumerate() {
                    c[k][f] = *ck;
                }
            }
            // halving a smooth stretch shrinks the tail by orders of magnitude; when it does not, the
            // tail is the full solution's round-off and bisecting further would only chase it
            // (not next to the non-analytic kink, where the tail shrinks only algebraically)
            let at_kink = lo == x_kink || hi == x_kink;
            let stalled = !at_kink && excess > 0.1 * parent_excess;
            let converged = excess <= 1.0 || stalled;
            if converged || depth >= MAX_DEPTH {
                let mut liq = [[0.0; N_LIQ]; LEN];
                for (f, column) in [
                    std::array::from_fn(|k| table[k][0]),
                    std::array::from_fn(|k| table[k][1]),
                    std::array::from_fn(|k| slopes[k][0]),
                    std::array::from_fn(|k| slopes[k][1]),
                ]
                .iter()
                .enumerate()
                {
                    for (k, ck) in chebyshev::coefficients(column).iter().enumerate() {
                        liq[k][f] = *ck;
                    }
                }
                pieces.push(Piece {
                    var,
                    lo,
                    hi,
                    map: chebyshev::UnitMap::new(lo, hi),
                    c: monomial(&c),
                    liq: Box::new(monomial(&liq)),
                });
            } else {
                let mid = 0.5 * (lo + hi);
                todo.push((var, lo, mid, depth + 1, excess));
                todo.push((var, mid, hi, depth + 1, excess));
            }
        }
        // the last sliver next to T_c: from the critical point to the nearest fitted node, ln p linear in
        // T and the rest linear in x (within 1e-12 T_c of T_c, where T itself is resolved only to ~1e-4 of
        // its distance to T_c)
        let crit = {
            let s = fluid.critical_saturation().to_mass(m);
            [
                s.pressure_pa.ln(),
                s.liquid_density_kg_m3,
                s.vapour_density_kg_m3.ln(),
                s.liquid_enthalpy_j_kg,
                s.vapour_enthalpy_j_kg,
            ]
        };
        let (end, end_slopes) = values(tc_minus_square(tc, x_last))?;
        let mut c = [[0.0; N_FUN]; LEN];
        for f in 0..N_FUN {
            c[0][f] = crit[f];
            c[1][f] = end[f] - crit[f];
        }
        // the liquid's slopes vanish at the critical point
        let mut liq = [[0.0; N_LIQ]; LEN];
        for (f, (at_crit, at_end)) in [
            (crit[0], end[0]),
            (crit[1], end[1]),
            (0.0, end_slopes[0]),
            (0.0, end_slopes[1]),
        ]
        .into_iter()
        .enumerate()
        {
            liq[0][f] = at_crit;
            liq[1][f] = at_end - at_crit;
        }
        pieces.push(Piece {
            var: Var::Critical,
            lo: 0.0,
            hi: x_last,
            map: chebyshev::UnitMap::new(0.0, x_last),
            c,
            liq: Box::new(liq),
        });
        let upper = |p: &Piece| match p.var {
            Var::T => p.hi,
            Var::SqrtFromCritical | Var::Critical => tc - p.lo * p.lo,
        };
        pieces.sort_by(|a, b| upper(a).total_cmp(&upper(b)));
        let t_upper: Vec<f64> = pieces.iter().map(upper).collect();
        let mut curves = SatCurves {
            tc,
            t_index: PieceIndex::new(tt, &t_upper),
            t_upper,
            pieces,
            lnp_upper: Vec::new(),
            lnp_index: PieceIndex::new(0.0, &[]),
            inverse: Vec::new(),
            info: CurveInfo {
                degree: chebyshev::DEGREE,
                forward_pieces: 0,
                inverse_pieces: 0,
                full_solutions: 0,
            },
        };
        curves.fit_inverse(fluid, tc - x_kink * x_kink)?;
        curves.info.forward_pieces = curves.pieces.len();
        curves.info.inverse_pieces = curves.inverse.len();
        curves.info.full_solutions = solutions;
        Ok(curves)
    }

    /// T(ln p) fitted to the forward ln p(T), each node found by a bracketed root.
    /// `t_kink` (NaN for none) is where the forward curve has a kink: a piece boundary sits on its ln p.
    fn fit_inverse(&mut self, fluid: &Fluid, t_kink: f64) -> Result<(), FluidError> {
        let tt = fluid.triple.temperature_k;
        let tc = self.tc;
        let lnp_lo = self.at_t(tt)[0];
        let lnp_hi = self.at_t(tc)[0];
        let nodes = chebyshev::lobatto_nodes();
        let lnp_kink = self.at_t(t_kink)[0];
        let mut todo = if lnp_kink > lnp_lo && lnp_kink < lnp_hi {
            vec![(lnp_lo, lnp_kink, 0u32), (lnp_kink, lnp_hi, 0u32)]
        } else {
            vec![(lnp_lo, lnp_hi, 0u32)]
        };
        let mut inverse = Vec::new();
        while let Some((lo, hi, depth)) = todo.pop() {
            let mut column = [0.0; LEN];
            for (slot, u) in column.iter_mut().zip(nodes) {
                let lnp = chebyshev::from_unit(u, lo, hi).clamp(lnp_lo, lnp_hi);
                *slot = if lnp <= lnp_lo {
                    tt
                } else if lnp >= lnp_hi {
                    tc
                } else {
                    bracketed_root(|t| self.at_t(t)[0] - lnp, tt, tc, 1e-16, 300).ok_or(
                        FluidError::NotConverged {
                            fluid: fluid.id,
                            what: "inverse saturation curve fit",
                            iterations: 300,
                            residual: f64::NAN,
                        },
                    )?
                };
            }
            let c = chebyshev::coefficients(&column);
            let tail = c[LEN - 1].abs().max(c[LEN - 2].abs());
            if tail <= 0.1 * TOL * tc || depth >= MAX_DEPTH {
                inverse.push(InversePiece {
                    hi,
                    map: chebyshev::UnitMap::new(lo, hi),
                    c: chebyshev::to_monomial(&c).map(|v| [v]),
                });
            } else {
                let mid = 0.5 * (lo + hi);
                todo.push((lo, mid, depth + 1));
                todo.push((mid, hi, depth + 1));
            }
        }
        inverse.sort_by(|a, b| a.hi.total_cmp(&b.hi));
        self.lnp_upper = inverse.iter().map(|p| p.hi).collect();
        self.lnp_index = PieceIndex::new(lnp_lo, &self.lnp_upper);
        self.inverse = inverse;
        Ok(())
    }

    /// [ln p, rho_L, ln rho_V, h_L, h_V] at T in [T_t, T_c] (mass units).
    #[inline]
    pub(crate) fn at_t(&self, t: f64) -> [f64; N_FUN] {
        self.eval_at_t(t, |p| &p.c)
    }

    /// [ln p, rho_L, dp/drho, d2p/drho2] of the saturated liquid at T in [T_t, T_c] (mass units; the
    /// slopes are approximate, for starting a density solve).
    #[inline]
    pub(crate) fn liquid_at_t(&self, t: f64) -> [f64; N_LIQ] {
        self.eval_at_t(t, |p| &*p.liq)
    }

    #[inline(always)]
    fn eval_at_t<const M: usize>(
        &self,
        t: f64,
        table: impl Fn(&Piece) -> &[[f64; M]; LEN],
    ) -> [f64; M] {
        let i = self.t_index.find(&self.t_upper, t);
        let Some(p) = self.pieces.get(i) else {
            return [f64::NAN; M];
        };
        let c = table(p);
        match p.var {
            Var::T => chebyshev::estrin_many(c, p.map.apply(t)),
            Var::SqrtFromCritical => {
                let x = (self.tc - t).max(0.0).sqrt();
                chebyshev::estrin_many(c, p.map.apply(x))
            }
            Var::Critical => {
                let x = ((self.tc - t).max(0.0).sqrt() / p.hi).min(1.0);
                let mut out = [0.0; M];
                for (f, slot) in out.iter_mut().enumerate() {
                    let w = if f == 0 { x * x } else { x };
                    *slot = c[0][f] + w * c[1][f];
                }
                out
            }
        }
    }

    /// T_sat at ln p (ln p within the curve's range).
    #[inline]
    pub(crate) fn t_from_ln_p(&self, ln_p: f64) -> f64 {
        let i = self.lnp_index.find(&self.lnp_upper, ln_p);
        let Some(p) = self.inverse.get(i) else {
            return f64::NAN;
        };
        chebyshev::estrin_many(&p.c, p.map.apply(ln_p))[0]
    }

    /// The saturation state at T (validated by the caller).
    #[inline]
    pub(crate) fn saturation(&self, t: f64) -> Saturation {
        let v = self.at_t(t);
        self.saturation_with_pressure(t, v[0].exp(), &v)
    }

    /// The saturation state from curve values `v` at T, with the pressure given.
    #[inline]
    pub(crate) fn saturation_with_pressure(&self, t: f64, p: f64, v: &[f64; N_FUN]) -> Saturation {
        Saturation {
            temperature_k: t,
            pressure_pa: p,
            liquid_density_kg_m3: v[1],
            vapour_density_kg_m3: v[2].exp(),
            liquid_enthalpy_j_kg: v[3],
            vapour_enthalpy_j_kg: v[4],
        }
    }
}

/// Span and Wagner's non-analytic terms are singular where theta = (1 - tau) + A |delta - 1|^(1/beta)
/// vanishes. The coexistence curve of carbon dioxide crosses that line a hair below the equation's T_c
/// (1e-11 T_c), and the densities have a kink there (they go as |T - T_kink|^(2b), 2b ~ 1.8): a piece
/// boundary must sit on it. Returns its x = sqrt(T_c - T), found by fixed-point iteration on the liquid's
/// delta from T = T_r; NaN when the fluid has no such terms or the crossing is not below T_c.
fn non_analytic_kink(fluid: &Fluid, opts: &SolverOptions) -> f64 {
    let tc = fluid.critical.temperature_k;
    let Some(na) = fluid.data.non_analytic.first() else {
        return f64::NAN;
    };
    let t_r = Dd::from(fluid.t_r);
    let mut t = t_r;
    for _ in 0..4 {
        let t_f = t.to_f64();
        if t_f.is_nan() || t_f >= tc {
            return f64::NAN;
        }
        let Ok(s) = fluid.solve_saturation_molar(t_f, opts) else {
            return f64::NAN;
        };
        let s = fluid.refine_saturation_at(s, t);
        let d1 = s.rho_l / fluid.rho_r - 1.0;
        t = t_r / (Dd::from(1.0) + na.big_a * d1.abs().powf(1.0 / na.beta));
    }
    let gap = (Dd::from(tc) - t).to_f64();
    if gap > 0.0 { gap.sqrt() } else { f64::NAN }
}

/// T_c - x² in double-double (T_c itself for x <= 0).
fn tc_minus_square(tc: f64, x: f64) -> Dd {
    if x > 0.0 {
        Dd::from(tc) - Dd::from(x) * Dd::from(x)
    } else {
        Dd::from(tc)
    }
}

/// dp/drho and d2p/drho2 (mass units) of the liquid at (T, rho_L molar): the first analytic, the second
/// by a central difference of it (good to ~1e-9, plenty for a Newton start).
fn liquid_slopes(fluid: &Fluid, t: f64, rho_l: f64) -> [f64; 2] {
    let iso = ResidualAtTau::new(fluid.data, fluid.t_r / t);
    let h = 1e-5 * rho_l;
    let d1 = fluid.p_dpdrho(&iso, t, rho_l).1;
    let d2 =
        (fluid.p_dpdrho(&iso, t, rho_l + h).1 - fluid.p_dpdrho(&iso, t, rho_l - h).1) / (2.0 * h);
    let m = fluid.m;
    [d1 / m, d2 / (m * m)]
}

/// The piece holding a value, found through a uniform grid over the pieces' span: each cell stores the
/// first piece whose upper bound reaches the cell, and a short forward scan finishes (usually no step).
/// A binary search over 25-40 pieces costs several mispredicted branches per lookup.
#[derive(Debug, Clone)]
struct PieceIndex {
    lo: f64,
    /// cells per unit of the variable
    scale: f64,
    first: Vec<u32>,
}

impl PieceIndex {
    const CELLS: usize = 512;

    /// An index over pieces spanning [lo, last upper bound], with ascending upper bounds `upper`.
    fn new(lo: f64, upper: &[f64]) -> Self {
        let hi = upper.last().copied().unwrap_or(lo);
        let scale = if hi > lo {
            Self::CELLS as f64 / (hi - lo)
        } else {
            0.0
        };
        // each cell's start taken a hundredth of a cell early, so that rounding in `find` can never land
        // past the piece it wants
        let first = (0..Self::CELLS)
            .map(|c| {
                let start = lo + (c as f64 - 0.01) / scale;
                upper.partition_point(|&u| u < start) as u32
            })
            .collect();
        PieceIndex { lo, scale, first }
    }

    /// Index of the first piece whose upper bound is >= v (the last piece for v beyond all of them).
    #[inline(always)]
    fn find(&self, upper: &[f64], v: f64) -> usize {
        let last = upper.len().saturating_sub(1);
        let cell = ((v - self.lo) * self.scale).max(0.0) as usize;
        let mut i = self
            .first
            .get(cell.min(Self::CELLS - 1))
            .map_or(0, |&f| f as usize);
        while i < last && upper.get(i).is_some_and(|&u| u < v) {
            i += 1;
        }
        i.min(last)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use crate::{FluidId, fluid};

    /// Source: definition (the grid index must find what a binary search finds), at random values, at every
    /// piece boundary and just either side of it, and outside the span.
    #[test]
    fn piece_index_agrees_with_binary_search() {
        let binary = |upper: &[f64], v: f64| {
            upper
                .partition_point(|&u| u < v)
                .min(upper.len().saturating_sub(1))
        };
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        for id in FluidId::ALL {
            let c = fluid(id).curves().unwrap();
            for (index, upper, lo) in [
                (&c.t_index, &c.t_upper, c.t_index.lo),
                (&c.lnp_index, &c.lnp_upper, c.lnp_index.lo),
            ] {
                let hi = *upper.last().unwrap();
                let mut probes: Vec<f64> = (0..20_000).map(|_| lo + (hi - lo) * next()).collect();
                for &u in upper.iter() {
                    probes.extend([u, u.next_down(), u.next_up()]);
                }
                probes.extend([lo - 1.0, lo, hi, hi + 1.0, f64::NAN]);
                for v in probes {
                    assert_eq!(index.find(upper, v), binary(upper, v), "{id} at {v}");
                }
            }
        }
    }
}
