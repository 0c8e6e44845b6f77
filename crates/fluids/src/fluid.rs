//! [`Fluid`]: one fluid's equation of state and the single-phase properties computed from it.

use std::sync::OnceLock;

use crate::curves::SatCurves;
use crate::data::{self, FluidData};
use crate::error::{FluidError, Quantity};
use crate::helmholtz::{self, ResidualAtTau};
use crate::{FluidId, SolverOptions};

/// The critical point of a fluid's equation of state: where dp/drho and d2p/drho2 vanish, i.e. where its
/// saturation curve ends. It matches the paper's stated critical point closely, except oxygen's
/// (154.599 K and 5.0464 MPa for the paper's 154.581 K and 5.043 MPa), as CoolProp 8.0.0 also reports.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CriticalPoint {
    /// Critical temperature, K.
    pub temperature_k: f64,
    /// Critical pressure, Pa.
    pub pressure_pa: f64,
    /// Critical density, kg/m³.
    pub density_kg_m3: f64,
}

/// The triple point (lowest liquid temperature) of a fluid's equation of state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TriplePoint {
    /// Triple-point temperature, K (the paper's).
    pub temperature_k: f64,
    /// Saturation pressure of the equation of state at that temperature, Pa.
    pub pressure_pa: f64,
}

/// The properties at one (T, rho), mass-based SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StateProperties {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Density, kg/m³.
    pub density_kg_m3: f64,
    /// Pressure, Pa.
    pub pressure_pa: f64,
    /// (dp/drho) at constant T, Pa per kg/m³.
    pub dp_drho_pa_m3_kg: f64,
    /// (dp/dT) at constant rho, Pa/K.
    pub dp_dt_pa_k: f64,
    /// Specific enthalpy, J/kg (CoolProp's reference state for the fluid; compare differences).
    pub enthalpy_j_kg: f64,
    /// Specific entropy, J/(kg K) (same reference remark).
    pub entropy_j_kg_k: f64,
    /// Specific Gibbs energy, J/kg.
    pub gibbs_j_kg: f64,
    /// Isochoric heat capacity, J/(kg K).
    pub cv_j_kg_k: f64,
    /// Isobaric heat capacity, J/(kg K).
    pub cp_j_kg_k: f64,
    /// Speed of sound, m/s.
    pub speed_of_sound_m_s: f64,
}

/// A fluid: its equation of state, saturation solvers and fast saturation curves. Get one with
/// [`crate::fluid()`]; all methods take `&self` and the type is `Sync`.
#[derive(Debug)]
pub struct Fluid {
    pub(crate) id: FluidId,
    pub(crate) data: &'static FluidData,
    /// J/(mol K), the equation's own value
    pub(crate) r: f64,
    /// kg/mol
    pub(crate) m: f64,
    pub(crate) t_r: f64,
    /// mol/m³
    pub(crate) rho_r: f64,
    /// critical density of the equation itself, mol/m³
    pub(crate) rho_c: f64,
    pub(crate) critical: CriticalPoint,
    pub(crate) triple: TriplePoint,
    pub(crate) curves: OnceLock<Result<SatCurves, FluidError>>,
    gas_normal: OnceLock<f64>,
    gas_standard: OnceLock<f64>,
}

/// Molar Helmholtz-derived quantities at one state (internal; J, mol, K, m³).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Molar {
    pub p: f64,
    pub dp_drho: f64,
    pub dp_dt: f64,
    pub h: f64,
    pub s: f64,
    pub g: f64,
    pub cv: f64,
    pub cp: f64,
    pub w2_times_m: f64,
}

impl Fluid {
    pub(crate) fn build(id: FluidId) -> Fluid {
        let data = data::data(id);
        let m = data.molar_mass_kg_mol;
        let mut f = Fluid {
            id,
            data,
            r: data.gas_constant_j_mol_k,
            m,
            t_r: data.reducing_temperature_k,
            rho_r: data.reducing_density_mol_m3,
            rho_c: data.reducing_density_mol_m3,
            critical: CriticalPoint {
                temperature_k: data.reducing_temperature_k,
                pressure_pa: data.critical_pressure_pa,
                density_kg_m3: data.reducing_density_mol_m3 * m,
            },
            triple: TriplePoint {
                temperature_k: data.triple_temperature_k,
                pressure_pa: f64::NAN,
            },
            curves: OnceLock::new(),
            gas_normal: OnceLock::new(),
            gas_standard: OnceLock::new(),
        };
        // the saturation curve ends at the equation's own critical point, which can sit a little off the
        // paper's reducing values (oxygen: 154.599 K instead of 154.581 K)
        if let Some((tc, rhoc)) = f.find_critical_point() {
            f.critical.temperature_k = tc;
            f.rho_c = rhoc;
            f.critical.density_kg_m3 = rhoc * m;
        }
        f.critical.pressure_pa = f.pressure_molar(f.critical.temperature_k, f.rho_c);
        let tt = data.triple_temperature_k;
        f.triple.pressure_pa = match f.solve_saturation_molar(tt, &SolverOptions::default()) {
            Ok(s) => s.p,
            Err(_) => data.ancillary_pressure.value(tt),
        };
        f
    }

