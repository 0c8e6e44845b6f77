//! Parsing typed-in quantities: a number, optional spaces, a unit.

use crate::quantity::*;
use std::str::FromStr;
use thiserror::Error;

/// Why a quantity or unit could not be read.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum UnitError {
    /// Nothing was given.
    #[error("empty value: expected a number and a unit ({expected})")]
    Empty {
        /// The units that would have been accepted.
        expected: &'static str,
    },
    /// The text does not start with a number.
    #[error("'{text}' is not a number")]
    BadNumber {
        /// The offending text.
        text: String,
    },
    /// A comma inside the number (a decimal comma or a thousands separator).
    #[error(
        "'{text}' has a comma in its number: write a decimal point and no thousands separators (1.5, 1200)"
    )]
    Comma {
        /// The offending text.
        text: String,
    },
    /// The number is infinite or NaN.
    #[error("'{text}' is not a finite number")]
    NotFinite {
        /// The offending text.
        text: String,
    },
    /// A number without a unit.
    #[error("'{text}' has no unit: expected one of {expected}")]
    MissingUnit {
        /// The offending text.
        text: String,
        /// The units that would have been accepted.
        expected: &'static str,
    },
    /// A unit that is not one of this quantity's.
    #[error("unknown {quantity} unit '{unit}': expected one of {expected}")]
    UnknownUnit {
        /// The unit as given.
        unit: String,
        /// What kind of quantity was expected.
        quantity: &'static str,
        /// The units that would have been accepted.
        expected: &'static str,
    },
    /// A pressure unit that does not say gauge or absolute.
    #[error(
        "'{unit}' is ambiguous for a tank pressure: write {unit}g for gauge or {unit}a for absolute"
    )]
    AmbiguousPressure {
        /// The unit as given.
        unit: String,
    },
    /// A gauge unit where a pressure difference or absolute pressure was expected.
    #[error("'{unit}' is a gauge pressure unit, not a {quantity} unit: expected one of {expected}")]
    GaugeNotAllowed {
        /// The unit as given.
        unit: String,
        /// What kind of quantity was expected.
        quantity: &'static str,
        /// The units that would have been accepted.
        expected: &'static str,
    },
    /// A temperature below absolute zero.
    #[error("{text} is below absolute zero")]
    BelowAbsoluteZero {
        /// The offending text.
        text: String,
    },
}

const TANK_PRESSURE_UNITS: &str =
    "barg, psig, kPag, MPag (gauge) or bara, psia, kPa, MPa, Pa (absolute)";
const ABSOLUTE_PRESSURE_UNITS: &str = "bara, psia, kPa, MPa, Pa, mbar";
const DP_UNITS: &str = "inH2O, inH2O@60F, inH2O@4C, mmH2O, Pa, kPa, mbar, bar, psi";
const LENGTH_UNITS: &str = "m, mm, cm, in, ft";
const TEMPERATURE_UNITS: &str = "K, C, F";
const MASS_UNITS: &str = "kg, lb, t";
const QUANTITY_UNITS: &str = "kg, lb, t, Nm3, scf";

/// Normalised form of a unit for lookup: no spaces, no degree signs or brackets, lower case. Kept on the
/// stack: importers parse a unit on every row.
struct Key {
    buf: [u8; 24],
    len: usize,
    overflow: bool,
}

impl Key {
    fn as_str(&self) -> &str {
        if self.overflow {
            return "\u{0}overflow";
        }
        std::str::from_utf8(self.buf.get(..self.len).unwrap_or_default()).unwrap_or("\u{0}invalid")
    }
}

fn key(unit: &str) -> Key {
    let mut k = Key {
        buf: [0; 24],
        len: 0,
        overflow: false,
    };
    if unit.is_ascii() {
        for &b in unit.as_bytes() {
            if b.is_ascii_whitespace() || b == b'(' || b == b')' {
                continue;
            }
            match k.buf.get_mut(k.len) {
                Some(dst) => {
                    *dst = b.to_ascii_lowercase();
                    k.len += 1;
                }
                None => k.overflow = true,
            }
        }
        return k;
    }
    let mut tmp = [0u8; 4];
    for c in unit.chars() {
        if c.is_whitespace() || c == '°' || c == '(' || c == ')' {
            continue;
        }
        // subscript and superscript digits read as digits: inH₂O is inH2O, Nm³ is Nm3
        let c = match c {
            '₀'..='₉' => {
                char::from_u32(u32::from(c) - u32::from('₀') + u32::from('0')).unwrap_or(c)
            }
            '²' => '2',
            '³' => '3',
            '¹' => '1',
            _ => c,
        };
        for l in c.to_lowercase() {
            let bytes = l.encode_utf8(&mut tmp).as_bytes();
            match k.buf.get_mut(k.len..k.len + bytes.len()) {
                Some(dst) => {
                    dst.copy_from_slice(bytes);
                    k.len += bytes.len();
                }
                None => k.overflow = true,
            }
        }
    }
    k
}

