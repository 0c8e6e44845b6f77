//! How records map to SQLite rows: one column list per record kind, serving insert, edit and the
//! mapping of uniqueness failures to the user's field; and the row writers shared by the importer
//! (inside its transaction) and the single-record methods.

use crate::StoreError;
use crate::cell::{Cell, Cells};
use crate::check::FieldError;
use crate::records::*;
use crate::revision::*;
use rusqlite::{Connection, OptionalExtension, params, params_from_iter};
use units::{DpUnit, Entered, QuantityUnit, TankPressureUnit, Unit};

pub(crate) fn now_text() -> String {
    units::rfc3339_from_ms(units::now_ms())
}

fn parse_text<R: Cells, T: std::str::FromStr>(r: &R, idx: usize) -> Result<T, R::Error>
where
    T::Err: std::fmt::Display,
{
    r.text(idx)?
        .parse::<T>()
        .map_err(|e| R::bad(idx, e.to_string()))
}

fn entered_pressure<R: Cells>(
    r: &R,
    idx: usize,
) -> Result<Option<Entered<TankPressureUnit>>, R::Error> {
    match (r.opt_real(idx)?, r.opt_text(idx + 1)?) {
        (Some(value), Some(u)) => Ok(Some(Entered {
            value,
            unit: u
                .parse::<TankPressureUnit>()
                .map_err(|e| R::bad(idx + 1, e.to_string()))?,
        })),
        _ => Ok(None),
    }
}

/// A record kind's table, its written columns, and the rule its uniqueness failures break.
pub(crate) struct Columns {
    /// The table.
    pub table: &'static str,
    /// The columns written from an entry, in the order of its `values` function.
    pub write: &'static [&'static str],
    /// The field a uniqueness failure is reported on.
    pub unique_field: &'static str,
}

impl Columns {
    /// `INSERT INTO table (write...) VALUES (?1, ...)`.
    pub fn insert_sql(&self) -> String {
        self.insert_sql_marked('?')
    }

    /// [`Columns::insert_sql`] with PostgreSQL's parameter marks (`$1, ...`).
    pub fn insert_sql_pg(&self) -> String {
        self.insert_sql_marked('$')
    }

    fn insert_sql_marked(&self, mark: char) -> String {
        let places: Vec<String> = (1..=self.write.len())
            .map(|i| format!("{mark}{i}"))
            .collect();
        format!(
            "INSERT INTO {} ({}) VALUES ({})",
            self.table,
            self.write.join(", "),
            places.join(", ")
        )
    }

    /// `UPDATE table SET write..., revision = revision + 1 WHERE id = ?N AND revision = ?N+1`: the id
    /// and then the revision the change was made from bound last; no row changes when the record has
    /// moved on since.
    pub fn update_sql(&self) -> String {
        self.update_sql_marked('?')
    }

    /// [`Columns::update_sql`] with PostgreSQL's parameter marks.
    pub fn update_sql_pg(&self) -> String {
        self.update_sql_marked('$')
    }

    fn update_sql_marked(&self, mark: char) -> String {
        let sets: Vec<String> = self
            .write
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{c} = {mark}{}", i + 1))
            .collect();
        format!(
            "UPDATE {} SET {}, revision = revision + 1 WHERE id = {mark}{} AND revision = {mark}{}",
            self.table,
            sets.join(", "),
            self.write.len() + 1,
            self.write.len() + 2
        )
    }

    /// A failed write as the user's field error when it broke this record's uniqueness rule.
    pub fn write_error(&self, e: rusqlite::Error, message: impl FnOnce() -> String) -> StoreError {
        if is_unique_violation(&e) {
            StoreError::Invalid(vec![FieldError::new(self.unique_field, message())])
        } else {
            e.into()
        }
    }
}

/// Is this error a UNIQUE constraint failure?
pub(crate) fn is_unique_violation(e: &rusqlite::Error) -> bool {
    matches!(e, rusqlite::Error::SqliteFailure(f, _)
        if f.extended_code == rusqlite::ffi::SQLITE_CONSTRAINT_UNIQUE)
}

