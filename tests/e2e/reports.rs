use crate::common::*;
use scraper::{Html, Selector};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn report(db: &Path, args: &[&str]) -> std::process::Output {
    bin()
        .arg("report")
        .arg(args[0])
        .arg("--db")
        .arg(db)
        .args(&args[1..])
        .output()
        .unwrap()
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap()
}

/// The document parsed, after checking that it needs nothing from outside itself: no script, no
/// linked style sheet, no `src` or `href` naming an http(s) or protocol-relative address, no CSS
/// import or url().
fn parse_self_contained(path: &Path) -> Html {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = Html::parse_document(&text);
    assert_eq!(doc.select(&sel("script")).count(), 0, "a script");
    assert_eq!(doc.select(&sel("link")).count(), 0, "a linked resource");
    for e in doc.select(&sel("[src], [href]")) {
        for a in ["src", "href"] {
            if let Some(v) = e.value().attr(a) {
                let v = v.trim().to_ascii_lowercase();
                assert!(
                    !(v.starts_with("http:") || v.starts_with("https:") || v.starts_with("//")),
                    "{a}={v}"
                );
            }
        }
    }
    for s in doc.select(&sel("style")) {
        let css: String = s.text().collect();
        assert!(!css.contains("@import") && !css.contains("url("), "{css}");
    }
    doc
}

/// Every element carrying field `field`, as (unrounded value, printed text).
fn figures(doc: &Html, field: &str) -> Vec<(f64, String)> {
    doc.select(&sel(&format!("[data-field=\"{field}\"][data-value]")))
        .map(|e| {
            let v: f64 = e.value().attr("data-value").unwrap().parse().unwrap();
            (v, e.text().collect::<String>().trim().to_string())
        })
        .collect()
}

/// The text of the first element carrying field `field` (a verdict or status word).
fn word(doc: &Html, field: &str) -> String {
    doc.select(&sel(&format!("[data-field={field}]")))
        .next()
        .unwrap_or_else(|| panic!("no {field}"))
        .text()
        .collect()
}

/// The printed text is the value rounded to `decimals` places (the report's stated rounding): read
/// back, it is within half a step of the audit's figure.
fn assert_printed(field: &str, printed: &str, json: f64, decimals: i32) {
    let p: f64 = printed
        .parse()
        .unwrap_or_else(|_| panic!("{field}: {printed:?}"));
    let half = 0.5 * 10f64.powi(-decimals);
    assert!(
        (p - json).abs() <= half * (1.0 + 1e-9),
        "{field}: printed {printed}, audit {json}"
    );
}

fn out_file(dir: &Path, name: &str) -> PathBuf {
    dir.join(name)
}

