//! Record types the store maps: what a user entered, checked, with SI values beside it.

use serde::{Deserialize, Serialize};
use std::fmt;
use units::{DpUnit, Entered, QuantityUnit, TankPressureUnit};

pub use fluids::FluidId;
pub use tank::{HeadShape, Orientation};

macro_rules! id_type {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub i64);
        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result { self.0.fmt(f) }
        }
    };
}

id_type!(
    /// A stored site.
    SiteId
);
id_type!(
    /// A stored tank.
    TankId
);
id_type!(
    /// A stored reading.
    ReadingId
);
id_type!(
    /// A stored delivery.
    DeliveryId
);
id_type!(
    /// A stored vehicle.
    VehicleId
);

/// An instant as the user wrote it (RFC 3339) and as milliseconds since 1970-01-01 UTC.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
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
        Self {
            text: units::rfc3339_from_ms(ms),
            ms,
        }
    }
}

/// A site: a customer's location holding one or more tanks.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Site {
    /// Row id.
    pub id: SiteId,
    /// Unique name.
    pub name: String,
    /// Elevation above sea level, m (barometer by the ICAO standard atmosphere).
    pub elevation_m: Option<f64>,
    /// Entered barometer, kPa absolute (wins over the elevation).
    pub barometer_kpa: Option<f64>,
    /// The site's time zone, an IANA name (None: times shown in UTC).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time_zone: Option<String>,
    /// Its revision: 1 when written, one more at each change.
    #[serde(default = "first_revision")]
    pub revision: i64,
}

fn first_revision() -> i64 {
    1
}

/// What a site is set with: its barometer (elevation or an entered value) and its clock.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SiteSettings {
    /// Elevation above sea level, m.
    pub elevation_m: Option<f64>,
    /// Entered barometer, kPa absolute.
    pub barometer_kpa: Option<f64>,
    /// Time zone, an IANA name such as `Europe/London`.
    pub time_zone: Option<String>,
}

impl SiteSettings {
    /// Check the settings: a time zone must be an IANA name; an empty one is none.
    pub fn check(&self) -> Result<(), crate::check::FieldError> {
        if let Some(z) = &self.time_zone {
            z.parse::<units::Zone>()
                .map_err(|m| crate::check::FieldError::new("time_zone", m))?;
        }
        Ok(())
    }

    /// The settings of a stored site.
    pub fn of(s: &Site) -> Self {
        SiteSettings {
            elevation_m: s.elevation_m,
            barometer_kpa: s.barometer_kpa,
            time_zone: s.time_zone.clone(),
        }
    }
}

impl Site {
    /// The site's time zone (UTC when none is set or the stored name is unknown).
    pub fn zone(&self) -> units::Zone {
        zone_of(self.time_zone.as_deref())
    }

    /// The barometer to use for gauge pressures at this site, Pa absolute.
    pub fn barometer_pa(&self) -> f64 {
        barometer_pa(self.barometer_kpa.map(|k| k * 1e3), self.elevation_m)
    }
}

/// A stored time-zone name as a zone (UTC when none, or when the name is not known).
pub fn zone_of(name: Option<&str>) -> units::Zone {
    name.and_then(|n| n.parse().ok())
        .unwrap_or(units::Zone::UTC)
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
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TankSpec {
    /// Unique tank name.
    pub name: String,
    /// Name of the site that holds it.
    pub site: String,
    /// Fluid held.
    pub fluid: FluidId,
    /// Axis orientation.
    pub orientation: Orientation,
    /// Inner diameter, m.
    pub diameter_m: f64,
    /// Straight shell length (tangent to tangent), m.
    pub length_m: f64,
    /// Head shape.
    pub heads: HeadShape,
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
pub struct TankRecord {
    /// Row id.
    pub id: TankId,
    /// Row id of its site.
    pub site_id: SiteId,
    /// The site's barometer, Pa absolute.
    pub barometer_pa: f64,
    /// The site's time zone, an IANA name (None: UTC).
    pub time_zone: Option<String>,
    /// The settings.
    pub spec: TankSpec,
    /// Its revision: 1 when written, one more at each change.
    pub revision: i64,
}

/// A reading as entered: one DP and pressure observation of a tank.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReadingEntry {
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
    pub id: ReadingId,
    /// Row id of its tank.
    pub tank_id: TankId,
    /// What was entered.
    pub entry: ReadingEntry,
    /// Its revision: 1 when written, one more at each change.
    pub revision: i64,
}

/// A delivery as entered: one fill, with its ticket.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeliveryEntry {
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
    pub id: DeliveryId,
    /// Row id of its tank.
    pub tank_id: TankId,
    /// What was entered.
    pub entry: DeliveryEntry,
    /// Its revision: 1 when written, one more at each change.
    pub revision: i64,
}

