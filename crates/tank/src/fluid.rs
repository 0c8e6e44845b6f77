//! The fluid properties the tank engine needs, as a small trait.
//!
//! The engine is generic over [`FluidProperties`] so it meets the `fluids` crate (reference
//! equations of state, implemented below for [`fluids::Fluid`]) through a narrow interface, and
//! so unit tests can run the physics on a simple analytic fluid.

use crate::error::Result;

/// A saturation state, as the tank engine uses it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SaturationPoint {
    /// Saturation temperature, K.
    pub temperature_k: f64,
    /// Saturation pressure, Pa.
    pub pressure_pa: f64,
    /// Saturated liquid density, kg/m³.
    pub liquid_density_kg_m3: f64,
    /// Saturated vapour density, kg/m³.
    pub vapour_density_kg_m3: f64,
}

/// Fluid properties needed to turn a DP reading into contents. All SI.
pub trait FluidProperties {
    /// The saturation state at a pressure.
    fn saturation_at_pressure(&self, pressure_pa: f64) -> Result<SaturationPoint>;
    /// Density of (compressed or saturated) liquid at a temperature and pressure.
    fn liquid_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64>;
    /// Density of gas (or supercritical fluid on the gas side) at a temperature and pressure.
    fn gas_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64>;
    /// Gas density at 0 °C and 101.325 kPa (for normal cubic metres).
    fn gas_density_normal_kg_m3(&self) -> f64;
    /// Gas density at 70 °F and 14.696 psia (for standard cubic feet).
    fn gas_density_standard_kg_m3(&self) -> f64;
}

impl<T: FluidProperties + ?Sized> FluidProperties for &T {
    fn saturation_at_pressure(&self, pressure_pa: f64) -> Result<SaturationPoint> {
        (**self).saturation_at_pressure(pressure_pa)
    }
    fn liquid_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64> {
        (**self).liquid_density_kg_m3(temperature_k, pressure_pa)
    }
    fn gas_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64> {
        (**self).gas_density_kg_m3(temperature_k, pressure_pa)
    }
    fn gas_density_normal_kg_m3(&self) -> f64 {
        (**self).gas_density_normal_kg_m3()
    }
    fn gas_density_standard_kg_m3(&self) -> f64 {
        (**self).gas_density_standard_kg_m3()
    }
}

/// The reference equations of state of the `fluids` crate (fast saturation curves; compressed
/// liquid and line gas on their branches by density iteration).
impl FluidProperties for fluids::Fluid {
    fn saturation_at_pressure(&self, pressure_pa: f64) -> Result<SaturationPoint> {
        let s = self.saturation_from_pressure(pressure_pa)?;
        Ok(SaturationPoint {
            temperature_k: s.temperature_k,
            pressure_pa: s.pressure_pa,
            liquid_density_kg_m3: s.liquid_density_kg_m3,
            vapour_density_kg_m3: s.vapour_density_kg_m3,
        })
    }
    fn liquid_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64> {
        Ok(self.density_from_temperature_pressure(
            temperature_k,
            pressure_pa,
            fluids::Phase::Liquid,
        )?)
    }
    fn gas_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> Result<f64> {
        Ok(self.density_from_temperature_pressure(
            temperature_k,
            pressure_pa,
            fluids::Phase::Gas,
        )?)
    }
    fn gas_density_normal_kg_m3(&self) -> f64 {
        fluids::Fluid::gas_density_normal_kg_m3(self)
    }
    fn gas_density_standard_kg_m3(&self) -> f64 {
        fluids::Fluid::gas_density_standard_kg_m3(self)
    }
}

/// A simple analytic fluid for unit tests of the engine's algebra (not a real substance).
#[cfg(test)]
pub(crate) mod toy {
    use super::*;
    use crate::error::TankError;

    /// Clausius–Clapeyron-like saturation curve, linear liquid density, ideal-gas vapour.
    #[derive(Debug, Clone, Copy)]
    pub(crate) struct ToyFluid;

    const R_SPECIFIC: f64 = 296.8; // J/(kg K), nitrogen-like
    const T_REF: f64 = 77.0;
    const P_REF: f64 = 101_325.0;
    const B: f64 = 700.0; // K, ln(p/p_ref) = B (1/T_ref - 1/T)

    impl FluidProperties for ToyFluid {
        fn saturation_at_pressure(&self, p: f64) -> Result<SaturationPoint> {
            if !(p > 1e3 && p < 3e6) {
                return Err(TankError::InvalidParameter {
                    name: "pressure_pa",
                    value: p,
                    reason: "toy range",
                });
            }
            let t = 1.0 / (1.0 / T_REF - (p / P_REF).ln() / B);
            Ok(SaturationPoint {
                temperature_k: t,
                pressure_pa: p,
                liquid_density_kg_m3: self.liquid_density_kg_m3(t, p)?,
                vapour_density_kg_m3: p / (R_SPECIFIC * t),
            })
        }
        fn liquid_density_kg_m3(&self, t: f64, p: f64) -> Result<f64> {
            Ok(808.0 - 4.5 * (t - T_REF) + 4e-7 * (p - P_REF))
        }
        fn gas_density_kg_m3(&self, t: f64, p: f64) -> Result<f64> {
            Ok(p / (R_SPECIFIC * t))
        }
        fn gas_density_normal_kg_m3(&self) -> f64 {
            101_325.0 / (R_SPECIFIC * 273.15)
        }
        fn gas_density_standard_kg_m3(&self) -> f64 {
            101_352.9 / (R_SPECIFIC * 294.261)
        }
    }
}
