//! The SQLite repository: opening, migrations, and record reads and writes in domain terms.

use crate::StoreError;
use crate::check::FieldError;
use crate::records::*;
use rusqlite::types::Value;
use rusqlite::{Connection, OptionalExtension, Row, params, params_from_iter};
use rusqlite_migration::{M, Migrations};
use std::path::Path;
use time::OffsetDateTime;
use time::format_description::well_known::Rfc3339;
use units::{DpUnit, Entered, QuantityUnit, TankPressureUnit, Unit};

/// The numbered SQL files of `migrations/`, applied in order. A test checks none is missing.
pub const MIGRATION_FILES: &[(&str, &str)] = &[(
    "0001_initial.sql",
    include_str!("../../../migrations/0001_initial.sql"),
)];

fn migrations() -> Migrations<'static> {
    Migrations::new(MIGRATION_FILES.iter().map(|(_, sql)| M::up(sql)).collect())
}

/// The open log of sites, tanks, readings and deliveries.
pub struct Store {
    pub(crate) conn: Connection,
}

fn now_text() -> String {
    OffsetDateTime::now_utc()
        .format(&Rfc3339)
        .unwrap_or_else(|_| "unknown".into())
}

fn parse_unit<U: std::str::FromStr<Err = units::UnitError>>(
    idx: usize,
    text: &str,
) -> rusqlite::Result<U> {
    text.parse::<U>().map_err(|e| {
        rusqlite::Error::FromSqlConversionFailure(idx, rusqlite::types::Type::Text, Box::new(e))
    })
}

fn parse_name<T: std::str::FromStr<Err = String>>(idx: usize, text: &str) -> rusqlite::Result<T> {
    text.parse::<T>().map_err(|e| {
        rusqlite::Error::FromSqlConversionFailure(
            idx,
            rusqlite::types::Type::Text,
            Box::<dyn std::error::Error + Send + Sync>::from(e),
        )
    })
}

fn entered_pressure(
    idx: usize,
    value: Option<f64>,
    unit: Option<String>,
) -> rusqlite::Result<Option<Entered<TankPressureUnit>>> {
    match (value, unit) {
        (Some(value), Some(u)) => Ok(Some(Entered {
            value,
            unit: parse_unit(idx, &u)?,
        })),
        _ => Ok(None),
    }
}

const TANK_COLUMNS: &str = "t.id, t.site_id, s.name, s.elevation_m, s.barometer_kpa, t.name, t.fluid, \
    t.orientation, t.diameter_m, t.length_m, t.heads, t.crown_ratio, t.knuckle_ratio, t.line_temperature_c, \
    t.dp_unit, t.gauge_span, t.gauge_accuracy_percent, t.relief_pressure_value, t.relief_pressure_unit, \
    t.reorder_percent, t.ner_percent_per_day";

fn tank_from_row(r: &Row<'_>) -> rusqlite::Result<Tank> {
    let elevation: Option<f64> = r.get(3)?;
    let barometer_kpa: Option<f64> = r.get(4)?;
    Ok(Tank {
        id: r.get(0)?,
        site_id: r.get(1)?,
        barometer_pa: barometer_pa(barometer_kpa.map(|k| k * 1e3), elevation),
        spec: TankSpec {
            site: r.get(2)?,
            name: r.get(5)?,
            fluid: parse_name(6, &r.get::<_, String>(6)?)?,
            orientation: parse_name(7, &r.get::<_, String>(7)?)?,
            diameter_m: r.get(8)?,
            length_m: r.get(9)?,
            heads: parse_name(10, &r.get::<_, String>(10)?)?,
            crown_ratio: r.get(11)?,
            knuckle_ratio: r.get(12)?,
            line_temperature_c: r.get(13)?,
            dp_unit: parse_unit(14, &r.get::<_, String>(14)?)?,
            gauge_span: r.get(15)?,
            gauge_accuracy_percent: r.get(16)?,
            relief_pressure: entered_pressure(17, r.get(17)?, r.get(18)?)?,
            reorder_percent: r.get(19)?,
            ner_percent_per_day: r.get(20)?,
            strapping: Vec::new(),
        },
    })
}

