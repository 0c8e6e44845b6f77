//! Single-phase states from (T, p), fast-curve saturation entry points, and the phase of a (T, p).

use crate::curves::{CurveInfo, SatCurves};
use crate::error::{FluidError, Quantity};
use crate::fluid::{Fluid, check_positive};
use crate::helmholtz::ResidualAtTau;
use crate::saturation::{Saturation, bracketed_root};
use crate::{Phase, PhaseKind};

/// Distance below T_c (fraction of T_c) within which saturation from pressure takes a Newton step on the
/// forward curve after the inverse one.
const POLISH_NEAR_CRITICAL: f64 = 1e-3;

impl Fluid {
    /// The fast saturation curves, fitted at first use (a few tens of milliseconds, once per fluid).
    pub(crate) fn curves(&self) -> Result<&SatCurves, FluidError> {
        self.curves
            .get_or_init(|| SatCurves::fit(self))
            .as_ref()
            .map_err(Clone::clone)
    }

    /// Fits the fast saturation curves now rather than at first use, and says how big they are.
    pub fn prepare(&self) -> Result<CurveInfo, FluidError> {
        Ok(self.curves()?.info)
    }

    /// Saturation at a temperature from the fast curves (agrees with
    /// [`Fluid::solve_saturation_from_temperature`] to about 1e-12).
    pub fn saturation_from_temperature(&self, t_k: f64) -> Result<Saturation, FluidError> {
        let t_k = self.check_saturation_temperature(t_k)?;
        Ok(self.curves()?.saturation(t_k))
    }

    /// Saturation at a pressure from the fast curves: T from the inverse expansion in ln p, then the
    /// forward curves. `pressure_pa` of the result is the asked pressure.
    pub fn saturation_from_pressure(&self, p_pa: f64) -> Result<Saturation, FluidError> {
        let p_pa = self.check_saturation_pressure(p_pa)?;
        let c = self.curves()?;
        let (tt, tc) = (self.triple.temperature_k, self.critical.temperature_k);
        let ln_p = p_pa.ln();
        let mut t = c.t_from_ln_p(ln_p).clamp(tt, tc);
        let mut v = c.at_t(t);
        if tc - t < POLISH_NEAR_CRITICAL * tc {
            // Next to T_c the inverse expansion carries the roughness of the critical region (carbon
            // dioxide: up to 2e-11 in T, which the steep densities there magnify): one Newton step on the
            // forward ln p(T), slope by Clausius-Clapeyron, brings T to the forward curve's accuracy.
            let slope = (v[4] - v[3]) / (t * (1.0 / v[2].exp() - 1.0 / v[1]) * v[0].exp());
            let next = t - (v[0] - ln_p) / slope;
            if slope > 0.0 && next.is_finite() {
                t = next.clamp(tt, tc);
                v = c.at_t(t);
            }
        }
        Ok(c.saturation_with_pressure(t, p_pa, &v))
    }

    /// The saturated liquid whose specific enthalpy is `h_j_kg` (inverse of h_L(T) on the fast curves),
    /// e.g. for the temperature of a mixture of liquids mixed adiabatically.
    pub fn saturation_from_liquid_enthalpy(&self, h_j_kg: f64) -> Result<Saturation, FluidError> {
        if !h_j_kg.is_finite() {
            return Err(FluidError::NotFinite {
                quantity: Quantity::Enthalpy,
                value: h_j_kg,
            });
        }
        let c = self.curves()?;
        let (tt, tc) = (self.triple.temperature_k, self.critical.temperature_k);
        let (h_lo, h_hi) = (c.at_t(tt)[3], c.at_t(tc)[3]);
        if h_j_kg < h_lo {
            return Err(FluidError::BelowTriplePoint {
                fluid: self.id,
                quantity: Quantity::Enthalpy,
                limit: h_lo,
                asked: h_j_kg,
            });
        }
        if h_j_kg > h_hi {
            return Err(FluidError::AboveCriticalPoint {
                fluid: self.id,
                quantity: Quantity::Enthalpy,
                limit: h_hi,
                asked: h_j_kg,
            });
        }
        let t = bracketed_root(|t| c.at_t(t)[3] - h_j_kg, tt, tc, 1e-15, 200).ok_or(
            FluidError::NotConverged {
                fluid: self.id,
                what: "temperature from liquid enthalpy",
                iterations: 200,
                residual: f64::NAN,
            },
        )?;
        Ok(c.saturation(t))
    }

