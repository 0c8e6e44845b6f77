//! CSV import (all or nothing per command) and export in the same formats.
//!
//! Formats (a header row is required; columns may come in any order; unknown columns are ignored):
//! - tanks: `site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c`, optional
//!   `elevation_m, barometer_kpa, crown_ratio, knuckle_ratio, dp_unit, gauge_span, gauge_accuracy_percent,
//!   relief_pressure, relief_pressure_unit, reorder_percent, ner_percent_per_day, strapping`
//! - readings: `tank,time,dp,dp_unit,pressure,pressure_unit`, optional `liquid_temperature_k, note`
//! - deliveries: `tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle`, optional
//!   `supply_pressure, supply_pressure_unit`

use crate::StoreError;
use crate::check::{DeliveryFields, FieldError, ReadingFields, TankFields, format_strapping};
use crate::db::{
    INSERT_READING, Store, as_duplicate, insert_delivery, insert_reading_with, insert_tank,
    site_id_for, vehicle_ids,
};
use crate::records::{ReadingInput, Tank};
use rusqlite::Connection;
use std::collections::HashMap;
use std::fmt;
use std::io::Write;
use std::path::{Path, PathBuf};
use units::Unit;

/// One refused row: `FILE:LINE: field: reason`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowError {
    /// The file, as named on the command line.
    pub file: String,
    /// 1-based line number (the header is line 1).
    pub line: u64,
    /// The column.
    pub field: String,
    /// What is wrong.
    pub reason: String,
}

impl fmt::Display for RowError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}:{}: {}: {}",
            self.file, self.line, self.field, self.reason
        )
    }
}

/// Every refused row of an import (up to the cap), in file order.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ImportErrors {
    /// The errors found.
    pub errors: Vec<RowError>,
    /// True when checking stopped at the cap and more rows may be wrong.
    pub truncated: bool,
}

impl fmt::Display for ImportErrors {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for e in &self.errors {
            writeln!(f, "{e}")?;
        }
        if self.truncated {
            writeln!(f, "(stopped after {} errors)", self.errors.len())?;
        }
        write!(f, "nothing was imported: {} error(s)", self.errors.len())
    }
}

/// The files of one import command. They are read in this order: tanks, readings, deliveries.
#[derive(Debug, Clone, Default)]
pub struct ImportFiles {
    /// Tanks file.
    pub tanks: Option<PathBuf>,
    /// Readings file.
    pub readings: Option<PathBuf>,
    /// Deliveries file.
    pub deliveries: Option<PathBuf>,
}

/// An extra check of a reading against its tank (e.g. DP beyond a full tank), returning the field error.
pub type ReadingCheck<'a> = &'a dyn Fn(&Tank, &ReadingInput) -> Result<(), FieldError>;

/// How an import runs.
pub struct ImportOptions<'a> {
    /// Stop checking after this many errors.
    pub max_errors: usize,
    /// Extra check of each reading against its tank.
    pub reading_check: Option<ReadingCheck<'a>>,
}

impl Default for ImportOptions<'_> {
    fn default() -> Self {
        Self {
            max_errors: 100,
            reading_check: None,
        }
    }
}

/// What an import wrote.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ImportSummary {
    /// Tanks added.
    pub tanks: u64,
    /// Readings added.
    pub readings: u64,
    /// Deliveries added.
    pub deliveries: u64,
}

struct Sink {
    errors: Vec<RowError>,
    max: usize,
    truncated: bool,
}

impl Sink {
    fn push_all(&mut self, file: &str, line: u64, errors: Vec<FieldError>) {
        for e in errors {
            self.push(file, line, e);
        }
    }
    fn full(&self) -> bool {
        self.errors.len() >= self.max
    }
    fn push(&mut self, file: &str, line: u64, e: FieldError) {
        if self.full() {
            self.truncated = true;
            return;
        }
        self.errors.push(RowError {
            file: file.to_owned(),
            line,
            field: e.field,
            reason: e.reason,
        });
    }
}

