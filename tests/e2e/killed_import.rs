use crate::common::*;
use std::io::Write;
use std::time::{Duration, Instant};

#[test]
fn killed_import_leaves_the_database_as_before() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let before = dump(&db);
    // A large readings file: enough rows that the import runs for a while.
    let path = dir.path().join("big.csv");
    let mut f = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(f, "tank,time,dp,dp_unit,pressure,pressure_unit").unwrap();
    let t0 = 1_800_000_000i64;
    for i in 0..1_500_000i64 {
        let s = t0 + i * 60;
        writeln!(
            f,
            "HW-N2-1,{},{:.2},inH2O,11.5,barg",
            store::Stamp::from_ms(s * 1000).text,
            100.0 + (i % 97) as f64
        )
        .unwrap();
    }
    f.flush().unwrap();
    drop(f);
    let mut child = bin()
        .args(["import", "--db"])
        .arg(&db)
        .arg("--readings")
        .arg(&path)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    // Wait until the import is under way (its write-ahead log is growing), then kill it hard.
    let wal = db.with_extension("db-wal");
    let start = Instant::now();
    let mut grew = false;
    while start.elapsed() < Duration::from_secs(60) {
        if std::fs::metadata(&wal)
            .map(|m| m.len() > 256 * 1024)
            .unwrap_or(false)
        {
            grew = true;
            break;
        }
        if child.try_wait().unwrap().is_some() {
            break;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    let still_running = child.try_wait().unwrap().is_none();
    child.kill().unwrap(); // SIGKILL on Unix
    child.wait().unwrap();
    assert!(
        grew && still_running,
        "the import should have been killed mid-way (wal grew: {grew})"
    );
    assert_eq!(dump(&db), before, "a killed import changed the database");
    // The database still works after the kill: a new reading imports.
    let one = dir.path().join("one.csv");
    std::fs::write(&one, "tank,time,dp,dp_unit,pressure,pressure_unit\nHW-N2-1,2026-05-01T08:00:00Z,150,inH2O,11,barg\n").unwrap();
    let out = import(&db, &["--readings", one.to_str().unwrap()]);
    expect_success(&out);
}
