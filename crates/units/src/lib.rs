//! Quantities with units for cryoledger.
//!
//! Engines compute in SI (Pa absolute, K, kg, m, m³). This crate is the edge where typed-in text such as
//! `12 barg`, `85 inH2O` or `-196 C` becomes a checked SI value, and where SI values are formatted back.
//!
//! The main types:
//! - [`AbsolutePressure`], [`GaugePressure`] and [`PressureDifference`] (a DP) are distinct types, so a
//!   gauge pressure can only become absolute through an explicit barometer
//!   ([`GaugePressure::to_absolute`]).
//! - [`TankPressure`] is what a user enters for a tank: either gauge or absolute, as the unit says.
//! - [`Length`], [`Temperature`] (absolute, never below 0 K), [`TemperatureDifference`], [`Mass`],
//!   [`GasVolume`] (normal or standard cubic metres / feet), and [`DeliveredQuantity`] (mass or gas volume).
//! - Each parser returns the value as entered ([`Entered`]: number and unit) so stores can keep both.
//!
//! ```
//! use units::{parse_tank_pressure, parse_dp, AbsolutePressure};
//! let p = parse_tank_pressure("12 barg").unwrap();
//! let abs = p.si().to_absolute(AbsolutePressure::STANDARD_ATMOSPHERE);
//! assert!((abs.pa() - 1_301_325.0).abs() < 1e-6);
//! let dp = parse_dp("85 inH2O").unwrap();
//! assert!((dp.si().pa() - 85.0 * 249.088_91).abs() < 1e-6);
//! assert!(parse_tank_pressure("12 bar").is_err()); // gauge or absolute? say which
//! ```
#![deny(missing_docs)]

mod factors;
mod instant;
mod parse;
mod quantity;
mod zone;

pub use factors::*;
pub use instant::{
    Civil, civil_from_ms, days_from_civil, ms_from_rfc3339, now_ms, rfc3339_from_ms,
};
pub use parse::{
    UnitError, parse_absolute_pressure, parse_delivered_quantity, parse_dp, parse_length,
    parse_mass, parse_tank_pressure, parse_temperature,
};
pub use quantity::*;
pub use zone::{LocalTimeError, Repeat, Zone};