/// A CSV file opened with its header mapped to column indexes.
struct Table {
    name: String,
    reader: csv::Reader<std::io::BufReader<std::fs::File>>,
    index: HashMap<String, usize>,
    width: usize,
}

impl Table {
    fn open(path: &Path, required: &[&str], sink: &mut Sink) -> Result<Option<Self>, StoreError> {
        let name = path.display().to_string();
        let file = std::fs::File::open(path).map_err(|source| StoreError::Io {
            path: name.clone(),
            source,
        })?;
        let mut reader = csv::ReaderBuilder::new()
            .flexible(true)
            .has_headers(true)
            .from_reader(std::io::BufReader::with_capacity(1 << 20, file));
        let headers = match reader.headers() {
            Ok(h) => h.clone(),
            Err(e) => {
                sink.push(
                    &name,
                    1,
                    FieldError::new("header", format!("cannot read the header row: {e}")),
                );
                return Ok(None);
            }
        };
        let index: HashMap<String, usize> = headers
            .iter()
            .enumerate()
            .map(|(i, h)| {
                (
                    h.trim().trim_start_matches('\u{feff}').to_ascii_lowercase(),
                    i,
                )
            })
            .collect();
        let mut ok = true;
        for col in required {
            if !index.contains_key(*col) {
                sink.push(
                    &name,
                    1,
                    FieldError::new(
                        col,
                        format!(
                            "required column is missing; the header needs {}",
                            required.join(",")
                        ),
                    ),
                );
                ok = false;
            }
        }
        Ok(ok.then(|| Self {
            name,
            reader,
            width: headers.len(),
            index,
        }))
    }

    fn col(&self, name: &str) -> Option<usize> {
        self.index.get(name).copied()
    }
}

fn field(rec: &csv::StringRecord, col: Option<usize>) -> &str {
    col.and_then(|i| rec.get(i)).unwrap_or("")
}

/// Reads every record of a table, calling `row` with its line; reports unreadable and short rows.
fn each_row(
    t: &mut Table,
    sink: &mut Sink,
    mut row: impl FnMut(&csv::StringRecord, u64, &mut Sink),
) -> Result<(), StoreError> {
    let mut rec = csv::StringRecord::new();
    loop {
        if sink.full() {
            sink.truncated = true;
            break;
        }
        match t.reader.read_record(&mut rec) {
            Ok(false) => break,
            Ok(true) => {
                let line = rec.position().map_or(0, csv::Position::line);
                if rec.len() == 1 && rec.get(0).is_some_and(|s| s.trim().is_empty()) {
                    continue; // blank line
                }
                if rec.len() < t.width {
                    sink.push(
                        &t.name,
                        line,
                        FieldError::new(
                            "row",
                            format!(
                                "short row: {} fields where the header has {}",
                                rec.len(),
                                t.width
                            ),
                        ),
                    );
                    continue;
                }
                row(&rec, line, sink);
            }
            Err(e) => {
                let line = e.position().map_or(0, csv::Position::line);
                sink.push(
                    &t.name,
                    line,
                    FieldError::new("row", format!("unreadable CSV: {e}")),
                );
                if !matches!(
                    e.kind(),
                    csv::ErrorKind::Utf8 { .. } | csv::ErrorKind::UnequalLengths { .. }
                ) {
                    break;
                }
            }
        }
    }
    Ok(())
}

