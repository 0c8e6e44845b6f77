//! The SQLite side of a CSV import: one transaction, every row checked, all or nothing.

use super::chain::{self, Action, ChainWriter, Kind};
use super::rows::*;
use super::{SiteError, Store, site_with};
use crate::StoreError;
use crate::check::{DeliveryFields, FieldError, ReadingFields, TankFields};
use crate::csv_format::*;
use crate::records::TankRecord;
use crate::repository::Repository;
use rusqlite::Connection;
use std::collections::HashMap;

pub(crate) fn import(
    store: &mut Store,
    sources: ImportSources<'_>,
    opts: &ImportOptions<'_>,
) -> Result<ImportSummary, StoreError> {
    let mut sink = Sink::new(opts.max_errors);
    let mut summary = ImportSummary::default();
    let mut tanks: HashMap<String, TankRecord> = store
        .tanks()?
        .into_iter()
        .map(|t| (t.spec.name.clone(), t))
        .collect();
    let tx = store.conn.transaction()?;
    let mut chain = ChainWriter::new(&tx)?;
    let ImportSources {
        tanks: tank_source,
        readings,
        deliveries,
    } = sources;
    if let Some(src) = tank_source
        && let Some(mut t) = Table::open(src, &TANK_HEADER[..TANK_REQUIRED], &mut sink)
    {
        import_tanks(&tx, &mut chain, &mut t, &mut sink, &mut tanks, &mut summary)?;
    }
    if let Some(src) = readings
        && let Some(mut t) = Table::open(src, &READING_HEADER[..READING_REQUIRED], &mut sink)
    {
        import_readings(
            &tx,
            &mut chain,
            &mut t,
            &mut sink,
            &tanks,
            opts,
            &mut summary,
        )?;
    }
    if let Some(src) = deliveries
        && let Some(mut t) = Table::open(src, &DELIVERY_HEADER[..DELIVERY_REQUIRED], &mut sink)
    {
        import_deliveries(&tx, &mut chain, &mut t, &mut sink, &tanks, &mut summary)?;
    }
    if let Some(fatal) = sink.fatal.take() {
        // SQLite may have rolled the transaction back by itself (a full disk, an I/O error)
        if !tx.is_autocommit() {
            tx.rollback()?;
        }
        return Err(fatal);
    }
    match sink.into_errors() {
        None if opts.dry_run => {
            tx.rollback()?;
            Ok(summary)
        }
        None => {
            tx.commit()?;
            Ok(summary)
        }
        Some(errors) => {
            tx.rollback()?;
            Err(StoreError::Import(errors))
        }
    }
}

/// A failure of the storage, not of a row: the import stops.
fn storage_failure(e: &rusqlite::Error) -> bool {
    use rusqlite::ErrorCode::*;
    matches!(
        e.sqlite_error_code(),
        Some(DiskFull | SystemIoFailure | ReadOnly | DatabaseCorrupt | NotADatabase | OutOfMemory)
    )
}

