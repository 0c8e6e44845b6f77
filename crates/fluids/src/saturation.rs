//! Liquid-vapour saturation by the full equation of state: equal pressure and Gibbs energy in both
//! phases, solved by Newton's method in Akasaka's formulation (J. Therm. Sci. Technol. 3, 442 (2008)),
//! started from the ancillary equations.

use crate::SolverOptions;
use crate::double_double::Dd;
use crate::error::{FluidError, Quantity};
use crate::fluid::{Fluid, check_positive};
use crate::helmholtz::ResidualAtTau;

/// Distance below T_c (fraction of T_c) under which guesses come from the critical scaling, not the
/// ancillaries.
const NEAR_CRITICAL: f64 = 1e-3;

/// A saturated liquid-vapour state, mass-based SI.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Saturation {
    /// Saturation temperature, K.
    pub temperature_k: f64,
    /// Saturation pressure, Pa.
    pub pressure_pa: f64,
    /// Saturated liquid density, kg/m³.
    pub liquid_density_kg_m3: f64,
    /// Saturated vapour density, kg/m³.
    pub vapour_density_kg_m3: f64,
    /// Saturated liquid specific enthalpy, J/kg.
    pub liquid_enthalpy_j_kg: f64,
    /// Saturated vapour specific enthalpy, J/kg.
    pub vapour_enthalpy_j_kg: f64,
}

impl Saturation {
    /// Latent heat of vaporization h_V - h_L, J/kg.
    pub fn latent_heat_j_kg(&self) -> f64 {
        self.vapour_enthalpy_j_kg - self.liquid_enthalpy_j_kg
    }
}

/// Saturation state in molar units (mol/m³, J/mol).
#[derive(Debug, Clone, Copy)]
pub(crate) struct SatMolar {
    pub t: f64,
    pub p: f64,
    pub rho_l: f64,
    pub rho_v: f64,
    pub h_l: f64,
    pub h_v: f64,
    /// solved in double-double (nothing left to refine)
    pub extended: bool,
}

impl SatMolar {
    pub(crate) fn to_mass(self, m: f64) -> Saturation {
        Saturation {
            temperature_k: self.t,
            pressure_pa: self.p,
            liquid_density_kg_m3: self.rho_l * m,
            vapour_density_kg_m3: self.rho_v * m,
            liquid_enthalpy_j_kg: self.h_l / m,
            vapour_enthalpy_j_kg: self.h_v / m,
        }
    }
}

impl Fluid {
    /// Saturation at a temperature by the full equation of state (slow, exact; see
    /// [`Fluid::saturation_from_temperature`] for the fast curves).
    pub fn solve_saturation_from_temperature(
        &self,
        t_k: f64,
        opts: &SolverOptions,
    ) -> Result<Saturation, FluidError> {
        let t_k = self.check_saturation_temperature(t_k)?;
        let s = self.solve_saturation_molar(t_k, opts)?;
        Ok(self.refine_saturation(s).to_mass(self.m))
    }

