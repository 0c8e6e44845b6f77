//! The bridge between the store's records and the engines.
//!
//! The store knows what users entered; the engines know physics in SI. This crate turns a stored
//! [`store::Tank`] into an engine [`tank::Tank`] (geometry, fluid, gauge), a stored reading into
//! [`tank::Conditions`], and runs the contents engine over them. The binary and the app both use it, so
//! a reading means the same thing on the command line and in the window.
//!
//! ```
//! use store::{Store, TankFields, ReadingFields};
//! let mut s = Store::open_in_memory().unwrap();
//! let spec = TankFields { site: "Quarry Lane", tank: "QL-1", fluid: "nitrogen", orientation: "vertical",
//!     diameter_m: "2.0", length_m: "5.0", heads: "ellipsoidal", line_temperature_c: "15",
//!     ..Default::default() }.check().unwrap();
//! let id = s.add_tank(&spec).unwrap();
//! let t = s.tank(id).unwrap();
//! let r = ReadingFields { time: "2026-03-01T08:00:00Z", dp: "150", dp_unit: "inH2O", pressure: "10",
//!     pressure_unit: "barg", ..Default::default() }.check(t.barometer_pa).unwrap();
//! let c = ledger::contents_of(&t, &r).unwrap();
//! assert!(c.fill_fraction > 0.0 && c.fill_fraction < 1.0);
//! ```
#![deny(missing_docs)]

use fluids::{Fluid, FluidId, fluid};
use store::{FieldError, Heads, ReadingInput, TankSpec};
use tank::{
    AccuracyBasis, Conditions, Contents, ContentsOptions, Cylinder, Gauge, GaugeAccuracy, Geometry,
    Head, LiquidState, StrappingTable,
};
use units::AbsolutePressure;

