//! Quantity types (SI inside) and the units a user may enter them in.

use crate::factors::*;
use serde::{Deserialize, Serialize};
use std::fmt;

/// A unit of some quantity: how to turn a number in it into SI and back, and how to write it.
pub trait Unit: Copy + fmt::Debug + PartialEq + 'static {
    /// Every unit of this kind, in the order they are offered to users.
    const ALL: &'static [Self];
    /// Canonical symbol, as written in CSV files and on screen (parses back to the same unit).
    fn symbol(self) -> &'static str;
    /// SI value of `value` given in this unit.
    fn si_from_value(self, value: f64) -> f64;
    /// Value in this unit of the SI value `si`.
    fn value_from_si(self, si: f64) -> f64;
}

/// A number with the unit it was entered in, kept so stores can record what the user typed.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Entered<U: Unit> {
    /// The number as entered.
    pub value: f64,
    /// The unit it was entered in.
    pub unit: U,
}

impl<U: Unit> Entered<U> {
    /// The entered value converted to SI.
    pub fn si_value(&self) -> f64 {
        self.unit.si_from_value(self.value)
    }
}

impl<U: Unit> fmt::Display for Entered<U> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.value, self.unit.symbol())
    }
}

macro_rules! unit_enum {
    ($(#[$doc:meta])* $name:ident { $($(#[$vdoc:meta])* $var:ident => $sym:literal, to_si: $to:expr, value_from_si: $from:expr;)+ }) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
        pub enum $name { $($(#[$vdoc])* $var,)+ }
        impl Unit for $name {
            const ALL: &'static [Self] = &[$($name::$var,)+];
            fn symbol(self) -> &'static str { match self { $($name::$var => $sym,)+ } }
            fn si_from_value(self, value: f64) -> f64 {
                match self { $($name::$var => { let f: fn(f64) -> f64 = $to; f(value) })+ }
            }
            fn value_from_si(self, si: f64) -> f64 {
                match self { $($name::$var => { let f: fn(f64) -> f64 = $from; f(si) })+ }
            }
        }
        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result { f.write_str(self.symbol()) }
        }
    };
}

unit_enum! {
    /// Units of a tank pressure: the reference (gauge or absolute) is part of the unit.
    TankPressureUnit {
        /// bar above the local atmosphere.
        Barg => "barg", to_si: |v| v * BAR_PA, value_from_si: |p| p / BAR_PA;
        /// bar absolute.
        Bara => "bara", to_si: |v| v * BAR_PA, value_from_si: |p| p / BAR_PA;
        /// psi above the local atmosphere.
        Psig => "psig", to_si: |v| v * PSI_PA, value_from_si: |p| p / PSI_PA;
        /// psi absolute.
        Psia => "psia", to_si: |v| v * PSI_PA, value_from_si: |p| p / PSI_PA;
        /// kPa above the local atmosphere.
        KPag => "kPag", to_si: |v| v * 1e3, value_from_si: |p| p / 1e3;
        /// kPa absolute.
        KPa => "kPa", to_si: |v| v * 1e3, value_from_si: |p| p / 1e3;
        /// MPa above the local atmosphere.
        MPag => "MPag", to_si: |v| v * 1e6, value_from_si: |p| p / 1e6;
        /// MPa absolute.
        MPa => "MPa", to_si: |v| v * 1e6, value_from_si: |p| p / 1e6;
        /// Pa absolute.
        Pa => "Pa", to_si: |v| v, value_from_si: |p| p;
    }
}

impl TankPressureUnit {
    /// True when values in this unit are measured above the local atmosphere.
    pub fn is_gauge(self) -> bool {
        matches!(self, Self::Barg | Self::Psig | Self::KPag | Self::MPag)
    }
}

unit_enum! {
    /// Units of a pressure difference (a DP gauge's reading).
    DpUnit {
        /// The conventional inch of water (249.088 91 Pa).
        InH2O => "inH2O", to_si: |v| v * INCH_WATER_CONVENTIONAL_PA, value_from_si: |p| p / INCH_WATER_CONVENTIONAL_PA;
        /// The inch of water at 60 °F (248.84 Pa).
        InH2O60F => "inH2O@60F", to_si: |v| v * INCH_WATER_60F_PA, value_from_si: |p| p / INCH_WATER_60F_PA;
        /// The inch of water at 4 °C (249.082 Pa).
        InH2O4C => "inH2O@4C", to_si: |v| v * INCH_WATER_4C_PA, value_from_si: |p| p / INCH_WATER_4C_PA;
        /// The conventional millimetre of water (9.806 65 Pa).
        MmH2O => "mmH2O", to_si: |v| v * MM_WATER_CONVENTIONAL_PA, value_from_si: |p| p / MM_WATER_CONVENTIONAL_PA;
        /// Pascal.
        Pa => "Pa", to_si: |v| v, value_from_si: |p| p;
        /// Kilopascal.
        KPa => "kPa", to_si: |v| v * 1e3, value_from_si: |p| p / 1e3;
        /// Millibar (100 Pa).
        Mbar => "mbar", to_si: |v| v * 100.0, value_from_si: |p| p / 100.0;
        /// Bar.
        Bar => "bar", to_si: |v| v * BAR_PA, value_from_si: |p| p / BAR_PA;
        /// Pound-force per square inch.
        Psi => "psi", to_si: |v| v * PSI_PA, value_from_si: |p| p / PSI_PA;
    }
}

unit_enum! {
    /// Units of length.
    LengthUnit {
        /// Metre.
        M => "m", to_si: |v| v, value_from_si: |m| m;
        /// Millimetre.
        Mm => "mm", to_si: |v| v * 1e-3, value_from_si: |m| m * 1e3;
        /// Centimetre.
        Cm => "cm", to_si: |v| v * 1e-2, value_from_si: |m| m * 1e2;
        /// International inch.
        In => "in", to_si: |v| v * INCH_M, value_from_si: |m| m / INCH_M;
        /// International foot.
        Ft => "ft", to_si: |v| v * FOOT_M, value_from_si: |m| m / FOOT_M;
    }
}

unit_enum! {
    /// Units of (absolute) temperature.
    TemperatureUnit {
        /// Kelvin.
        K => "K", to_si: |v| v, value_from_si: |k| k;
        /// Degree Celsius.
        C => "C", to_si: |v| v + CELSIUS_ZERO_K, value_from_si: |k| k - CELSIUS_ZERO_K;
        /// Degree Fahrenheit.
        F => "F", to_si: |v| (v - 32.0) * 5.0 / 9.0 + CELSIUS_ZERO_K, value_from_si: |k| (k - CELSIUS_ZERO_K) * 9.0 / 5.0 + 32.0;
    }
}

unit_enum! {
    /// Units of mass.
    MassUnit {
        /// Kilogram.
        Kg => "kg", to_si: |v| v, value_from_si: |m| m;
        /// Avoirdupois pound.
        Lb => "lb", to_si: |v| v * POUND_KG, value_from_si: |m| m / POUND_KG;
        /// Metric tonne.
        T => "t", to_si: |v| v * TONNE_KG, value_from_si: |m| m / TONNE_KG;
    }
}

unit_enum! {
    /// Units of a gas quantity expressed as a volume at reference conditions. The SI value is m³ at the
    /// unit's own reference conditions (see [`GasBasis`]).
    GasVolumeUnit {
        /// Normal cubic metre: 0 °C, 101.325 kPa.
        Nm3 => "Nm3", to_si: |v| v, value_from_si: |m3| m3;
        /// Standard cubic foot: 70 °F, 14.696 psia.
        Scf => "scf", to_si: |v| v * CUBIC_FOOT_M3, value_from_si: |m3| m3 / CUBIC_FOOT_M3;
    }
}

impl GasVolumeUnit {
    /// The reference conditions of this unit.
    pub fn basis(self) -> GasBasis {
        match self {
            Self::Nm3 => GasBasis::Normal,
            Self::Scf => GasBasis::Standard,
        }
    }
}

/// The unit of a delivered quantity: a mass (scale ticket, mass meter) or a gas volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum QuantityUnit {
    /// A mass unit.
    Mass(MassUnit),
    /// A gas-volume unit at reference conditions.
    Gas(GasVolumeUnit),
}

impl Unit for QuantityUnit {
    const ALL: &'static [Self] = &[
        Self::Mass(MassUnit::Kg),
        Self::Mass(MassUnit::Lb),
        Self::Mass(MassUnit::T),
        Self::Gas(GasVolumeUnit::Nm3),
        Self::Gas(GasVolumeUnit::Scf),
    ];
    fn symbol(self) -> &'static str {
        match self {
            Self::Mass(u) => u.symbol(),
            Self::Gas(u) => u.symbol(),
        }
    }
    fn si_from_value(self, value: f64) -> f64 {
        match self {
            Self::Mass(u) => u.si_from_value(value),
            Self::Gas(u) => u.si_from_value(value),
        }
    }
    fn value_from_si(self, si: f64) -> f64 {
        match self {
            Self::Mass(u) => u.value_from_si(si),
            Self::Gas(u) => u.value_from_si(si),
        }
    }
}