    /// Saturation at a pressure by the full equation of state: Newton on T (Clausius-Clapeyron slope)
    /// around the solver at fixed T.
    pub fn solve_saturation_from_pressure(
        &self,
        p_pa: f64,
        opts: &SolverOptions,
    ) -> Result<Saturation, FluidError> {
        let p_pa = self.check_saturation_pressure(p_pa)?;
        if p_pa >= self.critical.pressure_pa {
            return Ok(self.critical_saturation().to_mass(self.m));
        }
        let (tt, tc) = (self.triple.temperature_k, self.critical.temperature_k);
        let ln_p = p_pa.ln();
        let anc = &self.data.ancillary_pressure;
        let g = |t: f64| anc.value(t).ln() - ln_p;
        let mut t = if g(tt) >= 0.0 {
            tt
        } else if g(tc) <= 0.0 {
            tc * (1.0 - 1e-6)
        } else {
            bracketed_root(g, tt, tc, 1e-12, 200).unwrap_or(0.5 * (tt + tc))
        };
        // the state at a new T from the one at the last T: in double precision, or, next to T_c where the
        // last one needed double-double, in double-double from it scaled toward the critical point (p(T)
        // from double precision alone is too noisy there for Newton's method to settle)
        let next = |t: f64, prev: &SatMolar| -> Result<SatMolar, FluidError> {
            let s = if prev.extended {
                self.solve_saturation_near(Dd::from(t), prev, opts)
            } else {
                self.akasaka(t, prev.rho_l, prev.rho_v, opts).ok()
            };
            let s = match s {
                Some(s) => s,
                None => self.solve_saturation_molar(t, opts)?,
            };
            Ok(self.refine_saturation(s))
        };
        let mut sat = self.refine_saturation(self.solve_saturation_molar(t, opts)?);
        let mut residual = f64::INFINITY;
        let mut dlnp_dt = f64::NAN;
        for _ in 0..opts.max_iter {
            residual = sat.p.ln() - ln_p;
            // Clausius-Clapeyron; at the critical point itself (0/0) the last slope stands in for its limit
            let slope = (sat.h_v - sat.h_l) / (t * (1.0 / sat.rho_v - 1.0 / sat.rho_l) * sat.p);
            if slope.is_finite() && slope > 0.0 {
                dlnp_dt = slope;
            }
            let mut t_new = t - residual / dlnp_dt;
            if !t_new.is_finite() {
                break;
            }
            if t_new >= tc {
                // stay below T_c, where two phases exist: halve the distance to it instead
                t_new = 0.5 * (t + tc);
            }
            let t_new = t_new.max(tt);
            let step = t_new - t;
            t = t_new;
            sat = next(t, &sat)?;
            if step.abs() <= opts.tol * t {
                // report the asked pressure: the state is at T_sat(p) to within tol
                sat.p = p_pa;
                return Ok(sat.to_mass(self.m));
            }
        }
        Err(FluidError::NotConverged {
            fluid: self.id,
            what: "saturation temperature from pressure",
            iterations: opts.max_iter,
            residual,
        })
    }

    /// Validates T for saturation and returns it, with values within 1e-12 outside an end taken as that end
    /// (a round trip through the curves must not fail on round-off).
    pub(crate) fn check_saturation_temperature(&self, t_k: f64) -> Result<f64, FluidError> {
        check_positive(Quantity::Temperature, t_k)?;
        let t_k = snap(t_k, self.triple.temperature_k, self.critical.temperature_k);
        if t_k < self.triple.temperature_k {
            return Err(FluidError::BelowTriplePoint {
                fluid: self.id,
                quantity: Quantity::Temperature,
                limit: self.triple.temperature_k,
                asked: t_k,
            });
        }
        if t_k > self.critical.temperature_k {
            return Err(FluidError::AboveCriticalPoint {
                fluid: self.id,
                quantity: Quantity::Temperature,
                limit: self.critical.temperature_k,
                asked: t_k,
            });
        }
        Ok(t_k)
    }

    /// Validates p for saturation, like [`Fluid::check_saturation_temperature`].
    pub(crate) fn check_saturation_pressure(&self, p_pa: f64) -> Result<f64, FluidError> {
        check_positive(Quantity::Pressure, p_pa)?;
        let p_pa = snap(p_pa, self.triple.pressure_pa, self.critical.pressure_pa);
        if p_pa < self.triple.pressure_pa {
            return Err(FluidError::BelowTriplePoint {
                fluid: self.id,
                quantity: Quantity::Pressure,
                limit: self.triple.pressure_pa,
                asked: p_pa,
            });
        }
        if p_pa > self.critical.pressure_pa {
            return Err(FluidError::AboveCriticalPoint {
                fluid: self.id,
                quantity: Quantity::Pressure,
                limit: self.critical.pressure_pa,
                asked: p_pa,
            });
        }
        Ok(p_pa)
    }

