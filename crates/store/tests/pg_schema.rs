//! The PostgreSQL schema (migrations/postgres/) holds the same records as the SQLite one
//! (migrations/): the same tables, the same columns in the same order, each of the matching type
//! class and nullability. Both are built from their migration files; SQLite's column list is read
//! with `PRAGMA table_info`, PostgreSQL's from `information_schema.columns` (SQL standard).
//!
//! The server and the skipping rule are `common::pg`'s; the test works in a database of its own.

#![allow(clippy::expect_used, clippy::unwrap_used)] // a failure to set up is a test failure

mod common;

use std::collections::BTreeMap;

/// The migrations of each engine, in order (numbered alike).
const SQLITE: [&str; 5] = [
    include_str!("../../../migrations/0001_initial.sql"),
    include_str!("../../../migrations/0002_chain.sql"),
    include_str!("../../../migrations/0003_site_time_zone.sql"),
    include_str!("../../../migrations/0004_revision.sql"),
    include_str!("../../../migrations/0005_access.sql"),
];
const POSTGRES: [&str; 5] = [
    include_str!("../../../migrations/postgres/0001_initial.sql"),
    include_str!("../../../migrations/postgres/0002_chain.sql"),
    include_str!("../../../migrations/postgres/0003_site_time_zone.sql"),
    include_str!("../../../migrations/postgres/0004_revision.sql"),
    include_str!("../../../migrations/postgres/0005_access.sql"),
];

/// (column, type class, not null) per table.
type Columns = BTreeMap<String, Vec<(String, &'static str, bool)>>;

/// A declared type's class, by SQLite's affinity rules (sqlite.org/datatype3.html §3.1) and by
/// PostgreSQL's type names: the kinds of value a column holds.
fn class(declared: &str) -> &'static str {
    let t = declared.to_ascii_lowercase();
    if t.contains("int") {
        "integer"
    } else if t.contains("char") || t.contains("text") || t.contains("clob") {
        "text"
    } else if t.contains("blob") || t == "bytea" || t.is_empty() {
        "bytes"
    } else if t.contains("real") || t.contains("floa") || t.contains("doub") {
        "real"
    } else {
        "other"
    }
}

fn sqlite_columns() -> Columns {
    let c = rusqlite::Connection::open_in_memory().unwrap();
    for m in SQLITE {
        c.execute_batch(m).unwrap();
    }
    let mut tables: Vec<String> = c
        .prepare("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap();
    tables.retain(|t| !t.starts_with("sqlite_"));
    let mut out = Columns::new();
    for t in tables {
        let cols = c
            .prepare(&format!("PRAGMA table_info({t})"))
            .unwrap()
            .query_map([], |r| {
                let name: String = r.get(1)?;
                let ty: String = r.get(2)?;
                let not_null: bool = r.get(3)?;
                let pk: i64 = r.get(5)?;
                // an INTEGER PRIMARY KEY is the rowid: never null
                Ok((name, class(&ty), not_null || pk > 0))
            })
            .unwrap()
            .collect::<Result<_, _>>()
            .unwrap();
        out.insert(t, cols);
    }
    out
}

fn postgres_columns(pg: &mut postgres::Client, schema: &str) -> Columns {
    let rows = pg
        .query(
            "SELECT table_name, column_name, data_type, is_nullable FROM information_schema.columns \
             WHERE table_schema = $1 ORDER BY table_name, ordinal_position",
            &[&schema],
        )
        .unwrap();
    let mut out = Columns::new();
    for r in rows {
        let table: String = r.get(0);
        let name: String = r.get(1);
        let ty: String = r.get(2);
        let nullable: String = r.get(3);
        out.entry(table)
            .or_default()
            .push((name, class(&ty), nullable == "NO"));
    }
    out
}

#[test]
fn the_postgres_schema_holds_the_same_records_as_the_sqlite_one() {
    let Some(server) = common::server_or_skip() else {
        return;
    };
    let db = common::PgDatabase::new(&server);
    let mut pg = postgres::Client::connect(&db.url(), postgres::NoTls).unwrap();
    POSTGRES
        .iter()
        .try_for_each(|m| pg.batch_execute(m))
        .expect("the PostgreSQL migrations apply");
    let pg_cols = postgres_columns(&mut pg, "public");

    let lite = sqlite_columns();
    assert_eq!(
        lite.keys().collect::<Vec<_>>(),
        pg_cols.keys().collect::<Vec<_>>(),
        "the same tables"
    );
    for (table, cols) in &lite {
        assert_eq!(Some(cols), pg_cols.get(table), "table {table}");
    }
    // the comparison sees every table and column (ten tables; 23 columns in tanks)
    assert_eq!(lite.len(), 10);
    assert_eq!(lite.get("tanks").map(Vec::len), Some(23));
}
