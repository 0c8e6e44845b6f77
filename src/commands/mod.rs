//! One module per subcommand: its arguments and how it runs.

pub mod audit;
pub mod contents;
pub mod copy;
pub mod demo;
pub mod fluids;
pub mod history;
pub mod io;
pub mod report;
pub mod users;

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use clap::ValueEnum;
use store::Location;

/// Output format of the computing subcommands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum, Default)]
pub enum Format {
    /// A short readable table with units.
    #[default]
    Table,
    /// JSON with SI values and units in the field names.
    Json,
}

/// Open an existing ledger, a SQLite file or a PostgreSQL database (the headless commands never
/// create a file by accident).
pub fn open_existing(db: &Location) -> Result<Box<dyn store::Repository + Send>> {
    if let Some(p) = db.file()
        && !p.exists()
    {
        anyhow::bail!("{}: no such database", p.display());
    }
    open(db)
}

/// Open (or create) a ledger; a server that cannot be reached says so in its own words.
pub fn open(db: &Location) -> Result<Box<dyn store::Repository + Send>> {
    db.open().map_err(|e| match e {
        e @ store::StoreError::Connect { .. } => anyhow::Error::new(e),
        e => anyhow::Error::new(e).context(format!("opening {db}")),
    })
}

/// A file a command is about to create, removed again when the command fails (a failed command leaves
/// no file it created; a file that was already there is left alone).
pub struct Created {
    paths: Vec<PathBuf>,
}

impl Created {
    /// `path`, when it does not exist yet.
    pub fn file(path: &Path) -> Self {
        Self {
            paths: if path.exists() {
                Vec::new()
            } else {
                vec![path.to_path_buf()]
            },
        }
    }

    /// A database file with its write-ahead log and shared-memory files, when it does not exist yet.
    pub fn database(path: &Path) -> Self {
        let mut c = Self::file(path);
        if !c.paths.is_empty() {
            for suffix in ["-wal", "-shm", "-journal"] {
                let mut p = path.as_os_str().to_owned();
                p.push(suffix);
                c.paths.push(PathBuf::from(p));
            }
        }
        c
    }

    /// [`Created::database`] for a SQLite ledger; nothing for a server's (its database outlives a
    /// failed command, and a failed import leaves it as it was).
    pub fn ledger(db: &Location) -> Self {
        match db.file() {
            Some(p) => Self::database(p),
            None => Self { paths: Vec::new() },
        }
    }

    /// Remove what was created.
    pub fn remove(self) {
        for p in self.paths {
            // best effort: a file that was never written is not there to remove
            let _ = std::fs::remove_file(p);
        }
    }
}

/// Where to write: a file or standard output.
pub fn output(out: Option<&PathBuf>) -> Result<Box<dyn Write>> {
    Ok(match out {
        Some(p) => Box::new(std::io::BufWriter::new(
            std::fs::File::create(p).with_context(|| format!("creating {}", p.display()))?,
        )),
        None => Box::new(std::io::BufWriter::new(std::io::stdout().lock())),
    })
}

/// Print a value as pretty JSON.
pub fn print_json(v: &impl serde::Serialize) -> Result<()> {
    println!("{}", serde_json::to_string_pretty(v)?);
    Ok(())
}
