//! `demo`: write the fictional demo fleet (demo-data/, embedded in the binary) into a database.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result};
use clap::Args;
use store::{ImportFiles, ImportOptions, ImportSummary, Store};

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

/// Import the embedded demo CSVs into the database at `db` (created if missing), all or nothing.
pub fn write_demo(db: &Path) -> Result<ImportSummary> {
    if let Some(dir) = db.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    }
    let tmp = std::env::temp_dir().join(format!(
        "cryoledger-demo-{}-{}",
        std::process::id(),
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_nanos())
    ));
    std::fs::create_dir_all(&tmp).with_context(|| format!("creating {}", tmp.display()))?;
    let result = (|| -> Result<ImportSummary> {
        let files = ImportFiles {
            tanks: Some(tmp.join("tanks.csv")),
            readings: Some(tmp.join("readings.csv")),
            deliveries: Some(tmp.join("deliveries.csv")),
        };
        for (path, text) in [
            (&files.tanks, TANKS_CSV),
            (&files.readings, READINGS_CSV),
            (&files.deliveries, DELIVERIES_CSV),
        ] {
            if let Some(p) = path {
                std::fs::write(p, text).with_context(|| format!("writing {}", p.display()))?;
            }
        }
        let mut store = Store::open(db).with_context(|| format!("opening {}", db.display()))?;
        let check = ledger::check_reading_against_tank;
        let opts = ImportOptions {
            reading_check: Some(&check),
            ..ImportOptions::default()
        };
        store
            .import(&files, &opts)
            .with_context(|| format!("writing the demo into {}", db.display()))
    })();
    let _ = std::fs::remove_dir_all(&tmp);
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