impl fmt::Display for QuantityUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

macro_rules! scalar {
    ($(#[$doc:meta])* $name:ident, $get:ident, $ctor:ident) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
        pub struct $name(f64);
        impl $name {
            #[doc = concat!("A value from its SI number (", stringify!($get), ").")]
            pub const fn $ctor(v: f64) -> Self { Self(v) }
            #[doc = concat!("The SI number (", stringify!($get), ").")]
            pub const fn $get(self) -> f64 { self.0 }
        }
    };
}

scalar!(
    /// An absolute pressure.
    AbsolutePressure, pa, from_pa
);
scalar!(
    /// A pressure above the local atmosphere.
    GaugePressure, pa, from_pa
);
scalar!(
    /// A pressure difference, such as a DP gauge's reading.
    PressureDifference, pa, from_pa
);
scalar!(
    /// A length.
    Length, m, from_m
);
scalar!(
    /// An absolute (thermodynamic) temperature.
    Temperature, k, from_k
);
scalar!(
    /// A difference of two temperatures.
    TemperatureDifference, k, from_k
);
scalar!(
    /// A mass.
    Mass, kg, from_kg
);

impl AbsolutePressure {
    /// One standard atmosphere (101.325 kPa).
    pub const STANDARD_ATMOSPHERE: Self = Self(STANDARD_ATMOSPHERE_PA);
    /// The gauge pressure this is above the given barometer.
    pub fn to_gauge(self, barometer: AbsolutePressure) -> GaugePressure {
        GaugePressure(self.0 - barometer.0)
    }
}

impl GaugePressure {
    /// The absolute pressure, given the barometer at the site.
    pub fn to_absolute(self, barometer: AbsolutePressure) -> AbsolutePressure {
        AbsolutePressure(self.0 + barometer.0)
    }
}

impl Temperature {
    /// The temperature difference `self - other`.
    pub fn minus(self, other: Temperature) -> TemperatureDifference {
        TemperatureDifference(self.0 - other.0)
    }
}

/// A tank pressure as entered: gauge or absolute, as its unit said.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum TankPressure {
    /// An absolute pressure.
    Absolute(AbsolutePressure),
    /// A pressure above the local atmosphere.
    Gauge(GaugePressure),
}

