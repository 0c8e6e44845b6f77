//! `demo`: write the fictional demo fleet (demo-data/, embedded in the binary) into a database.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result};
use clap::Args;
use store::{
    ImportOptions, ImportSource, ImportSources, ImportSummary, ReadingEntry, Repository, Store,
    TankRecord,
};

/// The demo scenario's tanks (generated; see demo-data/README.md).
pub const TANKS_CSV: &str = include_str!("../../demo-data/tanks.csv");
/// The demo scenario's readings.
pub const READINGS_CSV: &str = include_str!("../../demo-data/readings.csv");
/// The demo scenario's deliveries.
pub const DELIVERIES_CSV: &str = include_str!("../../demo-data/deliveries.csv");

/// Arguments of `demo`.
#[derive(Args)]
pub struct DemoArgs {
    /// Database file to write the demo into (default: cryoledger.db in your data directory); it must
    /// not hold any of the demo's tanks yet
    #[arg(long, value_name = "PATH")]
    pub db: Option<PathBuf>,
}

/// Import the embedded demo CSVs into the database at `db` (created if missing), all or nothing; a
/// database this created is removed again when the import fails.
pub fn write_demo(db: &Path) -> Result<ImportSummary> {
    if let Some(dir) = db.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    }
    let created = super::Created::database(db);
    let result = (|| -> Result<ImportSummary> {
        let mut store = Store::open(db).with_context(|| format!("opening {}", db.display()))?;
        let checker = evaluate::ReadingChecker::new();
        let check = |t: &TankRecord, r: &ReadingEntry| checker.check(t, r);
        let opts = ImportOptions {
            reading_check: Some(&check),
            ..ImportOptions::default()
        };
        let sources = ImportSources {
            tanks: Some(ImportSource::text("demo tanks.csv", TANKS_CSV)),
            readings: Some(ImportSource::text("demo readings.csv", READINGS_CSV)),
            deliveries: Some(ImportSource::text("demo deliveries.csv", DELIVERIES_CSV)),
        };
        store
            .import(sources, &opts)
            .with_context(|| format!("writing the demo into {}", db.display()))
    })();
    if result.is_err() {
        created.remove();
    }
    result
}

/// Run `demo`.
pub fn run(a: DemoArgs, default_db: impl FnOnce() -> Result<PathBuf>) -> Result<ExitCode> {
    let db = match a.db {
        Some(p) => p,
        None => default_db()?,
    };
    let s = write_demo(&db)?;
    println!(
        "wrote the demo fleet into {}: {} tanks, {} readings, {} deliveries",
        db.display(),
        s.tanks,
        s.readings,
        s.deliveries
    );
    Ok(ExitCode::SUCCESS)
}
