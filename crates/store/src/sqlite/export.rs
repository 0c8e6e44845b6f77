//! The SQLite side of CSV export (the formats the importer reads back exactly) and the full dump.

use super::Store;
use crate::StoreError;
use crate::cell::Cells;
use crate::check::format_strapping;
use crate::csv_format::*;
use crate::records::{Site, SiteId, TankId};
use crate::repository::Repository;
use std::collections::HashMap;
use std::io::Write;
use units::Unit;

/// Flush a CSV writer; a failure names the output.
pub(crate) fn finish(mut w: csv::Writer<&mut dyn Write>) -> Result<(), StoreError> {
    w.flush().map_err(|source| StoreError::Io {
        path: "output".into(),
        source,
    })
}

/// Write all live tanks in the tanks CSV format.
pub(crate) fn tanks(store: &dyn Repository, out: &mut dyn Write) -> Result<(), StoreError> {
    let sites: HashMap<SiteId, Site> = store.sites()?.into_iter().map(|s| (s.id, s)).collect();
    let mut w = csv::Writer::from_writer(out);
    w.write_record(TANK_HEADER)?;
    let mut tanks = store.tanks()?;
    tanks.sort_by_key(|t| t.id); // insertion order, so a re-import gives the same ids
    for t in tanks {
        let s = &t.spec;
        let site = sites.get(&t.site_id);
        w.write_record([
            s.site.clone(),
            s.name.clone(),
            s.fluid.name().to_owned(),
            s.orientation.as_str().to_owned(),
            num(s.diameter_m),
            num(s.length_m),
            s.heads.as_str().to_owned(),
            num(s.line_temperature_c),
            opt(site.and_then(|s| s.elevation_m)),
            opt(site.and_then(|s| s.barometer_kpa)),
            site.and_then(|s| s.time_zone.clone()).unwrap_or_default(),
            opt(s.crown_ratio),
            opt(s.knuckle_ratio),
            s.dp_unit.symbol().to_owned(),
            opt(s.gauge_span),
            opt(s.gauge_accuracy_percent),
            opt(s.relief_pressure.map(|p| p.value)),
            s.relief_pressure
                .map(|p| p.unit.symbol().to_owned())
                .unwrap_or_default(),
            opt(s.reorder_percent),
            opt(s.ner_percent_per_day),
            format_strapping(&s.strapping),
        ])?;
    }
    finish(w)
}

/// Write all live readings in the readings CSV format, in the order they were written.
pub(crate) fn readings(store: &Store, out: &mut dyn Write) -> Result<(), StoreError> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record(READING_HEADER)?;
    let mut st = store.conn.prepare(READING_EXPORT_SQL)?;
    let mut rows = st.query([])?;
    while let Some(r) = rows.next()? {
        reading_record(&mut w, r)?;
    }
    finish(w)
}

/// One reading's CSV record from a row of (tank name, time text, dp value, dp unit, pressure value,
/// pressure unit, liquid temperature, note), whichever database it came from.
pub(crate) fn reading_record<R: Cells>(
    w: &mut csv::Writer<&mut dyn Write>,
    r: &R,
) -> Result<(), StoreError>
where
    StoreError: From<R::Error>,
{
    w.write_record([
        r.text(0)?,
        r.text(1)?,
        num(r.real(2)?),
        r.text(3)?,
        num(r.real(4)?),
        r.text(5)?,
        opt(r.opt_real(6)?),
        r.opt_text(7)?.unwrap_or_default(),
    ])?;
    Ok(())
}

/// The query of [`reading_record`]'s rows, in the order the readings were written.
pub(crate) const READING_EXPORT_SQL: &str = "SELECT t.name, r.time_text, r.dp_value, r.dp_unit, \
    r.pressure_value, r.pressure_unit, r.liquid_temperature_k, r.note FROM readings r \
    JOIN tanks t ON t.id = r.tank_id WHERE r.deleted_at IS NULL ORDER BY r.id";

/// Write all live deliveries in the deliveries CSV format.
pub(crate) fn deliveries(store: &dyn Repository, out: &mut dyn Write) -> Result<(), StoreError> {
    let names: HashMap<TankId, String> = store
        .tanks()?
        .into_iter()
        .map(|t| (t.id, t.spec.name))
        .collect();
    let mut w = csv::Writer::from_writer(out);
    w.write_record(DELIVERY_HEADER)?;
    let mut all = store.deliveries(None)?;
    all.sort_by_key(|d| d.id);
    for d in all {
        let i = &d.entry;
        w.write_record([
            names.get(&d.tank_id).cloned().unwrap_or_default(),
            i.ticket.clone(),
            i.start.text.clone(),
            i.end.text.clone(),
            num(i.quantity.value),
            i.quantity.unit.symbol().to_owned(),
            i.carrier.clone(),
            i.vehicle.clone(),
            opt(i.supply_pressure.map(|p| p.value)),
            i.supply_pressure
                .map(|p| p.unit.symbol().to_owned())
                .unwrap_or_default(),
        ])?;
    }
    finish(w)
}

pub(crate) fn dump(store: &Store) -> Result<String, StoreError> {
    let mut out = String::new();
    let mut st = store
        .conn
        .prepare("SELECT name, sql FROM sqlite_master WHERE sql IS NOT NULL ORDER BY type, name")?;
    let objects: Vec<(String, String)> = st
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
        .collect::<Result<_, _>>()?;
    for (name, sql) in &objects {
        out.push_str(sql);
        out.push_str(";\n");
        if !sql.starts_with("CREATE TABLE") {
            continue;
        }
        // in key order (the first columns), not storage order, so that a copied ledger dumps alike
        let mut rows = store
            .conn
            .prepare(&format!("SELECT * FROM \"{name}\" ORDER BY 1, 2"))?;
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
    out.push_str(&format!("user_version: {}\n", store.schema_version()?));
    Ok(out)
}
