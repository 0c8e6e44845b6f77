//! The serializable report of a single-phase state, as the command line prints it with `--format json`
//! (a saturation state is printed from [`crate::Saturation`] itself). Field names are part of the CLI contract (`tools/fluids_crosscheck.py` reads them).

use serde::Serialize;

use crate::PhaseKind;

/// One single-phase state at (T, p).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StateReport {
    /// Fluid name ([`crate::FluidId::name`]).
    pub fluid: &'static str,
    /// K.
    pub temperature_k: f64,
    /// Pa.
    pub pressure_pa: f64,
    /// kg/m³.
    pub density_kg_m3: f64,
    /// J/kg.
    pub enthalpy_j_kg: f64,
    /// "liquid", "gas" or "supercritical".
    pub phase: PhaseKind,
}

impl StateReport {
    /// The state of `fluid` at (T, p): its phase, and the density of that phase.
    pub fn at(fluid: &crate::Fluid, t_k: f64, p_pa: f64) -> Result<Self, crate::FluidError> {
        let phase = fluid.phase_at(t_k, p_pa)?;
        let branch = match phase {
            PhaseKind::Liquid => crate::Phase::Liquid,
            PhaseKind::Gas | PhaseKind::Supercritical => crate::Phase::Gas,
        };
        let rho = fluid.density_from_temperature_pressure(t_k, p_pa, branch)?;
        Ok(Self {
            fluid: fluid.id().name(),
            temperature_k: t_k,
            pressure_pa: p_pa,
            density_kg_m3: rho,
            enthalpy_j_kg: fluid.enthalpy_j_kg(t_k, rho),
            phase,
        })
    }
}
