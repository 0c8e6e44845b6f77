use crate::common::*;

/// One malformed import: write `body` as a CSV of `kind`, import it, and check that the command fails,
/// names `FILE:LINE: field`, and leaves the database's full dump unchanged.
fn refused(kind: &str, body: &str, line: u64, field: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let db = seeded_db(dir.path());
    let before = dump(&db);
    let file = dir.path().join(format!("bad-{kind}.csv"));
    std::fs::write(&file, body).unwrap();
    let out = import(&db, &[&format!("--{kind}"), file.to_str().unwrap()]);
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(!out.status.success(), "{kind} import should fail:\n{body}");
    let want = format!("{}:{line}: {field}:", file.display());
    assert!(stderr.contains(&want), "expected '{want}' in:\n{stderr}");
    assert!(stderr.contains("nothing was imported"), "{stderr}");
    assert_eq!(
        dump(&db),
        before,
        "the database changed after a refused import"
    );
    stderr
}

const R: &str = "tank,time,dp,dp_unit,pressure,pressure_unit\n";
const D: &str = "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle\n";
const T: &str = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n";

#[test]
fn unknown_tank() {
    refused(
        "readings",
        &format!(
            "{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,11,barg\nNO-SUCH,2026-04-01T08:00:00Z,150,inH2O,11,barg\n"
        ),
        3,
        "tank",
    );
}

#[test]
fn bad_time() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,01/04/2026 08:00,150,inH2O,11,barg\n"),
        2,
        "time",
    );
}

#[test]
fn bad_unit() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150,furlongs,11,barg\n"),
        2,
        "dp_unit",
    );
}

#[test]
fn ambiguous_pressure_unit() {
    let e = refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,11,bar\n"),
        2,
        "pressure_unit",
    );
    assert!(
        e.contains("barg"),
        "the message should say how to fix it: {e}"
    );
}

#[test]
fn nan_dp() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,NaN,inH2O,11,barg\n"),
        2,
        "dp",
    );
}

#[test]
fn infinite_pressure() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,inf,barg\n"),
        2,
        "pressure",
    );
}

#[test]
fn negative_dp() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,-3,inH2O,11,barg\n"),
        2,
        "dp",
    );
}

#[test]
fn pressure_at_or_below_vacuum() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,0,bara\n"),
        2,
        "pressure",
    );
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,-1.2,barg\n"),
        2,
        "pressure",
    );
}

#[test]
fn short_row() {
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-04-01T08:00:00Z,150\n"),
        2,
        "row",
    );
}

#[test]
fn missing_column() {
    refused(
        "readings",
        "tank,time,dp,pressure,pressure_unit\nHW-N2-1,2026-04-01T08:00:00Z,150,11,barg\n",
        1,
        "dp_unit",
    );
}

#[test]
fn duplicate_reading_in_the_database() {
    // The seed already holds HW-N2-1 at 2026-03-01T08:00:00Z.
    refused(
        "readings",
        &format!("{R}HW-N2-1,2026-03-01T08:00:00Z,150,inH2O,11,barg\n"),
        2,
        "time",
    );
}

#[test]
fn duplicate_reading_within_the_file() {
    // The same instant written in two time zones is one reading.
    refused(
        "readings",
        &format!(
            "{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,11,barg\nHW-N2-1,2026-04-01T10:00:00+02:00,151,inH2O,11,barg\n"
        ),
        3,
        "time",
    );
}

#[test]
fn duplicate_ticket() {
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-9001,2026-04-01T10:00:00Z,2026-04-01T10:30:00Z,3000,kg,Nimbleforth Haulage,NWH-07\nHW-AR-1,T-9001,2026-04-02T10:00:00Z,2026-04-02T10:30:00Z,3000,kg,Nimbleforth Haulage,NWH-07\n"
        ),
        3,
        "ticket",
    );
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-100231,2026-04-01T10:00:00Z,2026-04-01T10:30:00Z,3000,kg,Nimbleforth Haulage,NWH-07\n"
        ),
        2,
        "ticket",
    );
}

#[test]
fn end_before_start() {
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-9002,2026-04-01T10:00:00Z,2026-04-01T09:30:00Z,3000,kg,Nimbleforth Haulage,NWH-07\n"
        ),
        2,
        "end",
    );
}

#[test]
fn zero_quantity() {
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-9003,2026-04-01T10:00:00Z,2026-04-01T10:30:00Z,0,kg,Nimbleforth Haulage,NWH-07\n"
        ),
        2,
        "quantity",
    );
}

#[test]
fn bad_quantity_unit() {
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-9004,2026-04-01T10:00:00Z,2026-04-01T10:30:00Z,900,gal,Nimbleforth Haulage,NWH-07\n"
        ),
        2,
        "quantity_unit",
    );
}

#[test]
fn vehicle_of_another_carrier() {
    refused(
        "deliveries",
        &format!(
            "{D}HW-N2-1,T-9005,2026-04-01T10:00:00Z,2026-04-01T10:30:00Z,900,kg,Ridgeline Cryo Transport,NWH-07\n"
        ),
        2,
        "vehicle",
    );
}

#[test]
fn unknown_fluid_and_bad_dimensions() {
    refused(
        "tanks",
        &format!("{T}Quarry Lane,QL-1,helium,vertical,2,5,flat,15\n"),
        2,
        "fluid",
    );
    refused(
        "tanks",
        &format!("{T}Quarry Lane,QL-1,nitrogen,vertical,0,5,flat,15\n"),
        2,
        "diameter_m",
    );
    refused(
        "tanks",
        &format!("{T}Quarry Lane,QL-1,nitrogen,vertical,2,-5,flat,15\n"),
        2,
        "length_m",
    );
    refused(
        "tanks",
        &format!("{T}Quarry Lane,QL-1,nitrogen,diagonal,2,5,flat,15\n"),
        2,
        "orientation",
    );
}

#[test]
fn duplicate_tank() {
    refused(
        "tanks",
        &format!("{T}Harbour Works,HW-N2-1,nitrogen,vertical,2,5,flat,15\n"),
        2,
        "tank",
    );
}

#[test]
fn every_error_is_reported_not_just_the_first() {
    let e = refused(
        "readings",
        &format!(
            "{R}HW-N2-1,2026-04-01T08:00:00Z,150,inH2O,11,barg\nHW-N2-1,bad,150,inH2O,11,barg\nHW-N2-1,2026-04-03T08:00:00Z,x,inH2O,11,barg\nNOPE,2026-04-04T08:00:00Z,150,inH2O,11,barg\n"
        ),
        3,
        "time",
    );
    assert!(e.contains(":4: dp:"), "{e}");
    assert!(e.contains(":5: tank:"), "{e}");
    assert!(e.contains("3 error(s)"), "{e}");
}
