//! Saturation next to the critical point in double-double arithmetic.
//!
//! As the phases merge, the equal-pressure, equal-Gibbs-energy system becomes ill-conditioned: with the
//! Helmholtz sums in double precision the coexisting densities are only good to about 2e-14 / gap³ (gap:
//! the reduced density difference), 1e-7 at 1e-6 T_c below T_c. Newton's method with the residuals summed in
//! double-double (about 32 digits) and the Jacobian from the same sums removes that noise: the solution is
//! then good to about 4e-30 / gap³ (1e-15 at 1e-12 T_c below T_c). Close to T_c the start comes from a
//! neighbouring solution scaled by the square root of the distance to T_c, since double precision alone no
//! longer converges there.

use crate::SolverOptions;
use crate::double_double::Dd;
use crate::fluid::Fluid;
use crate::helmholtz::ResidualAtTau;
use crate::saturation::SatMolar;

/// Reduced density gap below which double precision leaves the solution noisier than ~2e-13 and the
/// refinement runs.
const REFINE_BELOW_GAP: f64 = 0.5;
/// Most Newton steps (from a double-precision solution it converges in two or three).
const MAX_STEPS: usize = 60;

impl Fluid {
    /// `s` with its densities and pressure refined in double-double arithmetic where the density gap is
    /// small; `s` unchanged where it is not, or where the refinement does not converge.
    pub(crate) fn refine_saturation(&self, s: SatMolar) -> SatMolar {
        if s.extended {
            return s;
        }
        self.refine_saturation_at(s, Dd::from(s.t))
    }

    /// Like [`Fluid::refine_saturation`], at the temperature `t` (in double-double, which may differ from
    /// `s.t` by its rounding: near T_c that rounding is a sizeable part of the distance to T_c).
    pub(crate) fn refine_saturation_at(&self, s: SatMolar, t: Dd) -> SatMolar {
        let gap = (s.rho_l - s.rho_v) / self.rho_c;
        if !(gap > 0.0 && gap < REFINE_BELOW_GAP) {
            return s;
        }
        match self.solve_saturation_extended(t, s.rho_l, s.rho_v) {
            // a refinement moves the densities by the double-precision noise; a gap that changes a lot is
            // the trivial solution (both phases at one density), not a refinement
            Some(r) if gap_near(&r, s.rho_l - s.rho_v) => r,
            _ => s,
        }
    }

    /// Saturation at `t` near T_c, started from a solution `near` at a neighbouring temperature with the
    /// densities scaled toward the critical one by the square root of the distance to T_c (the classical
    /// shape): first in double-double, then, should that fail, in double precision with the scaling
    /// exponent widened (the equation's effective one is nearer 0.35-0.4 a little way out). A result whose
    /// density gap is far from the scaled one is the trivial solution or a spurious one, and is refused.
    pub(crate) fn solve_saturation_near(
        &self,
        t_exact: Dd,
        near: &SatMolar,
        opts: &SolverOptions,
    ) -> Option<SatMolar> {
        let t = t_exact.to_f64();
        let tc = self.critical.temperature_k;
        if !(near.t < tc && t < tc) {
            return None;
        }
        let k = ((tc - t) / (tc - near.t)).sqrt();
        let rc = self.rho_c;
        let expected_gap = k * (near.rho_l - near.rho_v);
        let plausible = |s: &SatMolar| gap_near(s, expected_gap);
        let guess = |kk: f64| (rc + kk * (near.rho_l - rc), rc + kk * (near.rho_v - rc));
        let (rho_l, rho_v) = guess(k);
        if let Some(s) = self
            .solve_saturation_extended(t_exact, rho_l, rho_v)
            .filter(plausible)
        {
            return Some(s);
        }
        [k, k.powf(0.8), k.powf(0.7), k.powf(1.2)]
            .into_iter()
            .find_map(|kk| {
                let (rho_l, rho_v) = guess(kk);
                self.akasaka(t, rho_l, rho_v, opts).ok().filter(plausible)
            })
            .map(|s| self.refine_saturation_at(s, t_exact))
    }