// ---- tanks ----

pub(crate) const TANK_COLUMNS: &str = "t.id, t.site_id, s.name, s.elevation_m, s.barometer_kpa, t.name, t.fluid, \
    t.orientation, t.diameter_m, t.length_m, t.heads, t.crown_ratio, t.knuckle_ratio, t.line_temperature_c, \
    t.dp_unit, t.gauge_span, t.gauge_accuracy_percent, t.relief_pressure_value, t.relief_pressure_unit, \
    t.reorder_percent, t.ner_percent_per_day, s.time_zone, t.revision";

/// How many columns [`TANK_COLUMNS`] selects (a query's own columns follow them).
pub(crate) const TANK_COLUMN_COUNT: usize = 23;

pub(crate) fn tank_from_row<R: Cells>(r: &R) -> Result<TankRecord, R::Error> {
    let elevation = r.opt_real(3)?;
    let barometer_kpa = r.opt_real(4)?;
    Ok(TankRecord {
        id: TankId(r.int(0)?),
        site_id: SiteId(r.int(1)?),
        barometer_pa: barometer_pa(barometer_kpa.map(|k| k * 1e3), elevation),
        time_zone: r.opt_text(21)?,
        spec: TankSpec {
            site: r.text(2)?,
            name: r.text(5)?,
            fluid: parse_text(r, 6)?,
            orientation: parse_text(r, 7)?,
            diameter_m: r.real(8)?,
            length_m: r.real(9)?,
            heads: parse_text(r, 10)?,
            crown_ratio: r.opt_real(11)?,
            knuckle_ratio: r.opt_real(12)?,
            line_temperature_c: r.real(13)?,
            dp_unit: parse_text::<_, DpUnit>(r, 14)?,
            gauge_span: r.opt_real(15)?,
            gauge_accuracy_percent: r.opt_real(16)?,
            relief_pressure: entered_pressure(r, 17)?,
            reorder_percent: r.opt_real(19)?,
            ner_percent_per_day: r.opt_real(20)?,
            strapping: Vec::new(),
        },
        revision: r.int(22)?,
    })
}

/// Tanks: written from a [`TankSpec`] and its site id.
pub(crate) const TANKS: Columns = Columns {
    table: "tanks",
    write: &[
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
    ],
    unique_field: "tank",
};

/// The values of [`TANKS`] for a tank at site `site_id`.
pub(crate) fn tank_values(site_id: SiteId, t: &TankSpec) -> Vec<Cell> {
    vec![
        site_id.0.into(),
        t.name.clone().into(),
        t.fluid.name().to_owned().into(),
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
        t.relief_pressure.map(|p| p.unit.symbol()).into(),
        t.relief_pressure.map(|p| p.si_value()).into(),
        t.reorder_percent.into(),
        t.ner_percent_per_day.into(),
    ]
}

pub(crate) fn duplicate_tank(t: &TankSpec) -> String {
    format!("a tank named '{}' already exists", t.name)
}

pub(crate) fn insert_tank(
    conn: &Connection,
    site_id: SiteId,
    t: &TankSpec,
) -> Result<TankId, rusqlite::Error> {
    conn.prepare_cached(&TANKS.insert_sql())?
        .execute(params_from_iter(tank_values(site_id, t)))?;
    let id = TankId(conn.last_insert_rowid());
    write_strapping(conn, id, &t.strapping)?;
    Ok(id)
}

/// Update a tank made from revision `opened`; false (and nothing written) when it has moved on.
pub(crate) fn update_tank(
    conn: &Connection,
    id: TankId,
    opened: i64,
    site_id: SiteId,
    t: &TankSpec,
) -> Result<bool, rusqlite::Error> {
    let values = tank_values(site_id, t)
        .into_iter()
        .chain([Cell::Int(id.0), Cell::Int(opened)]);
    let changed = conn
        .prepare_cached(&TANKS.update_sql())?
        .execute(params_from_iter(values))?;
    if changed == 0 {
        return Ok(false);
    }
    write_strapping(conn, id, &t.strapping)?;
    Ok(true)
}

