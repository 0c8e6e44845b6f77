//! The ledgers the store's tests run on: SQLite in memory, and PostgreSQL in a database of the test's
//! own on a server (dropped afterwards).
//!
//! The server: `CRYOLEDGER_PG` (libpq `key=value` form or a URL) if set, else this project's machines'
//! server at 127.0.0.1:5432 (trust authentication, user `postgres`; see ../shared/design/testing.md).
//! Without one the PostgreSQL half of each test says it was skipped and passes, unless
//! `CRYOLEDGER_REQUIRE_PG=1` (as `.ci/run` sets), which makes a missing server a failure.
#![allow(dead_code, clippy::unwrap_used, clippy::expect_used)] // each test binary uses a part

pub mod pg;

pub use pg::{PgDatabase, server_or_skip};
use store::{Repository, Store};

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

/// Which database a ledger test runs on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Backend {
    Sqlite,
    Postgres,
}

/// Makes empty ledgers of one backend (for tests that need a second ledger beside the first): SQLite
/// in a file of a temp folder, PostgreSQL in a database of its own, so that a test can also reach the
/// newest one with SQL of its own ([`Ledgers::raw`]), as a tool other than cryoledger would.
pub struct Ledgers {
    pub backend: Backend,
    server: Option<postgres::Config>,
    keep: std::cell::RefCell<Vec<PgDatabase>>,
    dir: tempfile::TempDir,
    files: std::cell::Cell<u32>,
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
            dir: tempfile::tempdir().unwrap(),
            files: Default::default(),
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
            _ => {
                self.files.set(self.files.get() + 1);
                let path = self.dir.path().join(format!("{}.db", self.files.get()));
                Box::new(Store::open(&path).unwrap())
            }
        }
    }

    /// Run SQL on the newest ledger straight through its database, not through cryoledger.
    pub fn raw(&self, sql: &str) {
        match self.backend {
            Backend::Postgres => {
                let keep = self.keep.borrow();
                let db = keep.last().expect("a ledger made first");
                let mut c = postgres::Client::connect(&db.url(), postgres::NoTls).unwrap();
                c.batch_execute(sql).unwrap();
            }
            Backend::Sqlite => {
                let path = self.dir.path().join(format!("{}.db", self.files.get()));
                rusqlite::Connection::open(path)
                    .unwrap()
                    .execute_batch(sql)
                    .unwrap();
            }
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
