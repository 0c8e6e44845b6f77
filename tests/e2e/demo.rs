use crate::common::*;

/// `demo --db` writes the embedded fleet; a second run into the same database is refused and changes
/// nothing.
#[test]
fn demo_writes_once() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("sub").join("demo.db");
    let out = bin().arg("demo").arg("--db").arg(&db).output().unwrap();
    expect_success(&out);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("16 tanks"), "{text}");
    let before = dump(&db);
    let again = bin().arg("demo").arg("--db").arg(&db).output().unwrap();
    assert!(!again.status.success());
    assert_eq!(dump(&db), before);
}

/// The latest reading of an export: its time as written (RFC 3339).
fn latest_reading(db: &std::path::Path) -> String {
    reading_time(db, true)
}

/// The latest (or earliest) reading time of an export (RFC 3339 in UTC).
fn reading_time(db: &std::path::Path, latest: bool) -> String {
    let out = bin()
        .args(["export", "--what", "readings", "--db"])
        .arg(db)
        .output()
        .unwrap();
    expect_success(&out);
    let text = String::from_utf8(out.stdout).unwrap();
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let col = r
        .headers()
        .unwrap()
        .iter()
        .position(|h| h == "time")
        .unwrap();
    let times = r.records().map(|x| {
        chrono::DateTime::parse_from_rfc3339(&x.unwrap()[col])
            .unwrap()
            .to_utc()
            .to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
    });
    if latest { times.max() } else { times.min() }.unwrap()
}

/// A new user's demo is alive: its dates are moved forward by whole weeks (weekdays kept: its first
/// reading, 2026-01-01 in demo-data/readings.csv, a Thursday, stays on a Thursday) so that the latest
/// reading is from the last 24 hours, and what would fall after now is left out (UTC); `--keep-dates`
/// keeps the scenario's own (its last reading day is 2026-11-30). The clock is read before and after
/// the run.
#[test]
fn demo_dates_end_today_unless_kept() {
    let dir = tempfile::tempdir().unwrap();
    let before = chrono::Utc::now();
    let db = demo_db(dir.path());
    let after = chrono::Utc::now();
    let latest = chrono::DateTime::parse_from_rfc3339(&latest_reading(&db))
        .unwrap()
        .to_utc();
    assert!(latest <= after, "{latest} is after {after}");
    assert!(
        latest > before - chrono::Duration::hours(24),
        "{latest} is more than a day before {before}"
    );
    let earliest = chrono::DateTime::parse_from_rfc3339(&reading_time(&db, false))
        .unwrap()
        .to_utc();
    assert_eq!(
        chrono::Datelike::weekday(&earliest),
        chrono::Weekday::Thu,
        "{earliest}"
    );
    // nor any delivery
    let out = bin()
        .args(["export", "--what", "deliveries", "--db"])
        .arg(&db)
        .output()
        .unwrap();
    expect_success(&out);
    let text = String::from_utf8(out.stdout).unwrap();
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let end = r
        .headers()
        .unwrap()
        .iter()
        .position(|h| h == "end")
        .unwrap();
    for row in r.records() {
        let t = chrono::DateTime::parse_from_rfc3339(&row.unwrap()[end]).unwrap();
        assert!(t.to_utc() <= after, "a delivery ends at {t}");
    }
    let kept = dir.path().join("kept.db");
    let out = bin()
        .args(["demo", "--keep-dates", "--db"])
        .arg(&kept)
        .output()
        .unwrap();
    expect_success(&out);
    assert!(latest_reading(&kept).starts_with("2026-11-30"));
}

/// The demo's planted faults (demo-data/README.md: vehicle MC-T25 3 % short, gauge of DSF-AR-7
/// drifting -4 % of span a year, an unlogged delivery at BH-AR-3, a 12-day leak at EFF-O2-10 from day 290)
/// are what the audit finds, and nothing else is flagged as biased or drifting.
#[test]
fn demo_audit_finds_the_planted_faults() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    let flagged = |list: &str, key: &str, status: &str| -> Vec<String> {
        v[list]
            .as_array()
            .unwrap()
            .iter()
            .filter(|x| x["status"] == status)
            .map(|x| x[key].as_str().unwrap().to_string())
            .collect()
    };
    assert_eq!(flagged("vehicles", "vehicle", "biased"), ["MC-T25"]);
    assert_eq!(flagged("gauges", "tank", "drift"), ["DSF-AR-7"]);
    let findings: Vec<(String, String)> = v["findings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| {
            (
                f["kind"].as_str().unwrap().to_string(),
                f["tank"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert!(
        findings.contains(&("unexplained-gain".into(), "BH-AR-3".into())),
        "{findings:?}"
    );
    assert!(
        findings.contains(&("loss-beyond-use".into(), "EFF-O2-10".into())),
        "{findings:?}"
    );
    let bias = v["vehicles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["vehicle"] == "MC-T25")
        .unwrap()["bias_percent"]
        .as_f64()
        .unwrap();
    // planted -3 %; tolerance 0.5 % (the fills' scatter over ~20 fills)
    assert!((bias + 3.0).abs() < 0.5, "{bias}");
}

/// `import --check-only` checks every row and says what an import would add, writing nothing: an
/// existing database keeps its dump, a new one is not left behind.
#[test]
fn import_check_only_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let tanks = dir.path().join("tanks.csv");
    std::fs::write(&tanks, include_str!("../../demo-data/tanks.csv")).unwrap();
    let fresh = dir.path().join("fresh.db");
    let out = bin()
        .args(["import", "--check-only", "--tanks"])
        .arg(&tanks)
        .arg("--db")
        .arg(&fresh)
        .output()
        .unwrap();
    expect_success(&out);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("nothing written") && text.contains("16 tanks"),
        "{text}"
    );
    assert!(!fresh.exists(), "a check leaves no database behind");
    let db = dir.path().join("empty.db");
    let made = bin()
        .args(["import", "--tanks"])
        .arg(&tanks)
        .arg("--db")
        .arg(&db)
        .output()
        .unwrap();
    expect_success(&made);
    let before = dump(&db);
    let again = bin()
        .args(["import", "--check-only", "--tanks"])
        .arg(&tanks)
        .arg("--db")
        .arg(&db)
        .output()
        .unwrap();
    // the same tanks again are refused as duplicates, and nothing changes either way
    assert!(!again.status.success());
    assert_eq!(dump(&db), before);
}
