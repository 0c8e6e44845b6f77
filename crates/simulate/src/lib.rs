//! # simulate — a deterministic fleet of cryogenic bulk tanks
//!
//! [`simulate`] runs a physics forward model of a fleet from a [`FleetConfig`] (seeded: the same
//! config always gives the same [`Fleet`]) and [`Fleet::tanks_csv`], [`Fleet::readings_csv`] and
//! [`Fleet::deliveries_csv`] write it in the store's import formats.
//!
//! Each tank is stepped hourly:
//! - the customer draws liquid at a rate with a weekly and a daily pattern and day-to-day noise;
//! - the tank pressure sits in a control band and drops just after a top fill, recovering in hours;
//! - the liquid is warmed by a heat leak Q = NER × full-tank liquid mass × latent heat / 1 day, with a
//!   true NER that differs from the nameplate NER written to the tanks file, its enthalpy capped at
//!   saturation at the tank pressure (beyond that the heat boils liquid away, and the economiser
//!   sends that vapour to the customer first, so only what exceeds the draw is vented);
//! - when a daily check finds the liquid below the reorder level a trailer comes the next day; the
//!   delivered liquid (saturated at the trailer's pressure) mixes adiabatically, by enthalpy, with the
//!   liquid left in the tank; the ticket bills the trailer meter's figure, with meter noise;
//! - readings (daily, and just before and after each fill) go through the inverse gauge model
//!   ([`tank::Tank::dp_from_liquid_volume`]) with gauge noise and quantisation.
//!
//! Faults ([`Fault`]) can be planted: a vehicle delivering less than it bills, a gauge whose span
//! drifts, a gauge zero offset, deliveries nobody logged, a leak.
//!
//! ```
//! use simulate::{FleetConfig, Fault, simulate};
//! let config = FleetConfig { tanks: 2, days: 40, faults: vec![Fault::VehicleShort { vehicle: 0, fraction: 0.05 }],
//!     ..FleetConfig::default() };
//! let fleet = simulate(&config)?;
//! assert_eq!(fleet.tanks.len(), 2);
//! assert!(fleet.readings.len() >= 2 * 40);
//! assert!(fleet.tanks_csv().starts_with("site,tank,fluid"));
//! // deterministic
//! assert_eq!(simulate(&config)?.readings_csv(), fleet.readings_csv());
//! # Ok::<(), simulate::SimError>(())
//! ```
#![deny(missing_docs)]

mod build;
mod csv_out;
mod fleet;
mod forward;
mod rng;

pub use fleet::{
    Fault, Fleet, FleetConfig, Naming, SimDelivery, SimReading, SimTank, SimVehicle, simulate,
};
pub use rng::Rng;

/// Why a simulation failed.
#[derive(Debug, thiserror::Error)]
pub enum SimError {
    /// The contents engine refused a state.
    #[error("tank {tank}: {cause}")]
    Tank {
        /// The tank's name.
        tank: String,
        /// The engine's error.
        cause: tank::TankError,
    },
    /// The fluid engine refused a state.
    #[error("tank {tank}: {cause}")]
    Fluid {
        /// The tank's name.
        tank: String,
        /// The engine's error.
        cause: fluids::FluidError,
    },
    /// A configuration value is out of range.
    #[error("invalid configuration {name} = {value}: {reason}")]
    Config {
        /// The setting.
        name: &'static str,
        /// Its value.
        value: f64,
        /// Why it is refused.
        reason: &'static str,
    },
}