const READING_COLUMNS: &str = "id, tank_id, time_text, time_ms, dp_value, dp_unit, pressure_value, \
    pressure_unit, liquid_temperature_k, note";

fn reading_from_row(r: &Row<'_>) -> rusqlite::Result<Reading> {
    Ok(Reading {
        id: r.get(0)?,
        tank_id: r.get(1)?,
        input: ReadingInput {
            time: Stamp {
                text: r.get(2)?,
                ms: r.get(3)?,
            },
            dp: Entered {
                value: r.get(4)?,
                unit: parse_unit::<DpUnit>(5, &r.get::<_, String>(5)?)?,
            },
            pressure: Entered {
                value: r.get(6)?,
                unit: parse_unit::<TankPressureUnit>(7, &r.get::<_, String>(7)?)?,
            },
            liquid_temperature_k: r.get(8)?,
            note: r.get(9)?,
        },
    })
}

const DELIVERY_COLUMNS: &str = "d.id, d.tank_id, d.ticket, d.start_text, d.start_ms, d.end_text, d.end_ms, \
    d.quantity_value, d.quantity_unit, c.name, v.name, d.supply_pressure_value, d.supply_pressure_unit";

fn delivery_from_row(r: &Row<'_>) -> rusqlite::Result<Delivery> {
    Ok(Delivery {
        id: r.get(0)?,
        tank_id: r.get(1)?,
        input: DeliveryInput {
            ticket: r.get(2)?,
            start: Stamp {
                text: r.get(3)?,
                ms: r.get(4)?,
            },
            end: Stamp {
                text: r.get(5)?,
                ms: r.get(6)?,
            },
            quantity: Entered {
                value: r.get(7)?,
                unit: parse_unit::<QuantityUnit>(8, &r.get::<_, String>(8)?)?,
            },
            carrier: r.get(9)?,
            vehicle: r.get(10)?,
            supply_pressure: entered_pressure(11, r.get(11)?, r.get(12)?)?,
        },
    })
}

/// Is this error a UNIQUE constraint failure?
fn is_unique_violation(e: &rusqlite::Error) -> bool {
    matches!(e, rusqlite::Error::SqliteFailure(f, _)
        if f.extended_code == rusqlite::ffi::SQLITE_CONSTRAINT_UNIQUE)
}

/// A failed write as the user's field error when it broke a uniqueness rule, else the database error.
pub(crate) fn as_duplicate(
    e: rusqlite::Error,
    field: &str,
    duplicate: impl FnOnce() -> String,
) -> Result<FieldError, rusqlite::Error> {
    if is_unique_violation(&e) {
        Ok(FieldError::new(field, duplicate()))
    } else {
        Err(e)
    }
}

/// [`as_duplicate`] for the single-record methods.
fn duplicate_or_sql(
    e: rusqlite::Error,
    field: &str,
    duplicate: impl FnOnce() -> String,
) -> StoreError {
    match as_duplicate(e, field, duplicate) {
        Ok(f) => StoreError::Invalid(vec![f]),
        Err(e) => e.into(),
    }
}

// Row writers shared by the importer (inside its transaction) and the single-record methods.

pub(crate) fn site_id_for(
    conn: &Connection,
    name: &str,
    elevation_m: Option<f64>,
    barometer_kpa: Option<f64>,
) -> Result<i64, FieldError> {
    let existing = conn
        .query_row(
            "SELECT id, elevation_m, barometer_kpa FROM sites WHERE name = ?1 AND deleted_at IS NULL",
            [name],
            |r| Ok((r.get::<_, i64>(0)?, r.get::<_, Option<f64>>(1)?, r.get::<_, Option<f64>>(2)?)),
        )
        .optional()
        .map_err(|e| FieldError::new("site", e.to_string()))?;
    match existing {
        Some((id, e0, b0)) => {
            if elevation_m.is_some() && elevation_m != e0 {
                return Err(FieldError::new(
                    "elevation_m",
                    format!("site '{name}' already has elevation {e0:?} m; edit the site instead"),
                ));
            }
            if barometer_kpa.is_some() && barometer_kpa != b0 {
                return Err(FieldError::new(
                    "barometer_kpa",
                    format!(
                        "site '{name}' already has barometer {b0:?} kPa; edit the site instead"
                    ),
                ));
            }
            Ok(id)
        }
        None => {
            conn.execute(
                "INSERT INTO sites (name, elevation_m, barometer_kpa, barometer_pa) VALUES (?1, ?2, ?3, ?4)",
                params![name, elevation_m, barometer_kpa, barometer_kpa.map(|k| k * 1e3)],
            )
            .map_err(|e| FieldError::new("site", e.to_string()))?;
            Ok(conn.last_insert_rowid())
        }
    }
}

