//! Contents from a DP reading, and the DP a gauge shows for given contents.
//!
//! The gauge model (see the design's physics): with the high-side tap at the bottom of the inner
//! vessel and the low side at the top, both sensing lines full of gas at line temperature,
//!
//! ```text
//! DP = g [ (rho_L - rho_V) h + (rho_V - rho_line) H ]
//! ```
//!
//! where `H` is the inner height. The gauge shows `DP + zero_offset`.

use serde::{Deserialize, Serialize};

use crate::error::{Result, TankError, positive};
use crate::fluid::FluidProperties;
use crate::gauge::{GaugeAccuracy, STANDARD_GRAVITY};
use crate::geometry::{Geometry, SolverOptions};

/// One standard cubic foot in m³ (0.3048³, exact by the definition of the foot).
pub use units::CUBIC_FOOT_M3;

/// Default sensing-line temperature, 15 °C (design default).
pub const DEFAULT_LINE_TEMPERATURE_K: f64 = 288.15;

/// The thermal state of the liquid.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum LiquidState {
    /// Saturated at the tank pressure (the default).
    #[default]
    SaturatedAtTankPressure,
    /// At the saturation temperature of `pressure_pa` (< tank pressure), compressed to the tank
    /// pressure: rho_L = rho(T_sat(p_s), p_tank), not the saturated density at p_s.
    SaturatedAtPressure {
        /// The liquid's saturation pressure p_s, Pa absolute.
        pressure_pa: f64,
    },
    /// A measured liquid temperature, no warmer than saturation at the tank pressure.
    Temperature {
        /// Liquid temperature, K.
        temperature_k: f64,
    },
}

/// The conditions of one reading besides the DP.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Conditions {
    /// Tank (vapour space) pressure, Pa absolute.
    pub pressure_pa: f64,
    /// The liquid's thermal state.
    pub liquid: LiquidState,
    /// Temperature of the gas in the sensing lines, K.
    pub line_temperature_k: f64,
}

impl Conditions {
    /// Saturated liquid at `pressure_pa` (absolute), lines at 15 °C.
    pub fn saturated(pressure_pa: f64) -> Self {
        Conditions {
            pressure_pa,
            liquid: LiquidState::SaturatedAtTankPressure,
            line_temperature_k: DEFAULT_LINE_TEMPERATURE_K,
        }
    }

    /// The same conditions with another liquid state.
    pub fn with_liquid(mut self, liquid: LiquidState) -> Self {
        self.liquid = liquid;
        self
    }

    /// The same conditions with another line temperature.
    pub fn with_line_temperature_k(mut self, line_temperature_k: f64) -> Self {
        self.line_temperature_k = line_temperature_k;
        self
    }
}

/// A DP gauge's settings.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Gauge {
    /// What the gauge shows at zero true DP, Pa (subtracted from every reading).
    pub zero_offset_pa: f64,
    /// Accuracy, when known; it sets the tolerance at empty and full and the DP uncertainty.
    pub accuracy: Option<GaugeAccuracy>,
}

/// Options of the contents calculation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ContentsOptions {
    /// Options of the level-from-volume solver (used by the inverse calculations).
    pub solver: SolverOptions,
    /// Tolerance at empty and full as a fraction of the full-tank DP when the gauge's accuracy is
    /// unknown. Default 0.02: common practice, no source.
    pub default_tolerance_fraction: f64,
}

impl Default for ContentsOptions {
    fn default() -> Self {
        ContentsOptions {
            solver: SolverOptions::default(),
            default_tolerance_fraction: 0.02,
        }
    }
}

/// Whether the level was clamped to the vessel.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum LevelClamp {
    /// The computed level was inside the vessel.
    #[default]
    None,
    /// Slightly below empty (within tolerance): set to 0.
    Empty,
    /// Slightly above full (within tolerance): set to the inner height.
    Full,
}

