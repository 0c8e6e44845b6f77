//! # tank — the contents engine
//!
//! Turns a differential-pressure (DP) reading of a cryogenic bulk tank into its true contents,
//! with a GUM uncertainty. All quantities are SI: Pa absolute, K, kg, m, m³.
//!
//! Main types:
//! - [`Cylinder`] (vertical or horizontal, flat / hemispherical / ellipsoidal / torispherical
//!   heads) and [`StrappingTable`] (monotone cubic), both as a [`Geometry`]:
//!   [`Geometry::volume_from_level`], [`Geometry::level_from_volume`].
//! - [`Tank`]: geometry + fluid ([`FluidProperties`], implemented for `fluids::Fluid`) + [`Gauge`].
//!   [`Tank::contents_from_reading`] gives [`Contents`]; [`Tank::dp_from_level`] and
//!   [`Tank::dp_from_liquid_mass`] go back; [`Tank::full_tank_dp`] bounds valid readings.
//! - [`Tank::contents_with_uncertainty`] gives an [`UncertaintyBudget`];
//!   [`Tank::difference_uncertainty`] the uncertainty of a change between two readings.
//! - [`Tank::safe_fill_limit`] with the [`CAUTIONS`] to show beside it;
//!   [`Tank::chart_comparison`] against a fixed one-density chart.
//! - Gauge units [`DpUnit`] and the site [`Barometer`] (ICAO standard atmosphere).
//!
//! The physics: DP = g [(rho_L − rho_V) h + (rho_V − rho_line) H], with `h` the liquid height
//! above the bottom tap and `H` the inner height (distance between the taps).
//!
//! ```
//! use fluids::{FluidId, fluid};
//! use tank::{
//!     AccuracyBasis, Barometer, Conditions, ContentsOptions, Cylinder, DpUnit, Gauge, GaugeAccuracy, Head,
//!     LiquidState, Orientation, Tank, UncertaintyInputs, dp_pa_from_unit,
//! };
//!
//! // A horizontal tank, 2.4 m inside diameter, 9 m tangent to tangent, ASME F&D heads, of nitrogen.
//! let vessel = Cylinder::new(Orientation::Horizontal, 2.4, 9.0, Head::ASME_FD)?;
//! let gauge = Gauge { zero_offset_pa: 0.0, accuracy: Some(GaugeAccuracy::new(2.0, AccuracyBasis::Span(25e3))?) };
//! let tank = Tank::new(vessel, fluid(FluidId::Nitrogen)).with_gauge(gauge);
//!
//! // 40 inH2O at 8 barg, liquid still at the saturation temperature of 3 bar abs.
//! let p = Barometer::Elevation(300.0).absolute_from_gauge_pa(8e5)?;
//! let conditions = Conditions::saturated(p).with_liquid(LiquidState::SaturatedAtPressure { pressure_pa: 3e5 });
//! let dp = dp_pa_from_unit(40.0, DpUnit::InH2O);
//! let opts = ContentsOptions::default();
//! let c = tank.contents_from_reading(dp, &conditions, &opts)?;
//! assert!(c.fill_fraction > 0.3 && c.fill_fraction < 0.6);
//! assert!((c.liquid_mass_kg + c.vapour_mass_kg - c.total_mass_kg).abs() < 1e-9);
//!
//! // The same reading with its GUM uncertainty; and back from contents to the DP.
//! let inputs = UncertaintyInputs { pressure_u_pa: 5e3, liquid_state_u: 5e4, ..Default::default() };
//! let (c, budget) = tank.contents_with_uncertainty(dp, &conditions, &inputs, &opts)?;
//! assert!(c.total_mass_u_kg.unwrap() > 0.0 && !budget.entries.is_empty());
//! let back = tank.dp_from_liquid_mass(c.liquid_mass_kg, &conditions, &opts)?;
//! assert!((back - dp).abs() < 1e-6);
//! # Ok::<(), tank::TankError>(())
//! ```
#![deny(missing_docs)]

mod chart;
mod contents;
mod error;
mod fluid;
mod gauge;
mod geometry;
mod quadrature;
mod safe_fill;
mod strapping;
mod uncertainty;
mod vocabulary;

pub use chart::ChartComparison;
pub use contents::{
    CUBIC_FOOT_M3, Conditions, Contents, ContentsOptions, DEFAULT_LINE_TEMPERATURE_K, FullTankDp,
    Gauge, LevelClamp, LiquidState, Tank,
};
pub use error::{Result, TankError};
pub use fluid::{FluidProperties, SaturationPoint};
pub use gauge::{
    AccuracyBasis, Barometer, DpUnit, GaugeAccuracy, STANDARD_ATMOSPHERE_PA, STANDARD_GRAVITY,
    barometer_pa_from_elevation, dp_pa_from_unit, dp_unit_from_pa,
};
pub use geometry::{Cylinder, CylinderSpec, Geometry, Head, SolverOptions};
pub use safe_fill::{CAUTIONS, DEFAULT_VAPOUR_FRACTION, SafeFill};
pub use strapping::{StrappingSpec, StrappingTable};
pub use uncertainty::{
    BudgetEntry, DifferenceUncertainty, InputDeviations, InputQuantity, OutputSet,
    UncertaintyBudget, UncertaintyInputs, difference_uncertainty,
};
pub use vocabulary::{
    HeadShape, Orientation, PLAUSIBLE_DIAMETER_M, PLAUSIBLE_LENGTH_M, check_plausible,
};