impl Store {
    /// Import CSV files in one transaction: every row is checked; on any error nothing is written and
    /// all errors (up to the cap) are returned as `StoreError::Import`.
    pub fn import(
        &mut self,
        files: &ImportFiles,
        opts: &ImportOptions<'_>,
    ) -> Result<ImportSummary, StoreError> {
        let mut sink = Sink {
            errors: Vec::new(),
            max: opts.max_errors.max(1),
            truncated: false,
        };
        let mut summary = ImportSummary::default();
        let mut tanks: HashMap<String, Tank> = self
            .tanks()?
            .into_iter()
            .map(|t| (t.spec.name.clone(), t))
            .collect();
        let tx = self.conn.transaction()?;

        if let Some(path) = &files.tanks
            && let Some(mut t) = Table::open(path, &TANK_HEADER[..TANK_REQUIRED], &mut sink)?
        {
            import_tanks(&tx, &mut t, &mut sink, &mut tanks, &mut summary)?;
        }
        if let Some(path) = &files.readings
            && let Some(mut t) = Table::open(path, &READING_HEADER[..READING_REQUIRED], &mut sink)?
        {
            import_readings(&tx, &mut t, &mut sink, &tanks, opts, &mut summary)?;
        }
        if let Some(path) = &files.deliveries
            && let Some(mut t) =
                Table::open(path, &DELIVERY_HEADER[..DELIVERY_REQUIRED], &mut sink)?
        {
            import_deliveries(&tx, &mut t, &mut sink, &tanks, &mut summary)?;
        }
        if sink.errors.is_empty() {
            tx.commit()?;
            Ok(summary)
        } else {
            tx.rollback()?;
            Err(StoreError::Import(ImportErrors {
                errors: sink.errors,
                truncated: sink.truncated,
            }))
        }
    }

