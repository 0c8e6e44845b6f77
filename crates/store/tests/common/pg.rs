//! PostgreSQL for tests: the server named by `CRYOLEDGER_PG` (libpq `key=value` form or a URL), else
//! this project's machines' server at 127.0.0.1:5432 (trust authentication, user `postgres`; see
//! ../shared/design/testing.md); each test works in a database of its own, dropped afterwards.
//! Without a server the PostgreSQL tests say they were skipped and pass, unless
//! `CRYOLEDGER_REQUIRE_PG=1` (as `.ci/run` sets), which makes a missing server a failure.
//! Shared by the store's tests and the end-to-end tests (included by path).
#![allow(dead_code, clippy::unwrap_used, clippy::expect_used)]

use std::sync::atomic::{AtomicU32, Ordering};

use store::PgStore;

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
            // libpq's key=value quoting: a quote or a backslash inside is escaped with a backslash
            let p = p.replace('\\', "\\\\").replace('\'', "\\'");
            s.push_str(&format!(" password='{p}'"));
        }
        s
    }

    pub fn url(&self) -> String {
        self.url_as(None)
    }

    /// The same as a `postgres://` URL (what `--db` takes).
    pub fn uri(&self) -> String {
        let host = match self.admin.get_hosts().first() {
            Some(postgres::config::Host::Tcp(h)) => h.clone(),
            _ => "127.0.0.1".into(),
        };
        let port = self.admin.get_ports().first().copied().unwrap_or(5432);
        let user = self.admin.get_user().unwrap_or("postgres");
        let password = self
            .admin
            .get_password()
            .map(|p| format!(":{}", String::from_utf8_lossy(p)))
            .unwrap_or_default();
        format!("postgres://{user}{password}@{host}:{port}/{}", self.name)
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
