//! The ledgers the store's tests run on: SQLite in memory, and PostgreSQL in a database of the test's
//! own on a server (dropped afterwards).
//!
//! The server: `CRYOLEDGER_PG` (libpq `key=value` form or a URL) if set, else this project's machines'
//! server at 127.0.0.1:5432 (trust authentication, user `postgres`; see ../shared/design/testing.md).
//! Without one the PostgreSQL half of each test says it was skipped and passes, unless
//! `CRYOLEDGER_REQUIRE_PG=1` (as `.ci/run` sets), which makes a missing server a failure.
#![allow(dead_code, clippy::unwrap_used, clippy::expect_used)] // each test binary uses a part

use std::sync::atomic::{AtomicU32, Ordering};

use store::{PgStore, Repository, Store};

/// A vertical nitrogen tank at Quarry Lane.
pub fn nitrogen_tank() -> store::TankSpec {
    store::TankFields {
        site: "Quarry Lane",
        tank: "QL-N2",
        fluid: "nitrogen",
        orientation: "vertical",
        diameter_m: "2.0",
        length_m: "5.0",
        heads: "ellipsoidal",
        line_temperature_c: "15",
        ..Default::default()
    }
    .check()
    .unwrap()
}

/// A reading at `time` with `dp` inH2O and 11.5 barg.
pub fn reading(time: &str, dp: &str) -> store::ReadingEntry {
    store::ReadingFields {
        time,
        dp,
        dp_unit: "inH2O",
        pressure: "11.5",
        pressure_unit: "barg",
        ..Default::default()
    }
    .check(101_325.0)
    .unwrap()
}

/// The server's connection settings, or why there is none.
pub fn server() -> Result<postgres::Config, String> {
    let text = std::env::var("CRYOLEDGER_PG")
        .unwrap_or_else(|_| "host=127.0.0.1 port=5432 user=postgres dbname=postgres".into());
    let config: postgres::Config = text.parse().map_err(|e| format!("CRYOLEDGER_PG: {e}"))?;
    config
        .connect(postgres::NoTls)
        .map(drop)
        .map_err(|e| format!("{}: {e}", store::describe_target(&text)))?;
    Ok(config)
}

/// The server, or None after saying the PostgreSQL tests are skipped (a failure when they are
/// required).
pub fn server_or_skip() -> Option<postgres::Config> {
    match server() {
        Ok(c) => Some(c),
        Err(why) => {
            assert!(
                std::env::var("CRYOLEDGER_REQUIRE_PG").as_deref() != Ok("1"),
                "PostgreSQL is required (CRYOLEDGER_REQUIRE_PG=1) and could not be reached: {why}"
            );
            eprintln!("PostgreSQL tests skipped: no server ({why}); set CRYOLEDGER_PG to run them");
            None
        }
    }
}

/// A database of this test's own, dropped when this is dropped.
pub struct PgDatabase {
    admin: postgres::Config,
    pub name: String,
}

impl PgDatabase {
    pub fn new(admin: &postgres::Config) -> Self {
        static N: AtomicU32 = AtomicU32::new(0);
        let name = format!(
            "cryoledger_test_{}_{}_{}",
            std::process::id(),
            N.fetch_add(1, Ordering::Relaxed),
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .unwrap()
                .subsec_micros()
        );
        let mut c = admin.connect(postgres::NoTls).unwrap();
        // a linguistic collation, as most servers have (en-US sorts 'a' < 'b' < 'B'), so that a query
        // relying on the server's default order instead of byte order fails here; the server's
        // default where ICU is missing
        let icu = format!(
            "CREATE DATABASE {name} TEMPLATE template0 LOCALE_PROVIDER icu ICU_LOCALE 'en-US' \
             LOCALE 'C.UTF-8'"
        );
        if c.batch_execute(&icu).is_err() {
            c.batch_execute(&format!("CREATE DATABASE {name}")).unwrap();
        }
        Self {
            admin: admin.clone(),
            name,
        }
    }

    /// A libpq connection string for this database as `user` (the admin's user when None).
    pub fn url_as(&self, user: Option<(&str, &str)>) -> String {
        let host = match self.admin.get_hosts().first() {
            Some(postgres::config::Host::Tcp(h)) => h.clone(),
            Some(postgres::config::Host::Unix(p)) => p.display().to_string(),
            None => "127.0.0.1".into(),
        };
        let port = self.admin.get_ports().first().copied().unwrap_or(5432);
        let (user, password) = match user {
            Some((u, p)) => (u.to_owned(), Some(p.to_owned())),
            None => (
                self.admin.get_user().unwrap_or("postgres").to_owned(),
                self.admin
                    .get_password()
                    .map(|p| String::from_utf8_lossy(p).into_owned()),
            ),
        };
        let mut s = format!("host={host} port={port} user={user} dbname={}", self.name);
        if let Some(p) = password {
            s.push_str(&format!(" password='{p}'"));
        }
        s
    }

    pub fn url(&self) -> String {
        self.url_as(None)
    }

    /// A ledger in this database.
    pub fn store(&self) -> PgStore {
        PgStore::connect(&self.url()).unwrap()
    }
}

impl Drop for PgDatabase {
    fn drop(&mut self) {
        if let Ok(mut c) = self.admin.connect(postgres::NoTls) {
            let _ = c.batch_execute(&format!(
                "DROP DATABASE IF EXISTS {} WITH (FORCE)",
                self.name
            ));
        }
    }
}

/// Which database a ledger test runs on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Backend {
    Sqlite,
    Postgres,
}

/// Makes empty ledgers of one backend (for tests that need a second ledger beside the first).
pub struct Ledgers {
    pub backend: Backend,
    server: Option<postgres::Config>,
    keep: std::cell::RefCell<Vec<PgDatabase>>,
}

impl Ledgers {
    /// None when the backend cannot run here (no PostgreSQL server, not required).
    pub fn new(backend: Backend) -> Option<Self> {
        let server = match backend {
            Backend::Sqlite => None,
            Backend::Postgres => Some(server_or_skip()?),
        };
        Some(Self {
            backend,
            server,
            keep: Default::default(),
        })
    }

    /// A new empty ledger.
    pub fn fresh(&self) -> Box<dyn Repository> {
        match (&self.server, self.backend) {
            (Some(server), Backend::Postgres) => {
                let db = PgDatabase::new(server);
                let s = db.store();
                self.keep.borrow_mut().push(db);
                Box::new(s)
            }
            _ => Box::new(Store::open_in_memory().unwrap()),
        }
    }
}

/// Each test of the generic suite, once per backend: `ledger_tests! { fn name(l: &Ledgers) { ... } }`.
#[macro_export]
macro_rules! ledger_tests {
    ($($(#[$doc:meta])* fn $name:ident($l:ident: &Ledgers) $body:block)*) => {
        $(
            $(#[$doc])*
            fn $name($l: &$crate::common::Ledgers) $body
        )*
        mod on_sqlite {
            $(
                #[test]
                fn $name() {
                    let l = $crate::common::Ledgers::new($crate::common::Backend::Sqlite).unwrap();
                    super::$name(&l);
                }
            )*
        }
        mod on_postgres {
            $(
                #[test]
                fn $name() {
                    if let Some(l) = $crate::common::Ledgers::new($crate::common::Backend::Postgres) {
                        super::$name(&l);
                    }
                }
            )*
        }
    };
}