fn import_tanks(
    conn: &Connection,
    chain: &mut ChainWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &mut HashMap<String, TankRecord>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let c = |n: &str| t.col(n);
    let cols = [
        c("site"),
        c("tank"),
        c("fluid"),
        c("orientation"),
        c("diameter_m"),
        c("length_m"),
        c("heads"),
        c("line_temperature_c"),
        c("crown_ratio"),
        c("knuckle_ratio"),
        c("dp_unit"),
        c("gauge_span"),
        c("gauge_accuracy_percent"),
        c("relief_pressure"),
        c("relief_pressure_unit"),
        c("reorder_percent"),
        c("ner_percent_per_day"),
        c("strapping"),
        c("elevation_m"),
        c("barometer_kpa"),
        c("time_zone"),
    ];
    let file = t.name.clone();
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let fields = TankFields {
            site: f(0),
            tank: f(1),
            fluid: f(2),
            orientation: f(3),
            diameter_m: f(4),
            length_m: f(5),
            heads: f(6),
            line_temperature_c: f(7),
            crown_ratio: f(8),
            knuckle_ratio: f(9),
            dp_unit: f(10),
            gauge_span: f(11),
            gauge_accuracy_percent: f(12),
            relief_pressure: f(13),
            relief_pressure_unit: f(14),
            reorder_percent: f(15),
            ner_percent_per_day: f(16),
            strapping: f(17),
        };
        let site_opt = |name: &str, i: usize, positive: bool| -> Result<Option<f64>, FieldError> {
            let s = f(i).trim();
            if s.is_empty() {
                return Ok(None);
            }
            match s.parse::<f64>() {
                Ok(v) if v.is_finite() && (!positive || v > 0.0) => Ok(Some(v)),
                _ => Err(FieldError::new(
                    name,
                    format!("'{s}' is not a valid number"),
                )),
            }
        };
        let elevation = site_opt("elevation_m", 18, false);
        let barometer = site_opt("barometer_kpa", 19, true);
        let zone_text = f(20).trim();
        let zone = if zone_text.is_empty() {
            Ok(None)
        } else {
            zone_text
                .parse::<units::Zone>()
                .map(|z| Some(z.name().to_string()))
                .map_err(|m| FieldError::new("time_zone", m))
        };
        let spec = fields.check();
        let (spec, elevation, barometer, zone) = match (spec, elevation, barometer, zone) {
            (Ok(s), Ok(e), Ok(b), Ok(z)) => (s, e, b, z),
            (s, e, b, z) => {
                for err in s
                    .err()
                    .into_iter()
                    .flatten()
                    .chain(e.err())
                    .chain(b.err())
                    .chain(z.err())
                {
                    sink.push(&file, line, err);
                }
                return;
            }
        };
        if tanks.contains_key(&spec.name) {
            sink.push(
                &file,
                line,
                FieldError::new(
                    "tank",
                    format!("duplicate: tank '{}' already exists", spec.name),
                ),
            );
            return;
        }
        let settings = crate::records::SiteSettings {
            elevation_m: elevation,
            barometer_kpa: barometer,
            time_zone: zone.clone(),
        };
        let site_id = match site_with(conn, chain, &spec.site, &settings) {
            Ok(id) => id,
            Err(SiteError::Field(e)) => return sink.push(&file, line, e),
            Err(SiteError::Store(e)) => {
                sink.fatal = Some(e);
                return;
            }
        };
        match insert_tank(conn, site_id, &spec) {
            Ok(id) => {
                if let Err(e) = chain.append(conn, Kind::Tank, id.0, Action::Insert, |out| {
                    chain::canonical_tank(out, site_id, &spec)
                }) {
                    sink.fatal = Some(e);
                    return;
                }
                summary.tanks += 1;
                let barometer_pa =
                    crate::records::barometer_pa(barometer.map(|k| k * 1e3), elevation);
                tanks.insert(
                    spec.name.clone(),
                    TankRecord {
                        id,
                        site_id,
                        barometer_pa,
                        time_zone: zone,
                        spec,
                    },
                );
            }
            Err(e) if storage_failure(&e) => sink.fatal = Some(e.into()),
            Err(e) => sink.push(
                &file,
                line,
                TANKS
                    .duplicate(e, || format!("duplicate: {}", duplicate_tank(&spec)))
                    .unwrap_or_else(|e| FieldError::new("row", e.to_string())),
            ),
        }
    })
}

fn unknown_tank(name: &str) -> FieldError {
    if name.trim().is_empty() {
        FieldError::new("tank", "missing: a tank name is required")
    } else {
        FieldError::new(
            "tank",
            format!("unknown tank '{name}': import it in a tanks file first"),
        )
    }
}