/// What one reading means. Field names are a CLI contract: keep them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Contents {
    /// Zero-corrected DP, Pa.
    pub dp_pa: f64,
    /// Tank pressure, Pa absolute.
    pub pressure_pa: f64,
    /// Liquid height above the bottom tap, m.
    pub liquid_height_m: f64,
    /// Liquid volume, m³.
    pub liquid_volume_m3: f64,
    /// Vapour volume, m³.
    pub vapour_volume_m3: f64,
    /// Gross inner volume, m³.
    pub gross_volume_m3: f64,
    /// Liquid volume over gross volume.
    pub fill_fraction: f64,
    /// Liquid density, kg/m³.
    pub liquid_density_kg_m3: f64,
    /// Saturated vapour density at the tank pressure, kg/m³.
    pub vapour_density_kg_m3: f64,
    /// Density of the gas in the sensing lines, kg/m³.
    pub line_gas_density_kg_m3: f64,
    /// Liquid temperature, K.
    pub liquid_temperature_k: f64,
    /// Saturation temperature at the tank pressure, K.
    pub saturation_temperature_k: f64,
    /// Liquid mass, kg.
    pub liquid_mass_kg: f64,
    /// Vapour mass, kg.
    pub vapour_mass_kg: f64,
    /// Total mass, kg.
    pub total_mass_kg: f64,
    /// Gas equivalent, normal m³ (0 °C, 101.325 kPa).
    pub gas_nm3: f64,
    /// Gas equivalent, standard cubic feet (70 °F, 14.696 psia).
    pub gas_scf: f64,
    /// Whether the level was clamped at empty or full.
    pub level_clamp: LevelClamp,
    /// Standard uncertainty of the liquid mass, kg (when an uncertainty budget was computed).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub liquid_mass_u_kg: Option<f64>,
    /// Standard uncertainty of the vapour mass, kg.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub vapour_mass_u_kg: Option<f64>,
    /// Standard uncertainty of the total mass, kg.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub total_mass_u_kg: Option<f64>,
    /// Standard uncertainty of the liquid volume, m³.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub liquid_volume_u_m3: Option<f64>,
    /// Standard uncertainty of the gas equivalent, normal m³.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub gas_nm3_u: Option<f64>,
}

/// The DP of a full tank, with the gauge's tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FullTankDp {
    /// What the gauge shows with the tank full (zero offset included), Pa.
    pub reading_pa: f64,
    /// The gauge's tolerance there, Pa.
    pub tolerance_pa: f64,
    /// Readings above this are rejected, Pa: `reading_pa + tolerance_pa`.
    pub limit_pa: f64,
}

/// The densities and temperatures of one set of conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Densities {
    pub liquid_temperature_k: f64,
    pub saturation_temperature_k: f64,
    pub liquid: f64,
    pub vapour: f64,
    pub line: f64,
}

/// Densities for `conditions`, checking the liquid state.
pub(crate) fn densities<F: FluidProperties + ?Sized>(
    fluid: &F,
    c: &Conditions,
) -> Result<Densities> {
    positive("pressure_pa", c.pressure_pa)?;
    positive("line_temperature_k", c.line_temperature_k)?;
    let sat = fluid.saturation_at_pressure(c.pressure_pa)?;
    let (t_liquid, rho_liquid) = match c.liquid {
        LiquidState::SaturatedAtTankPressure => (sat.temperature_k, sat.liquid_density_kg_m3),
        LiquidState::SaturatedAtPressure { pressure_pa } => {
            positive("liquid_saturation_pressure_pa", pressure_pa)?;
            if pressure_pa > c.pressure_pa {
                return Err(TankError::SaturationAboveTank {
                    saturation_pa: pressure_pa,
                    tank_pa: c.pressure_pa,
                });
            }
            if pressure_pa >= c.pressure_pa * (1.0 - 1e-12) {
                // Saturated at the tank pressure itself.
                (sat.temperature_k, sat.liquid_density_kg_m3)
            } else {
                let t = fluid.saturation_at_pressure(pressure_pa)?.temperature_k;
                (t, fluid.liquid_density_kg_m3(t, c.pressure_pa)?)
            }
        }
        LiquidState::Temperature { temperature_k } => {
            positive("liquid_temperature_k", temperature_k)?;
            // 1 µK of slack: a temperature set equal to T_sat from another evaluation must pass.
            if temperature_k > sat.temperature_k + 1e-6 {
                return Err(TankError::LiquidTooWarm {
                    temperature_k,
                    saturation_k: sat.temperature_k,
                });
            }
            if temperature_k >= sat.temperature_k - 1e-9 {
                // At saturation (within round-off of the saturation curve).
                (sat.temperature_k, sat.liquid_density_kg_m3)
            } else {
                (
                    temperature_k,
                    fluid.liquid_density_kg_m3(temperature_k, c.pressure_pa)?,
                )
            }
        }
    };
    let line = fluid.gas_density_kg_m3(c.line_temperature_k, c.pressure_pa)?;
    Ok(Densities {
        liquid_temperature_k: t_liquid,
        saturation_temperature_k: sat.temperature_k,
        liquid: rho_liquid,
        vapour: sat.vapour_density_kg_m3,
        line,
    })
}