fn write_strapping(conn: &Connection, tank: TankId, points: &[(f64, f64)]) -> rusqlite::Result<()> {
    conn.execute("DELETE FROM strapping_points WHERE tank_id = ?1", [tank.0])?;
    let mut st = conn.prepare_cached(
        "INSERT INTO strapping_points (tank_id, level_m, volume_m3) VALUES (?1, ?2, ?3)",
    )?;
    for (l, v) in points {
        st.execute(params![tank.0, l, v])?;
    }
    Ok(())
}

// ---- sites ----

/// The columns of a site, in the order [`site_from_row`] reads them.
pub(crate) const SITE_COLUMNS: &str = "id, name, elevation_m, barometer_kpa, time_zone, revision";

/// A site from a row of [`SITE_COLUMNS`].
pub(crate) fn site_from_row<R: Cells>(r: &R) -> Result<Site, R::Error> {
    Ok(Site {
        id: SiteId(r.int(0)?),
        name: r.text(1)?,
        elevation_m: r.opt_real(2)?,
        barometer_kpa: r.opt_real(3)?,
        time_zone: r.opt_text(4)?,
        revision: r.int(5)?,
    })
}

/// The live site of this name (and false), or a new one (and true).
pub(crate) fn site_id_for(
    conn: &Connection,
    name: &str,
    settings: &SiteSettings,
) -> Result<(SiteId, bool), FieldError> {
    settings.check()?;
    let SiteSettings {
        elevation_m,
        barometer_kpa,
        time_zone,
    } = settings;
    let (elevation_m, barometer_kpa) = (*elevation_m, *barometer_kpa);
    let existing = conn
        .query_row(
            "SELECT id, elevation_m, barometer_kpa, time_zone FROM sites WHERE name = ?1 AND deleted_at IS NULL",
            [name],
            |r| {
                Ok((
                    r.get::<_, i64>(0)?,
                    r.get::<_, Option<f64>>(1)?,
                    r.get::<_, Option<f64>>(2)?,
                    r.get::<_, Option<String>>(3)?,
                ))
            },
        )
        .optional()
        .map_err(|e| FieldError::new("site", e.to_string()))?;
    match existing {
        Some((id, e0, b0, z0)) => {
            same_site_settings(name, settings, e0, b0, z0.as_deref())?;
            Ok((SiteId(id), false))
        }
        None => {
            conn.execute(
                "INSERT INTO sites (name, elevation_m, barometer_kpa, barometer_pa, time_zone) \
                 VALUES (?1, ?2, ?3, ?4, ?5)",
                params![
                    name,
                    elevation_m,
                    barometer_kpa,
                    barometer_kpa.map(|k| k * 1e3),
                    time_zone
                ],
            )
            .map_err(|e| FieldError::new("site", e.to_string()))?;
            Ok((SiteId(conn.last_insert_rowid()), true))
        }
    }
}

/// A row naming an existing site may repeat its settings, never change them (edit the site for that).
pub(crate) fn same_site_settings(
    name: &str,
    settings: &SiteSettings,
    e0: Option<f64>,
    b0: Option<f64>,
    z0: Option<&str>,
) -> Result<(), FieldError> {
    let SiteSettings {
        elevation_m,
        barometer_kpa,
        time_zone,
    } = settings;
    if time_zone.is_some() && time_zone.as_deref() != z0 {
        return Err(FieldError::new(
            "time_zone",
            format!(
                "site '{name}' already has time zone {}; edit the site instead",
                z0.unwrap_or("none (UTC)")
            ),
        ));
    }
    if elevation_m.is_some() && *elevation_m != e0 {
        return Err(FieldError::new(
            "elevation_m",
            format!("site '{name}' already has elevation {e0:?} m; edit the site instead"),
        ));
    }
    if barometer_kpa.is_some() && *barometer_kpa != b0 {
        return Err(FieldError::new(
            "barometer_kpa",
            format!("site '{name}' already has barometer {b0:?} kPa; edit the site instead"),
        ));
    }
    Ok(())
}

