//! Serializable reports of a saturation state and of a single-phase state, as the command line prints them
//! with `--format json`. Field names are part of the CLI contract (`tools/fluids_crosscheck.py` reads them).

use serde::Serialize;

use crate::{FluidId, PhaseKind, Saturation};

/// One saturation state.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SaturationReport {
    /// Fluid name ([`FluidId::name`]).
    pub fluid: &'static str,
    /// K.
    pub temperature_k: f64,
    /// Pa.
    pub pressure_pa: f64,
    /// kg/m³.
    pub liquid_density_kg_m3: f64,
    /// kg/m³.
    pub vapor_density_kg_m3: f64,
    /// J/kg.
    pub liquid_enthalpy_j_kg: f64,
    /// J/kg.
    pub vapor_enthalpy_j_kg: f64,
    /// h_V - h_L, J/kg.
    pub latent_heat_j_kg: f64,
}

impl SaturationReport {
    /// The report of `sat` for `fluid`.
    pub fn new(fluid: FluidId, sat: &Saturation) -> Self {
        Self {
            fluid: fluid.name(),
            temperature_k: sat.temperature_k,
            pressure_pa: sat.pressure_pa,
            liquid_density_kg_m3: sat.liquid_density_kg_m3,
            vapor_density_kg_m3: sat.vapor_density_kg_m3,
            liquid_enthalpy_j_kg: sat.liquid_enthalpy_j_kg,
            vapor_enthalpy_j_kg: sat.vapor_enthalpy_j_kg,
            latent_heat_j_kg: sat.latent_heat_j_kg(),
        }
    }
}

/// One single-phase state at (T, p).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StateReport {
    /// Fluid name ([`FluidId::name`]).
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