/// Why a stored record could not be turned into engine inputs or evaluated.
#[derive(Debug, thiserror::Error)]
pub enum LedgerError {
    /// The contents engine refused.
    #[error("{0}")]
    Tank(#[from] tank::TankError),
    /// The fluid engine refused.
    #[error("{0}")]
    Fluid(#[from] fluids::FluidError),
}

/// The engine's name for a stored fluid.
pub fn fluid_id(f: store::Fluid) -> FluidId {
    match f {
        store::Fluid::Nitrogen => FluidId::Nitrogen,
        store::Fluid::Oxygen => FluidId::Oxygen,
        store::Fluid::Argon => FluidId::Argon,
        store::Fluid::CarbonDioxide => FluidId::CarbonDioxide,
        store::Fluid::Methane => FluidId::Methane,
        store::Fluid::Hydrogen => FluidId::Hydrogen,
        store::Fluid::Parahydrogen => FluidId::Parahydrogen,
    }
}

/// The engine's head shape for stored settings (ASME F&D ratios 1.0 and 0.06 unless set).
pub fn head(spec: &TankSpec) -> Head {
    match spec.heads {
        Heads::Flat => Head::Flat,
        Heads::Hemispherical => Head::Hemispherical,
        Heads::Ellipsoidal => Head::ELLIPSOIDAL_2_1,
        Heads::Torispherical => Head::Torispherical {
            crown_ratio: spec.crown_ratio.unwrap_or(1.0),
            knuckle_ratio: spec.knuckle_ratio.unwrap_or(0.06),
        },
    }
}

/// The vessel's shape: its strapping table when it has one, else the cylinder with its heads.
pub fn geometry(spec: &TankSpec) -> Result<Geometry, LedgerError> {
    if spec.strapping.len() >= 2 {
        let (levels, volumes) = spec.strapping.iter().copied().unzip();
        return Ok(StrappingTable::new(levels, volumes)?.into());
    }
    let orientation = match spec.orientation {
        store::Orientation::Vertical => tank::Orientation::Vertical,
        store::Orientation::Horizontal => tank::Orientation::Horizontal,
    };
    Ok(Cylinder::new(orientation, spec.diameter_m, spec.length_m, head(spec))?.into())
}

/// The gauge: its accuracy class as a percentage of span when both are set.
pub fn gauge(spec: &TankSpec) -> Result<Gauge, LedgerError> {
    let accuracy = match (spec.gauge_accuracy_percent, spec.gauge_span_pa()) {
        (Some(class), Some(span)) => Some(GaugeAccuracy::new(class, AccuracyBasis::Span(span))?),
        (Some(class), None) => Some(GaugeAccuracy::new(class, AccuracyBasis::Reading)?),
        _ => None,
    };
    Ok(Gauge {
        zero_offset_pa: 0.0,
        accuracy,
    })
}

/// The engine's tank for stored settings.
pub fn engine_tank(spec: &TankSpec) -> Result<tank::Tank<&'static Fluid>, LedgerError> {
    Ok(tank::Tank::new(geometry(spec)?, fluid(fluid_id(spec.fluid))).with_gauge(gauge(spec)?))
}

/// The absolute tank pressure of a reading, Pa, with the site's barometer.
pub fn pressure_abs_pa(t: &store::Tank, r: &ReadingInput) -> f64 {
    r.pressure
        .si()
        .to_absolute(AbsolutePressure::from_pa(t.barometer_pa))
        .pa()
}

/// The conditions of a reading: its pressure, a measured liquid temperature when given (else `liquid`),
/// and the tank's line temperature.
pub fn conditions(t: &store::Tank, r: &ReadingInput, liquid: LiquidState) -> Conditions {
    let liquid = match r.liquid_temperature_k {
        Some(k) => LiquidState::Temperature { temperature_k: k },
        None => liquid,
    };
    Conditions::saturated(pressure_abs_pa(t, r))
        .with_liquid(liquid)
        .with_line_temperature_k(t.spec.line_temperature_k())
}

/// Contents of a stored reading with the liquid saturated at the tank pressure (or at its measured
/// temperature).
pub fn contents_of(t: &store::Tank, r: &ReadingInput) -> Result<Contents, LedgerError> {
    let engine = engine_tank(&t.spec)?;
    let c = conditions(t, r, LiquidState::SaturatedAtTankPressure);
    Ok(engine.contents_from_reading(r.dp.si_value(), &c, &ContentsOptions::default())?)
}

/// The coldest liquid the importer accepts for a tank: saturated at one standard atmosphere (for
/// carbon dioxide, at its triple point), but never above the tank pressure. A colder, denser liquid
/// shows a larger full-tank DP, so this bounds what a healthy gauge can read.
fn coldest_liquid(f: &Fluid, pressure_pa: f64) -> LiquidState {
    let floor = f.triple().pressure_pa.max(units::STANDARD_ATMOSPHERE_PA) * 1.001;
    if pressure_pa > floor {
        LiquidState::SaturatedAtPressure { pressure_pa: floor }
    } else {
        LiquidState::SaturatedAtTankPressure
    }
}

/// The importer's physical check of a reading: its DP must not exceed what a full tank of the coldest
/// accepted liquid shows, beyond the gauge's tolerance.
pub fn check_reading_against_tank(t: &store::Tank, r: &ReadingInput) -> Result<(), FieldError> {
    let engine = engine_tank(&t.spec).map_err(|e| FieldError::new("tank", e.to_string()))?;
    let p = pressure_abs_pa(t, r);
    let liquid = coldest_liquid(fluid(fluid_id(t.spec.fluid)), p);
    let c = conditions(t, r, liquid);
    let full = match engine.full_tank_dp(&c, &ContentsOptions::default()) {
        Ok(f) => f,
        Err(tank::TankError::Fluid(e)) => return Err(FieldError::new("pressure", e.to_string())),
        Err(e) => return Err(FieldError::new("liquid_temperature_k", e.to_string())),
    };
    let dp = r.dp.si_value();
    if dp > full.limit_pa {
        let unit = r.dp.unit;
        use units::Unit;
        return Err(FieldError::new(
            "dp",
            format!(
                "{} is more than a full tank can show ({:.1} {} at this pressure, tolerance {:.1} {})",
                r.dp,
                unit.value_from_si(full.reading_pa),
                unit.symbol(),
                unit.value_from_si(full.tolerance_pa),
                unit.symbol()
            ),
        ));
    }
    Ok(())
}