impl FromStr for TankPressureUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        use TankPressureUnit::*;
        Ok(match key(s).as_str() {
            "barg" => Barg,
            "bara" | "barabs" => Bara,
            "psig" => Psig,
            "psia" => Psia,
            "kpag" | "kpa(g)" => KPag,
            "kpa" | "kpaa" | "kpaabs" => KPa,
            "mpag" => MPag,
            "mpa" | "mpaa" | "mpaabs" => MPa,
            "pa" | "paa" => Pa,
            "bar" | "psi" => {
                return Err(UnitError::AmbiguousPressure {
                    unit: s.trim().to_owned(),
                });
            }
            "" => {
                return Err(UnitError::Empty {
                    expected: TANK_PRESSURE_UNITS,
                });
            }
            _ => return Err(unknown(s, "tank pressure", TANK_PRESSURE_UNITS)),
        })
    }
}

impl FromStr for DpUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        use DpUnit::*;
        Ok(match key(s).as_str() {
            "inh2o" | "inwc" | "inh2oconventional" | "\"h2o" | "\"wc" | "iwc" => InH2O,
            "inh2o@60f" | "inh2o60f" | "inh2o@60°f" => InH2O60F,
            "inh2o@4c" | "inh2o4c" | "inh2o@39.2f" => InH2O4C,
            "mmh2o" | "mmwc" | "mmwg" => MmH2O,
            "pa" => Pa,
            "kpa" => KPa,
            "mbar" => Mbar,
            "bar" => Bar,
            "psi" | "psid" => Psi,
            "barg" | "psig" | "kpag" | "mpag" => {
                return Err(UnitError::GaugeNotAllowed {
                    unit: s.trim().to_owned(),
                    quantity: "pressure difference (DP)",
                    expected: DP_UNITS,
                });
            }
            "" => return Err(UnitError::Empty { expected: DP_UNITS }),
            _ => return Err(unknown(s, "pressure difference (DP)", DP_UNITS)),
        })
    }
}

impl FromStr for LengthUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        use LengthUnit::*;
        Ok(match key(s).as_str() {
            "m" => M,
            "mm" => Mm,
            "cm" => Cm,
            "in" | "inch" | "inches" | "\"" => In,
            "ft" | "foot" | "feet" | "'" => Ft,
            "" => {
                return Err(UnitError::Empty {
                    expected: LENGTH_UNITS,
                });
            }
            _ => return Err(unknown(s, "length", LENGTH_UNITS)),
        })
    }
}

impl FromStr for TemperatureUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        use TemperatureUnit::*;
        Ok(match key(s).as_str() {
            "k" => K,
            "c" | "degc" => C,
            "f" | "degf" => F,
            "" => {
                return Err(UnitError::Empty {
                    expected: TEMPERATURE_UNITS,
                });
            }
            _ => return Err(unknown(s, "temperature", TEMPERATURE_UNITS)),
        })
    }
}

impl FromStr for MassUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        use MassUnit::*;
        Ok(match key(s).as_str() {
            "kg" => Kg,
            "lb" | "lbs" | "lbm" => Lb,
            "t" | "tonne" | "tonnes" => T,
            "" => {
                return Err(UnitError::Empty {
                    expected: MASS_UNITS,
                });
            }
            _ => return Err(unknown(s, "mass", MASS_UNITS)),
        })
    }
}

impl FromStr for GasVolumeUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        Ok(match key(s).as_str() {
            "nm3" | "nm³" => GasVolumeUnit::Nm3,
            "scf" => GasVolumeUnit::Scf,
            _ => return Err(unknown(s, "gas volume", "Nm3, scf")),
        })
    }
}

impl FromStr for QuantityUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, UnitError> {
        if key(s).as_str().is_empty() {
            return Err(UnitError::Empty {
                expected: QUANTITY_UNITS,
            });
        }
        if let Ok(m) = s.parse::<MassUnit>() {
            return Ok(QuantityUnit::Mass(m));
        }
        if let Ok(g) = s.parse::<GasVolumeUnit>() {
            return Ok(QuantityUnit::Gas(g));
        }
        Err(unknown(s, "delivered quantity", QUANTITY_UNITS))
    }
}

fn unknown(unit: &str, quantity: &'static str, expected: &'static str) -> UnitError {
    UnitError::UnknownUnit {
        unit: unit.trim().to_owned(),
        quantity,
        expected,
    }
}