impl TankPressure {
    /// The absolute pressure, given the barometer at the site (ignored for absolute values).
    pub fn to_absolute(self, barometer: AbsolutePressure) -> AbsolutePressure {
        match self {
            Self::Absolute(p) => p,
            Self::Gauge(g) => g.to_absolute(barometer),
        }
    }
}

impl Entered<TankPressureUnit> {
    /// The typed pressure this entry denotes.
    pub fn si(&self) -> TankPressure {
        let pa = self.si_value();
        if self.unit.is_gauge() {
            TankPressure::Gauge(GaugePressure(pa))
        } else {
            TankPressure::Absolute(AbsolutePressure(pa))
        }
    }
}

impl Entered<DpUnit> {
    /// The typed pressure difference this entry denotes.
    pub fn si(&self) -> PressureDifference {
        PressureDifference(self.si_value())
    }
}

impl Entered<LengthUnit> {
    /// The typed length this entry denotes.
    pub fn si(&self) -> Length {
        Length(self.si_value())
    }
}

impl Entered<TemperatureUnit> {
    /// The typed temperature this entry denotes.
    pub fn si(&self) -> Temperature {
        Temperature(self.si_value())
    }
}

impl Entered<MassUnit> {
    /// The typed mass this entry denotes.
    pub fn si(&self) -> Mass {
        Mass(self.si_value())
    }
}