    /// Liquid, gas or supercritical at (T, p). Below T_c the boundary is the saturation pressure (a state
    /// exactly on it counts as gas); above T_c a pressure below p_c is gas, otherwise supercritical.
    pub fn phase_at(&self, t_k: f64, p_pa: f64) -> Result<PhaseKind, FluidError> {
        self.check_t_range(t_k)?;
        self.check_p_range(p_pa)?;
        if t_k >= self.critical.temperature_k {
            return Ok(if p_pa >= self.critical.pressure_pa {
                PhaseKind::Supercritical
            } else {
                PhaseKind::Gas
            });
        }
        let p_sat = self.curves()?.at_t(t_k)[0].exp();
        Ok(if p_pa > p_sat {
            PhaseKind::Liquid
        } else {
            PhaseKind::Gas
        })
    }

    /// Density at (T, p) on the asked branch, kg/m³. Below T_c, `Liquid` needs p >= p_sat(T) and `Gas`
    /// needs p <= p_sat(T), otherwise [`FluidError::PhaseAbsent`]; at or above T_c there is one fluid
    /// phase and both requests return it.
    pub fn density_from_temperature_pressure(
        &self,
        t_k: f64,
        p_pa: f64,
        phase: Phase,
    ) -> Result<f64, FluidError> {
        self.check_t_range(t_k)?;
        self.check_p_range(p_pa)?;
        let iso = ResidualAtTau::new(self.data, self.t_r / t_k);
        let ideal = p_pa / (self.r * t_k);
        if t_k >= self.critical.temperature_k {
            // one phase: start from the ideal gas, or from the critical density when that is denser
            let start = if p_pa >= self.critical.pressure_pa {
                ideal.max(self.rho_c)
            } else {
                ideal
            };
            return Ok(
                self.solve_density(&iso, t_k, p_pa, 0.0, f64::INFINITY, start, f64::NAN)? * self.m,
            );
        }
        let curves = self.curves()?;
        let absent = || {
            let t_sat = if p_pa >= self.triple.pressure_pa && p_pa <= self.critical.pressure_pa {
                self.curves().ok().map(|c| c.t_from_ln_p(p_pa.ln()))
            } else {
                None
            };
            FluidError::PhaseAbsent {
                fluid: self.id,
                asked: phase,
                temperature_k: t_k,
                pressure_pa: p_pa,
                saturation_temperature_k: t_sat,
            }
        };
        let m = self.m;
        let rho = match phase {
            Phase::Liquid => {
                let [ln_p_sat, rho_l_sat, slope, curvature] = curves.liquid_at_t(t_k);
                let p_sat = ln_p_sat.exp();
                if p_pa < p_sat {
                    return Err(absent());
                }
                // p(rho) about the saturated liquid to second order, inverted: a start within ~1e-8 for
                // a tank's few bar of subcooling, so that one Newton step usually finishes
                let mut start = rho_l_sat;
                if slope > 0.0 {
                    let u = (p_pa - p_sat) / slope;
                    let bend = 0.5 * curvature / slope * u;
                    start += if bend.abs() < 0.25 {
                        u * (1.0 - bend)
                    } else {
                        u
                    };
                }
                self.solve_density(
                    &iso,
                    t_k,
                    p_pa,
                    rho_l_sat / m,
                    f64::INFINITY,
                    start.max(rho_l_sat) / m,
                    curvature * m * m,
                )?
            }
            Phase::Gas => {
                let v = curves.at_t(t_k);
                if p_pa > v[0].exp() {
                    return Err(absent());
                }
                let rho_v_sat = v[2].exp() / m;
                self.solve_density(
                    &iso,
                    t_k,
                    p_pa,
                    0.0,
                    rho_v_sat,
                    ideal.min(rho_v_sat),
                    f64::NAN,
                )?
            }
        };
        Ok(rho * m)
    }