/// A carrier's vehicle.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Vehicle {
    /// Row id.
    pub id: VehicleId,
    /// Vehicle name (unique).
    pub name: String,
    /// Its carrier's name.
    pub carrier: String,
    /// Meter repeatability as a standard uncertainty, % of delivered (None: the audit default).
    pub meter_repeatability_percent: Option<f64>,
}

/// Which stored record: the key of its history.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RecordRef {
    /// A site.
    Site(SiteId),
    /// A tank.
    Tank(TankId),
    /// A reading.
    Reading(ReadingId),
    /// A delivery.
    Delivery(DeliveryId),
}

/// What a revision did to its record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum RevisionAction {
    /// The record's values were replaced.
    Edit,
    /// The record was deleted (kept, marked deleted).
    Delete,
}

impl RevisionAction {
    /// The word used in the database and in output.
    pub fn as_str(self) -> &'static str {
        match self {
            RevisionAction::Edit => "edit",
            RevisionAction::Delete => "delete",
        }
    }
}

/// A record's values before a change.
#[derive(Debug, Clone, PartialEq)]
pub enum EarlierVersion {
    /// A site's settings.
    Site(Site),
    /// A tank's settings.
    Tank(Box<TankSpec>),
    /// A reading as entered.
    Reading(ReadingEntry),
    /// A delivery as entered.
    Delivery(DeliveryEntry),
}

/// An earlier version of an edited or deleted record.
#[derive(Debug, Clone, PartialEq)]
pub struct Revision {
    /// Which record.
    pub record: RecordRef,
    /// What was done to it.
    pub action: RevisionAction,
    /// When the change was made (RFC 3339, UTC).
    pub revised_at: String,
    /// Why, as the user said.
    pub reason: String,
    /// The record before the change.
    pub before: EarlierVersion,
}

/// A change refused because someone else changed the record after it was opened: both versions, so
/// that nothing is lost (the refused one is still in the caller's hands and shown here).
#[derive(Debug, Clone, PartialEq)]
pub struct Conflict {
    /// Which record.
    pub record: RecordRef,
    /// The revision the change was made from.
    pub opened: i64,
    /// The record's revision now.
    pub current: i64,
    /// The stored version now (someone else's).
    pub theirs: EarlierVersion,
    /// The refused change (None: a deletion).
    pub yours: Option<EarlierVersion>,
}

impl RecordRef {
    /// "reading 12", "tank 3".
    pub fn label(&self) -> String {
        match self {
            RecordRef::Site(id) => format!("site {id}"),
            RecordRef::Tank(id) => format!("tank {id}"),
            RecordRef::Reading(id) => format!("reading {id}"),
            RecordRef::Delivery(id) => format!("delivery {id}"),
        }
    }
}

impl EarlierVersion {
    /// The version in one line of its entered values.
    pub fn summary(&self) -> String {
        fn opt(v: Option<f64>, unit: &str) -> String {
            v.map_or_else(|| "none".to_owned(), |v| format!("{v} {unit}"))
        }
        match self {
            EarlierVersion::Site(s) => format!(
                "{}: elevation {}, barometer {}, time zone {}",
                s.name,
                opt(s.elevation_m, "m"),
                opt(s.barometer_kpa, "kPa"),
                s.time_zone.as_deref().unwrap_or("none (UTC)")
            ),
            EarlierVersion::Tank(t) => format!(
                "{} at {}: {}, {} {} m x {} m, {} heads, line {} C",
                t.name,
                t.site,
                t.fluid.name(),
                t.orientation.as_str(),
                t.diameter_m,
                t.length_m,
                t.heads.as_str(),
                t.line_temperature_c
            ),
            EarlierVersion::Reading(r) => {
                let mut s = format!(
                    "{}: DP {} {}, pressure {} {}",
                    r.time.text,
                    r.dp.value,
                    units::Unit::symbol(r.dp.unit),
                    r.pressure.value,
                    units::Unit::symbol(r.pressure.unit)
                );
                if let Some(t) = r.liquid_temperature_k {
                    s.push_str(&format!(", liquid {t} K"));
                }
                if let Some(n) = r.note.as_deref().filter(|n| !n.is_empty()) {
                    s.push_str(&format!(", note \"{n}\""));
                }
                s
            }
            EarlierVersion::Delivery(d) => format!(
                "ticket {}: {} to {}, {} {}, {} {}",
                d.ticket,
                d.start.text,
                d.end.text,
                d.quantity.value,
                units::Unit::symbol(d.quantity.unit),
                d.carrier,
                d.vehicle
            ),
        }
    }
}

impl fmt::Display for Conflict {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} was changed by someone else after you opened it (you opened revision {}, it is now at \
             revision {}), so your change was not saved and theirs stays. Theirs: {}. Yours: {}. Open \
             it again and make your change on the current version.",
            self.record.label(),
            self.opened,
            self.current,
            self.theirs.summary(),
            self.yours
                .as_ref()
                .map_or_else(|| "delete it".to_owned(), EarlierVersion::summary)
        )
    }
}
