use crate::common::*;
use std::path::Path;

fn audit(db: &Path, args: &[&str]) -> std::process::Output {
    bin()
        .arg("audit")
        .arg("--db")
        .arg(db)
        .args(args)
        .output()
        .unwrap()
}

/// The JSON contract: fills with ticket, tank, vehicle, verdict, billed_kg, gained_kg, drawn_kg,
/// residual_kg, sigma_kg, explanation; gauges with tank and status; vehicles with vehicle and status.
#[test]
fn json_contract() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    let fills = v["fills"].as_array().unwrap();
    assert!(fills.len() > 100, "{}", fills.len());
    for f in fills {
        for key in ["ticket", "tank", "vehicle", "verdict", "explanation"] {
            assert!(f[key].is_string(), "{key} in {f}");
        }
        for key in [
            "billed_kg",
            "gained_kg",
            "drawn_kg",
            "residual_kg",
            "sigma_kg",
        ] {
            assert!(f[key].is_number(), "{key} in {f}");
        }
        let verdict = f["verdict"].as_str().unwrap();
        assert!(["consistent", "short", "excess", "inconclusive"].contains(&verdict));
    }
    for g in v["gauges"].as_array().unwrap() {
        assert!(g["tank"].is_string());
        assert!(["ok", "drift", "not-enough-data"].contains(&g["status"].as_str().unwrap()));
    }
    for x in v["vehicles"].as_array().unwrap() {
        assert!(x["vehicle"].is_string());
        assert!(["ok", "biased", "not-enough-data"].contains(&x["status"].as_str().unwrap()));
    }
}

/// The numbers in a fill's number-bearing fields and in its nested records (the gauge's scale), as
/// they could be printed (rounded to 0, 1 or 4 decimals, with or without sign).
fn printed_forms(f: &serde_json::Value) -> Vec<String> {
    let mut out = Vec::new();
    if let Some(o) = f.as_object() {
        for v in o.values() {
            if v.is_object() {
                out.extend(printed_forms(v));
            }
            let Some(x) = v.as_f64() else { continue };
            for x in [x, -x] {
                out.push(format!("{x:.0}"));
                out.push(format!("{x:.1}"));
                out.push(format!("{x:.4}"));
                out.push(format!("{x}"));
            }
        }
    }
    out
}

/// Every number in every fill's explanation is also in that fill's JSON (the explanation can be handed
/// to a carrier and checked against the data).
#[test]
fn explanation_numbers_are_in_the_json() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    for f in v["fills"].as_array().unwrap() {
        let text = f["explanation"].as_str().unwrap();
        let forms = printed_forms(f);
        let numbers: Vec<&str> = text
            .split(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
            .map(|s| s.trim_end_matches('.'))
            .filter(|s| s.chars().any(|c| c.is_ascii_digit()))
            .collect();
        // a fill with no reading on one side names the window and the ticket only
        let bracketed = !f["before_hours"].is_null() && !f["after_hours"].is_null();
        assert!(numbers.len() >= if bracketed { 4 } else { 2 }, "{text}");
        for n in numbers {
            let n = n.trim_start_matches('-');
            assert!(
                forms.iter().any(|x| x.trim_start_matches('-') == n),
                "'{n}' of \"{text}\" is not in the fill's JSON"
            );
        }
    }
}

/// `--tank` keeps one tank, `--since` keeps later fills; CSV has a header and one row a fill; the
/// table names the sections.
#[test]
fn filters_and_formats() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let all = audit_json(&db, &[]);
    let one = audit_json(&db, &["--tank", "ASB-N2-1"]);
    let fills = one["fills"].as_array().unwrap();
    assert!(!fills.is_empty());
    assert!(fills.iter().all(|f| f["tank"] == "ASB-N2-1"));
    let late = audit_json(&db, &["--since", "2026-07-01"]);
    let n_late = late["fills"].as_array().unwrap().len();
    assert!(n_late > 0 && n_late < all["fills"].as_array().unwrap().len());
    assert!(
        late["fills"]
            .as_array()
            .unwrap()
            .iter()
            .all(|f| f["start"].as_str().unwrap() >= "2026-07-01")
    );
    let csv = audit(&db, &["--format", "csv"]);
    assert!(csv.status.success());
    let text = String::from_utf8(csv.stdout).unwrap();
    assert!(text.starts_with("ticket,tank,vehicle,carrier,start,end,verdict,billed_kg"));
    assert_eq!(
        text.lines().count(),
        all["fills"].as_array().unwrap().len() + 1
    );
    let table = audit(&db, &[]);
    let text = String::from_utf8(table.stdout).unwrap();
    for section in ["Fills", "Gauges", "Vehicles", "Forecasts"] {
        assert!(text.contains(section), "{section}");
    }
    let missing = audit(&dir.path().join("none.db"), &[]);
    assert!(!missing.status.success());
}