/// The tank columns written from a [`TankSpec`], in the order of [`tank_values`].
const TANK_WRITE_COLUMNS: [&str; 20] = [
    "site_id",
    "name",
    "fluid",
    "orientation",
    "diameter_m",
    "length_m",
    "heads",
    "crown_ratio",
    "knuckle_ratio",
    "line_temperature_c",
    "line_temperature_k",
    "dp_unit",
    "gauge_span",
    "gauge_span_pa",
    "gauge_accuracy_percent",
    "relief_pressure_value",
    "relief_pressure_unit",
    "relief_pressure_pa",
    "reorder_percent",
    "ner_percent_per_day",
];

/// The values of [`TANK_WRITE_COLUMNS`] for a tank at site `site_id`.
fn tank_values(site_id: i64, t: &TankSpec) -> [Value; 20] {
    [
        site_id.into(),
        t.name.clone().into(),
        t.fluid.as_str().to_owned().into(),
        t.orientation.as_str().to_owned().into(),
        t.diameter_m.into(),
        t.length_m.into(),
        t.heads.as_str().to_owned().into(),
        t.crown_ratio.into(),
        t.knuckle_ratio.into(),
        t.line_temperature_c.into(),
        t.line_temperature_k().into(),
        t.dp_unit.symbol().to_owned().into(),
        t.gauge_span.into(),
        t.gauge_span_pa().into(),
        t.gauge_accuracy_percent.into(),
        t.relief_pressure.map(|p| p.value).into(),
        t.relief_pressure.map(|p| p.unit.symbol().to_owned()).into(),
        t.relief_pressure.map(|p| p.si_value()).into(),
        t.reorder_percent.into(),
        t.ner_percent_per_day.into(),
    ]
}

pub(crate) fn insert_tank(
    conn: &Connection,
    site_id: i64,
    t: &TankSpec,
) -> Result<i64, rusqlite::Error> {
    let places: Vec<String> = (1..=TANK_WRITE_COLUMNS.len())
        .map(|i| format!("?{i}"))
        .collect();
    let sql = format!(
        "INSERT INTO tanks ({}) VALUES ({})",
        TANK_WRITE_COLUMNS.join(", "),
        places.join(", ")
    );
    conn.execute(&sql, params_from_iter(tank_values(site_id, t)))?;
    let id = conn.last_insert_rowid();
    write_strapping(conn, id, &t.strapping)?;
    Ok(id)
}

fn write_strapping(conn: &Connection, tank_id: i64, points: &[(f64, f64)]) -> rusqlite::Result<()> {
    conn.execute("DELETE FROM strapping_points WHERE tank_id = ?1", [tank_id])?;
    let mut st = conn.prepare_cached(
        "INSERT INTO strapping_points (tank_id, level_m, volume_m3) VALUES (?1, ?2, ?3)",
    )?;
    for (l, v) in points {
        st.execute(params![tank_id, l, v])?;
    }
    Ok(())
}

pub(crate) const INSERT_READING: &str = "INSERT INTO readings (tank_id, time_text, time_ms, dp_value, dp_unit, \
    dp_pa, pressure_value, pressure_unit, pressure_pa, liquid_temperature_k, note) \
    VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11)";

pub(crate) fn insert_reading(
    conn: &Connection,
    tank_id: i64,
    r: &ReadingInput,
) -> rusqlite::Result<i64> {
    let mut st = conn.prepare_cached(INSERT_READING)?;
    insert_reading_with(&mut st, tank_id, r)?;
    Ok(conn.last_insert_rowid())
}