    /// A density above the root of p(rho) = p on a dense isotherm: 1.5 times the triple-point liquid's,
    /// raised while the pressure there is still below p (the equations are fitted to a few times that at
    /// most, beyond which they can turn back down).
    fn upper_density_bracket(
        &self,
        iso: &ResidualAtTau<'_>,
        t: f64,
        p: f64,
    ) -> Result<f64, FluidError> {
        let rho_triple = self
            .data
            .ancillary_liquid_density
            .value(self.triple.temperature_k);
        let mut hi = 1.5 * rho_triple.max(self.rho_c);
        for _ in 0..16 {
            let (p_hi, dp) = self.p_dpdrho(iso, t, hi);
            if p_hi >= p {
                return Ok(hi);
            }
            if dp.is_nan() || dp <= 0.0 {
                break;
            }
            hi *= 1.25;
        }
        Err(FluidError::OutOfRange {
            fluid: self.id,
            quantity: Quantity::Pressure,
            asked: p,
            min: 0.0,
            max: self.data.max_pressure_pa,
        })
    }

    /// Newton's method on p(rho) = p along an isotherm, kept inside a bracket [lo, hi] where p(lo) <= p <=
    /// p(hi) (hi may be infinite: then a failed step raises rho by 10 %). Molar units. `curvature` is
    /// d2p/drho2 near the start when known (NaN otherwise): it bounds the error left after a step.
    #[allow(clippy::too_many_arguments)]
    fn solve_density(
        &self,
        iso: &ResidualAtTau<'_>,
        t: f64,
        p: f64,
        mut lo: f64,
        mut hi: f64,
        start: f64,
        curvature: f64,
    ) -> Result<f64, FluidError> {
        const MAX_ITER: usize = 200;
        let mut rho = start;
        let mut residual = f64::NAN;
        let mut last_step = f64::INFINITY;
        for _ in 0..MAX_ITER {
            let (p_now, dp) = self.p_dpdrho(iso, t, rho);
            let f = p_now - p;
            residual = f / p;
            if f == 0.0 {
                return Ok(rho);
            }
            // only the stable branch (dp/drho > 0) can bound the root
            if f < 0.0 && dp > 0.0 {
                lo = lo.max(rho);
            } else if f > 0.0 {
                hi = hi.min(rho);
            }
            let step = -f / dp;
            if dp > 0.0 && step.abs() <= 1e-14 * rho {
                return Ok(rho + step);
            }
            // Newton leaves an error of about (p''/2p') step²: with the curvature known and that four
            // times over still below 1e-14, take the step and stop
            if dp > 0.0
                && step.abs() <= 1e-7 * rho
                && 2.0 * (curvature / dp).abs() * step * step <= 1e-14 * rho
            {
                let next = rho + step;
                if next > lo && next < hi {
                    return Ok(next);
                }
            }
            // Converging quadratically (this step a thousandth of the last or less) and small: the error
            // left after this step is of the order of step²/last step, far below 1e-12, so take it and stop
            // instead of paying one more evaluation to confirm.
            if dp > 0.0 && step.abs() <= 1e-7 * rho && step.abs() <= 1e-3 * last_step.abs() {
                let next = rho + step;
                if next > lo && next < hi {
                    return Ok(next);
                }
            }
            last_step = step;
            let mut next = rho + step;
            let long_jump = !(next.is_finite() && next < 1.5 * rho);
            if !hi.is_finite() && long_jump {
                // a long jump up a flat isotherm (near T_c) can land where the equation is meaningless:
                // bound it first
                hi = self.upper_density_bracket(iso, t, p)?;
            }
            if !(dp > 0.0 && next.is_finite() && next > lo && next < hi) {
                if !hi.is_finite() {
                    // Newton overshot with no upper bound yet (a flat isotherm near T_c): find one
                    hi = self.upper_density_bracket(iso, t, p)?;
                }
                next = 0.5 * (lo + hi);
            }
            if (next - rho).abs() <= 1e-14 * rho || (hi - lo) <= 1e-15 * rho {
                return Ok(next);
            }
            rho = next;
        }
        check_positive(Quantity::Density, rho)?;
        Err(FluidError::NotConverged {
            fluid: self.id,
            what: "density from temperature and pressure",
            iterations: MAX_ITER,
            residual,
        })
    }
}
