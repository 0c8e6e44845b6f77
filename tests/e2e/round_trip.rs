use crate::common::*;
use std::path::Path;
use store::Repository;

fn export(db: &Path, what: &str) -> String {
    let out = bin()
        .args(["export", "--db"])
        .arg(db)
        .args(["--what", what])
        .output()
        .unwrap();
    expect_success(&out);
    String::from_utf8(out.stdout).unwrap()
}

#[test]
fn export_then_import_reproduces_the_data() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let mut files = Vec::new();
    for what in ["tanks", "readings", "deliveries"] {
        let text = export(&db, what);
        let path = dir.path().join(format!("{what}.csv"));
        std::fs::write(&path, &text).unwrap();
        files.push((what, path, text));
    }
    let fresh = dir.path().join("fresh.db");
    let args: Vec<String> = files
        .iter()
        .flat_map(|(what, path, _)| [format!("--{what}"), path.display().to_string()])
        .collect();
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let out = import(&fresh, &args);
    expect_success(&out);
    for (what, _, text) in &files {
        assert_eq!(
            &export(&fresh, what),
            text,
            "{what} differ after the round trip"
        );
    }
    // The records themselves, with entered values, units and SI values, are identical.
    let (a, b) = (
        store::Store::open(&db).unwrap(),
        store::Store::open(&fresh).unwrap(),
    );
    assert_eq!(a.tanks().unwrap(), b.tanks().unwrap());
    assert_eq!(a.deliveries(None).unwrap(), b.deliveries(None).unwrap());
    for t in a.tanks().unwrap() {
        assert_eq!(
            a.readings(t.id, None).unwrap(),
            b.readings(t.id, None).unwrap()
        );
    }
    // The strapping table and the optional columns survived (fixture FC-O2-1 has six points).
    let o2 = b.tank_by_name("FC-O2-1").unwrap();
    assert_eq!(o2.spec.strapping.len(), 6);
    assert_eq!(o2.spec.relief_pressure.map(|p| p.value), Some(17.2));
}