    /// The critical point as a (degenerate) saturation state.
    pub(crate) fn critical_saturation(&self) -> SatMolar {
        let (t, rho) = (self.critical.temperature_k, self.rho_c);
        let st = self.molar_state(t, rho);
        SatMolar {
            t,
            p: st.p,
            rho_l: rho,
            rho_v: rho,
            h_l: st.h,
            h_v: st.h,
            extended: true,
        }
    }

    /// Full solution at T (T already validated), from the ancillaries. Within 1e-3 Tc of the critical
    /// point, where the ancillaries' shape differs from the equation's, the guesses come from a solution
    /// ten times farther from T_c scaled by the square root of the distance (the classical shape).
    pub(crate) fn solve_saturation_molar(
        &self,
        t: f64,
        opts: &SolverOptions,
    ) -> Result<SatMolar, FluidError> {
        let tc = self.critical.temperature_k;
        if t >= tc * (1.0 - 1e-14) {
            return Ok(self.critical_saturation());
        }
        if tc - t >= NEAR_CRITICAL * tc {
            let rl = self.data.ancillary_liquid_density.value(t);
            let rv = self.data.ancillary_vapour_density.value(t);
            let first = self.akasaka(t, rl, rv, opts);
            if first.is_ok() {
                return first;
            }
            // an ancillary a few per cent off near T_c can start Newton on the wrong side: pull the guesses
            // toward, then away from, the critical density
            let rc = self.rho_c;
            for k in [0.8, 1.2, 0.6, 1.5] {
                if let Ok(s) = self.akasaka(t, rc + k * (rl - rc), rc + k * (rv - rc), opts) {
                    return Ok(s);
                }
            }
            return first;
        }
        let t_far = (tc - 10.0 * (tc - t)).max(tc * (1.0 - 2.0 * NEAR_CRITICAL));
        let far = self.refine_saturation(self.solve_saturation_molar(t_far, opts)?);
        self.solve_saturation_near(Dd::from(t), &far, opts)
            .ok_or(FluidError::NotConverged {
                fluid: self.id,
                what: "saturation at fixed temperature",
                iterations: 0,
                residual: f64::NAN,
            })
    }