fn import_readings(
    conn: &Connection,
    chain: &mut ChainWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &HashMap<String, TankRecord>,
    opts: &ImportOptions<'_>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let cols = [
        t.col("tank"),
        t.col("time"),
        t.col("dp"),
        t.col("dp_unit"),
        t.col("pressure"),
        t.col("pressure_unit"),
        t.col("liquid_temperature_k"),
        t.col("note"),
    ];
    let file = t.name.clone();
    let mut insert = conn.prepare(&READINGS.insert_sql())?;
    // Rows of one tank come in runs: remember the last lookup.
    let mut last: Option<(String, &TankRecord)> = None;
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let name = f(0).trim();
        let tank = match &last {
            Some((n, tank)) if n == name => *tank,
            _ => match tanks.get(name) {
                Some(tank) => {
                    last = Some((name.to_owned(), tank));
                    tank
                }
                None => return sink.push(&file, line, unknown_tank(name)),
            },
        };
        let fields = ReadingFields {
            time: f(1),
            dp: f(2),
            dp_unit: f(3),
            pressure: f(4),
            pressure_unit: f(5),
            liquid_temperature_k: f(6),
            note: f(7),
        };
        let r = match fields.check(tank.barometer_pa) {
            Ok(r) => r,
            Err(errs) => return sink.push_all(&file, line, errs),
        };
        if let Some(check) = opts.reading_check
            && let Err(e) = check(tank, &r)
        {
            return sink.push(&file, line, e);
        }
        match execute_reading(&mut insert, tank.id, &r, None) {
            Ok(()) => {
                let id = conn.last_insert_rowid();
                match chain.append(conn, Kind::Reading, id, Action::Insert, |out| {
                    chain::canonical_reading(out, tank.id, &r)
                }) {
                    Ok(()) => summary.readings += 1,
                    Err(e) => sink.fatal = Some(e),
                }
            }
            Err(e) if storage_failure(&e) => sink.fatal = Some(e.into()),
            Err(e) => sink.push(
                &file,
                line,
                READINGS
                    .duplicate(e, || {
                        format!(
                            "duplicate: tank '{name}' already has a reading at {}",
                            r.time.text
                        )
                    })
                    .unwrap_or_else(|e| FieldError::new("row", e.to_string())),
            ),
        }
    })
}

fn import_deliveries(
    conn: &Connection,
    chain: &mut ChainWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &HashMap<String, TankRecord>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let cols = [
        t.col("tank"),
        t.col("ticket"),
        t.col("start"),
        t.col("end"),
        t.col("quantity"),
        t.col("quantity_unit"),
        t.col("carrier"),
        t.col("vehicle"),
        t.col("supply_pressure"),
        t.col("supply_pressure_unit"),
    ];
    let file = t.name.clone();
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let name = f(0).trim();
        let Some(tank) = tanks.get(name) else {
            return sink.push(&file, line, unknown_tank(name));
        };
        let fields = DeliveryFields {
            ticket: f(1),
            start: f(2),
            end: f(3),
            quantity: f(4),
            quantity_unit: f(5),
            carrier: f(6),
            vehicle: f(7),
            supply_pressure: f(8),
            supply_pressure_unit: f(9),
        };
        let d = match fields.check(tank.barometer_pa) {
            Ok(d) => d,
            Err(errs) => return sink.push_all(&file, line, errs),
        };
        match write_delivery(conn, tank.id, &d, None) {
            Ok(id) => match chain.append(conn, Kind::Delivery, id.0, Action::Insert, |out| {
                chain::canonical_delivery(out, tank.id, &d)
            }) {
                Ok(()) => summary.deliveries += 1,
                Err(e) => sink.fatal = Some(e),
            },
            Err(StoreError::Invalid(errors)) => sink.push_all(
                &file,
                line,
                errors
                    .into_iter()
                    .map(|mut e| {
                        if e.field == DELIVERIES.unique_field {
                            e.reason = format!("duplicate: {}", e.reason);
                        }
                        e
                    })
                    .collect(),
            ),
            Err(e) => sink.fatal = Some(e),
        }
    })
}
