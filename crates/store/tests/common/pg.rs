//! PostgreSQL for tests: the server named by `CRYOLEDGER_PG` (libpq `key=value` form or a URL), else
//! this project's machines' server at 127.0.0.1:5432 (trust authentication, user `postgres`; see
//! ../shared/design/testing.md), else a private server started from the installed binaries (`initdb`
//! and `pg_ctl` on PATH or under /usr/lib/postgresql/*/bin) in a temp folder on a free port, stopped
//! when the test process ends. Each test works in a database of its own, dropped afterwards. With none
//! of these the PostgreSQL tests say they were skipped and pass, unless `CRYOLEDGER_REQUIRE_PG=1` (as
//! `.ci/run` sets), which makes a missing server a failure.
//! Shared by the store's tests and the end-to-end tests (included by path).
#![allow(dead_code, clippy::unwrap_used, clippy::expect_used)]

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::OnceLock;
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
    static FALLBACK: OnceLock<Result<PrivateServer, String>> = OnceLock::new();
    let found = server().or_else(|why| {
        if std::env::var("CRYOLEDGER_PG").is_ok() {
            return Err(why);
        }
        match FALLBACK.get_or_init(|| PrivateServer::start("trust", None)) {
            Ok(p) => {
                eprintln!(
                    "no PostgreSQL server reached ({why}): using a private one on port {}",
                    p.port
                );
                Ok(p.config("postgres", None))
            }
            Err(e) => Err(format!("{why}; and no private server: {e}")),
        }
    });
    match found {
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

/// A private PostgreSQL server from the installed binaries, in a temp folder on a free loopback port.
/// A watchdog stops it and removes its folder once the test process has ended.
pub struct PrivateServer {
    pub port: u16,
    pub dir: PathBuf,
}

/// The server binaries: on PATH, or the newest under /usr/lib/postgresql.
fn pg_bin(name: &str) -> Option<PathBuf> {
    if let Ok(path) = std::env::var("PATH") {
        for d in std::env::split_paths(&path) {
            if d.join(name).is_file() {
                return Some(d.join(name));
            }
        }
    }
    let mut found: Vec<PathBuf> = std::fs::read_dir("/usr/lib/postgresql")
        .ok()?
        .filter_map(|e| e.ok().map(|e| e.path().join("bin").join(name)))
        .filter(|p| p.is_file())
        .collect();
    found.sort();
    found.pop()
}

/// `initdb` and the server refuse to run as root: there, run them as the `postgres` account.
fn as_server_user(program: &Path) -> Command {
    let root = Command::new("id")
        .arg("-u")
        .output()
        .is_ok_and(|o| String::from_utf8_lossy(&o.stdout).trim() == "0");
    if root {
        let mut c = Command::new("runuser");
        c.args(["-u", "postgres", "--"]).arg(program);
        c
    } else {
        Command::new(program)
    }
}

impl PrivateServer {
    /// Start one with `auth` (`trust`, or `scram-sha-256` with the superuser `postgres`'s password).
    pub fn start(auth: &str, password: Option<&str>) -> Result<Self, String> {
        let (initdb, pg_ctl) = (
            pg_bin("initdb").ok_or("no initdb installed")?,
            pg_bin("pg_ctl").ok_or("no pg_ctl installed")?,
        );
        let port = std::net::TcpListener::bind("127.0.0.1:0")
            .and_then(|l| l.local_addr())
            .map_err(|e| e.to_string())?
            .port();
        static N: AtomicU32 = AtomicU32::new(0);
        let base = std::env::temp_dir().join(format!(
            "cryoledger-pg-{}-{}",
            std::process::id(),
            N.fetch_add(1, Ordering::Relaxed)
        ));
        let dir = base.join("data");
        std::fs::create_dir_all(&base).map_err(|e| e.to_string())?;
        // the server's account must reach the folder (it may not be ours)
        let _ = Command::new("chmod").arg("777").arg(&base).status();
        let pwfile = base.join("pw");
        std::fs::write(&pwfile, password.unwrap_or("unused")).map_err(|e| e.to_string())?;
        let _ = Command::new("chmod").arg("644").arg(&pwfile).status();
        let out = as_server_user(&initdb)
            .args([
                "-U",
                "postgres",
                "-E",
                "UTF8",
                "--locale=C.UTF-8",
                "--auth",
                auth,
                "--pwfile",
            ])
            .arg(&pwfile)
            .arg("-D")
            .arg(&dir)
            .output()
            .map_err(|e| format!("initdb: {e}"))?;
        if !out.status.success() {
            return Err(format!(
                "initdb: {}",
                String::from_utf8_lossy(&out.stderr).trim()
            ));
        }
        let opts = format!(
            "-p {port} -k {} -c listen_addresses=127.0.0.1 -c fsync=off",
            base.display()
        );
        let out = as_server_user(&pg_ctl)
            .arg("-D")
            .arg(&dir)
            .arg("-l")
            .arg(base.join("log"))
            .args(["-o", &opts, "-w", "start"])
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .output()
            .map_err(|e| format!("pg_ctl: {e}"))?;
        if !out.status.success() {
            return Err(format!(
                "pg_ctl start: {}",
                String::from_utf8_lossy(&out.stderr).trim()
            ));
        }
        // the watchdog: when this process is gone, stop the server and remove its folder
        let stop = as_server_user(&pg_ctl)
            .get_args()
            .map(|a| a.to_string_lossy().into_owned())
            .collect::<Vec<_>>();
        let program = as_server_user(&pg_ctl)
            .get_program()
            .to_string_lossy()
            .into_owned();
        let script = format!(
            "while kill -0 {pid} 2>/dev/null; do sleep 1; done; {program} {} -D '{}' -m immediate stop; rm -rf '{}'",
            stop.join(" "),
            dir.display(),
            base.display(),
            pid = std::process::id()
        );
        Command::new("sh")
            .args(["-c", &script])
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .map_err(|e| format!("watchdog: {e}"))?;
        Ok(Self { port, dir })
    }

    /// Connection settings for `user` (with a password when given).
    pub fn config(&self, user: &str, password: Option<&str>) -> postgres::Config {
        let mut c = postgres::Config::new();
        c.host("127.0.0.1")
            .port(self.port)
            .user(user)
            .dbname("postgres");
        if let Some(p) = password {
            c.password(p);
        }
        c
    }
}
