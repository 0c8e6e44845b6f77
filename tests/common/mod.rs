//! Helpers shared by the end-to-end tests.

use std::path::{Path, PathBuf};
use std::process::Output;
use store::Repository;

/// Fail with the command's own error output unless it succeeded.
pub fn expect_success(out: &Output) {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

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

/// A database holding the embedded demo fleet, written by `cryoledger demo`.
pub fn demo_db(dir: &Path) -> PathBuf {
    let db = dir.join("demo.db");
    let out = bin().arg("demo").arg("--db").arg(&db).output().unwrap();
    expect_success(&out);
    db
}

/// `cryoledger audit --format json --db DB` with extra arguments, parsed.
pub fn audit_json(db: &Path, args: &[&str]) -> serde_json::Value {
    let out = bin()
        .args(["audit", "--format", "json", "--db"])
        .arg(db)
        .args(args)
        .output()
        .unwrap();
    expect_success(&out);
    serde_json::from_slice(&out.stdout).unwrap()
}

/// PostgreSQL for the end-to-end tests: the store's harness, shared by path.
#[path = "../../crates/store/tests/common/pg.rs"]
pub mod pg;