/// Insert with an already prepared [`INSERT_READING`] statement (the importer's hot loop).
pub(crate) fn insert_reading_with(
    st: &mut rusqlite::Statement<'_>,
    tank_id: i64,
    r: &ReadingInput,
) -> rusqlite::Result<()> {
    st.execute(params![
        tank_id,
        r.time.text,
        r.time.ms,
        r.dp.value,
        r.dp.unit.symbol(),
        r.dp.si_value(),
        r.pressure.value,
        r.pressure.unit.symbol(),
        r.pressure.si_value(),
        r.liquid_temperature_k,
        r.note,
    ])?;
    Ok(())
}

pub(crate) fn vehicle_ids(
    conn: &Connection,
    carrier: &str,
    vehicle: &str,
) -> Result<(i64, i64), FieldError> {
    let sql_err = |e: rusqlite::Error| FieldError::new("vehicle", e.to_string());
    let carrier_id: i64 = match conn
        .query_row("SELECT id FROM carriers WHERE name = ?1", [carrier], |r| {
            r.get(0)
        })
        .optional()
        .map_err(sql_err)?
    {
        Some(id) => id,
        None => {
            conn.execute("INSERT INTO carriers (name) VALUES (?1)", [carrier])
                .map_err(sql_err)?;
            conn.last_insert_rowid()
        }
    };
    let vehicle_row: Option<(i64, i64)> = conn
        .query_row(
            "SELECT id, carrier_id FROM vehicles WHERE name = ?1",
            [vehicle],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )
        .optional()
        .map_err(sql_err)?;
    match vehicle_row {
        Some((vid, cid)) if cid == carrier_id => Ok((carrier_id, vid)),
        Some(_) => Err(FieldError::new(
            "vehicle",
            format!("vehicle '{vehicle}' belongs to another carrier, not '{carrier}'"),
        )),
        None => {
            conn.execute(
                "INSERT INTO vehicles (carrier_id, name) VALUES (?1, ?2)",
                params![carrier_id, vehicle],
            )
            .map_err(sql_err)?;
            Ok((carrier_id, conn.last_insert_rowid()))
        }
    }
}

pub(crate) fn insert_delivery(
    conn: &Connection,
    tank_id: i64,
    carrier_id: i64,
    vehicle_id: i64,
    d: &DeliveryInput,
) -> rusqlite::Result<i64> {
    let mut st = conn.prepare_cached(
        "INSERT INTO deliveries (tank_id, ticket, start_text, start_ms, end_text, end_ms, quantity_value, \
         quantity_unit, quantity_si, carrier_id, vehicle_id, supply_pressure_value, supply_pressure_unit, \
         supply_pressure_pa) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14)",
    )?;
    st.execute(params![
        tank_id,
        d.ticket,
        d.start.text,
        d.start.ms,
        d.end.text,
        d.end.ms,
        d.quantity.value,
        d.quantity.unit.symbol(),
        d.quantity.si_value(),
        carrier_id,
        vehicle_id,
        d.supply_pressure.map(|p| p.value),
        d.supply_pressure.map(|p| p.unit.symbol()),
        d.supply_pressure.map(|p| p.si_value()),
    ])?;
    Ok(conn.last_insert_rowid())
}

fn record_revision(
    conn: &Connection,
    table: &str,
    row_id: i64,
    action: &str,
    reason: &str,
    old: &impl serde::Serialize,
) -> Result<(), StoreError> {
    let reason = reason.trim();
    if reason.is_empty() {
        return Err(StoreError::Invalid(vec![FieldError::new(
            "reason",
            "say why the record is changed; the reason is kept with its history",
        )]));
    }
    let json = serde_json::to_string(old).map_err(|e| StoreError::Encode(e.to_string()))?;
    conn.execute(
        "INSERT INTO revisions (table_name, row_id, action, revised_at, reason, old_row) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
        params![table, row_id, action, now_text(), reason, json],
    )?;
    Ok(())
}

impl Store {
    /// Open (creating if needed) the database at `path`, with WAL, foreign keys, and every migration.
    pub fn open(path: &Path) -> Result<Self, StoreError> {
        if let Some(dir) = path.parent()
            && !dir.as_os_str().is_empty()
        {
            std::fs::create_dir_all(dir).map_err(|source| StoreError::Io {
                path: dir.display().to_string(),
                source,
            })?;
        }
        Self::setup(Connection::open(path)?)
    }

