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
/// accepted liquid shows, beyond the gauge's tolerance. [`ReadingChecker`] gives the same answers faster
/// for many readings.
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

/// Per-tank bound below which a DP is certainly possible, so that only readings near or above a full
/// tank need the full calculation.
#[derive(Debug, Clone, Copy)]
struct QuickBound {
    /// Readings with a tank pressure up to this (Pa absolute) may use the bound.
    pressure_max_pa: f64,
    /// DPs up to this (Pa) are at most what a full tank shows at any such pressure.
    dp_pa: f64,
}

/// [`check_reading_against_tank`] for a stream of readings (the importer's hot loop): a reading whose
/// DP is below a per-tank lower bound of the full-tank DP passes at once; the others get the full check.
///
/// The bound holds for readings without a measured temperature and with a pressure up to
/// `pressure_max_pa`: the full-tank DP is g H (rho_L - rho_line) plus a non-negative tolerance; the
/// coldest accepted liquid compressed to any tank pressure is at least as dense as saturated liquid at its
/// temperature, and the line gas is densest at the highest pressure.
#[derive(Debug, Default)]
pub struct ReadingChecker {
    bounds: std::sync::Mutex<std::collections::HashMap<i64, Option<QuickBound>>>,
}

impl ReadingChecker {
    /// A checker with no tanks prepared yet.
    pub fn new() -> Self {
        Self::default()
    }

    fn bound(t: &store::Tank) -> Option<QuickBound> {
        let f = fluid(fluid_id(t.spec.fluid));
        let geometry = geometry(&t.spec).ok()?;
        let relief_abs = t.spec.relief_pressure.map(|e| {
            e.si()
                .to_absolute(AbsolutePressure::from_pa(t.barometer_pa))
                .pa()
        });
        // Cover every ordinary reading: up to 1.5 times the relief setting, and at least 40 bar.
        let pressure_max_pa = relief_abs
            .map_or(40e5, |r| (1.5 * r).max(40e5))
            .min(f.critical().pressure_pa * 0.999);
        let floor = f.triple().pressure_pa.max(units::STANDARD_ATMOSPHERE_PA) * 1.001;
        let rho_liquid = f.saturation_from_pressure(floor).ok()?.liquid_density_kg_m3;
        let rho_line = f
            .density_from_temperature_pressure(
                t.spec.line_temperature_k(),
                pressure_max_pa,
                fluids::Phase::Gas,
            )
            .ok()?;
        let dp_pa = tank::STANDARD_GRAVITY * geometry.inner_height_m() * (rho_liquid - rho_line);
        (dp_pa > 0.0).then_some(QuickBound {
            pressure_max_pa,
            dp_pa,
        })
    }

    /// The same verdict as [`check_reading_against_tank`].
    pub fn check(&self, t: &store::Tank, r: &ReadingInput) -> Result<(), FieldError> {
        if r.liquid_temperature_k.is_none() {
            let bound = match self.bounds.lock() {
                Ok(mut cache) => *cache.entry(t.id).or_insert_with(|| Self::bound(t)),
                Err(_) => None,
            };
            if let Some(b) = bound
                && r.dp.si_value() <= b.dp_pa
                && pressure_abs_pa(t, r) <= b.pressure_max_pa
            {
                return Ok(());
            }
        }
        check_reading_against_tank(t, r)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use store::{ReadingFields, Store, TankFields};

    /// The quick path agrees with the full check on DPs from empty to beyond full, at pressures from
    /// vacuum-near to far above relief (the full check is the reference; common practice, no source).
    #[test]
    fn quick_check_agrees_with_the_full_check() {
        let mut s = Store::open_in_memory().unwrap();
        for (name, fluid, relief) in [
            ("A", "nitrogen", "17 barg"),
            ("B", "carbon-dioxide", "24 barg"),
            ("C", "argon", ""),
        ] {
            let (rv, ru) = relief.split_once(' ').unwrap_or(("", ""));
            let spec = TankFields {
                site: "S",
                tank: name,
                fluid,
                orientation: "horizontal",
                diameter_m: "2.2",
                length_m: "7",
                heads: "torispherical",
                line_temperature_c: "15",
                relief_pressure: rv,
                relief_pressure_unit: ru,
                ..Default::default()
            }
            .check()
            .unwrap();
            s.add_tank(&spec).unwrap();
        }
        let checker = ReadingChecker::new();
        let mut agreed = 0;
        for t in s.tanks().unwrap() {
            for dp in (0..=120).map(|i| f64::from(i) * 1.5) {
                for p in ["6 bara", "12 barg", "21 barg", "60 bara"] {
                    let (pv, pu) = p.split_once(' ').unwrap();
                    let dp_text = dp.to_string();
                    let r = ReadingFields {
                        time: "2026-01-01T00:00:00Z",
                        dp: &dp_text,
                        dp_unit: "kPa",
                        pressure: pv,
                        pressure_unit: pu,
                        ..Default::default()
                    }
                    .check(t.barometer_pa)
                    .unwrap();
                    assert_eq!(
                        checker.check(&t, &r).is_ok(),
                        check_reading_against_tank(&t, &r).is_ok(),
                        "{} {dp} kPa {p}",
                        t.spec.name
                    );
                    agreed += 1;
                }
            }
        }
        assert_eq!(agreed, 3 * 121 * 4);
    }
}
