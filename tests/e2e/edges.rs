use crate::common::*;

/// Each cause is named once: a missing file's operating-system message appears once in the error,
/// and the import creates no database (the files are opened before it).
#[test]
fn a_missing_file_is_named_once_and_creates_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("new.db");
    let missing = dir.path().join("nowhere.csv");
    let out = import(&db, &["--readings", missing.to_str().unwrap()]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("nowhere.csv"), "{err}");
    assert_eq!(err.matches("No such file").count(), 1, "{err}");
    let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert!(left.is_empty(), "left behind: {left:?}");
}

/// A refused import into a database it created leaves no database file (nor its journal files).
#[test]
fn a_refused_import_leaves_no_new_database() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("new.db");
    let tanks = dir.path().join("tanks.csv");
    std::fs::write(
        &tanks,
        "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
         Test Yard,T-1,nitrogen,vertical,2.0,5.0,dished,15\n",
    )
    .unwrap();
    let out = import(&db, &["--tanks", tanks.to_str().unwrap()]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains(":2: heads: unknown heads 'dished'"), "{err}");
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["tanks.csv".to_string()]);
}

/// Dimensions outside any real bulk tank are refused with the plausible range (0.2 to 20 m of
/// diameter, 0 to 60 m of length; common practice, no source), on the command line and in a tanks
/// file, and nothing is printed as `inf` or `NaN`.
#[test]
fn sizes_outside_any_real_tank_are_refused_with_the_range() {
    let out = bin()
        .args([
            "contents",
            "--fluid",
            "N2",
            "--orientation",
            "vertical",
            "--heads",
            "ellipsoidal",
            "--diameter",
            "1e300 m",
            "--length",
            "5 m",
            "--dp",
            "60 inH2O",
            "--pressure",
            "10 barg",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("outside the plausible range 0.2 to 20"),
        "{err}"
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(!text.contains("inf") && !text.contains("NaN"), "{text}");

    let dir = tempfile::tempdir().unwrap();
    let tanks = dir.path().join("tanks.csv");
    std::fs::write(
        &tanks,
        "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
         Test Yard,T-1,nitrogen,vertical,2400,5.0,ellipsoidal,15\n\
         Test Yard,T-2,nitrogen,vertical,2.4,500,ellipsoidal,15\n",
    )
    .unwrap();
    let out = import(
        &dir.path().join("t.db"),
        &["--tanks", tanks.to_str().unwrap()],
    );
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(":2: diameter_m: diameter_m = 2400 is outside the plausible range 0.2 to 20"),
        "{err}"
    );
    assert!(
        err.contains(":3: length_m: length_m = 500 is outside the plausible range 0 to 60"),
        "{err}"
    );
}

/// A delivered mass beyond several trailer loads on one ticket is refused with its range (0.1 to
/// 200,000 kg; a road trailer carries about 20 t: common practice, no source).
#[test]
fn a_quantity_beyond_any_delivery_is_refused_with_the_range() {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let before = dump(&db);
    let d = dir.path().join("d.csv");
    std::fs::write(
        &d,
        "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n\
         FC-O2-1,ZZ-1,2026-03-01T08:00:00Z,2026-03-01T09:00:00Z,2500,t,Test Carrier,TC-1\n",
    )
    .unwrap();
    let out = import(&db, &["--deliveries", d.to_str().unwrap()]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(":2: quantity: 2500 t is outside the plausible range 0.1 to 200000 kg"),
        "{err}"
    );
    assert_eq!(dump(&db), before);
}