/// A tank: its geometry, the fluid it holds, and its DP gauge.
#[derive(Debug, Clone, PartialEq)]
pub struct Tank<F> {
    /// Inner vessel geometry.
    pub geometry: Geometry,
    /// The fluid (e.g. `fluids::fluid(FluidId::Nitrogen)`).
    pub fluid: F,
    /// The DP gauge.
    pub gauge: Gauge,
}

impl<F: FluidProperties> Tank<F> {
    /// A tank with a gauge of zero offset and unknown accuracy.
    pub fn new(geometry: impl Into<Geometry>, fluid: F) -> Self {
        Tank {
            geometry: geometry.into(),
            fluid,
            gauge: Gauge::default(),
        }
    }

    /// The same tank with another gauge.
    pub fn with_gauge(mut self, gauge: Gauge) -> Self {
        self.gauge = gauge;
        self
    }

    /// The gauge's tolerance at a (zero-corrected) DP, Pa.
    fn tolerance_pa(&self, dp_pa: f64, full_dp_pa: f64, options: &ContentsOptions) -> f64 {
        match &self.gauge.accuracy {
            Some(a) => a.limit_pa(dp_pa),
            None => options.default_tolerance_fraction * full_dp_pa.abs(),
        }
    }

    /// What the gauge shows with the tank full at `conditions`, and the tolerance beyond which a
    /// reading is rejected. The importer should pass the coldest liquid state it accepts (a
    /// colder, denser liquid shows a larger full-tank DP).
    pub fn full_tank_dp(
        &self,
        conditions: &Conditions,
        options: &ContentsOptions,
    ) -> Result<FullTankDp> {
        let d = densities(&self.fluid, conditions)?;
        let full = STANDARD_GRAVITY * (d.liquid - d.line) * self.geometry.inner_height_m();
        let tolerance_pa = self.tolerance_pa(full, full, options);
        let reading_pa = full + self.gauge.zero_offset_pa;
        Ok(FullTankDp {
            reading_pa,
            tolerance_pa,
            limit_pa: reading_pa + tolerance_pa,
        })
    }

    /// Contents from a gauge reading `dp_reading_pa` (as shown, zero offset included).
    ///
    /// A level computed below 0 or above the inner height is clamped when the DP is within the
    /// gauge's tolerance of the empty or full value (noise near empty or full), and an error
    /// ([`TankError::BelowEmpty`], [`TankError::AboveFull`]) beyond it. The tolerance is the
    /// gauge's class limit, or [`ContentsOptions::default_tolerance_fraction`] of the full DP.
    pub fn contents_from_reading(
        &self,
        dp_reading_pa: f64,
        conditions: &Conditions,
        options: &ContentsOptions,
    ) -> Result<Contents> {
        if !dp_reading_pa.is_finite() {
            return Err(TankError::InvalidParameter {
                name: "dp_reading_pa",
                value: dp_reading_pa,
                reason: "must be finite",
            });
        }
        let d = densities(&self.fluid, conditions)?;
        self.contents_from_densities(
            dp_reading_pa - self.gauge.zero_offset_pa,
            conditions.pressure_pa,
            &d,
            options,
        )
    }

