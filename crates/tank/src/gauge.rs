//! The DP gauge: units of its dial, the site barometer, and its accuracy.

use serde::{Deserialize, Serialize};

use crate::error::{Result, TankError, non_negative};

/// Standard acceleration of gravity, m/s² (CGPM 1901; ISO 80000-3).
pub const STANDARD_GRAVITY: f64 = 9.80665;

/// Standard atmosphere at sea level, Pa (ICAO Doc 7488).
pub use units::STANDARD_ATMOSPHERE_PA;

/// Units a DP gauge is read in (the workspace's one definition, from `units`).
pub use units::DpUnit;
use units::Unit;

/// A DP in Pa from a value in `unit`.
pub fn dp_pa_from_unit(value: f64, unit: DpUnit) -> f64 {
    unit.si_from_value(value)
}

/// A DP in `unit` from Pa.
pub fn dp_unit_from_pa(dp_pa: f64, unit: DpUnit) -> f64 {
    unit.value_from_si(dp_pa)
}

/// Barometric pressure of the ICAO standard atmosphere at a site elevation (geometric, m above
/// mean sea level; ICAO Doc 7488, troposphere, −5 km ..= 11 km): the elevation becomes the
/// geopotential altitude H = r0 z / (r0 + z), r0 = 6 356 766 m, then
/// p = p0 (1 − L H / T0)^(g0 M / (R* L)), with T0 = 288.15 K, L = 0.0065 K/m,
/// M = 0.0289644 kg/mol, R* = 8.31432 J/(mol K).
pub fn barometer_pa_from_elevation(elevation_m: f64) -> Result<f64> {
    if !(elevation_m.is_finite() && (-5000.0..=11_000.0).contains(&elevation_m)) {
        return Err(TankError::InvalidParameter {
            name: "elevation_m",
            value: elevation_m,
            reason: "outside the troposphere, -5 km ..= 11 km",
        });
    }
    Ok(units::icao_barometer_from_elevation(elevation_m).pa())
}

/// Where the site's barometric pressure comes from.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Barometer {
    /// 101.325 kPa (the default).
    #[default]
    Standard,
    /// The ICAO standard atmosphere at the site elevation, m.
    Elevation(f64),
    /// An entered value, Pa.
    Entered(f64),
}

impl Barometer {
    /// The barometric pressure, Pa.
    pub fn pressure_pa(&self) -> Result<f64> {
        match *self {
            Barometer::Standard => Ok(STANDARD_ATMOSPHERE_PA),
            Barometer::Elevation(z) => barometer_pa_from_elevation(z),
            Barometer::Entered(p) => crate::error::positive("barometer_pa", p),
        }
    }

    /// Absolute pressure from a gauge reading, Pa.
    pub fn absolute_from_gauge_pa(&self, gauge_pa: f64) -> Result<f64> {
        Ok(gauge_pa + self.pressure_pa()?)
    }
}

/// What the accuracy class of a DP gauge is a percentage of.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum AccuracyBasis {
    /// Percent of the calibrated span (Pa); an absolute error, the same at every reading.
    Span(f64),
    /// Percent of the reading; a proportional (span) error.
    Reading,
}

/// The accuracy of a DP gauge, split into parts that are common to all readings of the gauge
/// (its zero and span error, which cancel or scale in a difference of two readings) and parts
/// that differ from reading to reading (noise, resolution, hysteresis).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GaugeAccuracy {
    /// Accuracy class: the largest permissible error, in percent of the basis.
    pub class_percent: f64,
    /// What the percentage refers to.
    pub basis: AccuracyBasis,
    /// Share (0 ..= 1) of the class variance that is systematic for this gauge (zero error for a
    /// span basis, span error for a reading basis); the rest varies between readings. Default 0.5:
    /// common practice, no source — set it from the gauge's calibration history when known.
    pub systematic_share: f64,
}

impl GaugeAccuracy {
    /// A class limit treated as the half-width of a rectangular distribution (JCGM 100:2008, 4.3.7).
    pub fn new(class_percent: f64, basis: AccuracyBasis) -> Result<Self> {
        non_negative("class_percent", class_percent)?;
        if let AccuracyBasis::Span(span) = basis {
            crate::error::positive("span_pa", span)?;
        }
        Ok(GaugeAccuracy {
            class_percent,
            basis,
            systematic_share: 0.5,
        })
    }

    /// The same accuracy with another systematic share.
    pub fn with_systematic_share(mut self, share: f64) -> Result<Self> {
        if !(share.is_finite() && (0.0..=1.0).contains(&share)) {
            return Err(TankError::InvalidParameter {
                name: "systematic_share",
                value: share,
                reason: "must be in 0 ..= 1",
            });
        }
        self.systematic_share = share;
        Ok(self)
    }

    /// The class limit (largest permissible error) at a reading, Pa.
    pub fn limit_pa(&self, dp_pa: f64) -> f64 {
        let base = match self.basis {
            AccuracyBasis::Span(span) => span,
            AccuracyBasis::Reading => dp_pa.abs(),
        };
        self.class_percent / 100.0 * base
    }

    /// Standard uncertainty of a reading, Pa: the limit over √3 (rectangular distribution).
    pub fn standard_uncertainty_pa(&self, dp_pa: f64) -> f64 {
        self.limit_pa(dp_pa) / 3f64.sqrt()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The wrappers round-trip every unit (the factors themselves are checked against NIST SP 811 in
    /// the `units` crate).
    #[test]
    fn dp_units_round_trip() {
        assert!((dp_pa_from_unit(85.0, DpUnit::InH2O) - 85.0 * 249.088_91).abs() < 1e-9);
        for &u in DpUnit::ALL {
            assert!((dp_unit_from_pa(dp_pa_from_unit(3.7, u), u) - 3.7).abs() < 1e-12);
        }
    }

    /// The barometer from an elevation is the units crate's standard atmosphere (checked against its
    /// table there), refused outside the troposphere (common practice, no source).
    #[test]
    fn icao_barometer() {
        assert_eq!(
            barometer_pa_from_elevation(1000.0).ok(),
            Some(units::icao_barometer_from_elevation(1000.0).pa())
        );
        assert!(barometer_pa_from_elevation(20_000.0).is_err());
        assert!(barometer_pa_from_elevation(f64::NAN).is_err());
    }

    /// Class 1 % of span 25 kPa: limit 250 Pa, u = 250/√3 = 144.34 Pa (JCGM 100:2008 4.3.7).
    #[test]
    fn accuracy_class() {
        let a = GaugeAccuracy::new(1.0, AccuracyBasis::Span(25_000.0)).unwrap();
        assert!((a.limit_pa(10.0) - 250.0).abs() < 1e-9);
        assert!((a.standard_uncertainty_pa(10.0) - 144.337_567).abs() < 1e-5);
        let r = GaugeAccuracy::new(2.0, AccuracyBasis::Reading).unwrap();
        assert!((r.limit_pa(-5000.0) - 100.0).abs() < 1e-9);
        assert!(r.with_systematic_share(1.5).is_err());
    }
}