/// The reference conditions of a gas volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum GasBasis {
    /// 0 °C and 101.325 kPa (Nm³).
    Normal,
    /// 70 °F and 14.696 psia (scf).
    Standard,
}

impl GasBasis {
    /// Temperature of the reference conditions, K.
    pub fn temperature_k(self) -> f64 {
        match self {
            Self::Normal => NORMAL_TEMPERATURE_K,
            Self::Standard => SCF_TEMPERATURE_K,
        }
    }
    /// Pressure of the reference conditions, Pa.
    pub fn pressure_pa(self) -> f64 {
        match self {
            Self::Normal => NORMAL_PRESSURE_PA,
            Self::Standard => SCF_PRESSURE_PA,
        }
    }
}

/// A quantity of gas given as a volume at reference conditions.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GasVolume {
    /// Volume at the reference conditions, m³.
    pub m3: f64,
    /// Which reference conditions.
    pub basis: GasBasis,
}

/// A delivered quantity: a mass, or a gas volume that becomes a mass through the fluid's density at the
/// volume's reference conditions.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum DeliveredQuantity {
    /// A mass.
    Mass(Mass),
    /// A gas volume at reference conditions.
    Gas(GasVolume),
}

impl Entered<QuantityUnit> {
    /// The typed quantity this entry denotes.
    pub fn si(&self) -> DeliveredQuantity {
        match self.unit {
            QuantityUnit::Mass(u) => DeliveredQuantity::Mass(Mass(u.si_from_value(self.value))),
            QuantityUnit::Gas(u) => DeliveredQuantity::Gas(GasVolume {
                m3: u.si_from_value(self.value),
                basis: u.basis(),
            }),
        }
    }
}

impl DeliveredQuantity {
    /// The mass, given the fluid's gas density at the relevant reference conditions (kg/m³).
    pub fn mass_kg(self, gas_density_kg_m3: impl Fn(GasBasis) -> f64) -> f64 {
        match self {
            Self::Mass(m) => m.kg(),
            Self::Gas(g) => g.m3 * gas_density_kg_m3(g.basis),
        }
    }
}

/// Format an SI value in a unit with a given number of decimals, e.g. `12.30 barg`.
pub fn format_in<U: Unit>(si: f64, unit: U, decimals: usize) -> String {
    format!("{:.*} {}", decimals, unit.value_from_si(si), unit.symbol())
}

/// Barometric pressure at a geometric elevation above mean sea level by the ICAO standard atmosphere
/// (ICAO Doc 7488/3, troposphere): the elevation z becomes the geopotential altitude H = r0 z / (r0 + z),
/// r0 = 6 356 766 m, then p = p0 (1 - L H / T0)^(g0 M / (R* L)) with T0 = 288.15 K, L = 0.0065 K/m,
/// M = 0.028 964 4 kg/mol, R* = 8.314 32 J/(mol K). Valid below 11 km.
pub fn icao_barometer_from_elevation(elevation_m: f64) -> AbsolutePressure {
    const T0_K: f64 = 288.15;
    const LAPSE_K_M: f64 = 0.0065;
    const MOLAR_MASS_KG_MOL: f64 = 0.028_964_4;
    const GAS_CONSTANT: f64 = 8.314_32;
    const EARTH_RADIUS_M: f64 = 6_356_766.0;
    let exponent = STANDARD_GRAVITY_M_S2 * MOLAR_MASS_KG_MOL / (GAS_CONSTANT * LAPSE_K_M);
    let geopotential_m = EARTH_RADIUS_M * elevation_m / (EARTH_RADIUS_M + elevation_m);
    AbsolutePressure(
        STANDARD_ATMOSPHERE_PA * (1.0 - LAPSE_K_M * geopotential_m / T0_K).powf(exponent),
    )
}
