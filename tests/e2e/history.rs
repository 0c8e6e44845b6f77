use crate::common::*;

/// `verify` on a ledger written only by cryoledger: exit 0 and one line (records, links, chain head);
/// after a change with another SQLite connection: exit 1 and the record named.
#[test]
fn verify_names_a_change_made_outside() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let out = bin().args(["verify", "--db"]).arg(&db).output().unwrap();
    expect_success(&out);
    let line = String::from_utf8_lossy(&out.stdout);
    assert!(
        line.starts_with("verified: ") && line.contains("chain head "),
        "{line}"
    );
    assert_eq!(line.lines().count(), 1);
    let c = rusqlite::Connection::open(&db).unwrap();
    c.execute(
        "UPDATE deliveries SET quantity_value = quantity_value * 1.1 WHERE id = 7",
        [],
    )
    .unwrap();
    drop(c);
    let out = bin().args(["verify", "--db"]).arg(&db).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("delivery 7: changed outside cryoledger"),
        "{err}"
    );
}

/// `backup` writes a new file that verifies and holds the same records; it never overwrites a file.
#[test]
fn backup_copies_and_verifies() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let copy = dir.path().join("copy.db");
    let backup = || {
        bin()
            .args(["backup", "--db"])
            .arg(&db)
            .arg("--out")
            .arg(&copy)
            .output()
            .unwrap()
    };
    expect_success(&backup());
    assert_eq!(dump(&db), dump(&copy));
    let again = backup();
    assert!(!again.status.success());
    assert!(String::from_utf8_lossy(&again.stderr).contains("never overwrites"));
}

/// A read-only database file is refused with what to do, and left as it was.
#[test]
fn a_read_only_database_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let mut perms = std::fs::metadata(&db).unwrap().permissions();
    perms.set_readonly(true);
    std::fs::set_permissions(&db, perms).unwrap();
    let before = std::fs::read(&db).unwrap();
    let out = import(&db, &["--tanks", fixture("tanks.csv").to_str().unwrap()]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("is read-only: make it writable"), "{err}");
    assert_eq!(std::fs::read(&db).unwrap(), before);
}
