//! The crate's one error type.

use thiserror::Error;

/// Everything that can go wrong in the tank engine.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum TankError {
    /// A geometric or gauge parameter is outside its valid range.
    #[error("invalid parameter {name} = {value}: {reason}")]
    InvalidParameter {
        /// Parameter name (as in the API).
        name: &'static str,
        /// The value given.
        value: f64,
        /// Why it is rejected.
        reason: &'static str,
    },
    /// A name that is not one of the words this field takes.
    #[error("unknown {what} '{given}': expected one of {}", expected.join(", "))]
    UnknownName {
        /// Which word (e.g. "heads").
        what: &'static str,
        /// What was given.
        given: String,
        /// The accepted names.
        expected: &'static [&'static str],
    },
    /// A dimension outside the range a real tank has.
    #[error("{name} = {value} is outside the plausible range {low} to {high} for a bulk tank")]
    Implausible {
        /// Parameter name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// Smallest plausible value.
        low: f64,
        /// Largest plausible value.
        high: f64,
    },
    /// A liquid level outside the vessel, 0 ..= inner height.
    #[error("level {level_m} m is outside 0 ..= {height_m} m")]
    LevelOutOfRange {
        /// The level asked for.
        level_m: f64,
        /// The vessel's inner height.
        height_m: f64,
    },
    /// A liquid volume outside 0 ..= gross volume.
    #[error("volume {volume_m3} m³ is outside 0 ..= {gross_m3} m³")]
    VolumeOutOfRange {
        /// The volume asked for.
        volume_m3: f64,
        /// The vessel's gross volume.
        gross_m3: f64,
    },
    /// A strapping table that is not usable (too short, not increasing, ...).
    #[error("strapping table row {row}: {reason}")]
    StrappingTable {
        /// Zero-based row index.
        row: usize,
        /// What is wrong.
        reason: &'static str,
    },
    /// The DP is larger than a full tank can show, beyond the gauge's tolerance.
    #[error(
        "DP {dp_pa} Pa exceeds the full-tank DP {full_dp_pa} Pa by more than the tolerance {tolerance_pa} Pa"
    )]
    AboveFull {
        /// The zero-corrected DP.
        dp_pa: f64,
        /// What a full tank shows.
        full_dp_pa: f64,
        /// The gauge's tolerance.
        tolerance_pa: f64,
    },
    /// The DP is smaller than an empty tank shows, beyond the gauge's tolerance.
    #[error(
        "DP {dp_pa} Pa is below the empty-tank DP {empty_dp_pa} Pa by more than the tolerance {tolerance_pa} Pa"
    )]
    BelowEmpty {
        /// The zero-corrected DP.
        dp_pa: f64,
        /// What an empty tank shows (vapour and line heads only).
        empty_dp_pa: f64,
        /// The gauge's tolerance.
        tolerance_pa: f64,
    },
    /// A liquid temperature above saturation at the tank pressure.
    #[error(
        "liquid at {temperature_k} K is warmer than saturation {saturation_k} K at the tank pressure"
    )]
    LiquidTooWarm {
        /// The liquid temperature.
        temperature_k: f64,
        /// Saturation temperature at the tank pressure.
        saturation_k: f64,
    },
    /// A liquid saturation pressure above the tank pressure.
    #[error("liquid saturation pressure {saturation_pa} Pa exceeds the tank pressure {tank_pa} Pa")]
    SaturationAboveTank {
        /// The given saturation pressure.
        saturation_pa: f64,
        /// The tank pressure.
        tank_pa: f64,
    },
    /// The relief set pressure is not above the tank pressure.
    #[error("relief set pressure {relief_pa} Pa is below the tank pressure {tank_pa} Pa")]
    ReliefBelowTank {
        /// Relief set pressure, absolute.
        relief_pa: f64,
        /// Tank pressure, absolute.
        tank_pa: f64,
    },
    /// An iterative solver did not reach its tolerance.
    #[error("solver did not converge after {iterations} iterations (residual {residual})")]
    NotConverged {
        /// Iterations taken.
        iterations: usize,
        /// Last residual.
        residual: f64,
    },
    /// A fluid property could not be evaluated (out of range, no such phase, ...).
    #[error("fluid property: {0}")]
    Fluid(fluids::FluidError),
}

// The fluid's error is part of this one's message, not a separate cause, so it is printed once.
impl From<fluids::FluidError> for TankError {
    fn from(e: fluids::FluidError) -> Self {
        TankError::Fluid(e)
    }
}

/// Shorthand for results of this crate.
pub type Result<T, E = TankError> = std::result::Result<T, E>;

/// Reject a non-finite or non-positive parameter.
pub(crate) fn positive(name: &'static str, value: f64) -> Result<f64> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(TankError::InvalidParameter {
            name,
            value,
            reason: "must be finite and > 0",
        })
    }
}

/// Reject a non-finite or negative parameter.
pub(crate) fn non_negative(name: &'static str, value: f64) -> Result<f64> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(TankError::InvalidParameter {
            name,
            value,
            reason: "must be finite and >= 0",
        })
    }
}
