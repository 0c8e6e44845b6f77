//! The command line on a PostgreSQL ledger: every command takes `--db postgres://...`; a ledger copied
//! SQLite -> PostgreSQL -> SQLite dumps exactly as it began; the demo fleet's audit is the same JSON
//! from both databases; a server that cannot be reached, a missing database or an unknown user is
//! told as what to check, with exit status 1 and no panic. (Expected values: the other backend's own
//! output, or the rule stated beside each check; common practice, no source.)

use crate::common::pg::{PgDatabase, server_or_skip};
use crate::common::*;
use store::Repository;

fn run(args: &[&str]) -> std::process::Output {
    bin().args(args).output().unwrap()
}

/// A demo ledger with earlier versions in its history: one reading edited, one deleted, one site's
/// time zone changed.
fn demo_with_history(dir: &std::path::Path) -> std::path::PathBuf {
    let db = demo_db(dir);
    let mut s = store::Store::open(&db).unwrap();
    let t = s.tanks().unwrap().remove(0);
    let r = s.readings(t.id, None).unwrap();
    let mut e = r[0].entry.clone();
    e.dp.value += 1.0;
    s.edit_reading(r[0].id, r[0].revision, &e, "misread on the round")
        .unwrap();
    s.delete_reading(r[1].id, r[1].revision, "entered twice")
        .unwrap();
    db
}

#[test]
fn a_ledger_copied_to_postgres_and_back_dumps_exactly_as_it_began() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let db = demo_with_history(dir.path());
    let pg = PgDatabase::new(&server);
    let url = pg.uri();
    let out = run(&["copy", "--from", db.to_str().unwrap(), "--to", &url]);
    expect_success(&out);
    let said = String::from_utf8_lossy(&out.stdout);
    assert!(said.contains("2 earlier versions"), "{said}");
    let back = dir.path().join("back.db");
    let out = run(&["copy", "--from", &url, "--to", back.to_str().unwrap()]);
    expect_success(&out);
    assert_eq!(dump(&back), dump(&db), "SQLite -> PostgreSQL -> SQLite");

    // the server's ledger goes on: a new reading gets the next id after the copied ones
    let mut s = store::PgStore::connect(&url).unwrap();
    let t = s.tanks().unwrap().remove(0);
    let mut e = s.latest_reading(t.id).unwrap().unwrap().entry;
    e.time = store::Stamp::from_ms(e.time.ms + 3_600_000);
    let id = s.add_reading(t.id, &e).unwrap();
    let max: i64 = store::Store::open(&db)
        .unwrap()
        .tanks()
        .unwrap()
        .iter()
        .map(|t| {
            let s = store::Store::open(&db).unwrap();
            s.readings(t.id, None)
                .unwrap()
                .iter()
                .map(|r| r.id.0)
                .max()
                .unwrap_or(0)
        })
        .max()
        .unwrap();
    assert!(id.0 > max, "new id {} after the copied {}", id.0, max);
    assert!(s.verify().unwrap().problems.is_empty());

    // a copy into a ledger that holds records is refused, and writes nothing
    let before = s.dump().unwrap();
    let out = run(&["copy", "--from", db.to_str().unwrap(), "--to", &url]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("already holds records"));
    assert_eq!(s.dump().unwrap(), before);
}

#[test]
fn the_demo_audit_is_the_same_json_from_both_databases() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let pg = PgDatabase::new(&server);
    let url = pg.uri();
    // the demo written by the command into each (same dates), then audited by the command
    let lite = dir.path().join("demo.db");
    for db in [lite.to_str().unwrap(), url.as_str()] {
        expect_success(&run(&["demo", "--keep-dates", "--db", db]));
    }
    let audit = |db: &str| {
        let out = run(&["audit", "--format", "json", "--db", db]);
        expect_success(&out);
        out.stdout
    };
    let (a, b) = (audit(lite.to_str().unwrap()), audit(&url));
    assert!(a.len() > 100_000, "a whole fleet's audit");
    assert!(
        a == b,
        "the audit JSON differs between SQLite and PostgreSQL"
    );
    // and the other commands read the server's ledger too
    for args in [
        vec!["verify", "--db", url.as_str()],
        vec!["export", "--db", url.as_str(), "--what", "readings"],
        vec![
            "contents",
            "--db",
            url.as_str(),
            "--tank",
            "ASB-N2-1",
            "--dp",
            "80 inH2O",
            "--pressure",
            "8 barg",
        ],
    ] {
        expect_success(&run(&args));
    }
    let out = run(&[
        "backup",
        "--db",
        &url,
        "--out",
        dir.path().join("b.db").to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("cryoledger copy"));
}

