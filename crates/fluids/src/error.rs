//! The one error type of the crate.

use crate::{FluidId, Phase};

/// Formats a pressure for a message: "146 Pa", "12.5 kPa", "518 kPa", "3.40 MPa".
pub(crate) fn pressure_text(p_pa: f64) -> String {
    if !p_pa.is_finite() {
        return format!("{p_pa} Pa");
    }
    let (v, unit) = if p_pa.abs() >= 1e6 {
        (p_pa / 1e6, "MPa")
    } else if p_pa.abs() >= 1e3 {
        (p_pa / 1e3, "kPa")
    } else {
        (p_pa, "Pa")
    };
    // three significant figures, more when they matter to tell the limit from the asked value
    let digits = if v.abs() >= 100.0 {
        0
    } else if v.abs() >= 10.0 {
        1
    } else {
        2
    };
    format!("{v:.digits$} {unit}")
}

/// Formats a temperature for a message: "126.19 K".
pub(crate) fn temperature_text(t_k: f64) -> String {
    format!("{t_k:.2} K")
}

fn phase_absent_text(
    fluid: FluidId,
    asked: Phase,
    t_k: f64,
    p_pa: f64,
    t_sat: Option<f64>,
) -> String {
    let other = match asked {
        Phase::Liquid => "gas",
        Phase::Gas => "liquid",
    };
    let at = format!("{} and {}", temperature_text(t_k), pressure_text(p_pa));
    match t_sat {
        Some(ts) => format!(
            "{fluid} is not {asked} at {at}: it boils at {} at that pressure, so it is {other} there",
            temperature_text(ts)
        ),
        None => format!("{fluid} is not {asked} at {at}: it is {other} there"),
    }
}

/// Which input a limit applies to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// A temperature in K.
    Temperature,
    /// A pressure in Pa.
    Pressure,
    /// A density in kg/m³.
    Density,
    /// A specific enthalpy in J/kg.
    Enthalpy,
}

impl Quantity {
    fn word(self) -> &'static str {
        match self {
            Quantity::Temperature => "temperature",
            Quantity::Pressure => "pressure",
            Quantity::Density => "density",
            Quantity::Enthalpy => "specific enthalpy",
        }
    }
}

impl std::fmt::Display for Quantity {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.word())
    }
}

fn value_text(quantity: Quantity, v: f64) -> String {
    match quantity {
        Quantity::Temperature => temperature_text(v),
        Quantity::Pressure => pressure_text(v),
        Quantity::Density => format!("{v:.4} kg/m³"),
        Quantity::Enthalpy => format!("{:.3} kJ/kg", v / 1e3),
    }
}

/// Everything that can go wrong in this crate. Messages name the fluid, the limit and the asked value.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FluidError {
    /// An input was NaN or infinite.
    #[error("the {quantity} must be a finite number; got {value}")]
    NotFinite {
        /// Which input.
        quantity: Quantity,
        /// The value received.
        value: f64,
    },
    /// An input that must be positive (absolute temperature, absolute pressure, density) was not.
    #[error("the {quantity} must be above zero (absolute); got {value}")]
    NotPositive {
        /// Which input.
        quantity: Quantity,
        /// The value received.
        value: f64,
    },
    /// No liquid exists below the triple point (the fluid is solid or vapour there).
    #[error("{fluid} has no liquid below its triple-point {quantity} {}; asked {}",
        value_text(*.quantity, *.limit), value_text(*.quantity, *.asked))]
    BelowTriplePoint {
        /// The fluid.
        fluid: FluidId,
        /// Temperature or pressure.
        quantity: Quantity,
        /// The triple-point value.
        limit: f64,
        /// The asked value.
        asked: f64,
    },
    /// No liquid-vapour boundary exists above the critical point.
    #[error("{fluid} has no liquid-vapour boundary above its critical {quantity} {}; asked {}",
        value_text(*.quantity, *.limit), value_text(*.quantity, *.asked))]
    AboveCriticalPoint {
        /// The fluid.
        fluid: FluidId,
        /// Temperature or pressure.
        quantity: Quantity,
        /// The critical value.
        limit: f64,
        /// The asked value.
        asked: f64,
    },
    /// The input lies outside the range the equation of state was fitted to.
    #[error("{fluid}: {quantity} {} is outside the equation of state's range {} to {}",
        value_text(*.quantity, *.asked), value_text(*.quantity, *.min), value_text(*.quantity, *.max))]
    OutOfRange {
        /// The fluid.
        fluid: FluidId,
        /// Which input.
        quantity: Quantity,
        /// The asked value.
        asked: f64,
        /// Lowest accepted value.
        min: f64,
        /// Highest accepted value.
        max: f64,
    },
    /// The asked phase does not exist at this temperature and pressure.
    #[error("{}", phase_absent_text(*.fluid, *.asked, *.temperature_k, *.pressure_pa, *.saturation_temperature_k))]
    PhaseAbsent {
        /// The fluid.
        fluid: FluidId,
        /// The phase that was asked for.
        asked: Phase,
        /// Temperature asked, K.
        temperature_k: f64,
        /// Pressure asked, Pa.
        pressure_pa: f64,
        /// Saturation temperature at that pressure, K, when the pressure is on the saturation curve.
        saturation_temperature_k: Option<f64>,
    },
    /// An iterative solver did not converge.
    #[error(
        "{fluid}: the {what} did not converge in {iterations} iterations (residual {residual:.3e})"
    )]
    NotConverged {
        /// The fluid.
        fluid: FluidId,
        /// Which solver.
        what: &'static str,
        /// Iterations used.
        iterations: usize,
        /// Last residual.
        residual: f64,
    },
    /// A fluid name that is not one of [`FluidId::ALL`].
    #[error(
        "unknown fluid \"{name}\"; known: nitrogen, oxygen, argon, carbon-dioxide, methane, hydrogen, parahydrogen"
    )]
    UnknownFluid {
        /// The name given.
        name: String,
    },
}
