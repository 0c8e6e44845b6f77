//! Display units (SI or US customary) and number formatting shared by the view-state builder and the
//! panels. Values arrive in SI; this module is the only place that chooses a display unit.

use serde::{Deserialize, Serialize};
use units::{
    CELSIUS_ZERO_K, CUBIC_FOOT_M3, FOOT_M, INCH_M, POUND_KG, PSI_PA, STANDARD_ATMOSPHERE_PA,
};

/// One US liquid gallon, m³: 231 cubic inches by definition.
pub const US_GALLON_M3: f64 = 231.0 * INCH_M * INCH_M * INCH_M;

/// Which family of units the user reads figures in. Entry fields accept any supported unit either way.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum UnitSystem {
    /// kg, m³, Nm³, bar(g), °C, m.
    #[default]
    Si,
    /// lb, US gal, scf, psig, °F, ft.
    Us,
}

impl UnitSystem {
    /// Its short name, as offered in the top bar.
    pub fn label(self) -> &'static str {
        match self {
            Self::Si => "SI",
            Self::Us => "US customary",
        }
    }
    /// Mass unit symbol.
    pub fn mass_unit(self) -> &'static str {
        match self {
            Self::Si => "kg",
            Self::Us => "lb",
        }
    }
    /// Mass in the display unit from kg.
    pub fn mass(self, kg: f64) -> f64 {
        match self {
            Self::Si => kg,
            Self::Us => kg / POUND_KG,
        }
    }
    /// Liquid-volume unit symbol.
    pub fn volume_unit(self) -> &'static str {
        match self {
            Self::Si => "m³",
            Self::Us => "gal",
        }
    }
    /// Liquid volume in the display unit from m³.
    pub fn volume(self, m3: f64) -> f64 {
        match self {
            Self::Si => m3,
            Self::Us => m3 / US_GALLON_M3,
        }
    }
    /// Gas-equivalent unit symbol.
    pub fn gas_unit(self) -> &'static str {
        match self {
            Self::Si => "Nm³",
            Self::Us => "scf",
        }
    }
    /// Pressure (gauge) unit symbol.
    pub fn pressure_unit(self) -> &'static str {
        match self {
            Self::Si => "barg",
            Self::Us => "psig",
        }
    }
    /// Gauge pressure in the display unit from Pa.
    pub fn pressure(self, gauge_pa: f64) -> f64 {
        match self {
            Self::Si => gauge_pa / 1e5,
            Self::Us => gauge_pa / PSI_PA,
        }
    }
    /// Decimals for pressures in the display unit (0.01 bar, 0.1 psi).
    pub fn pressure_decimals(self) -> usize {
        match self {
            Self::Si => 2,
            Self::Us => 1,
        }
    }
    /// The pressure unit offered first in entry forms (its text, as the parser reads it).
    pub fn default_pressure_entry_unit(self) -> &'static str {
        self.pressure_unit()
    }
    /// The quantity unit offered first in the delivery form.
    pub fn default_quantity_entry_unit(self) -> &'static str {
        self.mass_unit()
    }
    /// Temperature unit symbol.
    pub fn temperature_unit(self) -> &'static str {
        match self {
            Self::Si => "°C",
            Self::Us => "°F",
        }
    }
    /// Temperature in the display unit from K.
    pub fn temperature(self, k: f64) -> f64 {
        match self {
            Self::Si => k - CELSIUS_ZERO_K,
            Self::Us => (k - CELSIUS_ZERO_K) * 1.8 + 32.0,
        }
    }
    /// Temperature difference in the display unit from K.
    pub fn temperature_difference(self, dk: f64) -> f64 {
        match self {
            Self::Si => dk,
            Self::Us => dk * 1.8,
        }
    }
    /// Temperature-difference unit symbol.
    pub fn temperature_difference_unit(self) -> &'static str {
        match self {
            Self::Si => "K",
            Self::Us => "°F",
        }
    }
    /// Length unit symbol.
    pub fn length_unit(self) -> &'static str {
        match self {
            Self::Si => "m",
            Self::Us => "ft",
        }
    }
    /// Length in the display unit from m.
    pub fn length(self, m: f64) -> f64 {
        match self {
            Self::Si => m,
            Self::Us => m / FOOT_M,
        }
    }
}

/// Gas equivalent in the display unit from its two SI forms (Nm³ at 0 °C and scf as m³ at 70 °F).
pub fn gas(units: UnitSystem, nm3: f64, scf: f64) -> f64 {
    match units {
        UnitSystem::Si => nm3,
        UnitSystem::Us => scf,
    }
}

/// Cubic feet per cubic metre, for converting an Nm³ uncertainty to scf in proportion.
pub const CUBIC_FEET_PER_M3: f64 = 1.0 / CUBIC_FOOT_M3;