    /// Newton's method on J(delta) = delta (1 + delta ar_delta) and K(delta) = delta ar_delta + ar + ln delta,
    /// equal in both phases (equivalent to equal p and g at fixed T).
    pub(crate) fn akasaka(
        &self,
        t: f64,
        rho_l0: f64,
        rho_v0: f64,
        opts: &SolverOptions,
    ) -> Result<SatMolar, FluidError> {
        let tau = self.t_r / t;
        let iso = ResidualAtTau::new(self.data, tau);
        let mut dl = rho_l0 / self.rho_r;
        let mut dv = rho_v0 / self.rho_r;
        let mut residual = f64::INFINITY;
        let fail = |iterations, residual| FluidError::NotConverged {
            fluid: self.id,
            what: "saturation at fixed temperature",
            iterations,
            residual,
        };
        if !(dl.is_finite() && dv.is_finite() && dl > dv && dv > 0.0) {
            return Err(fail(0, residual));
        }
        for it in 0..opts.max_iter {
            let l = iso.eval(dl);
            let v = iso.eval(dv);
            let jl = dl * (1.0 + l.delta_a_d);
            let jv = dv * (1.0 + v.delta_a_d);
            let kl = l.delta_a_d + l.a + dl.ln();
            let kv = v.delta_a_d + v.a + dv.ln();
            let jdl = 1.0 + 2.0 * l.delta_a_d + l.delta2_a_dd;
            let jdv = 1.0 + 2.0 * v.delta_a_d + v.delta2_a_dd;
            let (kdl, kdv) = (jdl / dl, jdv / dv);
            let dj = jv - jl;
            let dk = kv - kl;
            residual = dj.abs() + dk.abs();
            let det = jdv * kdl - jdl * kdv;
            if !(det.is_finite() && det != 0.0) {
                return Err(fail(it, residual));
            }
            let step_l = (dk * jdv - dj * kdv) / det;
            let step_v = (dk * jdl - dj * kdl) / det;
            // damp a step that would swap or cross the phases
            let mut gamma = 1.0;
            let (mut nl, mut nv) = (dl + step_l, dv + step_v);
            let mut tries = 0;
            while !(nl.is_finite() && nv.is_finite() && nv > 0.0 && nl > nv) && tries < 30 {
                gamma *= 0.5;
                nl = dl + gamma * step_l;
                nv = dv + gamma * step_v;
                tries += 1;
            }
            if tries == 30 {
                return Err(fail(it, residual));
            }
            let rel = (gamma * step_l / dl).abs().max((gamma * step_v / dv).abs());
            dl = nl;
            dv = nv;
            // converged when the step is small, or when the residual sits at round-off and can't shrink
            let floor = 8.0 * f64::EPSILON * (jl.abs() + kl.abs() + 1.0);
            if rel <= opts.tol || (it > 2 && residual <= floor) {
                let dc = self.rho_c / self.rho_r;
                // both phases on the stable branches (dp/drho > 0), on either side of rho_c; otherwise
                // Newton found the trivial solution or a spurious one inside the spinodals
                let (l, v) = (iso.eval(dl), iso.eval(dv));
                let stable = 1.0 + 2.0 * l.delta_a_d + l.delta2_a_dd > 0.0
                    && 1.0 + 2.0 * v.delta_a_d + v.delta2_a_dd > 0.0;
                if !(dl > dc && dv < dc && stable) {
                    // both on one side of the critical density: the trivial solution, not saturation
                    return Err(fail(it, residual));
                }
                let rho_l = dl * self.rho_r;
                let rho_v = dv * self.rho_r;
                // the vapour side gives p without cancellation at low T
                let p = rho_v * self.r * t * (1.0 + v.delta_a_d);
                let h_l = self.molar_state(t, rho_l).h;
                let h_v = self.molar_state(t, rho_v).h;
                return Ok(SatMolar {
                    t,
                    p,
                    rho_l,
                    rho_v,
                    h_l,
                    h_v,
                    extended: false,
                });
            }
        }
        Err(fail(opts.max_iter, residual))
    }
}

/// `v`, or `lo` / `hi` when `v` is outside them by no more than 1e-12 relative.
fn snap(v: f64, lo: f64, hi: f64) -> f64 {
    if v < lo && v >= lo * (1.0 - 1e-12) {
        lo
    } else if v > hi && v <= hi * (1.0 + 1e-12) {
        hi
    } else {
        v
    }
}

/// Root of a function that changes sign on [lo, hi], by the Illinois variant of regula falsi.
pub(crate) fn bracketed_root(
    f: impl Fn(f64) -> f64,
    lo: f64,
    hi: f64,
    rel_tol: f64,
    max_iter: usize,
) -> Option<f64> {
    let (mut a, mut b) = (lo, hi);
    let (mut fa, mut fb) = (f(a), f(b));
    if !(fa.is_finite() && fb.is_finite()) || fa * fb > 0.0 {
        return None;
    }
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    let mut side = 0i8;
    for _ in 0..max_iter {
        let mut c = (a * fb - b * fa) / (fb - fa);
        if !(c.is_finite() && c > a.min(b) && c < a.max(b)) {
            c = 0.5 * (a + b);
        }
        let fc = f(c);
        if !fc.is_finite() {
            return None;
        }
        if fc == 0.0 || (b - a).abs() <= rel_tol * c.abs() {
            return Some(c);
        }
        if fc * fb > 0.0 {
            b = c;
            fb = fc;
            if side == -1 {
                fa *= 0.5;
            }
            side = -1;
        } else {
            a = c;
            fa = fc;
            if side == 1 {
                fb *= 0.5;
            }
            side = 1;
        }
    }
    Some(0.5 * (a + b))
}
