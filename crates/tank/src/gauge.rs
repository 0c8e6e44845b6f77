//! The DP gauge: units of its dial, the site barometer, and its accuracy.

use serde::{Deserialize, Serialize};

use crate::error::{Result, TankError, non_negative};

/// Standard acceleration of gravity, m/s² (CGPM 1901; ISO 80000-3).
pub const STANDARD_GRAVITY: f64 = 9.80665;

/// Standard atmosphere at sea level, Pa (ICAO Doc 7488).
pub const STANDARD_ATMOSPHERE_PA: f64 = 101_325.0;

/// Units a DP gauge is read in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DpUnit {
    /// Pascal.
    Pa,
    /// Kilopascal.
    KPa,
    /// Millibar (100 Pa).
    MBar,
    /// Conventional millimetre of water, 9.80665 Pa.
    MmH2O,
    /// Conventional inch of water: 1000 kg/m³ × 0.0254 m × g = 249.08891 Pa.
    InH2O,
    /// Inch of water at 60 °F, 248.84 Pa (NIST SP 811, Appendix B).
    InH2O60F,
    /// Inch of water at 4 °C (39.2 °F), 249.082 Pa (NIST SP 811, Appendix B).
    InH2O4C,
    /// Pound-force per square inch, 6894.757 Pa (0.45359237 kg × g / 0.0254² m²).
    Psi,
}

impl DpUnit {
    /// Every unit, for listings.
    pub const ALL: [DpUnit; 8] = [
        DpUnit::Pa,
        DpUnit::KPa,
        DpUnit::MBar,
        DpUnit::MmH2O,
        DpUnit::InH2O,
        DpUnit::InH2O60F,
        DpUnit::InH2O4C,
        DpUnit::Psi,
    ];

    /// Pascals in one unit.
    pub fn pa_per_unit(self) -> f64 {
        match self {
            DpUnit::Pa => 1.0,
            DpUnit::KPa => 1000.0,
            DpUnit::MBar => 100.0,
            DpUnit::MmH2O => 1000.0 * 0.001 * STANDARD_GRAVITY,
            DpUnit::InH2O => 1000.0 * 0.0254 * STANDARD_GRAVITY,
            DpUnit::InH2O60F => 248.84,
            DpUnit::InH2O4C => 249.082,
            DpUnit::Psi => 0.453_592_37 * STANDARD_GRAVITY / (0.0254 * 0.0254),
        }
    }

    /// The unit's symbol as printed and parsed ("inH2O", "inH2O@60F", ...).
    pub fn symbol(self) -> &'static str {
        match self {
            DpUnit::Pa => "Pa",
            DpUnit::KPa => "kPa",
            DpUnit::MBar => "mbar",
            DpUnit::MmH2O => "mmH2O",
            DpUnit::InH2O => "inH2O",
            DpUnit::InH2O60F => "inH2O@60F",
            DpUnit::InH2O4C => "inH2O@4C",
            DpUnit::Psi => "psi",
        }
    }

    /// The unit with this symbol (as [`DpUnit::symbol`]; case-sensitive).
    pub fn from_symbol(symbol: &str) -> Option<DpUnit> {
        DpUnit::ALL.into_iter().find(|u| u.symbol() == symbol)
    }
}

/// A DP in Pa from a value in `unit`.
pub fn dp_pa_from_unit(value: f64, unit: DpUnit) -> f64 {
    value * unit.pa_per_unit()
}

/// A DP in `unit` from Pa.
pub fn dp_unit_from_pa(dp_pa: f64, unit: DpUnit) -> f64 {
    dp_pa / unit.pa_per_unit()
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
    const T0: f64 = 288.15;
    const LAPSE: f64 = 0.0065;
    const M: f64 = 0.028_964_4;
    const R_STAR: f64 = 8.314_32;
    const R0: f64 = 6_356_766.0;
    let exponent = STANDARD_GRAVITY * M / (R_STAR * LAPSE);
    let geopotential_m = R0 * elevation_m / (R0 + elevation_m);
    Ok(STANDARD_ATMOSPHERE_PA * (1.0 - LAPSE * geopotential_m / T0).powf(exponent))
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

    /// Conversion factors: NIST SP 811 (2008), Appendix B.8: inch of water (39.2 °F) 249.082 Pa,
    /// inch of water (60 °F) 248.84 Pa, psi 6894.757 Pa; conventional mmH2O 9.80665 Pa.
    #[test]
    fn dp_units() {
        assert!((DpUnit::InH2O.pa_per_unit() - 249.088_91).abs() < 1e-9);
        assert!((DpUnit::Psi.pa_per_unit() - 6894.757).abs() < 5e-4);
        assert!((DpUnit::MmH2O.pa_per_unit() - 9.806_65).abs() < 1e-12);
        assert!((dp_pa_from_unit(85.0, DpUnit::InH2O) - 85.0 * 249.088_91).abs() < 1e-9);
        for u in DpUnit::ALL {
            assert_eq!(DpUnit::from_symbol(u.symbol()), Some(u));
            assert!((dp_unit_from_pa(dp_pa_from_unit(3.7, u), u) - 3.7).abs() < 1e-12);
        }
    }

    /// U.S. Standard Atmosphere 1976 (identical to ICAO below 32 km) by geometric altitude; values
    /// recalled from memory: 1000 m 8.9876e4 Pa, 2000 m 7.9501e4 Pa, 5000 m 5.4048e4 Pa;
    /// tolerance 10 Pa (the table's rounding is 5 Pa).
    #[test]
    fn icao_barometer() {
        assert!((barometer_pa_from_elevation(0.0).unwrap() - 101_325.0).abs() < 1e-9);
        for (z, p) in [(1000.0, 89_876.0), (2000.0, 79_501.0), (5000.0, 54_048.0)] {
            let got = barometer_pa_from_elevation(z).unwrap();
            assert!((got - p).abs() < 10.0, "{z} m: {got}");
        }
        assert!(barometer_pa_from_elevation(20_000.0).is_err());
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