/// One standard atmosphere, Pa (for labels that explain gauge readings).
pub const ATMOSPHERE_PA: f64 = STANDARD_ATMOSPHERE_PA;

/// How each kind of figure is rounded: stated once, in the report crate, and used by the reports,
/// their CSV and the window alike.
pub use report::rounding::Figure;

/// A figure rounded as its kind says (digits grouped as [`num`] groups them).
pub fn fig(kind: Figure, v: f64) -> String {
    num(v, kind.decimals())
}

/// A number with thousands separators (thin spaces) and `decimals` decimals.
pub fn num(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    let s = format!("{:.*}", decimals, v.abs());
    let (int, frac) = match s.split_once('.') {
        Some((i, f)) => (i.to_owned(), Some(f.to_owned())),
        None => (s, None),
    };
    let mut grouped = String::new();
    let n = int.len();
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (n - i) % 3 == 0 {
            grouped.push('\u{2009}');
        }
        grouped.push(c);
    }
    let neg = v < 0.0 && s_nonzero(&grouped, frac.as_deref());
    let mut out = String::new();
    if neg {
        out.push('−');
    }
    out.push_str(&grouped);
    if let Some(f) = frac {
        out.push('.');
        out.push_str(&f);
    }
    out
}

fn s_nonzero(int: &str, frac: Option<&str>) -> bool {
    int.chars()
        .chain(frac.unwrap_or("").chars())
        .any(|c| c.is_ascii_digit() && c != '0')
}

/// Decimals that show about four significant figures for values of this size (at most 3).
pub fn decimals_for(v: f64) -> usize {
    let a = v.abs();
    if a >= 1000.0 {
        0
    } else if a >= 100.0 {
        1
    } else if a >= 10.0 {
        2
    } else {
        3
    }
}

/// A value with its standard uncertainty, both with the value's precision: `4 120 ± 38`.
pub fn with_u(v: f64, u: Option<f64>) -> String {
    let d = decimals_for(v);
    match u {
        Some(u) if u > 0.0 => format!("{} ± {}", num(v, d), num(u, d)),
        _ => num(v, d),
    }
}

/// Milliseconds since the epoch as `YYYY-MM-DD HH:MM` UTC.
pub fn date_time(ms: i64) -> String {
    let (y, m, d, hh, mm) = civil(ms);
    format!("{y:04}-{m:02}-{d:02} {hh:02}:{mm:02}")
}

/// An instant on the open tank's site clock (`YYYY-MM-DD HH:MM` and the zone's abbreviation; UTC
/// when the site has no time zone).
pub fn site_time(view: &crate::view::ViewState, ms: i64) -> String {
    view.tank
        .as_ref()
        .map_or(units::Zone::UTC, |t| t.zone)
        .text(ms)
}

/// Milliseconds since the epoch as `YYYY-MM-DD` UTC.
pub fn date(ms: i64) -> String {
    let (y, m, d, _, _) = civil(ms);
    format!("{y:04}-{m:02}-{d:02}")
}

/// Year, month, day, hour, minute (UTC) of an instant.
fn civil(ms: i64) -> (i64, i64, i64, i64, i64) {
    let c = units::civil_from_ms(ms);
    (c.year, c.month, c.day, c.hour, c.minute)
}

/// An age in words: `5 h`, `3 d`, `2 min`.
pub fn age(ms: i64) -> String {
    let min = ms / 60_000;
    if min < 0 {
        "future".into()
    } else if min < 60 {
        format!("{min} min")
    } else if min < 48 * 60 {
        format!("{} h", min / 60)
    } else {
        format!("{} d", min / (24 * 60))
    }
}

/// Now, ms since the epoch (0 if the clock is before 1970).
pub fn now_ms() -> i64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| i64::try_from(d.as_millis()).unwrap_or(i64::MAX))
        .unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_round_trip_known_instants() {
        // 2026-03-01T08:00:00Z is 1 772 352 000 s after the epoch (date arithmetic, no source needed).
        assert_eq!(date_time(1_772_352_000_000), "2026-03-01 08:00");
        assert_eq!(date(951_782_400_000), "2000-02-29");
    }

    #[test]
    fn numbers_group_and_sign() {
        assert_eq!(num(1234567.891, 1), "1\u{2009}234\u{2009}567.9");
        assert_eq!(num(-0.0001, 2), "0.00");
        assert_eq!(num(-12.5, 1), "−12.5");
        assert_eq!(with_u(4120.4, Some(38.2)), "4\u{2009}120 ± 38");
    }

    #[test]
    fn us_gallon_is_231_cubic_inches() {
        // 1 US gal = 3.785 411 784 L exactly (NIST Handbook 44, appendix C).
        assert!((US_GALLON_M3 - 3.785_411_784e-3).abs() < 1e-15);
    }
}
