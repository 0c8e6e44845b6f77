//! The CSV formats of import and export, read from any source: headers, row errors, the options and
//! summary of an import. The database side lives with each backend.
//!
//! Formats (a header row is required; columns may come in any order; unknown columns are ignored):
//! - tanks: `site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c`, optional
//!   `elevation_m, barometer_kpa, crown_ratio, knuckle_ratio, dp_unit, gauge_span, gauge_accuracy_percent,
//!   relief_pressure, relief_pressure_unit, reorder_percent, ner_percent_per_day, strapping`
//! - readings: `tank,time,dp,dp_unit,pressure,pressure_unit`, optional `liquid_temperature_k, note`
//! - deliveries: `tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle`, optional
//!   `supply_pressure, supply_pressure_unit`

use crate::StoreError;
use crate::check::FieldError;
use crate::records::{ReadingEntry, TankRecord};
use std::collections::HashMap;
use std::fmt;
use std::io::Read;
use std::path::{Path, PathBuf};

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

/// One CSV source: a name for error messages (the file as named) and its bytes.
pub struct ImportSource<'a> {
    /// The name errors give as their FILE.
    pub name: String,
    /// The CSV text.
    pub reader: Box<dyn Read + 'a>,
}

impl<'a> ImportSource<'a> {
    /// A source from any reader.
    pub fn new(name: impl Into<String>, reader: impl Read + 'a) -> Self {
        Self {
            name: name.into(),
            reader: Box::new(reader),
        }
    }

    /// A source from text in memory (embedded data, tests).
    pub fn text(name: impl Into<String>, text: &'a str) -> Self {
        Self::new(name, text.as_bytes())
    }

    /// Open a file (refused here, before any database is touched, when it cannot be read).
    pub fn open(path: &Path) -> Result<ImportSource<'static>, StoreError> {
        let file = std::fs::File::open(path).map_err(|source| StoreError::Io {
            path: path.display().to_string(),
            source,
        })?;
        Ok(ImportSource::new(path.display().to_string(), file))
    }
}

/// The sources of one import, read in this order: tanks, readings, deliveries.
#[derive(Default)]
pub struct ImportSources<'a> {
    /// Tanks.
    pub tanks: Option<ImportSource<'a>>,
    /// Readings.
    pub readings: Option<ImportSource<'a>>,
    /// Deliveries.
    pub deliveries: Option<ImportSource<'a>>,
}

impl ImportSources<'static> {
    /// Open every named file; the first that cannot be read is the error.
    pub fn open(files: &ImportFiles) -> Result<Self, StoreError> {
        let open = |p: &Option<PathBuf>| p.as_deref().map(ImportSource::open).transpose();
        Ok(Self {
            tanks: open(&files.tanks)?,
            readings: open(&files.readings)?,
            deliveries: open(&files.deliveries)?,
        })
    }
}

/// An extra check of a reading against its tank (e.g. DP beyond a full tank), returning the field error.
pub type ReadingCheck<'a> = &'a dyn Fn(&TankRecord, &ReadingEntry) -> Result<(), FieldError>;

/// How an import runs.
pub struct ImportOptions<'a> {
    /// Stop checking after this many errors.
    pub max_errors: usize,
    /// Extra check of each reading against its tank.
    pub reading_check: Option<ReadingCheck<'a>>,
    /// Check everything and say what would be written, then write nothing (a preview).
    pub dry_run: bool,
}

impl Default for ImportOptions<'_> {
    fn default() -> Self {
        Self {
            max_errors: 100,
            reading_check: None,
            dry_run: false,
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

pub(crate) struct Sink {
    errors: Vec<RowError>,
    max: usize,
    truncated: bool,
    /// A failure of the storage itself (a full disk, an I/O error): the import stops at once.
    pub(crate) fatal: Option<StoreError>,
}

impl Sink {
    pub(crate) fn new(max: usize) -> Self {
        Self {
            errors: Vec::new(),
            max: max.max(1),
            truncated: false,
            fatal: None,
        }
    }
    /// Every error, or None when there was none.
    pub(crate) fn into_errors(self) -> Option<ImportErrors> {
        (!self.errors.is_empty()).then_some(ImportErrors {
            errors: self.errors,
            truncated: self.truncated,
        })
    }
    pub(crate) fn push_all(&mut self, file: &str, line: u64, errors: Vec<FieldError>) {
        for e in errors {
            self.push(file, line, e);
        }
    }
    fn full(&self) -> bool {
        self.errors.len() >= self.max
    }
    pub(crate) fn push(&mut self, file: &str, line: u64, e: FieldError) {
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

/// A CSV source opened with its header mapped to column indexes.
pub(crate) struct Table<'a> {
    pub(crate) name: String,
    reader: csv::Reader<std::io::BufReader<Box<dyn Read + 'a>>>,
    index: HashMap<String, usize>,
    width: usize,
}

impl<'a> Table<'a> {
    /// Read the header; a missing required column is a row error (and no table).
    pub(crate) fn open(
        source: ImportSource<'a>,
        required: &[&str],
        sink: &mut Sink,
    ) -> Option<Self> {
        let ImportSource { name, reader: file } = source;
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
                return None;
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
        ok.then(|| Self {
            name,
            reader,
            width: headers.len(),
            index,
        })
    }

    pub(crate) fn col(&self, name: &str) -> Option<usize> {
        self.index.get(name).copied()
    }
}

pub(crate) fn field(rec: &csv::StringRecord, col: Option<usize>) -> &str {
    col.and_then(|i| rec.get(i)).unwrap_or("")
}

/// Reads every record of a table, calling `row` with its line; reports unreadable and short rows.
pub(crate) fn each_row(
    t: &mut Table<'_>,
    sink: &mut Sink,
    mut row: impl FnMut(&csv::StringRecord, u64, &mut Sink),
) -> Result<(), StoreError> {
    let mut rec = csv::StringRecord::new();
    loop {
        if sink.fatal.is_some() {
            break;
        }
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

/// The required columns lead each header; the optional ones follow.
pub(crate) const TANK_REQUIRED: usize = 8;
pub(crate) const READING_REQUIRED: usize = 6;
pub(crate) const DELIVERY_REQUIRED: usize = 8;

/// Header of the tanks CSV as exported.
pub const TANK_HEADER: [&str; 21] = [
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
    "time_zone",
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
pub(crate) fn num(v: f64) -> String {
    format!("{v}")
}

pub(crate) fn opt(v: Option<f64>) -> String {
    v.map(num).unwrap_or_default()
}