#[test]
fn an_unreachable_server_a_missing_database_and_an_unknown_user_are_told_plainly() {
    // port 1 on loopback: nothing listens (no server needed for this case)
    let cases: Vec<(String, &str)> = {
        let mut v = vec![(
            "postgres://postgres@127.0.0.1:1/fleet".to_owned(),
            "no PostgreSQL server answers at 127.0.0.1:1",
        )];
        v.push((
            "postgres://ops:secret@[::1".to_owned(),
            "not a PostgreSQL URL",
        ));
        if let Some(server) = server_or_skip() {
            let pg = PgDatabase::new(&server);
            let url = pg.uri();
            let user = server.get_user().unwrap_or("postgres").to_owned();
            v.push((
                url.replace(&pg.name, "no_such_ledger_db"),
                "there is no database 'no_such_ledger_db'",
            ));
            v.push((
                url.replacen(&format!("//{user}"), "//nobody_here", 1),
                "does not let user 'nobody_here' in",
            ));
        }
        v
    };
    for (url, says) in cases {
        for cmd in [
            &["audit", "--db"][..],
            &["import", "--readings", "x.csv", "--db"][..],
        ] {
            let mut args: Vec<&str> = cmd.to_vec();
            args.push(&url);
            let out = run(&args);
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(1), "{url}: {err}");
            assert!(!err.contains("panicked"), "{err}");
            if cmd[0] == "audit" {
                assert!(err.contains(says), "{url}: {err}");
                assert!(
                    !err.contains("secret"),
                    "the password is never shown: {err}"
                );
            }
        }
    }
}

/// `users` adds an operator with their sites, lists and removes them; the operator's own audit holds
/// only their sites' fills (the server filters every query); a SQLite file has no users.
#[test]
fn users_are_added_listed_and_removed_and_an_operator_audits_only_their_sites() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let pg = PgDatabase::new(&server);
    let url = pg.uri();
    expect_success(&run(&["demo", "--keep-dates", "--db", &url]));
    let name = format!("op_e2e_{}", std::process::id());
    struct RoleGuard(postgres::Config, String);
    impl Drop for RoleGuard {
        fn drop(&mut self) {
            if let Ok(mut c) = self.0.connect(postgres::NoTls) {
                let _ = c.batch_execute(&format!("DROP ROLE IF EXISTS \"{}\"", self.1));
            }
        }
    }
    let _cleanup = RoleGuard(server.clone(), name.clone());
    let site = "Bramwhistle Hospital";
    expect_success(&run(&[
        "users", "--db", &url, "add", &name, "--role", "operator", "--site", site,
    ]));
    let out = run(&["users", "--db", &url, "list"]);
    expect_success(&out);
    let listed = String::from_utf8_lossy(&out.stdout);
    assert!(
        listed
            .lines()
            .any(|l| l.starts_with(&name) && l.contains("operator") && l.contains(site)),
        "{listed}"
    );

    let theirs = url.replacen(
        &format!("//{}", server.get_user().unwrap_or("postgres")),
        &format!("//{name}"),
        1,
    );
    let all = audit_json_at(&url);
    let own = audit_json_at(&theirs);
    let fills = |v: &serde_json::Value| v["fills"].as_array().map_or(0, Vec::len);
    let tanks_of_site: Vec<String> = store::Store::open(&demo_db(dir.path()))
        .unwrap()
        .tanks()
        .unwrap()
        .into_iter()
        .filter(|t| t.spec.site == site)
        .map(|t| t.spec.name)
        .collect();
    assert!(
        fills(&own) > 0 && fills(&own) < fills(&all),
        "{} of {}",
        fills(&own),
        fills(&all)
    );
    for f in own["fills"].as_array().unwrap() {
        let tank = f["tank"].as_str().unwrap_or_default().to_owned();
        assert!(tanks_of_site.contains(&tank), "{tank} is not at {site}");
    }
    expect_success(&run(&["users", "--db", &url, "remove", &name]));
    let out = run(&["users", "--db", &url, "list"]);
    assert!(!String::from_utf8_lossy(&out.stdout).contains(&name));
    let out = run(&[
        "users",
        "--db",
        dir.path().join("demo.db").to_str().unwrap(),
        "list",
    ]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("SQLite file"));
}

fn audit_json_at(db: &str) -> serde_json::Value {
    let out = run(&["audit", "--format", "json", "--db", db]);
    expect_success(&out);
    serde_json::from_slice(&out.stdout).unwrap()
}

