//! Helpers shared by the end-to-end tests.

use std::path::{Path, PathBuf};
use std::process::Output;
use store::Repository;

/// The binary under test.
pub fn bin() -> std::process::Command {
    std::process::Command::new(env!("CARGO_BIN_EXE_cryoledger"))
}

/// A committed fixture file.
pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name)
}

/// Run `cryoledger import --db DB` with extra arguments.
pub fn import(db: &Path, args: &[&str]) -> Output {
    bin()
        .arg("import")
        .arg("--db")
        .arg(db)
        .args(args)
        .output()
        .expect("run cryoledger")
}

/// A database holding the fixture tanks, readings and deliveries.
pub fn seeded_db(dir: &Path) -> PathBuf {
    let db = dir.join("seed.db");
    let out = import(
        &db,
        &[
            "--tanks",
            fixture("tanks.csv").to_str().unwrap(),
            "--readings",
            fixture("readings.csv").to_str().unwrap(),
            "--deliveries",
            fixture("deliveries.csv").to_str().unwrap(),
        ],
    );
    assert!(
        out.status.success(),
        "seed import failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    db
}

/// A full text dump of every table of the database.
pub fn dump(db: &Path) -> String {
    store::Store::open(db).unwrap().dump().unwrap()
}