    /// Write all live tanks in the tanks CSV format.
    pub fn export_tanks(&self, out: impl Write) -> Result<(), StoreError> {
        let sites: HashMap<i64, crate::records::Site> =
            self.sites()?.into_iter().map(|s| (s.id, s)).collect();
        let mut w = csv::Writer::from_writer(out);
        w.write_record(TANK_HEADER)?;
        let mut tanks = self.tanks()?;
        tanks.sort_by_key(|t| t.id); // insertion order, so a re-import gives the same ids
        for t in tanks {
            let s = &t.spec;
            let site = sites.get(&t.site_id);
            w.write_record([
                s.site.clone(),
                s.name.clone(),
                s.fluid.as_str().to_owned(),
                s.orientation.as_str().to_owned(),
                num(s.diameter_m),
                num(s.length_m),
                s.heads.as_str().to_owned(),
                num(s.line_temperature_c),
                opt(site.and_then(|s| s.elevation_m)),
                opt(site.and_then(|s| s.barometer_kpa)),
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
        w.flush().map_err(|source| StoreError::Io {
            path: "output".into(),
            source,
        })?;
        Ok(())
    }

    /// Write all live readings in the readings CSV format, by tank then time.
    pub fn export_readings(&self, out: impl Write) -> Result<(), StoreError> {
        let mut w = csv::Writer::from_writer(out);
        w.write_record(READING_HEADER)?;
        let mut st = self.conn.prepare(
            "SELECT t.name, r.time_text, r.dp_value, r.dp_unit, r.pressure_value, r.pressure_unit, \
             r.liquid_temperature_k, r.note FROM readings r JOIN tanks t ON t.id = r.tank_id \
             WHERE r.deleted_at IS NULL ORDER BY r.id",
        )?;
        let mut rows = st.query([])?;
        while let Some(r) = rows.next()? {
            w.write_record([
                r.get::<_, String>(0)?,
                r.get::<_, String>(1)?,
                num(r.get(2)?),
                r.get::<_, String>(3)?,
                num(r.get(4)?),
                r.get::<_, String>(5)?,
                opt(r.get(6)?),
                r.get::<_, Option<String>>(7)?.unwrap_or_default(),
            ])?;
        }
        w.flush().map_err(|source| StoreError::Io {
            path: "output".into(),
            source,
        })?;
        Ok(())
    }

    /// Write all live deliveries in the deliveries CSV format.
    pub fn export_deliveries(&self, out: impl Write) -> Result<(), StoreError> {
        let names: HashMap<i64, String> = self
            .tanks()?
            .into_iter()
            .map(|t| (t.id, t.spec.name))
            .collect();
        let mut w = csv::Writer::from_writer(out);
        w.write_record(DELIVERY_HEADER)?;
        let mut all = self.deliveries(None)?;
        all.sort_by_key(|d| d.id);
        for d in all {
            let i = &d.input;
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
        w.flush().map_err(|source| StoreError::Io {
            path: "output".into(),
            source,
        })?;
        Ok(())
    }
}

/// The required columns lead each header; the optional ones follow.
const TANK_REQUIRED: usize = 8;
const READING_REQUIRED: usize = 6;
const DELIVERY_REQUIRED: usize = 8;

/// Header of the tanks CSV as exported.
pub const TANK_HEADER: [&str; 20] = [
    "site",
    "tank",
    "fluid",
    "orientation",
    "diameter_m",
    "length_m",
    "heads",
    "line_temperature_c",
    "elevation_m",
    "barometer_kpa",
    "crown_ratio",
    "knuckle_ratio",
    "dp_unit",
    "gauge_span",
    "gauge_accuracy_percent",
    "relief_pressure",
    "relief_pressure_unit",
    "reorder_percent",
    "ner_percent_per_day",
    "strapping",
];
/// Header of the readings CSV as exported.
pub const READING_HEADER: [&str; 8] = [
    "tank",
    "time",
    "dp",
    "dp_unit",
    "pressure",
    "pressure_unit",
    "liquid_temperature_k",
    "note",
];
/// Header of the deliveries CSV as exported.
pub const DELIVERY_HEADER: [&str; 10] = [
    "tank",
    "ticket",
    "start",
    "end",
    "quantity",
    "quantity_unit",
    "carrier",
    "vehicle",
    "supply_pressure",
    "supply_pressure_unit",
];

/// Shortest text that reads back to the same f64.
fn num(v: f64) -> String {
    format!("{v}")
}

fn opt(v: Option<f64>) -> String {
    v.map(num).unwrap_or_default()
}

fn import_tanks(
    conn: &Connection,
    t: &mut Table,
    sink: &mut Sink,
    tanks: &mut HashMap<String, Tank>,
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
        let spec = fields.check();
        let (spec, elevation, barometer) = match (spec, elevation, barometer) {
            (Ok(s), Ok(e), Ok(b)) => (s, e, b),
            (s, e, b) => {
                for err in s.err().into_iter().flatten().chain(e.err()).chain(b.err()) {
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
        let site_id = match site_id_for(conn, &spec.site, elevation, barometer) {
            Ok(id) => id,
            Err(e) => return sink.push(&file, line, e),
        };
        match insert_tank(conn, site_id, &spec) {
            Ok(id) => {
                summary.tanks += 1;
                let barometer_pa =
                    crate::records::barometer_pa(barometer.map(|k| k * 1e3), elevation);
                tanks.insert(
                    spec.name.clone(),
                    Tank {
                        id,
                        site_id,
                        barometer_pa,
                        spec,
                    },
                );
            }
            Err(e) => sink.push(
                &file,
                line,
                as_duplicate(e, "tank", || {
                    format!("duplicate: tank '{}' already exists", spec.name)
                })
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
    t: &mut Table,
    sink: &mut Sink,
    tanks: &HashMap<String, Tank>,
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
    let mut insert = conn.prepare(INSERT_READING)?;
    // Rows of one tank come in runs: remember the last lookup.
    let mut last: Option<(String, &Tank)> = None;
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
        match insert_reading_with(&mut insert, tank.id, &r) {
            Ok(_) => summary.readings += 1,
            Err(e) => sink.push(
                &file,
                line,
                as_duplicate(e, "time", || {
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
    t: &mut Table,
    sink: &mut Sink,
    tanks: &HashMap<String, Tank>,
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
        let (cid, vid) = match vehicle_ids(conn, &d.carrier, &d.vehicle) {
            Ok(ids) => ids,
            Err(e) => return sink.push(&file, line, e),
        };
        match insert_delivery(conn, tank.id, cid, vid, &d) {
            Ok(_) => summary.deliveries += 1,
            Err(e) => sink.push(
                &file,
                line,
                as_duplicate(e, "ticket", || {
                    format!("duplicate: ticket '{}' is already recorded", d.ticket)
                })
                .unwrap_or_else(|e| FieldError::new("row", e.to_string())),
            ),
        }
    })
}