    /// Which fluid this is.
    pub fn id(&self) -> FluidId {
        self.id
    }

    /// Molar mass, kg/mol (the equation's own value).
    pub fn molar_mass_kg_mol(&self) -> f64 {
        self.m
    }

    /// Molar gas constant used by this fluid's equation, J/(mol K) (papers differ in the last digits).
    pub fn gas_constant_j_mol_k(&self) -> f64 {
        self.r
    }

    /// The critical point.
    pub fn critical(&self) -> CriticalPoint {
        self.critical
    }

    /// The triple point.
    pub fn triple(&self) -> TriplePoint {
        self.triple
    }

    /// Citation of the equation of state.
    pub fn equation_of_state(&self) -> &'static str {
        self.data.equation_of_state
    }

    /// Where the coefficients came from (tool and CoolProp version).
    pub fn coefficients_source(&self) -> &'static str {
        self.data.generated_by
    }

    /// Highest temperature of the equation's range, K.
    pub fn max_temperature_k(&self) -> f64 {
        self.data.max_temperature_k
    }

    /// Highest pressure of the equation's range, Pa.
    pub fn max_pressure_pa(&self) -> f64 {
        self.data.max_pressure_pa
    }

    /// Pressure at (T, rho), Pa. Returns NaN unless both are finite and positive.
    pub fn pressure_pa(&self, t_k: f64, rho_kg_m3: f64) -> f64 {
        if !(valid_positive(t_k) && valid_positive(rho_kg_m3)) {
            return f64::NAN;
        }
        self.pressure_molar(t_k, rho_kg_m3 / self.m)
    }

    /// Specific enthalpy at (T, rho), J/kg. Returns NaN unless both are finite and positive.
    pub fn enthalpy_j_kg(&self, t_k: f64, rho_kg_m3: f64) -> f64 {
        if !(valid_positive(t_k) && valid_positive(rho_kg_m3)) {
            return f64::NAN;
        }
        self.molar_state(t_k, rho_kg_m3 / self.m).h / self.m
    }

    /// All properties at (T, rho).
    pub fn state(&self, t_k: f64, rho_kg_m3: f64) -> Result<StateProperties, FluidError> {
        check_positive(Quantity::Temperature, t_k)?;
        check_positive(Quantity::Density, rho_kg_m3)?;
        let s = self.molar_state(t_k, rho_kg_m3 / self.m);
        let m = self.m;
        Ok(StateProperties {
            temperature_k: t_k,
            density_kg_m3: rho_kg_m3,
            pressure_pa: s.p,
            dp_drho_pa_m3_kg: s.dp_drho / m,
            dp_dt_pa_k: s.dp_dt,
            enthalpy_j_kg: s.h / m,
            entropy_j_kg_k: s.s / m,
            gibbs_j_kg: s.g / m,
            cv_j_kg_k: s.cv / m,
            cp_j_kg_k: s.cp / m,
            speed_of_sound_m_s: (s.w2_times_m / m).sqrt(),
        })
    }

    /// p = rho R T (1 + delta ar_delta), molar density in mol/m³.
    pub(crate) fn pressure_molar(&self, t: f64, rho: f64) -> f64 {
        let tau = self.t_r / t;
        let delta = rho / self.rho_r;
        let r = helmholtz::residual(self.data, tau, delta);
        rho * self.r * t * (1.0 + delta * r.a_d)
    }

    /// Everything at (T, rho), molar.
    pub(crate) fn molar_state(&self, t: f64, rho: f64) -> Molar {
        let tau = self.t_r / t;
        let delta = rho / self.rho_r;
        let r = helmholtz::residual(self.data, tau, delta);
        let i = helmholtz::ideal(self.data, tau, delta);
        let rt = self.r * t;
        let dad = delta * r.a_d;
        let p = rho * rt * (1.0 + dad);
        let dp_drho = rt * (1.0 + 2.0 * dad + delta * delta * r.a_dd);
        let x = 1.0 + dad - delta * tau * r.a_dt;
        let dp_dt = rho * self.r * x;
        let h = rt * (1.0 + tau * (i.a_t + r.a_t) + dad);
        let s = self.r * (tau * (i.a_t + r.a_t) - i.a - r.a);
        let g = rt * (1.0 + i.a + r.a + dad);
        let cv = -self.r * tau * tau * (i.a_tt + r.a_tt);
        let j = 1.0 + 2.0 * dad + delta * delta * r.a_dd;
        let cp = cv + self.r * x * x / j;
        let w2_times_m = rt * (j - x * x / (tau * tau * (i.a_tt + r.a_tt)));
        Molar {
            p,
            dp_drho,
            dp_dt,
            h,
            s,
            g,
            cv,
            cp,
            w2_times_m,
        }
    }

    /// Pressure and dp/drho on an isotherm (fast path, molar).
    pub(crate) fn p_dpdrho(&self, iso: &ResidualAtTau<'_>, t: f64, rho: f64) -> (f64, f64) {
        let delta = rho / self.rho_r;
        let d = iso.eval(delta);
        let rt = self.r * t;
        (
            rho * rt * (1.0 + d.delta_a_d),
            rt * (1.0 + 2.0 * d.delta_a_d + d.delta2_a_dd),
        )
    }

    /// dp/drho (molar) at (T, rho) by the analytic derivatives.
    fn dp_drho_molar(&self, t: f64, rho: f64) -> f64 {
        let iso = ResidualAtTau::new(self.data, self.t_r / t);
        self.p_dpdrho(&iso, t, rho).1
    }

    /// The equation's critical point: Newton's method on dp/drho = 0 and d2p/drho2 = 0 (the second
    /// derivative by central differences of the analytic first), from the reducing state.
    fn find_critical_point(&self) -> Option<(f64, f64)> {
        let h = 1e-5 * self.rho_r;
        let f = |t: f64, rho: f64| self.dp_drho_molar(t, rho);
        let g = |t: f64, rho: f64| (f(t, rho + h) - f(t, rho - h)) / (2.0 * h);
        let (mut t, mut rho) = (self.t_r, self.rho_r);
        for _ in 0..50 {
            let (f0, g0) = (f(t, rho), g(t, rho));
            let dt = 1e-6 * t;
            let dr = 1e-4 * rho;
            let f_t = (f(t + dt, rho) - f(t - dt, rho)) / (2.0 * dt);
            let g_t = (g(t + dt, rho) - g(t - dt, rho)) / (2.0 * dt);
            let f_r = g0;
            let g_r = (g(t, rho + dr) - g(t, rho - dr)) / (2.0 * dr);
            let det = f_t * g_r - f_r * g_t;
            if !(det.is_finite() && det != 0.0) {
                return None;
            }
            let step_t = -(f0 * g_r - g0 * f_r) / det;
            let step_r = -(f_t * g0 - g_t * f0) / det;
            t += step_t;
            rho += step_r;
            if !(t.is_finite() && rho.is_finite()) || (t - self.t_r).abs() > 0.01 * self.t_r {
                return None;
            }
            if step_t.abs() <= 1e-15 * t && step_r.abs() <= 1e-10 * rho {
                return Some((t, rho));
            }
        }
        Some((t, rho))
    }

    /// Real-gas density at 0 °C and 101.325 kPa (the normal cubic metre, Nm³), kg/m³.
    pub fn gas_density_normal_kg_m3(&self) -> f64 {
        *self
            .gas_normal
            .get_or_init(|| self.gas_density_or_ideal(273.15, 101_325.0))
    }

    /// Real-gas density at 70 °F and 14.696 psia (the standard cubic foot, scf), kg/m³.
    pub fn gas_density_standard_kg_m3(&self) -> f64 {
        *self.gas_standard.get_or_init(|| {
            // 1 psi = 0.45359237 kg * 9.80665 m/s² / (0.0254 m)²
            let psi_pa = 0.453_592_37 * 9.806_65 / (0.0254 * 0.0254);
            let t_k = (70.0 - 32.0) / 1.8 + 273.15;
            self.gas_density_or_ideal(t_k, 14.696 * psi_pa)
        })
    }

    fn gas_density_or_ideal(&self, t_k: f64, p_pa: f64) -> f64 {
        // every fluid here is a gas at both conditions, so the solver succeeds; the ideal-gas value is
        // only a guard that keeps this infallible
        self.density_from_temperature_pressure(t_k, p_pa, crate::Phase::Gas)
            .unwrap_or(p_pa * self.m / (self.r * t_k))
    }

    pub(crate) fn check_t_range(&self, t_k: f64) -> Result<(), FluidError> {
        check_positive(Quantity::Temperature, t_k)?;
        let (lo, hi) = (self.triple.temperature_k, self.data.max_temperature_k);
        if t_k < lo || t_k > hi {
            return Err(FluidError::OutOfRange {
                fluid: self.id,
                quantity: Quantity::Temperature,
                asked: t_k,
                min: lo,
                max: hi,
            });
        }
        Ok(())
    }

    pub(crate) fn check_p_range(&self, p_pa: f64) -> Result<(), FluidError> {
        check_positive(Quantity::Pressure, p_pa)?;
        if p_pa > self.data.max_pressure_pa {
            return Err(FluidError::OutOfRange {
                fluid: self.id,
                quantity: Quantity::Pressure,
                asked: p_pa,
                min: 0.0,
                max: self.data.max_pressure_pa,
            });
        }
        Ok(())
    }
}

pub(crate) fn valid_positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

/// Finite and > 0, or the matching typed error.
pub(crate) fn check_positive(quantity: Quantity, value: f64) -> Result<(), FluidError> {
    if !value.is_finite() {
        return Err(FluidError::NotFinite { quantity, value });
    }
    if value <= 0.0 {
        return Err(FluidError::NotPositive { quantity, value });
    }
    Ok(())
}