/// `report fill`: the balance, its budget and its readings equal the audit's JSON of that ticket to
/// the bit (data attributes) and as printed (to the stated rounding); the vehicle's fills equal its
/// fills in the JSON.
#[test]
fn fill_report_holds_the_audits_figures() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    let fills = v["fills"].as_array().unwrap();
    let fill = fills
        .iter()
        .filter(|f| f["verdict"] == "short")
        .max_by(|a, b| {
            a["residual_percent"]
                .as_f64()
                .unwrap()
                .total_cmp(&b["residual_percent"].as_f64().unwrap())
        })
        .unwrap();
    let ticket = fill["ticket"].as_str().unwrap();
    let out = out_file(dir.path(), "fill.html");
    expect_success(&report(
        &db,
        &["fill", "--ticket", ticket, "--out", out.to_str().unwrap()],
    ));
    let doc = parse_self_contained(&out);
    // the balance (first in the document: the vehicle's table comes after it)
    for (field, decimals) in [
        ("billed_kg", 0),
        ("gained_kg", 0),
        ("drawn_kg", 0),
        ("ratio", 4),
        ("residual_kg", 0),
        ("residual_percent", 2),
        ("sigma_kg", 0),
        ("limit_kg", 0),
        ("usage_kg_per_day", 1),
        ("sigma_readings_shared_kg", 0),
        ("sigma_readings_independent_kg", 0),
        ("sigma_usage_kg", 0),
        ("sigma_meter_kg", 0),
    ] {
        let f = figures(&doc, field);
        let (value, printed) = f.first().unwrap_or_else(|| panic!("no {field}"));
        let json = fill[field].as_f64().unwrap();
        assert_eq!(*value, json, "{field}");
        assert_printed(field, printed, json, decimals);
    }
    assert_eq!(word(&doc, "verdict"), "short");
    // the two readings used, before then after, with the liquid state assumed
    for (field, decimals) in [("total_mass_kg", 0), ("liquid_temperature_k", 2)] {
        let f = figures(&doc, field);
        assert_eq!(f.len(), 2, "{field}");
        for (i, side) in ["before", "after"].iter().enumerate() {
            let json = fill[*side][field].as_f64().unwrap();
            assert_eq!(f[i].0, json, "{side} {field}");
            assert_printed(field, &f[i].1, json, decimals);
        }
    }
    // the delivering vehicle: its test and every one of its fills
    let vehicle = fill["vehicle"].as_str().unwrap();
    let vj = v["vehicles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["vehicle"] == vehicle)
        .unwrap();
    for field in ["bias_percent", "ci95_low_percent", "ci95_high_percent"] {
        let f = figures(&doc, field);
        assert_eq!(f[0].0, vj[field].as_f64().unwrap(), "{field}");
        assert_printed(field, &f[0].1, vj[field].as_f64().unwrap(), 2);
    }
    let theirs: Vec<&Value> = fills.iter().filter(|f| f["vehicle"] == vehicle).collect();
    let rows: Vec<_> = doc
        .select(&sel("tr"))
        .filter(|r| {
            r.select(&sel("[data-field=residual_percent]"))
                .next()
                .is_some()
        })
        .skip(1) // the balance's own row
        .collect();
    assert_eq!(rows.len(), theirs.len());
    for r in rows {
        let ticket_cell: String = r.select(&sel("td")).next().unwrap().text().collect();
        let t = ticket_cell.split(' ').next().unwrap();
        let j = theirs.iter().find(|f| f["ticket"] == t).unwrap();
        let cell = r
            .select(&sel("[data-field=residual_percent]"))
            .next()
            .unwrap();
        let value: f64 = cell.value().attr("data-value").unwrap().parse().unwrap();
        assert_eq!(value, j["residual_percent"].as_f64().unwrap(), "{t}");
    }
    // what identifies the data: the schema version, the history's head, the records named
    let text: String = doc.root_element().text().collect();
    assert!(text.contains("Schema version"), "no schema version");
    assert!(text.contains("History chain head"), "no chain head");
    assert!(
        text.contains(&format!("delivery {ticket}")),
        "the delivery record"
    );
    assert!(text.contains("reading before") && text.contains("reading after"));
    assert!(text.contains("Oxygen service"), "the cautions");
}

/// `report vehicle --since`: its test equals `audit --since` for that vehicle; the fills listed are
/// those in the period; an unknown vehicle is refused and leaves no file.
#[test]
fn vehicle_report_holds_the_audits_figures() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    let fills = v["fills"].as_array().unwrap();
    // a day a third of the way through the fills
    let mut starts: Vec<&str> = fills.iter().map(|f| f["start"].as_str().unwrap()).collect();
    starts.sort();
    let since = &starts[starts.len() / 3][..10];
    let until = &starts[2 * starts.len() / 3][..10];
    let vs = audit_json(&db, &["--since", since]);
    let biased = vs["vehicles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["status"] == "biased")
        .unwrap();
    let vehicle = biased["vehicle"].as_str().unwrap();
    let out = out_file(dir.path(), "vehicle.html");
    expect_success(&report(
        &db,
        &[
            "vehicle",
            "--vehicle",
            vehicle,
            "--since",
            since,
            "--until",
            until,
            "--out",
            out.to_str().unwrap(),
        ],
    ));
    let doc = parse_self_contained(&out);
    for field in [
        "bias_percent",
        "ci95_low_percent",
        "ci95_high_percent",
        "legal_tolerance_percent",
    ] {
        let f = figures(&doc, field);
        assert_eq!(f[0].0, biased[field].as_f64().unwrap(), "{field}");
        assert_printed(field, &f[0].1, biased[field].as_f64().unwrap(), 2);
    }
    assert_eq!(word(&doc, "status"), "biased");
    // the listed fills: the vehicle's in [since, until), as the audit judged them from `since`
    let listed: Vec<&Value> = vs["fills"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["vehicle"] == vehicle)
        .filter(|f| {
            let s = &f["start"].as_str().unwrap()[..10];
            s >= since && s < until
        })
        .collect();
    let printed = figures(&doc, "residual_percent");
    assert_eq!(printed.len(), listed.len());
    let mut want: Vec<f64> = listed
        .iter()
        .map(|f| f["residual_percent"].as_f64().unwrap())
        .collect();
    let mut got: Vec<f64> = printed.iter().map(|p| p.0).collect();
    want.sort_by(f64::total_cmp);
    got.sort_by(f64::total_cmp);
    assert_eq!(got, want);

    let missing = out_file(dir.path(), "nobody.html");
    let o = report(
        &db,
        &[
            "vehicle",
            "--vehicle",
            "NO-SUCH-9",
            "--out",
            missing.to_str().unwrap(),
        ],
    );
    assert!(!o.status.success());
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("NO-SUCH-9"), "{err}");
    assert!(!missing.exists());
}

