//! Coefficient tables of the equations of state, one generated file per fluid.
//!
//! The files are written by `tools/fluids_coefficients.py` from CoolProp's published fluid JSON; each names
//! its paper in its header. Constant tables (not parsed text) so that building a fluid cannot fail.

mod argon;
mod carbon_dioxide;
mod hydrogen;
mod methane;
mod nitrogen;
mod oxygen;
mod parahydrogen;

use crate::FluidId;

/// One term of the ideal-gas part a0(delta, tau) in the forms CoolProp uses.
#[derive(Debug, Clone, Copy)]
pub(crate) enum IdealTerm {
    /// ln(delta) + a1 + a2 tau
    Lead { a1: f64, a2: f64 },
    /// a1 + a2 tau: the reference-state offset (sets where h and s are zero)
    Offset { a1: f64, a2: f64 },
    /// a ln(tau)
    LogTau { a: f64 },
    /// sum n_i tau^t_i
    Power {
        n: &'static [f64],
        t: &'static [f64],
    },
    /// sum n_i ln(1 - exp(-theta_i tau))
    PlanckEinstein {
        n: &'static [f64],
        theta: &'static [f64],
    },
}

/// n delta^d tau^t exp(-delta^l) (no exponential when l = 0)
#[derive(Debug, Clone, Copy)]
pub(crate) struct PowerTerm {
    pub n: f64,
    pub d: i32,
    pub t: f64,
    pub l: i32,
}

/// n delta^d tau^t exp(-eta (delta - epsilon)^2 - beta (tau - gamma)^2)
#[derive(Debug, Clone, Copy)]
pub(crate) struct GaussianTerm {
    pub n: f64,
    pub d: i32,
    pub t: f64,
    pub eta: f64,
    pub epsilon: f64,
    pub beta: f64,
    pub gamma: f64,
}

/// Span and Wagner's non-analytic term n Delta^b delta psi (carbon dioxide only).
#[derive(Debug, Clone, Copy)]
pub(crate) struct NonAnalyticTerm {
    pub n: f64,
    pub a: f64,
    pub b: f64,
    pub beta: f64,
    pub big_a: f64,
    pub big_b: f64,
    pub big_c: f64,
    pub big_d: f64,
}

/// Shape of an ancillary equation in theta = 1 - T/T_r.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum AncillaryForm {
    /// value = reducing * exp(f * sum n_i theta^t_i), f = T_r/T when `using_tau_r`, else 1
    Exp,
    /// value = reducing * (1 + sum n_i theta^t_i)
    Linear,
}

/// A published-form ancillary fit, used only as a starting guess for the saturation solver.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Ancillary {
    pub form: AncillaryForm,
    pub using_tau_r: bool,
    pub reducing_value: f64,
    pub t_r_k: f64,
    pub n: &'static [f64],
    pub t: &'static [f64],
}

impl Ancillary {
    /// Value at `t_k` (any T in (0, T_r]; theta is clamped at 0 above T_r).
    pub(crate) fn value(&self, t_k: f64) -> f64 {
        let theta = (1.0 - t_k / self.t_r_k).max(0.0);
        let sum: f64 = self
            .n
            .iter()
            .zip(self.t)
            .map(|(n, t)| n * theta.powf(*t))
            .sum();
        match self.form {
            AncillaryForm::Exp => {
                let f = if self.using_tau_r {
                    self.t_r_k / t_k
                } else {
                    1.0
                };
                self.reducing_value * (f * sum).exp()
            }
            AncillaryForm::Linear => self.reducing_value * (1.0 + sum),
        }
    }
}

/// Everything one fluid's equation of state needs.
#[derive(Debug, Clone, Copy)]
pub(crate) struct FluidData {
    pub equation_of_state: &'static str,
    pub generated_by: &'static str,
    pub gas_constant_j_mol_k: f64,
    pub molar_mass_kg_mol: f64,
    pub reducing_temperature_k: f64,
    pub reducing_density_mol_m3: f64,
    /// The critical temperature as stored by CoolProp (equal to the reducing one up to round-off).
    #[allow(dead_code)]
    pub critical_temperature_k: f64,
    /// The paper's critical pressure (the equation itself may differ slightly at its critical point).
    pub critical_pressure_pa: f64,
    #[allow(dead_code)]
    pub critical_density_mol_m3: f64,
    pub triple_temperature_k: f64,
    pub max_temperature_k: f64,
    pub max_pressure_pa: f64,
    pub ideal: &'static [IdealTerm],
    pub power: &'static [PowerTerm],
    pub gaussian: &'static [GaussianTerm],
    pub non_analytic: &'static [NonAnalyticTerm],
    pub ancillary_pressure: Ancillary,
    pub ancillary_liquid_density: Ancillary,
    pub ancillary_vapour_density: Ancillary,
}

/// The coefficient table of a fluid.
pub(crate) fn data(id: FluidId) -> &'static FluidData {
    match id {
        FluidId::Nitrogen => &nitrogen::DATA,
        FluidId::Oxygen => &oxygen::DATA,
        FluidId::Argon => &argon::DATA,
        FluidId::CarbonDioxide => &carbon_dioxide::DATA,
        FluidId::Methane => &methane::DATA,
        FluidId::Hydrogen => &hydrogen::DATA,
        FluidId::Parahydrogen => &parahydrogen::DATA,
    }
}
