//! `demo`: write the fictional demo fleet (demo-data/, embedded in the binary) into a database.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result};
use clap::Args;
use store::{
    ImportOptions, ImportSource, ImportSources, ImportSummary, Location, ReadingEntry, TankRecord,
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
    /// Ledger to write the demo into, a SQLite file or postgres://USER@HOST/DATABASE (default:
    /// cryoledger.db in your data directory); it must not hold any of the demo's tanks yet
    #[arg(long, value_name = "PATH|URL")]
    pub db: Option<Location>,
    /// Keep the scenario's own dates (2026) instead of moving them so that the latest readings are
    /// from today
    #[arg(long)]
    pub keep_dates: bool,
}

/// Import the embedded demo CSVs into the database at `db` (created if missing), all or nothing; a
/// database this created is removed again when the import fails.
pub fn write_demo(db: &Location) -> Result<ImportSummary> {
    write_demo_dated(db, true)
}

/// The demo's CSV texts with every time moved forward by whole weeks until the scenario reaches the
/// day of `now_ms`, and what would then lie after `now_ms` left out (a reading, or a fill not ended
/// by then): the latest readings are from the last day (the scenario is read daily), nothing lies in
/// the future, and the customers' weekends stay on Saturdays and Sundays, where their use model
/// looks for them (times of day kept; UTC).
pub fn moved_to(now_ms: i64) -> Result<(String, String)> {
    let week_ms = 7 * 86_400_000_i64;
    let mut times = read_times(READINGS_CSV, &["time"])?;
    times.extend(read_times(DELIVERIES_CSV, &["start", "end"])?);
    let latest = times
        .into_iter()
        .max()
        .context("the demo has no readings")?;
    // the fewest whole weeks that bring the scenario's last instant to now or past it
    let weeks = (now_ms - latest + week_ms - 1).div_euclid(week_ms);
    Ok((
        shift_times(READINGS_CSV, &["time"], weeks * 7, now_ms)?,
        shift_times(DELIVERIES_CSV, &["start", "end"], weeks * 7, now_ms)?,
    ))
}

fn parse_time(text: &str) -> Result<chrono::DateTime<chrono::FixedOffset>> {
    chrono::DateTime::parse_from_rfc3339(text).with_context(|| format!("demo time '{text}'"))
}

/// Where the named columns are in a header.
fn column_indexes(header: &csv::StringRecord, columns: &[&str]) -> Vec<usize> {
    columns
        .iter()
        .filter_map(|c| header.iter().position(|h| h == *c))
        .collect()
}

/// Every time (ms) in the named columns of a CSV text.
fn read_times(text: &str, columns: &[&str]) -> Result<Vec<i64>> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers()?.clone();
    let idx = column_indexes(&header, columns);
    let mut out = Vec::new();
    for row in r.records() {
        let row = row?;
        for &i in &idx {
            if let Some(t) = row.get(i) {
                out.push(parse_time(t)?.timestamp_millis());
            }
        }
    }
    Ok(out)
}

/// The CSV text with the named columns' times moved by whole days (RFC 3339 in UTC, seconds), rows
/// with a moved time after `until_ms` left out.
fn shift_times(text: &str, columns: &[&str], days: i64, until_ms: i64) -> Result<String> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers()?.clone();
    let idx = column_indexes(&header, columns);
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(&header)?;
    for row in r.records() {
        let row = row?;
        let mut out: Vec<String> = row.iter().map(str::to_owned).collect();
        let mut after = false;
        for &i in &idx {
            if let Some(cell) = out.get_mut(i) {
                let t = parse_time(cell)? + chrono::Duration::days(days);
                after |= t.timestamp_millis() > until_ms;
                *cell = t
                    .with_timezone(&chrono::Utc)
                    .to_rfc3339_opts(chrono::SecondsFormat::Secs, true);
            }
        }
        if !after {
            w.write_record(&out)?;
        }
    }
    String::from_utf8(w.into_inner().context("writing the demo CSV")?)
        .context("the demo CSV is not UTF-8")
}

/// [`write_demo`], with the scenario's dates moved so that the latest readings are from today
/// (`move_dates`) or as written.
pub fn write_demo_dated(db: &Location, move_dates: bool) -> Result<ImportSummary> {
    if let Some(dir) = db
        .file()
        .and_then(Path::parent)
        .filter(|d| !d.as_os_str().is_empty())
    {
        std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    }
    let created = super::Created::ledger(db);
    let result = (|| -> Result<ImportSummary> {
        let mut store = super::open(db)?;
        let checker = evaluate::ReadingChecker::new();
        let check = |t: &TankRecord, r: &ReadingEntry| checker.check(t, r);
        let opts = ImportOptions {
            reading_check: Some(&check),
            ..ImportOptions::default()
        };
        let (readings, deliveries) = if move_dates {
            moved_to(chrono::Utc::now().timestamp_millis())?
        } else {
            (READINGS_CSV.to_owned(), DELIVERIES_CSV.to_owned())
        };
        let sources = ImportSources {
            tanks: Some(ImportSource::text("demo tanks.csv", TANKS_CSV)),
            readings: Some(ImportSource::text("demo readings.csv", &readings)),
            deliveries: Some(ImportSource::text("demo deliveries.csv", &deliveries)),
        };
        store
            .import(sources, &opts)
            .with_context(|| format!("writing the demo into {db}"))
    })();
    if result.is_err() {
        created.remove();
    }
    result
}

/// Run `demo`.
pub fn run(a: DemoArgs, default_db: impl FnOnce() -> Result<PathBuf>) -> Result<ExitCode> {
    let db = match a.db {
        Some(l) => l,
        None => Location::File(default_db()?),
    };
    let s = write_demo_dated(&db, !a.keep_dates)?;
    println!(
        "wrote the demo fleet into {}: {} tanks, {} readings, {} deliveries",
        db, s.tanks, s.readings, s.deliveries
    );
    Ok(ExitCode::SUCCESS)
}