// ---- readings ----

pub(crate) const READING_COLUMNS: &str = "id, tank_id, time_text, time_ms, dp_value, dp_unit, pressure_value, \
    pressure_unit, liquid_temperature_k, note, revision";

pub(crate) fn reading_from_row<R: Cells>(r: &R) -> Result<Reading, R::Error> {
    Ok(Reading {
        id: ReadingId(r.int(0)?),
        tank_id: TankId(r.int(1)?),
        entry: ReadingEntry {
            time: Stamp {
                text: r.text(2)?,
                ms: r.int(3)?,
            },
            dp: Entered {
                value: r.real(4)?,
                unit: parse_text::<_, DpUnit>(r, 5)?,
            },
            pressure: Entered {
                value: r.real(6)?,
                unit: parse_text::<_, TankPressureUnit>(r, 7)?,
            },
            liquid_temperature_k: r.opt_real(8)?,
            note: r.opt_text(9)?,
        },
        revision: r.int(10)?,
    })
}

/// Readings: written from a tank id and a [`ReadingEntry`].
pub(crate) const READINGS: Columns = Columns {
    table: "readings",
    write: &[
        "tank_id",
        "time_text",
        "time_ms",
        "dp_value",
        "dp_unit",
        "dp_pa",
        "pressure_value",
        "pressure_unit",
        "pressure_pa",
        "liquid_temperature_k",
        "note",
    ],
    unique_field: "time",
};

pub(crate) fn duplicate_reading(r: &ReadingEntry) -> String {
    format!("this tank already has a reading at {}", r.time.text)
}

/// Insert or update with an already prepared [`READINGS`] statement (the importer's hot loop); for an
/// update the id and the revision it was made from are bound last. The rows changed (0: an update of
/// a record that has moved on).
pub(crate) fn execute_reading(
    st: &mut rusqlite::Statement<'_>,
    tank: TankId,
    r: &ReadingEntry,
    id: Option<(ReadingId, i64)>,
) -> rusqlite::Result<usize> {
    let values = params![
        tank.0,
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
    ];
    match id {
        None => st.execute(values),
        Some((id, opened)) => {
            let mut all: Vec<&dyn rusqlite::ToSql> = values.to_vec();
            all.push(&id.0);
            all.push(&opened);
            st.execute(all.as_slice())
        }
    }
}

// ---- deliveries ----

pub(crate) const DELIVERY_COLUMNS: &str = "d.id, d.tank_id, d.ticket, d.start_text, d.start_ms, d.end_text, d.end_ms, \
    d.quantity_value, d.quantity_unit, c.name, v.name, d.supply_pressure_value, d.supply_pressure_unit, \
    d.revision";

pub(crate) fn delivery_from_row<R: Cells>(r: &R) -> Result<Delivery, R::Error> {
    Ok(Delivery {
        id: DeliveryId(r.int(0)?),
        tank_id: TankId(r.int(1)?),
        entry: DeliveryEntry {
            ticket: r.text(2)?,
            start: Stamp {
                text: r.text(3)?,
                ms: r.int(4)?,
            },
            end: Stamp {
                text: r.text(5)?,
                ms: r.int(6)?,
            },
            quantity: Entered {
                value: r.real(7)?,
                unit: parse_text::<_, QuantityUnit>(r, 8)?,
            },
            carrier: r.text(9)?,
            vehicle: r.text(10)?,
            supply_pressure: entered_pressure(r, 11)?,
        },
        revision: r.int(13)?,
    })
}

/// Deliveries: written from a tank id, its carrier and vehicle ids and a [`DeliveryEntry`].
pub(crate) const DELIVERIES: Columns = Columns {
    table: "deliveries",
    write: &[
        "tank_id",
        "ticket",
        "start_text",
        "start_ms",
        "end_text",
        "end_ms",
        "quantity_value",
        "quantity_unit",
        "quantity_si",
        "carrier_id",
        "vehicle_id",
        "supply_pressure_value",
        "supply_pressure_unit",
        "supply_pressure_pa",
    ],
    unique_field: "ticket",
};

