//! The importer's physical check of a reading: no DP beyond what a full tank can show.

use crate::engine::{conditions, engine_tank, geometry, pressure_abs_pa};
use fluids::{Fluid, fluid};
use store::{FieldError, ReadingEntry, TankId, TankRecord};
use tank::{ContentsOptions, LiquidState};
use units::AbsolutePressure;

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
pub fn check_reading_against_tank(t: &TankRecord, r: &ReadingEntry) -> Result<(), FieldError> {
    let engine = engine_tank(&t.spec).map_err(|e| FieldError::new("tank", e.to_string()))?;
    let p = pressure_abs_pa(t, r);
    let liquid = coldest_liquid(fluid(t.spec.fluid), p);
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
    bounds: std::sync::Mutex<std::collections::HashMap<TankId, Option<QuickBound>>>,
}

impl ReadingChecker {
    /// A checker with no tanks prepared yet.
    pub fn new() -> Self {
        Self::default()
    }

    fn bound(t: &TankRecord) -> Option<QuickBound> {
        let f = fluid(t.spec.fluid);
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
    pub fn check(&self, t: &TankRecord, r: &ReadingEntry) -> Result<(), FieldError> {
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
    use store::{ReadingFields, Repository, Store, TankFields};

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
