//! The SQLite log of sites, tanks, readings and deliveries.
//!
//! [`Store`] is a small repository interface in domain terms (add a reading, readings of a tank in a
//! period, edit with a reason, ...); SQL stays inside this crate. The schema comes from the numbered
//! files in `migrations/`, applied in order on open; the database runs in WAL mode with foreign keys on.
//! Values a user typed are kept as entered beside their SI value, and edits and deletions keep the
//! earlier version in a revision history ([`Store::revisions`]).
//!
//! Raw text becomes checked records through [`ReadingFields`], [`DeliveryFields`] and [`TankFields`];
//! CSV import ([`Store::import`]) checks every row and writes all or nothing.
//!
//! ```
//! use store::{Store, TankFields, ReadingFields};
//! let mut store = Store::open_in_memory().unwrap();
//! let spec = TankFields { site: "North Yard", tank: "T-1", fluid: "nitrogen", orientation: "vertical",
//!     diameter_m: "2.0", length_m: "5.0", heads: "ellipsoidal", line_temperature_c: "15",
//!     ..Default::default() }.check().unwrap();
//! let tank = store.add_tank(&spec).unwrap();
//! let r = ReadingFields { time: "2026-03-01T08:00:00Z", dp: "85", dp_unit: "inH2O", pressure: "12",
//!     pressure_unit: "barg", ..Default::default() }.check(101_325.0).unwrap();
//! store.add_reading(tank, &r).unwrap();
//! assert_eq!(store.readings(tank, None).unwrap().len(), 1);
//! ```
#![deny(missing_docs)]

mod check;
mod csv_io;
mod db;
mod records;

pub use check::{
    DeliveryFields, FieldError, ReadingFields, TankFields, format_strapping, parse_strapping,
};
pub use csv_io::{
    DELIVERY_HEADER, ImportErrors, ImportFiles, ImportOptions, ImportSummary, READING_HEADER,
    ReadingCheck, RowError, TANK_HEADER,
};
pub use db::{MIGRATION_FILES, Store};
pub use records::*;

/// Why a store operation failed.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// SQLite reported an error.
    #[error("database error: {0}")]
    Sqlite(#[from] rusqlite::Error),
    /// The schema could not be brought up to date.
    #[error("cannot bring the database schema up to date: {0}")]
    Migration(#[from] rusqlite_migration::Error),
    /// A file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: String,
        /// The cause.
        source: std::io::Error,
    },
    /// CSV output failed.
    #[error("writing CSV: {0}")]
    Csv(#[from] csv::Error),
    /// A record was not found.
    #[error("{what} '{key}' not found")]
    NotFound {
        /// What kind of record.
        what: &'static str,
        /// Its id or name.
        key: String,
    },
    /// Entered values were refused.
    #[error("{}", .0.iter().map(ToString::to_string).collect::<Vec<_>>().join("; "))]
    Invalid(Vec<FieldError>),
    /// An import was refused; nothing was written.
    #[error("{0}")]
    Import(ImportErrors),
    /// A record could not be encoded for the history.
    #[error("cannot encode the earlier version: {0}")]
    Encode(String),
}