/// `report statement`: the HTML and the CSV hold the same table, rounded the same way; an unknown
/// ticket, tank or file type is refused with its name and leaves no file.
#[test]
fn statement_html_and_csv_agree() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_db(dir.path());
    let v = audit_json(&db, &[]);
    let fill = &v["fills"][0];
    let tank = fill["tank"].as_str().unwrap();
    let year: i32 = fill["start"].as_str().unwrap()[..4].parse().unwrap();
    let (from, to) = (format!("{}-01-01", year - 1), format!("{}-01-01", year + 1));
    let html = out_file(dir.path(), "s.html");
    let csv = out_file(dir.path(), "s.csv");
    let statement = |out: &Path| {
        let args = [
            "statement",
            "--tank",
            tank,
            "--from",
            &from,
            "--to",
            &to,
            "--out",
        ];
        bin()
            .args(["report", args[0], "--db"])
            .arg(&db)
            .args(&args[1..])
            .arg(out)
            .output()
            .unwrap()
    };
    for out in [&html, &csv] {
        expect_success(&statement(out));
    }
    let doc = parse_self_contained(&html);
    let mut r = csv::Reader::from_path(&csv).unwrap();
    let head = r.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = r.records().map(|x| x.unwrap()).collect();
    assert!(rows.len() >= 10, "{} periods", rows.len());
    for field in [
        "opening_kg",
        "billed_kg",
        "gained_kg",
        "use_kg",
        "closing_kg",
        "running_sum_kg",
    ] {
        let col = head.iter().position(|h| h == field).unwrap();
        let printed = figures(&doc, field);
        assert_eq!(printed.len(), rows.len(), "{field}");
        for (p, row) in printed.iter().zip(&rows) {
            assert_eq!(p.1, &row[col], "{field}");
        }
    }
    // closing is the next opening, as printed
    let open = head.iter().position(|h| h == "opening_kg").unwrap();
    let close = head.iter().position(|h| h == "closing_kg").unwrap();
    for w in rows.windows(2) {
        assert_eq!(w[0][close], w[1][open]);
    }

    for (args, named) in [
        (vec!["fill", "--ticket", "NO-SUCH-TICKET"], "NO-SUCH-TICKET"),
        (
            vec![
                "statement",
                "--tank",
                "NO-SUCH-TANK",
                "--from",
                &from,
                "--to",
                &to,
            ],
            "NO-SUCH-TANK",
        ),
        (
            vec![
                "statement",
                "--tank",
                tank,
                "--from",
                &from,
                "--to",
                "2020-13-01",
            ],
            "--to",
        ),
    ] {
        let out = out_file(dir.path(), "refused.html");
        let mut a = args.clone();
        a.extend(["--out", out.to_str().unwrap()]);
        let o = report(&db, &a);
        assert!(!o.status.success(), "{args:?}");
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains(named), "{args:?}: {err}");
        assert!(!out.exists(), "{args:?}");
    }
    let pdf = out_file(dir.path(), "s.pdf");
    let o = statement(&pdf);
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains(".csv"));
}