pub(crate) fn duplicate_delivery(d: &DeliveryEntry) -> String {
    format!("ticket '{}' is already recorded", d.ticket)
}

/// The values of [`DELIVERIES`].
pub(crate) fn delivery_values(
    tank: TankId,
    carrier_id: i64,
    vehicle_id: i64,
    d: &DeliveryEntry,
) -> Vec<Cell> {
    vec![
        tank.0.into(),
        d.ticket.as_str().into(),
        d.start.text.as_str().into(),
        d.start.ms.into(),
        d.end.text.as_str().into(),
        d.end.ms.into(),
        d.quantity.value.into(),
        d.quantity.unit.symbol().into(),
        d.quantity.si_value().into(),
        carrier_id.into(),
        vehicle_id.into(),
        d.supply_pressure.map(|p| p.value).into(),
        d.supply_pressure.map(|p| p.unit.symbol()).into(),
        d.supply_pressure.map(|p| p.si_value()).into(),
    ]
}

/// The values of [`READINGS`].
pub(crate) fn reading_values(tank: TankId, r: &ReadingEntry) -> Vec<Cell> {
    vec![
        tank.0.into(),
        r.time.text.as_str().into(),
        r.time.ms.into(),
        r.dp.value.into(),
        r.dp.unit.symbol().into(),
        r.dp.si_value().into(),
        r.pressure.value.into(),
        r.pressure.unit.symbol().into(),
        r.pressure.si_value().into(),
        r.liquid_temperature_k.into(),
        r.note.as_deref().into(),
    ]
}

/// Insert (`id` None) or update a delivery made from a revision; its carrier and vehicle are found or
/// created first. None: the update found the record moved on, and wrote nothing.
pub(crate) fn write_delivery(
    conn: &Connection,
    tank: TankId,
    d: &DeliveryEntry,
    id: Option<(DeliveryId, i64)>,
) -> Result<Option<DeliveryId>, StoreError> {
    let (carrier_id, vehicle_id) =
        vehicle_ids(conn, &d.carrier, &d.vehicle).map_err(|e| StoreError::Invalid(vec![e]))?;
    let mut values = delivery_values(tank, carrier_id, vehicle_id, d);
    let sql = match id {
        None => DELIVERIES.insert_sql(),
        Some((id, opened)) => {
            values.push(Cell::Int(id.0));
            values.push(Cell::Int(opened));
            DELIVERIES.update_sql()
        }
    };
    let changed = conn
        .prepare_cached(&sql)
        .and_then(|mut st| st.execute(params_from_iter(values)))
        .map_err(|e| DELIVERIES.write_error(e, || duplicate_delivery(d)))?;
    Ok(match id {
        None => Some(DeliveryId(conn.last_insert_rowid())),
        Some((id, _)) => (changed > 0).then_some(id),
    })
}

fn vehicle_ids(conn: &Connection, carrier: &str, vehicle: &str) -> Result<(i64, i64), FieldError> {
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
        Some(_) => Err(other_carrier(vehicle, carrier)),
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

/// A delivery naming a known vehicle with another carrier.
pub(crate) fn other_carrier(vehicle: &str, carrier: &str) -> FieldError {
    FieldError::new(
        "vehicle",
        format!("vehicle '{vehicle}' belongs to another carrier, not '{carrier}'"),
    )
}

// ---- history ----
/// Keep the earlier version of a record with the reason (refused without one).
pub(crate) fn record_revision(
    conn: &Connection,
    record: RecordRef,
    action: RevisionAction,
    reason: &str,
    before: &EarlierVersion,
) -> Result<(), StoreError> {
    let (reason, json) = revision_text(reason, before)?;
    let (table, row) = table_row(record);
    conn.execute(
        "INSERT INTO revisions (table_name, row_id, action, revised_at, reason, old_row) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
        params![table, row, action.as_str(), now_text(), reason, json],
    )?;
    Ok(())
}
