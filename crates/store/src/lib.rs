//! The ledger of sites, tanks, readings and deliveries.
//!
//! [`Repository`] is the interface in domain terms (add a reading, readings of a tank in a period, edit
//! with a reason, the history of a record, import from any reader, ...); callers never see SQL, tables
//! or a driver. [`Store`] implements it on SQLite, the embedded default: the schema comes from the
//! numbered files in `migrations/`, applied in order on open; the database runs in WAL mode with
//! foreign keys on. Values a user typed are kept as entered beside their SI value, and edits and
//! deletions keep the earlier version, decoded back into records by [`Repository::history`].
//!
//! Raw text becomes checked records through [`ReadingFields`], [`DeliveryFields`] and [`TankFields`];
//! CSV import ([`Repository::import`]) checks every row and writes all or nothing.
//!
//! ```
//! use store::{Repository, Store, TankFields, ReadingFields};
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

mod cell;
mod chain;
mod check;
mod copy;
mod csv_format;
mod import;
mod location;
mod pg;
mod records;
mod repository;
mod revision;
mod sqlite;

pub use chain::{Tampering, Verification};
pub use check::{
    DeliveryFields, FieldError, PLAUSIBLE_QUANTITY_KG, ReadingFields, TankFields, format_strapping,
    parse_strapping,
};
pub use copy::{CopySummary, copy_ledger};
pub use csv_format::{
    DELIVERY_HEADER, ImportErrors, ImportFiles, ImportOptions, ImportSource, ImportSources,
    ImportSummary, READING_HEADER, ReadingCheck, RowError, TANK_HEADER,
};
pub use location::Location;
pub use pg::{AccessRole, LedgerUser, PG_MIGRATION_FILES, PgStore, describe_target};
pub use records::*;
pub use repository::{RecordKind, Repository};
pub use sqlite::{MIGRATION_FILES, Store};

/// The database driver's own error, kept as its message (callers never see the driver's type).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{message}")]
pub struct DriverError {
    /// What the driver said.
    pub message: String,
}

impl From<rusqlite::Error> for StoreError {
    fn from(e: rusqlite::Error) -> Self {
        match e.sqlite_error_code() {
            Some(rusqlite::ErrorCode::DiskFull) => StoreError::Full,
            Some(rusqlite::ErrorCode::ReadOnly) => StoreError::ReadOnly {
                path: "the database".into(),
            },
            Some(rusqlite::ErrorCode::NotADatabase) => StoreError::NotADatabase,
            _ => StoreError::Database(DriverError {
                message: e.to_string(),
            }),
        }
    }
}

impl From<postgres::Error> for StoreError {
    fn from(e: postgres::Error) -> Self {
        if let Some(db) = e.as_db_error()
            && *db.code() == postgres::error::SqlState::INSUFFICIENT_PRIVILEGE
        {
            return StoreError::NotAllowed(db.message().to_owned());
        }
        // the server's own words (its message and detail) when it sent any
        let message = match e.as_db_error() {
            Some(db) => match db.detail() {
                Some(detail) => format!("{}: {detail}", db.message()),
                None => db.message().to_owned(),
            },
            None => e.to_string(),
        };
        StoreError::Database(DriverError { message })
    }
}

impl From<rusqlite_migration::Error> for StoreError {
    fn from(e: rusqlite_migration::Error) -> Self {
        StoreError::Migration(DriverError {
            message: e.to_string(),
        })
    }
}

/// Why a store operation failed.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// The database reported an error.
    #[error("database error")]
    Database(#[source] DriverError),
    /// The schema could not be brought up to date.
    #[error("cannot bring the database schema up to date")]
    Migration(#[source] DriverError),
    /// A file could not be read or written.
    #[error("{path}")]
    Io {
        /// The file.
        path: String,
        /// The cause.
        source: std::io::Error,
    },
    /// The disk (or the database's size limit) is full.
    #[error(
        "the disk holding the database is full: free some space and try again (nothing of this change was written)"
    )]
    Full,
    /// The database file or its folder cannot be written.
    #[error(
        "{path} is read-only: make it writable, or copy it somewhere writable, to open it in cryoledger"
    )]
    ReadOnly {
        /// The file or folder.
        path: String,
    },
    /// The file is not a cryoledger database.
    #[error(
        "the file is not a cryoledger database (not SQLite, or damaged): check the path, or restore a backup"
    )]
    NotADatabase,
    /// The database was written by a newer cryoledger.
    #[error(
        "the database has schema version {found}, newer than this cryoledger knows ({known}): open it with the version that wrote it"
    )]
    NewerSchema {
        /// Its schema version.
        found: i64,
        /// The newest this build knows.
        known: i64,
    },
    /// Stored data could not be read back.
    #[error("{what} cannot be read: {reason}")]
    Corrupt {
        /// What was being read.
        what: String,
        /// Why it failed.
        reason: String,
    },
    /// CSV output failed.
    #[error("writing CSV")]
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
    /// The PostgreSQL server could not be reached or refused the connection.
    #[error("cannot open the ledger at {target}: {reason}")]
    Connect {
        /// The server and database (never the password).
        target: String,
        /// What went wrong and what to check.
        reason: String,
    },
    /// The server's roles do not let this login do it (a shared ledger's access by site).
    #[error(
        "your login may not do this on the shared ledger ({0}): an operator enters and edits readings at their own sites, an auditor reads everything and enters deliveries, an admin changes sites, tanks and users; `cryoledger users --db URL list` shows who is what"
    )]
    NotAllowed(String),
    /// The operation does not apply to this kind of ledger.
    #[error("{0}")]
    Unsupported(String),
    /// A record was changed by someone else after it was opened; nothing was written.
    #[error("{0}")]
    Conflict(Box<Conflict>),
    /// A record could not be encoded for the history.
    #[error("cannot encode the earlier version: {0}")]
    Encode(String),
}
