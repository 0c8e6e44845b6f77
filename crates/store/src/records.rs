//! Record types the store maps: what a user entered, checked, with SI values beside it.

use serde::Serialize;
use std::fmt;
use std::str::FromStr;
use time::OffsetDateTime;
use time::format_description::well_known::Rfc3339;
use units::{DpUnit, Entered, QuantityUnit, TankPressureUnit};

macro_rules! name_enum {
    ($(#[$doc:meta])* $name:ident, $what:literal, { $($(#[$vdoc:meta])* $var:ident => $text:literal),+ $(,)? }) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
        #[serde(rename_all = "kebab-case")]
        pub enum $name { $($(#[$vdoc])* $var),+ }
        impl $name {
            /// Every value, in the order offered to users.
            pub const ALL: &'static [Self] = &[$(Self::$var),+];
            /// The name used in CSV files and the database.
            pub fn as_str(self) -> &'static str { match self { $(Self::$var => $text),+ } }
        }
        impl FromStr for $name {
            type Err = String;
            fn from_str(s: &str) -> Result<Self, String> {
                match s.trim().to_ascii_lowercase().as_str() {
                    $($text => Ok(Self::$var),)+
                    other => Err(format!(concat!("unknown ", $what, " '{}': expected one of {}"), other,
                        [$($text),+].join(", "))),
                }
            }
        }
        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result { f.write_str(self.as_str()) }
        }
    };
}

name_enum!(
    /// The fluid a tank holds.
    Fluid, "fluid", {
        /// Nitrogen.
        Nitrogen => "nitrogen",
        /// Oxygen.
        Oxygen => "oxygen",
        /// Argon.
        Argon => "argon",
        /// Carbon dioxide.
        CarbonDioxide => "carbon-dioxide",
        /// Methane (LNG stand-in).
        Methane => "methane",
        /// Normal hydrogen.
        Hydrogen => "hydrogen",
        /// Parahydrogen.
        Parahydrogen => "parahydrogen",
    }
);

name_enum!(
    /// How the vessel's axis stands.
    Orientation, "orientation", {
        /// Axis vertical.
        Vertical => "vertical",
        /// Axis horizontal.
        Horizontal => "horizontal",
    }
);

name_enum!(
    /// The shape of both heads of the vessel.
    Heads, "heads", {
        /// Flat heads.
        Flat => "flat",
        /// Hemispherical heads (depth D/2).
        Hemispherical => "hemispherical",
        /// 2:1 ellipsoidal heads (depth D/4).
        Ellipsoidal => "ellipsoidal",
        /// Torispherical (flanged and dished) heads.
        Torispherical => "torispherical",
    }
);

/// An instant as the user wrote it (RFC 3339) and as milliseconds since 1970-01-01 UTC.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Stamp {
    /// The RFC 3339 text as entered.
    pub text: String,
    /// The same instant in ms since the Unix epoch.
    pub ms: i64,
}

impl Stamp {
    /// Parse RFC 3339 text such as `2026-03-01T08:00:00Z` or `2026-03-01T09:00:00.5+01:00`
    /// (`YYYY-MM-DDTHH:MM:SS[.fraction](Z|+HH:MM|-HH:MM)`; `t`, `z` and a space for `T` are accepted).
    /// Fractions beyond milliseconds are truncated.
    pub fn parse(text: &str) -> Result<Self, String> {
        let t = text.trim();
        let ms = units::ms_from_rfc3339(t)
            .ok_or_else(|| format!("'{t}' is not an RFC 3339 time such as 2026-03-01T08:00:00Z"))?;
        Ok(Self {
            text: t.to_owned(),
            ms,
        })
    }

    /// A stamp for an instant given in ms since the epoch, written in UTC.
    pub fn from_ms(ms: i64) -> Self {
        let text = OffsetDateTime::from_unix_timestamp_nanos(i128::from(ms) * 1_000_000)
            .ok()
            .and_then(|dt| dt.format(&Rfc3339).ok())
            .unwrap_or_else(|| ms.to_string());
        Self { text, ms }
    }
}

/// A site: a customer's location holding one or more tanks.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Site {
    /// Row id.
    pub id: i64,
    /// Unique name.
    pub name: String,
    /// Elevation above sea level, m (barometer by the ICAO standard atmosphere).
    pub elevation_m: Option<f64>,
    /// Entered barometer, kPa absolute (wins over the elevation).
    pub barometer_kpa: Option<f64>,
}

impl Site {
    /// The barometer to use for gauge pressures at this site, Pa absolute.
    pub fn barometer_pa(&self) -> f64 {
        barometer_pa(self.barometer_kpa.map(|k| k * 1e3), self.elevation_m)
    }
}

/// Barometer from an entered value, else the elevation through the ICAO atmosphere, else 1 atm.
pub fn barometer_pa(entered_pa: Option<f64>, elevation_m: Option<f64>) -> f64 {
    match (entered_pa, elevation_m) {
        (Some(p), _) => p,
        (None, Some(h)) => units::icao_barometer_from_elevation(h).pa(),
        (None, None) => units::STANDARD_ATMOSPHERE_PA,
    }
}

/// A tank's settings: vessel, gauge, relief valve, and operating levels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TankSpec {
    /// Unique tank name.
    pub name: String,
    /// Name of the site that holds it.
    pub site: String,
    /// Fluid held.
    pub fluid: Fluid,
    /// Axis orientation.
    pub orientation: Orientation,
    /// Inner diameter, m.
    pub diameter_m: f64,
    /// Straight shell length (tangent to tangent), m.
    pub length_m: f64,
    /// Head shape.
    pub heads: Heads,
    /// Torispherical crown radius as a fraction of D (None: 1.0).
    pub crown_ratio: Option<f64>,
    /// Torispherical knuckle radius as a fraction of D (None: 0.06).
    pub knuckle_ratio: Option<f64>,
    /// Temperature of the gas in the sensing lines, °C as entered.
    pub line_temperature_c: f64,
    /// The unit the gauge reads in.
    pub dp_unit: DpUnit,
    /// Full-scale DP of the gauge, in `dp_unit` as entered.
    pub gauge_span: Option<f64>,
    /// Gauge accuracy as a standard uncertainty, % of span.
    pub gauge_accuracy_percent: Option<f64>,
    /// Relief valve set pressure as entered.
    pub relief_pressure: Option<Entered<TankPressureUnit>>,
    /// Reorder level, % of gross volume.
    pub reorder_percent: Option<f64>,
    /// Nameplate normal evaporation rate, % per day.
    pub ner_percent_per_day: Option<f64>,
    /// Strapping table points (level m, volume m³), ascending; empty when the shape is used.
    pub strapping: Vec<(f64, f64)>,
}