    /// An empty database in memory (tests, previews).
    pub fn open_in_memory() -> Result<Self, StoreError> {
        Self::setup(Connection::open_in_memory()?)
    }

    fn setup(mut conn: Connection) -> Result<Self, StoreError> {
        conn.pragma_update(None, "journal_mode", "WAL")?;
        // WAL with NORMAL keeps every commit atomic across crashes and kills (SQLite docs, "WAL mode").
        conn.pragma_update(None, "synchronous", "NORMAL")?;
        conn.pragma_update(None, "foreign_keys", "ON")?;
        conn.pragma_update(None, "cache_size", -131_072)?; // up to 128 MiB page cache: large imports spill less
        conn.busy_timeout(std::time::Duration::from_secs(5))?;
        migrations().to_latest(&mut conn)?;
        Ok(Self { conn })
    }

    /// The schema version (number of migrations applied).
    pub fn schema_version(&self) -> Result<i64, StoreError> {
        Ok(self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))?)
    }

    /// All live sites, by name.
    pub fn sites(&self) -> Result<Vec<Site>, StoreError> {
        let mut st = self.conn.prepare(
            "SELECT id, name, elevation_m, barometer_kpa FROM sites WHERE deleted_at IS NULL ORDER BY name",
        )?;
        let rows = st.query_map([], |r| {
            Ok(Site {
                id: r.get(0)?,
                name: r.get(1)?,
                elevation_m: r.get(2)?,
                barometer_kpa: r.get(3)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// Create a site; its name must be new.
    pub fn add_site(
        &mut self,
        name: &str,
        elevation_m: Option<f64>,
        barometer_kpa: Option<f64>,
    ) -> Result<i64, StoreError> {
        let name = name.trim();
        if name.is_empty() {
            return Err(StoreError::Invalid(vec![FieldError::new(
                "site",
                "a name is required",
            )]));
        }
        let exists: bool = self.conn.query_row(
            "SELECT EXISTS(SELECT 1 FROM sites WHERE name = ?1 AND deleted_at IS NULL)",
            [name],
            |r| r.get(0),
        )?;
        if exists {
            return Err(StoreError::Invalid(vec![FieldError::new(
                "site",
                format!("a site named '{name}' already exists"),
            )]));
        }
        site_id_for(&self.conn, name, elevation_m, barometer_kpa)
            .map_err(|e| StoreError::Invalid(vec![e]))
    }

    /// Change a site's barometer settings, keeping the earlier version.
    pub fn edit_site(
        &mut self,
        id: i64,
        elevation_m: Option<f64>,
        barometer_kpa: Option<f64>,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self
            .sites()?
            .into_iter()
            .find(|s| s.id == id)
            .ok_or_else(|| StoreError::NotFound {
                what: "site",
                key: id.to_string(),
            })?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "sites", id, "edit", reason, &old)?;
        tx.execute(
            "UPDATE sites SET elevation_m = ?2, barometer_kpa = ?3, barometer_pa = ?4 WHERE id = ?1",
            params![id, elevation_m, barometer_kpa, barometer_kpa.map(|k| k * 1e3)],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// All live tanks, by site then name, with their strapping tables.
    pub fn tanks(&self) -> Result<Vec<Tank>, StoreError> {
        let sql = format!(
            "SELECT {TANK_COLUMNS} FROM tanks t JOIN sites s ON s.id = t.site_id \
             WHERE t.deleted_at IS NULL ORDER BY s.name, t.name"
        );
        let mut st = self.conn.prepare(&sql)?;
        let mut tanks: Vec<Tank> = st.query_map([], tank_from_row)?.collect::<Result<_, _>>()?;
        let mut sp = self.conn.prepare(
            "SELECT tank_id, level_m, volume_m3 FROM strapping_points ORDER BY tank_id, level_m",
        )?;
        let points = sp.query_map([], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, f64>(1)?,
                r.get::<_, f64>(2)?,
            ))
        })?;
        for p in points {
            let (id, l, v) = p?;
            if let Some(t) = tanks.iter_mut().find(|t| t.id == id) {
                t.spec.strapping.push((l, v));
            }
        }
        Ok(tanks)
    }

    /// One tank by id.
    pub fn tank(&self, id: i64) -> Result<Tank, StoreError> {
        self.tanks()?
            .into_iter()
            .find(|t| t.id == id)
            .ok_or_else(|| StoreError::NotFound {
                what: "tank",
                key: id.to_string(),
            })
    }

    /// One tank by its name.
    pub fn tank_by_name(&self, name: &str) -> Result<Tank, StoreError> {
        self.tanks()?
            .into_iter()
            .find(|t| t.spec.name == name)
            .ok_or_else(|| StoreError::NotFound {
                what: "tank",
                key: name.to_owned(),
            })
    }

    /// Create a tank (and its site if new).
    pub fn add_tank(&mut self, spec: &TankSpec) -> Result<i64, StoreError> {
        let tx = self.conn.transaction()?;
        let site_id =
            site_id_for(&tx, &spec.site, None, None).map_err(|e| StoreError::Invalid(vec![e]))?;
        let id = insert_tank(&tx, site_id, spec).map_err(|e| {
            duplicate_or_sql(e, "tank", || {
                format!("a tank named '{}' already exists", spec.name)
            })
        })?;
        tx.commit()?;
        Ok(id)
    }

    /// Change a tank's settings, keeping the earlier version.
    pub fn edit_tank(&mut self, id: i64, spec: &TankSpec, reason: &str) -> Result<(), StoreError> {
        let old = self.tank(id)?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "tanks", id, "edit", reason, &old.spec)?;
        let site_id =
            site_id_for(&tx, &spec.site, None, None).map_err(|e| StoreError::Invalid(vec![e]))?;
        let sets: Vec<String> = TANK_WRITE_COLUMNS
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{c} = ?{}", i + 1))
            .collect();
        let sql = format!(
            "UPDATE tanks SET {} WHERE id = ?{}",
            sets.join(", "),
            TANK_WRITE_COLUMNS.len() + 1
        );
        let values = tank_values(site_id, spec)
            .into_iter()
            .chain([Value::from(id)]);
        tx.execute(&sql, params_from_iter(values))?;
        write_strapping(&tx, id, &spec.strapping)?;
        tx.commit()?;
        Ok(())
    }

    /// Add one reading to a tank.
    pub fn add_reading(&mut self, tank_id: i64, r: &ReadingInput) -> Result<i64, StoreError> {
        insert_reading(&self.conn, tank_id, r).map_err(|e| {
            duplicate_or_sql(e, "time", || {
                format!("this tank already has a reading at {}", r.time.text)
            })
        })
    }

    /// Live readings of a tank, oldest first; optionally only those with `from_ms <= time < to_ms`.
    pub fn readings(
        &self,
        tank_id: i64,
        period_ms: Option<(i64, i64)>,
    ) -> Result<Vec<Reading>, StoreError> {
        let (from, to) = period_ms.unwrap_or((i64::MIN, i64::MAX));
        let sql = format!(
            "SELECT {READING_COLUMNS} FROM readings WHERE tank_id = ?1 AND deleted_at IS NULL \
             AND time_ms >= ?2 AND time_ms < ?3 ORDER BY time_ms"
        );
        let mut st = self.conn.prepare_cached(&sql)?;
        let rows = st.query_map(params![tank_id, from, to], reading_from_row)?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// One reading by id (live or deleted).
    pub fn reading(&self, id: i64) -> Result<Reading, StoreError> {
        let sql = format!("SELECT {READING_COLUMNS} FROM readings WHERE id = ?1");
        self.conn
            .query_row(&sql, [id], reading_from_row)
            .optional()?
            .ok_or_else(|| StoreError::NotFound {
                what: "reading",
                key: id.to_string(),
            })
    }

    /// Replace a reading's values, keeping the earlier version with the reason.
    pub fn edit_reading(
        &mut self,
        id: i64,
        new: &ReadingInput,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.reading(id)?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "readings", id, "edit", reason, &old.input)?;
        tx.execute(
            "UPDATE readings SET time_text = ?2, time_ms = ?3, dp_value = ?4, dp_unit = ?5, dp_pa = ?6, \
             pressure_value = ?7, pressure_unit = ?8, pressure_pa = ?9, liquid_temperature_k = ?10, \
             note = ?11 WHERE id = ?1",
            params![
                id,
                new.time.text,
                new.time.ms,
                new.dp.value,
                new.dp.unit.symbol(),
                new.dp.si_value(),
                new.pressure.value,
                new.pressure.unit.symbol(),
                new.pressure.si_value(),
                new.liquid_temperature_k,
                new.note,
            ],
        )
        .map_err(|e| duplicate_or_sql(e, "time", || format!("this tank already has a reading at {}", new.time.text)))?;
        tx.commit()?;
        Ok(())
    }

    /// Delete a reading: it is marked deleted and its values kept in the history with the reason.
    pub fn delete_reading(&mut self, id: i64, reason: &str) -> Result<(), StoreError> {
        let old = self.reading(id)?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "readings", id, "delete", reason, &old.input)?;
        tx.execute(
            "UPDATE readings SET deleted_at = ?2 WHERE id = ?1",
            params![id, now_text()],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Add one delivery to a tank (its carrier and vehicle are created when new).
    pub fn add_delivery(&mut self, tank_id: i64, d: &DeliveryInput) -> Result<i64, StoreError> {
        let tx = self.conn.transaction()?;
        let (cid, vid) =
            vehicle_ids(&tx, &d.carrier, &d.vehicle).map_err(|e| StoreError::Invalid(vec![e]))?;
        let id = insert_delivery(&tx, tank_id, cid, vid, d).map_err(|e| {
            duplicate_or_sql(e, "ticket", || {
                format!("ticket '{}' is already recorded", d.ticket)
            })
        })?;
        tx.commit()?;
        Ok(id)
    }

    /// Live deliveries, of one tank or of all, by start time.
    pub fn deliveries(&self, tank_id: Option<i64>) -> Result<Vec<Delivery>, StoreError> {
        // Two statements rather than `?1 IS NULL OR ...`, so that one tank's query uses its index.
        let base = format!(
            "SELECT {DELIVERY_COLUMNS} FROM deliveries d JOIN carriers c ON c.id = d.carrier_id \
             JOIN vehicles v ON v.id = d.vehicle_id WHERE d.deleted_at IS NULL"
        );
        let rows = match tank_id {
            Some(id) => {
                let sql = format!("{base} AND d.tank_id = ?1 ORDER BY d.start_ms, d.ticket");
                let mut st = self.conn.prepare_cached(&sql)?;
                st.query_map([id], delivery_from_row)?
                    .collect::<Result<_, _>>()?
            }
            None => {
                let sql = format!("{base} ORDER BY d.start_ms, d.ticket");
                let mut st = self.conn.prepare_cached(&sql)?;
                st.query_map([], delivery_from_row)?
                    .collect::<Result<_, _>>()?
            }
        };
        Ok(rows)
    }

    /// One delivery by id (live or deleted).
    pub fn delivery(&self, id: i64) -> Result<Delivery, StoreError> {
        let sql = format!(
            "SELECT {DELIVERY_COLUMNS} FROM deliveries d JOIN carriers c ON c.id = d.carrier_id \
             JOIN vehicles v ON v.id = d.vehicle_id WHERE d.id = ?1"
        );
        self.conn
            .query_row(&sql, [id], delivery_from_row)
            .optional()?
            .ok_or_else(|| StoreError::NotFound {
                what: "delivery",
                key: id.to_string(),
            })
    }

    /// Replace a delivery's values, keeping the earlier version with the reason.
    pub fn edit_delivery(
        &mut self,
        id: i64,
        new: &DeliveryInput,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.delivery(id)?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "deliveries", id, "edit", reason, &old.input)?;
        let (cid, vid) = vehicle_ids(&tx, &new.carrier, &new.vehicle)
            .map_err(|e| StoreError::Invalid(vec![e]))?;
        tx.execute(
            "UPDATE deliveries SET ticket = ?2, start_text = ?3, start_ms = ?4, end_text = ?5, end_ms = ?6, \
             quantity_value = ?7, quantity_unit = ?8, quantity_si = ?9, carrier_id = ?10, vehicle_id = ?11, \
             supply_pressure_value = ?12, supply_pressure_unit = ?13, supply_pressure_pa = ?14 WHERE id = ?1",
            params![
                id,
                new.ticket,
                new.start.text,
                new.start.ms,
                new.end.text,
                new.end.ms,
                new.quantity.value,
                new.quantity.unit.symbol(),
                new.quantity.si_value(),
                cid,
                vid,
                new.supply_pressure.map(|p| p.value),
                new.supply_pressure.map(|p| p.unit.symbol()),
                new.supply_pressure.map(|p| p.si_value()),
            ],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Delete a delivery, keeping its values in the history with the reason.
    pub fn delete_delivery(&mut self, id: i64, reason: &str) -> Result<(), StoreError> {
        let old = self.delivery(id)?;
        let tx = self.conn.transaction()?;
        record_revision(&tx, "deliveries", id, "delete", reason, &old.input)?;
        tx.execute(
            "UPDATE deliveries SET deleted_at = ?2 WHERE id = ?1",
            params![id, now_text()],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// All vehicles with their carriers, by name.
    pub fn vehicles(&self) -> Result<Vec<Vehicle>, StoreError> {
        let mut st = self.conn.prepare(
            "SELECT v.id, v.name, c.name, v.meter_repeatability_percent FROM vehicles v \
             JOIN carriers c ON c.id = v.carrier_id ORDER BY v.name",
        )?;
        let rows = st.query_map([], |r| {
            Ok(Vehicle {
                id: r.get(0)?,
                name: r.get(1)?,
                carrier: r.get(2)?,
                meter_repeatability_percent: r.get(3)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// The earlier versions of one row, oldest first. `table` is `readings`, `deliveries`, `tanks` or `sites`.
    pub fn revisions(&self, table: &str, row_id: i64) -> Result<Vec<Revision>, StoreError> {
        let mut st = self.conn.prepare(
            "SELECT table_name, row_id, action, revised_at, reason, old_row FROM revisions \
             WHERE table_name = ?1 AND row_id = ?2 ORDER BY id",
        )?;
        let rows = st.query_map(params![table, row_id], |r| {
            Ok(Revision {
                table: r.get(0)?,
                row_id: r.get(1)?,
                action: r.get(2)?,
                revised_at: r.get(3)?,
                reason: r.get(4)?,
                old_row: r.get(5)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// Number of live readings, of one tank or all.
    pub fn reading_count(&self, tank_id: Option<i64>) -> Result<i64, StoreError> {
        Ok(self.conn.query_row(
            "SELECT COUNT(*) FROM readings WHERE deleted_at IS NULL AND (?1 IS NULL OR tank_id = ?1)",
            [tank_id],
            |r| r.get(0),
        )?)
    }

    /// A full text dump of every table, row by row in rowid order, for comparing databases.
    pub fn dump(&self) -> Result<String, StoreError> {
        let mut out = String::new();
        let mut st = self.conn.prepare(
            "SELECT name, sql FROM sqlite_master WHERE sql IS NOT NULL ORDER BY type, name",
        )?;
        let objects: Vec<(String, String)> = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<_, _>>()?;
        for (name, sql) in &objects {
            out.push_str(sql);
            out.push_str(";\n");
            if !sql.starts_with("CREATE TABLE") {
                continue;
            }
            let mut rows = self.conn.prepare(&format!("SELECT * FROM \"{name}\""))?;
            let n = rows.column_count();
            let mut q = rows.query([])?;
            while let Some(r) = q.next()? {
                let vals: Vec<String> = (0..n)
                    .map(|i| match r.get_ref(i) {
                        Ok(v) => format!("{v:?}"),
                        Err(e) => format!("<{e}>"),
                    })
                    .collect();
                out.push_str(&format!("{name}: {}\n", vals.join(", ")));
            }
        }
        out.push_str(&format!("user_version: {}\n", self.schema_version()?));
        Ok(out)
    }
}