/// On a server that asks for passwords (a private one, scram-sha-256, started from the installed
/// binaries): a wrong password and a missing one are told as what to check, without the password; the
/// right one opens the ledger.
#[test]
fn a_wrong_or_missing_password_is_told_plainly() {
    use crate::common::pg::PrivateServer;
    let server = match PrivateServer::start("scram-sha-256", Some("right-horse-7")) {
        Ok(s) => s,
        Err(why) => {
            assert!(
                std::env::var("CRYOLEDGER_REQUIRE_PG").as_deref() != Ok("1"),
                "PostgreSQL is required (CRYOLEDGER_REQUIRE_PG=1) and no private server started: {why}"
            );
            eprintln!("PostgreSQL tests skipped: no private server ({why})");
            return;
        }
    };
    let url = |pw: &str| format!("postgres://postgres{pw}@127.0.0.1:{}/postgres", server.port);
    for (pw, says) in [
        (
            ":wrong-battery-9",
            "the server refused the password of user 'postgres'",
        ),
        ("", "the server asks for a password"),
    ] {
        let out = run(&["audit", "--db", &url(pw)]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{err}");
        assert!(err.contains(says), "{err}");
        assert!(
            !err.contains("wrong-battery"),
            "the password is never shown: {err}"
        );
    }
    expect_success(&run(&[
        "demo",
        "--keep-dates",
        "--db",
        &url(":right-horse-7"),
    ]));
    expect_success(&run(&["verify", "--db", &url(":right-horse-7")]));
}

/// An import into a server's ledger killed half-way (SIGKILL) leaves it as it was: the server rolls
/// back the transaction of a connection that went away, and the history still verifies.
#[test]
fn a_killed_import_leaves_the_servers_ledger_as_it_was() {
    use std::io::Write as _;
    use std::time::{Duration, Instant};
    let Some(server) = server_or_skip() else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let pg = PgDatabase::new(&server);
    let url = pg.uri();
    let tanks = dir.path().join("tanks.csv");
    std::fs::write(
        &tanks,
        "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
         Kiln Row,KR-N2-1,nitrogen,vertical,3,10,flat,15\n",
    )
    .unwrap();
    expect_success(&run(&[
        "import",
        "--db",
        &url,
        "--tanks",
        tanks.to_str().unwrap(),
    ]));
    let path = dir.path().join("big.csv");
    let mut f = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(f, "tank,time,dp,dp_unit,pressure,pressure_unit").unwrap();
    for i in 0..400_000i64 {
        let ms = 1_800_000_000_000 + i * 60_000;
        writeln!(
            f,
            "KR-N2-1,{},{:.2},inH2O,11.5,barg",
            store::Stamp::from_ms(ms).text,
            100.0 + (i % 97) as f64
        )
        .unwrap();
    }
    f.flush().unwrap();
    drop(f);
    let s = store::PgStore::connect(&url).unwrap();
    let before = s.dump().unwrap();
    let mut child = bin()
        .args(["import", "--db", &url, "--readings"])
        .arg(&path)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    // wait until the import's transaction holds the chain's lock (it is writing rows), let it write
    // for a second, then kill it
    let start = Instant::now();
    let mut c = postgres::Client::connect(&pg.url(), postgres::NoTls).unwrap();
    let mut under_way = false;
    while start.elapsed() < Duration::from_secs(60) && child.try_wait().unwrap().is_none() {
        let locked: bool = c
            .query_one(
                "SELECT EXISTS(SELECT 1 FROM pg_locks WHERE locktype = 'advisory' AND granted)",
                &[],
            )
            .unwrap()
            .get(0);
        if locked {
            std::thread::sleep(Duration::from_secs(1));
            under_way = true;
            break;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let still_running = child.try_wait().unwrap().is_none();
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(
        under_way && still_running,
        "the import should have been killed mid-way"
    );
    // the server notices the lost connection and rolls back
    let deadline = Instant::now() + Duration::from_secs(20);
    while Instant::now() < deadline
        && c.query_one(
            "SELECT EXISTS(SELECT 1 FROM pg_locks WHERE locktype = 'advisory')",
            &[],
        )
        .unwrap()
        .get::<_, bool>(0)
    {
        std::thread::sleep(Duration::from_millis(50));
    }
    assert_eq!(
        s.dump().unwrap(),
        before,
        "a killed import changed the ledger"
    );
    assert!(s.verify().unwrap().problems.is_empty());
}
