//! Safe-fill limit and the caution texts shown with it.
//!
//! The largest fill at present conditions such that the liquid, warmed at constant mass until it
//! is saturated at the relief valve's set pressure, still leaves a vapour space of `f_v` of the
//! gross volume:
//!
//! ```text
//! V_max_now = (1 − f_v) · V_gross · rho_L_sat(p_relief) / rho_L_now
//! ```
//!
//! The rule is the one behind a cryogenic vessel's maximum filling degree: filled no further than its
//! contents, warmed until the relief valve lifts, leave the vessel not liquid-full (the principle of
//! the maximum filling mass in EN 13458-2 for static vacuum-insulated vessels, recalled from memory).
//! The vapour space kept at that point, 2 %, is common practice, no source. Local codes, the vessel
//! maker's figure and licensed practice govern; the window and the command line show the cautions
//! with it.

use serde::{Deserialize, Serialize};

use crate::contents::{Conditions, ContentsOptions, Tank, densities};
use crate::error::{Result, TankError, positive};
use crate::fluid::FluidProperties;

/// Default vapour space left at relief conditions: 2 % of the gross volume (common practice, no
/// source; local codes and the vessel maker's instructions govern).
pub const DEFAULT_VAPOUR_FRACTION: f64 = 0.02;

/// Caution texts for display beside any fill limit or contents figure. Each is one paragraph.
pub const CAUTIONS: [&str; 6] = [
    "These figures are estimates from a model of the gauge and the fluid. They do not replace the vessel maker's instructions, local codes and regulations, or the judgement of licensed, trained people.",
    "Overfilling: a cold liquid expands as it warms. A tank filled above its safe-fill limit can become liquid-full and relieve liquid or fail. Stop the fill at the lower of this limit and the limit set by the vessel maker.",
    "Pressure relief: relief valves and rupture discs must stay in service, unobstructed and of the rating the vessel maker specifies. Never isolate them to hold pressure or to fill faster.",
    "Oxygen service: oxygen-enriched air makes materials burn fiercely. Keep equipment clean for oxygen service, keep oil, grease and ignition sources away, and use only parts approved for oxygen.",
    "Cold burns: cryogenic liquids, their cold vapour and uninsulated pipework freeze skin and eyes on contact. Wear the protective equipment your procedures require.",
    "Asphyxiation: nitrogen, argon, carbon dioxide, methane and hydrogen displace oxygen with no warning to the senses; carbon dioxide is also toxic at high concentration. Ventilate, and monitor oxygen where vapour can collect.",
];

/// The safe-fill limit at present conditions.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SafeFill {
    /// Relief valve set pressure, Pa absolute.
    pub relief_pressure_pa: f64,
    /// Vapour space kept at relief conditions, fraction of gross volume.
    pub vapour_fraction: f64,
    /// Liquid density now, kg/m³.
    pub liquid_density_now_kg_m3: f64,
    /// Saturated liquid density at the relief pressure, kg/m³.
    pub liquid_density_relief_kg_m3: f64,
    /// Largest fill fraction now.
    pub max_fill_fraction: f64,
    /// Largest liquid volume now, m³.
    pub max_liquid_volume_m3: f64,
    /// Largest liquid mass, kg.
    pub max_liquid_mass_kg: f64,
    /// Liquid level at the limit, m.
    pub max_level_m: f64,
}

impl<F: FluidProperties> Tank<F> {
    /// The safe-fill limit for liquid in the state `conditions` describes, relief valve set at
    /// `relief_pressure_pa` (absolute), keeping `vapour_fraction` (e.g. [`DEFAULT_VAPOUR_FRACTION`])
    /// of the gross volume as vapour when the liquid reaches saturation at the relief pressure.
    pub fn safe_fill_limit(
        &self,
        conditions: &Conditions,
        relief_pressure_pa: f64,
        vapour_fraction: f64,
        options: &ContentsOptions,
    ) -> Result<SafeFill> {
        positive("relief_pressure_pa", relief_pressure_pa)?;
        if !(vapour_fraction.is_finite() && (0.0..1.0).contains(&vapour_fraction)) {
            return Err(TankError::InvalidParameter {
                name: "vapour_fraction",
                value: vapour_fraction,
                reason: "must be in 0 ..< 1",
            });
        }
        if relief_pressure_pa < conditions.pressure_pa {
            return Err(TankError::ReliefBelowTank {
                relief_pa: relief_pressure_pa,
                tank_pa: conditions.pressure_pa,
            });
        }
        let now = densities(&self.fluid, conditions)?.liquid;
        let relief = self
            .fluid
            .saturation_at_pressure(relief_pressure_pa)?
            .liquid_density_kg_m3;
        let gross = self.geometry.gross_volume_m3();
        // A liquid already lighter than it would be at relief (not physical for a valid state)
        // is capped at 1 − f_v.
        let fraction = ((1.0 - vapour_fraction) * relief / now).min(1.0 - vapour_fraction);
        let volume = fraction * gross;
        Ok(SafeFill {
            relief_pressure_pa,
            vapour_fraction,
            liquid_density_now_kg_m3: now,
            liquid_density_relief_kg_m3: relief,
            max_fill_fraction: fraction,
            max_liquid_volume_m3: volume,
            max_liquid_mass_kg: volume * now,
            max_level_m: self.geometry.level_from_volume(volume, &options.solver)?,
        })
    }
}
