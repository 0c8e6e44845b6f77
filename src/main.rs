//! cryoledger: contents of cryogenic bulk tanks from DP gauge readings, delivery reconciliation and fleet
//! audit. With no subcommand it opens the desktop window; each subcommand runs headless.

use anyhow::{Context, Result};
use clap::{Parser, Subcommand, ValueEnum};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use store::{ImportFiles, ImportOptions, Store, StoreError};

#[derive(Parser)]
#[command(
    name = "cryoledger",
    version,
    about = "Cryogenic bulk tank contents, delivery reconciliation and fleet audit",
    long_about = "Cryogenic bulk tank contents, delivery reconciliation and fleet audit.\n\n\
        Run without a subcommand to open the desktop window on your database (created in your data \
        directory on first start, or the file given with --db). The subcommands run headless for batch work."
)]
struct Cli {
    /// Database file for the window (default: cryoledger.db in your data directory)
    #[arg(long, global = false, value_name = "PATH")]
    db: Option<PathBuf>,
    #[command(subcommand)]
    command: Option<Command>,
}

#[derive(Subcommand)]
enum Command {
    /// Import tanks, readings and deliveries from CSV; all or nothing
    #[command(
        long_about = "Import tanks, readings and deliveries from CSV files in one transaction.\n\n\
        Every row is checked (columns, numbers, units, times, tank references, duplicates, physical sense). \
        If any row is wrong nothing is written, every error is printed as FILE:LINE: field: reason, and \
        the exit status is 1. Files are read in the order tanks, readings, deliveries, so one command can \
        bring in a new tank and its history."
    )]
    Import {
        /// Database file (created if missing)
        #[arg(long, value_name = "PATH")]
        db: PathBuf,
        /// Tanks CSV: site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c[,...]
        #[arg(long, value_name = "FILE")]
        tanks: Option<PathBuf>,
        /// Readings CSV: tank,time,dp,dp_unit,pressure,pressure_unit[,liquid_temperature_k,note]
        #[arg(long, value_name = "FILE")]
        readings: Option<PathBuf>,
        /// Deliveries CSV: tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle[,supply_pressure,supply_pressure_unit]
        #[arg(long, value_name = "FILE")]
        deliveries: Option<PathBuf>,
        /// Stop checking after this many errors
        #[arg(long, default_value_t = 100, value_name = "N")]
        max_errors: usize,
    },
    /// Export tanks, readings or deliveries as CSV (the import formats)
    Export {
        /// Database file
        #[arg(long, value_name = "PATH")]
        db: PathBuf,
        /// What to export
        #[arg(long, value_enum)]
        what: ExportWhat,
        /// Output file (default: standard output)
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
}

#[derive(Clone, Copy, ValueEnum)]
enum ExportWhat {
    Tanks,
    Readings,
    Deliveries,
}

fn open_existing(db: &Path) -> Result<Store> {
    if !db.exists() {
        anyhow::bail!("{}: no such database", db.display());
    }
    Store::open(db).with_context(|| format!("opening {}", db.display()))
}

fn default_db_path() -> Result<PathBuf> {
    let dir = dirs::data_dir().context("cannot find your data directory; give --db PATH")?;
    Ok(dir.join("cryoledger").join("cryoledger.db"))
}

fn run(cli: Cli) -> Result<ExitCode> {
    match cli.command {
        None => {
            let path = match cli.db {
                Some(p) => p,
                None => default_db_path()?,
            };
            let store =
                Store::open(&path).with_context(|| format!("opening {}", path.display()))?;
            app::run_native(store, path).map_err(|e| anyhow::anyhow!("the window failed: {e}"))?;
            Ok(ExitCode::SUCCESS)
        }
        Some(Command::Import {
            db,
            tanks,
            readings,
            deliveries,
            max_errors,
        }) => {
            if tanks.is_none() && readings.is_none() && deliveries.is_none() {
                anyhow::bail!("nothing to import: give --tanks, --readings and/or --deliveries");
            }
            let mut store =
                Store::open(&db).with_context(|| format!("opening {}", db.display()))?;
            let files = ImportFiles {
                tanks,
                readings,
                deliveries,
            };
            let opts = ImportOptions {
                max_errors,
                ..ImportOptions::default()
            };
            match store.import(&files, &opts) {
                Ok(s) => {
                    println!(
                        "imported {} tanks, {} readings, {} deliveries into {}",
                        s.tanks,
                        s.readings,
                        s.deliveries,
                        db.display()
                    );
                    Ok(ExitCode::SUCCESS)
                }
                Err(StoreError::Import(errors)) => {
                    eprintln!("{errors}");
                    Ok(ExitCode::FAILURE)
                }
                Err(e) => Err(e.into()),
            }
        }
        Some(Command::Export { db, what, out }) => {
            let store = open_existing(&db)?;
            let mut sink: Box<dyn std::io::Write> = match &out {
                Some(p) => Box::new(std::io::BufWriter::new(
                    std::fs::File::create(p)
                        .with_context(|| format!("creating {}", p.display()))?,
                )),
                None => Box::new(std::io::BufWriter::new(std::io::stdout().lock())),
            };
            match what {
                ExportWhat::Tanks => store.export_tanks(&mut sink)?,
                ExportWhat::Readings => store.export_readings(&mut sink)?,
                ExportWhat::Deliveries => store.export_deliveries(&mut sink)?,
            }
            sink.flush()?;
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn main() -> ExitCode {
    match run(Cli::parse()) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}
