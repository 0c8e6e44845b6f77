//! What a fixed chart would report, and how far that is from the corrected contents.
//!
//! A fixed chart converts DP to contents with one reference liquid density (saturated liquid at a
//! chosen pressure, usually 1 atm) and ignores the vapour and line heads: h = DP / (g rho_ref),
//! mass = rho_ref V(h).

use serde::{Deserialize, Serialize};

use crate::contents::{Conditions, ContentsOptions, Tank};
use crate::error::{Result, positive};
use crate::fluid::FluidProperties;
use crate::gauge::STANDARD_GRAVITY;

/// A fixed chart's reading next to the corrected contents.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ChartComparison {
    /// The chart's reference pressure, Pa absolute.
    pub reference_pressure_pa: f64,
    /// The chart's liquid density, kg/m³.
    pub reference_density_kg_m3: f64,
    /// Level the chart reads, m (clamped to the vessel).
    pub chart_level_m: f64,
    /// Whether the chart's level ran off its scale (below 0 or above full).
    pub chart_off_scale: bool,
    /// Liquid volume the chart reads, m³.
    pub chart_liquid_volume_m3: f64,
    /// Mass the chart reads, kg.
    pub chart_mass_kg: f64,
    /// Corrected liquid level, m.
    pub corrected_level_m: f64,
    /// Corrected total mass, kg.
    pub corrected_total_mass_kg: f64,
    /// Chart mass minus corrected total mass, kg.
    pub mass_error_kg: f64,
    /// That error relative to the corrected total mass (0 when the tank is empty).
    pub mass_error_fraction: f64,
}

impl<F: FluidProperties> Tank<F> {
    /// Compare a chart made for saturated liquid at `reference_pressure_pa` with the corrected
    /// contents of the same reading.
    pub fn chart_comparison(
        &self,
        dp_reading_pa: f64,
        conditions: &Conditions,
        reference_pressure_pa: f64,
        options: &ContentsOptions,
    ) -> Result<ChartComparison> {
        positive("reference_pressure_pa", reference_pressure_pa)?;
        let corrected = self.contents_from_reading(dp_reading_pa, conditions, options)?;
        let rho_ref = self
            .fluid
            .saturation_at_pressure(reference_pressure_pa)?
            .liquid_density_kg_m3;
        let height = self.geometry.inner_height_m();
        let raw = corrected.dp_pa / (STANDARD_GRAVITY * rho_ref);
        let level = raw.clamp(0.0, height);
        let volume = self.geometry.volume_from_level(level)?;
        let mass = rho_ref * volume;
        let error = mass - corrected.total_mass_kg;
        Ok(ChartComparison {
            reference_pressure_pa,
            reference_density_kg_m3: rho_ref,
            chart_level_m: level,
            chart_off_scale: raw != level,
            chart_liquid_volume_m3: volume,
            chart_mass_kg: mass,
            corrected_level_m: corrected.liquid_height_m,
            corrected_total_mass_kg: corrected.total_mass_kg,
            mass_error_kg: error,
            mass_error_fraction: if corrected.total_mass_kg > 0.0 {
                error / corrected.total_mass_kg
            } else {
                0.0
            },
        })
    }
}