/// Split `text` into a finite number and the rest (the unit text, trimmed).
fn split_number<'a>(text: &'a str, expected: &'static str) -> Result<(f64, &'a str), UnitError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(UnitError::Empty { expected });
    }
    let b = t.as_bytes();
    let mut i = 0;
    if matches!(b.first(), Some(b'+' | b'-')) {
        i += 1;
    }
    let digits_start = i;
    while i < b.len() && (b[i].is_ascii_digit() || b[i] == b'.') {
        i += 1;
    }
    if i == digits_start {
        return Err(UnitError::BadNumber { text: t.to_owned() });
    }
    // An exponent only when digits follow it, so "2 e" never eats a unit's letter.
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        let exp_digits = j;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_digits {
            i = j;
        }
    }
    let (num, rest) = t.split_at(i);
    // a comma after the digits is a decimal comma or a thousands separator: refused, never guessed
    if rest.starts_with(',') && rest[1..].starts_with(|c: char| c.is_ascii_digit()) {
        return Err(UnitError::Comma { text: t.to_owned() });
    }
    let value: f64 = num
        .parse()
        .map_err(|_| UnitError::BadNumber { text: t.to_owned() })?;
    if !value.is_finite() {
        return Err(UnitError::NotFinite { text: t.to_owned() });
    }
    Ok((value, rest.trim()))
}

fn parse_with<U: Unit + FromStr<Err = UnitError>>(
    text: &str,
    expected: &'static str,
) -> Result<Entered<U>, UnitError> {
    let (value, unit_text) = split_number(text, expected)?;
    if unit_text.is_empty() {
        return Err(UnitError::MissingUnit {
            text: text.trim().to_owned(),
            expected,
        });
    }
    Ok(Entered {
        value,
        unit: unit_text.parse()?,
    })
}

/// Parse a tank pressure such as `12 barg`, `175 psig`, `10 bara` or `1.3 MPa`. Plain `bar` or `psi` is
/// refused: a tank pressure must say gauge or absolute.
pub fn parse_tank_pressure(text: &str) -> Result<Entered<TankPressureUnit>, UnitError> {
    parse_with(text, TANK_PRESSURE_UNITS)
}

/// Parse an absolute pressure such as a barometer (`101.3 kPa`, `1013 mbar`, `14.7 psia`).
pub fn parse_absolute_pressure(text: &str) -> Result<AbsolutePressure, UnitError> {
    let (value, unit_text) = split_number(text, ABSOLUTE_PRESSURE_UNITS)?;
    if matches!(key(unit_text).as_str(), "mbar" | "mbara") {
        return Ok(AbsolutePressure::from_pa(value * 100.0));
    }
    let unit: TankPressureUnit = if unit_text.is_empty() {
        return Err(UnitError::MissingUnit {
            text: text.trim().to_owned(),
            expected: ABSOLUTE_PRESSURE_UNITS,
        });
    } else {
        unit_text.parse()?
    };
    if unit.is_gauge() {
        return Err(UnitError::GaugeNotAllowed {
            unit: unit_text.to_owned(),
            quantity: "absolute pressure",
            expected: ABSOLUTE_PRESSURE_UNITS,
        });
    }
    Ok(AbsolutePressure::from_pa(unit.si_from_value(value)))
}

/// Parse a pressure difference (a DP reading) such as `85 inH2O`, `2150 mmH2O` or `21.2 kPa`.
pub fn parse_dp(text: &str) -> Result<Entered<DpUnit>, UnitError> {
    parse_with(text, DP_UNITS)
}

/// Parse a length such as `2.4 m`, `94.5 in` or `7.9 ft`.
pub fn parse_length(text: &str) -> Result<Entered<LengthUnit>, UnitError> {
    parse_with(text, LENGTH_UNITS)
}

/// Parse a temperature such as `85 K`, `-188.2 C` or `-306.7 F`; below absolute zero is an error.
pub fn parse_temperature(text: &str) -> Result<Entered<TemperatureUnit>, UnitError> {
    let e: Entered<TemperatureUnit> = parse_with(text, TEMPERATURE_UNITS)?;
    if e.si_value() < 0.0 {
        return Err(UnitError::BelowAbsoluteZero {
            text: text.trim().to_owned(),
        });
    }
    Ok(e)
}

/// Parse a mass such as `1200 kg`, `2645 lb` or `1.2 t`.
pub fn parse_mass(text: &str) -> Result<Entered<MassUnit>, UnitError> {
    parse_with(text, MASS_UNITS)
}

/// Parse a delivered quantity: a mass (`kg`, `lb`, `t`) or a gas volume (`Nm3`, `scf`).
pub fn parse_delivered_quantity(text: &str) -> Result<Entered<QuantityUnit>, UnitError> {
    parse_with(text, QUANTITY_UNITS)
}