    /// Newton's method on Akasaka's J(delta_L) = J(delta_V), K(delta_L) = K(delta_V) with the residuals in
    /// double-double, from molar densities near the solution (steps are halved to keep the phases apart).
    /// `None` when it does not converge.
    pub(crate) fn solve_saturation_extended(
        &self,
        t_exact: Dd,
        rho_l0: f64,
        rho_v0: f64,
    ) -> Option<SatMolar> {
        let t = t_exact.to_f64();
        let tau = Dd::from(self.t_r) / t_exact;
        let iso = ResidualAtTau::<Dd>::new(self.data, tau);
        let dc = self.rho_c / self.rho_r;
        let (mut dl, mut dv) = (Dd::from(rho_l0 / self.rho_r), Dd::from(rho_v0 / self.rho_r));
        let mut converged = false;
        // the last full step's size, for judging quadratic convergence
        let mut last_full = f64::NAN;
        for _ in 0..MAX_STEPS {
            let (l, v) = (iso.eval(dl), iso.eval(dv));
            let jl = dl * (l.delta_a_d + 1.0);
            let jv = dv * (v.delta_a_d + 1.0);
            let kl = l.delta_a_d + l.a + dl.ln();
            let kv = v.delta_a_d + v.a + dv.ln();
            let jdl = (l.delta_a_d * 2.0 + l.delta2_a_dd + 1.0).to_f64();
            let jdv = (v.delta_a_d * 2.0 + v.delta2_a_dd + 1.0).to_f64();
            let (kdl, kdv) = (jdl / dl.to_f64(), jdv / dv.to_f64());
            let (dj, dk) = ((jv - jl).to_f64(), (kv - kl).to_f64());
            let det = jdv * kdl - jdl * kdv;
            let step_l = (dk * jdv - dj * kdv) / det;
            let step_v = (dk * jdl - dj * kdl) / det;
            if !(step_l.is_finite() && step_v.is_finite()) {
                return None;
            }
            let mut gamma = 1.0;
            let (mut nl, mut nv) = (dl + step_l, dv + step_v);
            // keep the phases apart: a gap shrinking fourfold in one step heads for the trivial solution
            let gap_now = (dl - dv).to_f64();
            while !(nv.to_f64() > 0.0 && (nl - nv).to_f64() > 0.25 * gap_now) {
                gamma *= 0.5;
                if gamma < 1e-9 {
                    return None;
                }
                nl = dl + gamma * step_l;
                nv = dv + gamma * step_v;
            }
            let size = (gamma * step_l / dl.to_f64())
                .abs()
                .max((gamma * step_v / dv.to_f64()).abs());
            dl = nl;
            dv = nv;
            // done when the step is below double precision, or at the double-double noise of the
            // flat system (measured ~4e-30 / gap³)
            let gap = ((dl - dv).to_f64() / dc).abs();
            if size <= (1e-27 / gap.powi(3)).max(1e-18) {
                converged = true;
                break;
            }
            // or when converging quadratically (size = c last², so the next would be c size²) and the
            // next step would be far below double precision: skip paying for it
            if gamma == 1.0 {
                if size * size * size <= 1e-20 * last_full * last_full && size < 1e-6 {
                    converged = true;
                    break;
                }
                last_full = size;
            } else {
                last_full = f64::NAN;
            }
        }
        if !converged {
            return None;
        }
        // the vapour side gives p without cancellation at low density
        let v = iso.eval(dv);
        let p = (dv * (v.delta_a_d + 1.0) * t_exact * (self.rho_r * self.r)).to_f64();
        let (rho_l, rho_v) = (dl.to_f64() * self.rho_r, dv.to_f64() * self.rho_r);
        Some(SatMolar {
            t,
            p,
            rho_l,
            rho_v,
            h_l: self.molar_state(t, rho_l).h,
            h_v: self.molar_state(t, rho_v).h,
            extended: true,
        })
    }
}

/// Whether the density gap of `s` is within a factor of two of `gap`: a solution, not the trivial one with
/// both phases at one density.
fn gap_near(s: &SatMolar, gap: f64) -> bool {
    let ratio = (s.rho_l - s.rho_v) / gap;
    ratio > 0.5 && ratio < 2.0
}