impl TankSpec {
    /// Line temperature, K.
    pub fn line_temperature_k(&self) -> f64 {
        self.line_temperature_c + units::CELSIUS_ZERO_K
    }
    /// Gauge span, Pa.
    pub fn gauge_span_pa(&self) -> Option<f64> {
        use units::Unit;
        self.gauge_span.map(|s| self.dp_unit.si_from_value(s))
    }
}

/// A stored tank: its id, its site's id and barometer, and its settings.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tank {
    /// Row id.
    pub id: i64,
    /// Row id of its site.
    pub site_id: i64,
    /// The site's barometer, Pa absolute.
    pub barometer_pa: f64,
    /// The settings.
    pub spec: TankSpec,
}

/// A reading as entered: one DP and pressure observation of a tank.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReadingInput {
    /// When it was read.
    pub time: Stamp,
    /// The DP as entered.
    pub dp: Entered<DpUnit>,
    /// The tank pressure as entered (gauge or absolute).
    pub pressure: Entered<TankPressureUnit>,
    /// A measured liquid temperature, K.
    pub liquid_temperature_k: Option<f64>,
    /// Free text.
    pub note: Option<String>,
}

/// A stored reading.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Reading {
    /// Row id.
    pub id: i64,
    /// Row id of its tank.
    pub tank_id: i64,
    /// What was entered.
    pub input: ReadingInput,
}

/// A delivery as entered: one fill, with its ticket.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DeliveryInput {
    /// The ticket number (unique).
    pub ticket: String,
    /// Start of the fill.
    pub start: Stamp,
    /// End of the fill.
    pub end: Stamp,
    /// Billed quantity as entered.
    pub quantity: Entered<QuantityUnit>,
    /// Carrier name.
    pub carrier: String,
    /// Vehicle name.
    pub vehicle: String,
    /// Pressure of the delivering trailer's liquid, as entered.
    pub supply_pressure: Option<Entered<TankPressureUnit>>,
}

/// A stored delivery.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Delivery {
    /// Row id.
    pub id: i64,
    /// Row id of its tank.
    pub tank_id: i64,
    /// What was entered.
    pub input: DeliveryInput,
}

/// A carrier's vehicle.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Vehicle {
    /// Row id.
    pub id: i64,
    /// Vehicle name (unique).
    pub name: String,
    /// Its carrier's name.
    pub carrier: String,
    /// Meter repeatability as a standard uncertainty, % of delivered (None: the audit default).
    pub meter_repeatability_percent: Option<f64>,
}

/// An earlier version of an edited or deleted row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Revision {
    /// Which table.
    pub table: String,
    /// Which row.
    pub row_id: i64,
    /// `edit` or `delete`.
    pub action: String,
    /// When the change was made (RFC 3339, UTC).
    pub revised_at: String,
    /// Why, as the user said.
    pub reason: String,
    /// The row before the change, as JSON.
    pub old_row: String,
}