    pub(crate) fn contents_from_densities(
        &self,
        dp_pa: f64,
        pressure_pa: f64,
        d: &Densities,
        options: &ContentsOptions,
    ) -> Result<Contents> {
        let g = STANDARD_GRAVITY;
        let height = self.geometry.inner_height_m();
        let empty_dp = g * (d.vapour - d.line) * height;
        let full_dp = g * (d.liquid - d.line) * height;
        let mut level_clamp = LevelClamp::None;
        let mut h = (dp_pa / g - (d.vapour - d.line) * height) / (d.liquid - d.vapour);
        if h < 0.0 {
            let tolerance_pa = self.tolerance_pa(dp_pa, full_dp, options);
            if empty_dp - dp_pa > tolerance_pa {
                return Err(TankError::BelowEmpty {
                    dp_pa,
                    empty_dp_pa: empty_dp,
                    tolerance_pa,
                });
            }
            h = 0.0;
            level_clamp = LevelClamp::Empty;
        } else if h > height {
            let tolerance_pa = self.tolerance_pa(dp_pa, full_dp, options);
            if dp_pa - full_dp > tolerance_pa {
                return Err(TankError::AboveFull {
                    dp_pa,
                    full_dp_pa: full_dp,
                    tolerance_pa,
                });
            }
            h = height;
            level_clamp = LevelClamp::Full;
        }
        let gross = self.geometry.gross_volume_m3();
        let v_liquid = self.geometry.volume_from_level(h)?;
        let v_vapour = (gross - v_liquid).max(0.0);
        let m_liquid = d.liquid * v_liquid;
        let m_vapour = d.vapour * v_vapour;
        let total = m_liquid + m_vapour;
        Ok(Contents {
            dp_pa,
            pressure_pa,
            liquid_height_m: h,
            liquid_volume_m3: v_liquid,
            vapour_volume_m3: v_vapour,
            gross_volume_m3: gross,
            fill_fraction: v_liquid / gross,
            liquid_density_kg_m3: d.liquid,
            vapour_density_kg_m3: d.vapour,
            line_gas_density_kg_m3: d.line,
            liquid_temperature_k: d.liquid_temperature_k,
            saturation_temperature_k: d.saturation_temperature_k,
            liquid_mass_kg: m_liquid,
            vapour_mass_kg: m_vapour,
            total_mass_kg: total,
            gas_nm3: total / self.fluid.gas_density_normal_kg_m3(),
            gas_scf: total / self.fluid.gas_density_standard_kg_m3() / CUBIC_FOOT_M3,
            level_clamp,
            liquid_mass_u_kg: None,
            vapour_mass_u_kg: None,
            total_mass_u_kg: None,
            liquid_volume_u_m3: None,
            gas_nm3_u: None,
        })
    }

    /// The reading (zero offset included) the gauge shows at liquid level `level_m`.
    pub fn dp_from_level(&self, level_m: f64, conditions: &Conditions) -> Result<f64> {
        let height = self.geometry.inner_height_m();
        if !(level_m.is_finite() && (0.0..=height).contains(&level_m)) {
            return Err(TankError::LevelOutOfRange {
                level_m,
                height_m: height,
            });
        }
        let d = densities(&self.fluid, conditions)?;
        Ok(
            STANDARD_GRAVITY * ((d.liquid - d.vapour) * level_m + (d.vapour - d.line) * height)
                + self.gauge.zero_offset_pa,
        )
    }

    /// The reading the gauge shows with `volume_m3` of liquid.
    pub fn dp_from_liquid_volume(
        &self,
        volume_m3: f64,
        conditions: &Conditions,
        options: &ContentsOptions,
    ) -> Result<f64> {
        let level = self
            .geometry
            .level_from_volume(volume_m3, &options.solver)?;
        self.dp_from_level(level, conditions)
    }

    /// The reading the gauge shows with `mass_kg` of liquid in the given state.
    pub fn dp_from_liquid_mass(
        &self,
        mass_kg: f64,
        conditions: &Conditions,
        options: &ContentsOptions,
    ) -> Result<f64> {
        let d = densities(&self.fluid, conditions)?;
        self.dp_from_liquid_volume(mass_kg / d.liquid, conditions, options)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fluid::toy::ToyFluid;
    use crate::geometry::{Cylinder, Head, Orientation};

    fn tank(orientation: Orientation, head: Head) -> Tank<ToyFluid> {
        Tank::new(
            Cylinder::new(orientation, 2.0, 5.0, head).unwrap(),
            ToyFluid,
        )
    }

    /// DP -> contents -> DP returns the reading (algebraic identity), tolerance 1e-9 Pa.
    #[test]
    fn round_trip_level() {
        let opts = ContentsOptions::default();
        for orientation in [Orientation::Vertical, Orientation::Horizontal] {
            let t = tank(orientation, Head::ASME_FD).with_gauge(Gauge {
                zero_offset_pa: 120.0,
                accuracy: None,
            });
            let c =
                Conditions::saturated(800_000.0).with_liquid(LiquidState::SaturatedAtPressure {
                    pressure_pa: 300_000.0,
                });
            for i in 0..=10 {
                let h = t.geometry.inner_height_m() * f64::from(i) / 10.0;
                let dp = t.dp_from_level(h, &c).unwrap();
                let got = t.contents_from_reading(dp, &c, &opts).unwrap();
                assert!(
                    (got.liquid_height_m - h).abs() < 1e-12,
                    "{h} {}",
                    got.liquid_height_m
                );
                let back = t
                    .dp_from_liquid_mass(got.liquid_mass_kg, &c, &opts)
                    .unwrap();
                assert!((back - dp).abs() < 1e-9, "{back} {dp}");
            }
        }
    }

    /// Clamping within tolerance, errors beyond it (the documented rule).
    #[test]
    fn empty_and_full_limits() {
        let t = tank(Orientation::Vertical, Head::ELLIPSOIDAL_2_1);
        let c = Conditions::saturated(500_000.0);
        let opts = ContentsOptions::default();
        let full = t.full_tank_dp(&c, &opts).unwrap();
        let ok = t
            .contents_from_reading(full.reading_pa + 0.5 * full.tolerance_pa, &c, &opts)
            .unwrap();
        assert_eq!(ok.level_clamp, LevelClamp::Full);
        assert!((ok.fill_fraction - 1.0).abs() < 1e-15);
        assert!(matches!(
            t.contents_from_reading(full.limit_pa + 1.0, &c, &opts),
            Err(TankError::AboveFull { .. })
        ));
        let empty = t.dp_from_level(0.0, &c).unwrap();
        let near = t
            .contents_from_reading(empty - 0.5 * full.tolerance_pa, &c, &opts)
            .unwrap();
        assert_eq!(near.level_clamp, LevelClamp::Empty);
        assert_eq!(near.liquid_volume_m3, 0.0);
        assert!(matches!(
            t.contents_from_reading(empty - 1.5 * full.tolerance_pa, &c, &opts),
            Err(TankError::BelowEmpty { .. })
        ));
    }

    #[test]
    fn rejects_warm_liquid_and_high_saturation_pressure() {
        let t = tank(Orientation::Vertical, Head::Flat);
        let c = Conditions::saturated(500_000.0);
        let tsat = ToyFluid
            .saturation_at_pressure(500_000.0)
            .unwrap()
            .temperature_k;
        let warm = c.with_liquid(LiquidState::Temperature {
            temperature_k: tsat + 0.1,
        });
        assert!(matches!(
            t.contents_from_reading(1e4, &warm, &ContentsOptions::default()),
            Err(TankError::LiquidTooWarm { .. })
        ));
        let high = c.with_liquid(LiquidState::SaturatedAtPressure {
            pressure_pa: 600_000.0,
        });
        assert!(matches!(
            t.contents_from_reading(1e4, &high, &ContentsOptions::default()),
            Err(TankError::SaturationAboveTank { .. })
        ));
    }
}
