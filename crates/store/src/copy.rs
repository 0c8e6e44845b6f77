//! A whole ledger copied between any two places, SQLite or PostgreSQL, row for row: every table of the
//! schema (history, revisions and hash chain included) with its ids, so that the copy verifies with the
//! same chain head and copying back reproduces the original exactly. The two schemas hold the same
//! columns in the same order (crates/store/tests/pg_schema.rs), so a row moves as it is.
//!
//! The destination must be empty (a new file, or a database with no records); it is written in one
//! transaction, so a failed copy leaves it as it was. Rows stream through, one table at a time.

use std::io::Write as _;

use crate::{Location, PgStore, Store, StoreError};

/// The ledger's tables, parents before children (the order a load keeps its foreign keys in).
pub(crate) const TABLES: [&str; 10] = [
    "sites",
    "site_access",
    "carriers",
    "vehicles",
    "tanks",
    "strapping_points",
    "readings",
    "deliveries",
    "revisions",
    "chain",
];

/// The tables whose `id` is a generated key (PostgreSQL's sequences are moved past the copied ids).
const IDENTITY_TABLES: [&str; 7] = [
    "sites",
    "carriers",
    "vehicles",
    "tanks",
    "readings",
    "deliveries",
    "revisions",
];

/// One stored value, as either database holds it.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Raw {
    Null,
    Int(i64),
    Real(f64),
    Text(String),
    Bytes(Vec<u8>),
}

/// What a copy moved.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct CopySummary {
    /// Rows per table, parents first.
    pub rows: Vec<(String, u64)>,
    /// The schema version both ledgers have.
    pub schema_version: i64,
}

impl CopySummary {
    /// Rows of one table.
    pub fn rows_of(&self, table: &str) -> u64 {
        self.rows
            .iter()
            .find(|(t, _)| t == table)
            .map_or(0, |(_, n)| *n)
    }
}

enum Opened {
    Lite(Store),
    Pg(Box<PgStore>),
}

fn open(l: &Location) -> Result<Opened, StoreError> {
    Ok(match l {
        Location::File(p) => Opened::Lite(Store::open(p)?),
        Location::Server(url) => Opened::Pg(Box::new(PgStore::connect(url)?)),
    })
}

/// Copy the whole ledger at `from` into the empty ledger at `to` (a SQLite file is created when
/// missing). Refused, with nothing written, when `to` holds any record or has another schema version.
pub fn copy_ledger(from: &Location, to: &Location) -> Result<CopySummary, StoreError> {
    if from == to {
        return Err(StoreError::Unsupported(format!(
            "{from} is both the source and the destination: name another ledger to copy into"
        )));
    }
    if let Location::File(p) = from
        && !p.exists()
    {
        return Err(StoreError::NotFound {
            what: "database",
            key: p.display().to_string(),
        });
    }
    let src = open(from)?;
    let mut dst = open(to)?;
    let (found, known) = (version(&src)?, version(&dst)?);
    if found != known {
        return Err(StoreError::Unsupported(format!(
            "{from} has schema version {found} and {to} has {known}: open both with this cryoledger first"
        )));
    }
    let mut summary = CopySummary {
        rows: Vec::new(),
        schema_version: found,
    };
    match &mut dst {
        Opened::Lite(d) => {
            let tx = d.conn.transaction()?;
            refuse_unless_empty_lite(&tx, to)?;
            for table in TABLES {
                let n = load_lite(&src, &tx, table)?;
                summary.rows.push((table.to_owned(), n));
            }
            tx.commit()?;
        }
        Opened::Pg(d) => {
            let mut c = d.lock_client();
            let mut tx = c.transaction()?;
            crate::pg::lock_chain(&mut tx)?;
            refuse_unless_empty_pg(&mut tx, to)?;
            for table in TABLES {
                let n = load_pg(&src, &mut tx, table)?;
                summary.rows.push((table.to_owned(), n));
            }
            for table in IDENTITY_TABLES {
                // the next generated id follows the copied ones
                tx.execute(
                    &format!(
                        "SELECT setval(pg_get_serial_sequence('{table}', 'id'), \
                         COALESCE(MAX(id), 1), MAX(id) IS NOT NULL) FROM {table}"
                    ),
                    &[],
                )?;
            }
            tx.commit()?;
        }
    }
    Ok(summary)
}

fn version(o: &Opened) -> Result<i64, StoreError> {
    use crate::Repository;
    match o {
        Opened::Lite(s) => s.schema_version(),
        Opened::Pg(s) => s.schema_version(),
    }
}

fn not_empty(to: &Location, table: &str) -> StoreError {
    StoreError::Unsupported(format!(
        "{to} already holds records (its {table} table is not empty): copy into a new file or an empty \
         database, so that nothing is mixed or overwritten"
    ))
}

fn refuse_unless_empty_lite(c: &rusqlite::Connection, to: &Location) -> Result<(), StoreError> {
    for table in TABLES {
        let any: bool = c.query_row(&format!("SELECT EXISTS(SELECT 1 FROM {table})"), [], |r| {
            r.get(0)
        })?;
        if any {
            return Err(not_empty(to, table));
        }
    }
    Ok(())
}

fn refuse_unless_empty_pg(
    c: &mut postgres::Transaction<'_>,
    to: &Location,
) -> Result<(), StoreError> {
    for table in TABLES {
        let any: bool = c
            .query_one(&format!("SELECT EXISTS(SELECT 1 FROM {table})"), &[])?
            .try_get(0)?;
        if any {
            return Err(not_empty(to, table));
        }
    }
    Ok(())
}

/// Every row of `table` at the source, in key order, to `f`.
fn each_row(
    src: &Opened,
    table: &str,
    f: &mut dyn FnMut(&[Raw]) -> Result<(), StoreError>,
) -> Result<(), StoreError> {
    let sql = format!("SELECT * FROM {table} ORDER BY 1, 2");
    match src {
        Opened::Lite(s) => {
            let mut st = s.conn.prepare(&sql)?;
            let n = st.column_count();
            let mut rows = st.query([])?;
            let mut row = Vec::with_capacity(n);
            while let Some(r) = rows.next()? {
                row.clear();
                for i in 0..n {
                    use rusqlite::types::ValueRef;
                    row.push(match r.get_ref(i)? {
                        ValueRef::Null => Raw::Null,
                        ValueRef::Integer(v) => Raw::Int(v),
                        ValueRef::Real(v) => Raw::Real(v),
                        ValueRef::Text(t) => Raw::Text(String::from_utf8_lossy(t).into_owned()),
                        ValueRef::Blob(b) => Raw::Bytes(b.to_vec()),
                    });
                }
                f(&row)?;
            }
        }
        Opened::Pg(s) => {
            use postgres::fallible_iterator::FallibleIterator as _;
            use postgres::types::Type;
            let mut c = s.lock_client();
            let none: [&str; 0] = [];
            let mut rows = c.query_raw(&sql, none)?;
            let mut row = Vec::new();
            while let Some(r) = rows.next()? {
                row.clear();
                for (i, col) in r.columns().iter().enumerate() {
                    let v = match *col.type_() {
                        Type::INT8 => r.try_get::<_, Option<i64>>(i)?.map(Raw::Int),
                        Type::FLOAT8 => r.try_get::<_, Option<f64>>(i)?.map(Raw::Real),
                        Type::TEXT => r.try_get::<_, Option<String>>(i)?.map(Raw::Text),
                        Type::BYTEA => r.try_get::<_, Option<Vec<u8>>>(i)?.map(Raw::Bytes),
                        ref other => {
                            return Err(StoreError::Corrupt {
                                what: format!("{table}.{}", col.name()),
                                reason: format!("a column of type {other}, which no ledger has"),
                            });
                        }
                    };
                    row.push(v.unwrap_or(Raw::Null));
                }
                f(&row)?;
            }
        }
    }
    Ok(())
}

fn load_lite(src: &Opened, tx: &rusqlite::Connection, table: &str) -> Result<u64, StoreError> {
    let n_cols: i64 = tx.query_row(
        &format!("SELECT COUNT(*) FROM pragma_table_info('{table}')"),
        [],
        |r| r.get(0),
    )?;
    let marks = vec!["?"; usize::try_from(n_cols).unwrap_or(0)].join(", ");
    let mut insert = tx.prepare(&format!("INSERT INTO {table} VALUES ({marks})"))?;
    let mut n = 0;
    each_row(src, table, &mut |row| {
        use rusqlite::types::Value;
        let values = row.iter().map(|v| match v {
            Raw::Null => Value::Null,
            Raw::Int(i) => Value::Integer(*i),
            Raw::Real(x) => Value::Real(*x),
            Raw::Text(t) => Value::Text(t.clone()),
            Raw::Bytes(b) => Value::Blob(b.clone()),
        });
        insert.execute(rusqlite::params_from_iter(values))?;
        n += 1;
        Ok(())
    })?;
    Ok(n)
}

/// One value in COPY's text format (PostgreSQL docs, "COPY", File Formats: Text Format).
fn copy_text(out: &mut Vec<u8>, v: &Raw) {
    match v {
        Raw::Null => out.extend_from_slice(b"\\N"),
        Raw::Int(i) => {
            let _ = write!(out, "{i}");
        }
        // Rust's shortest round-trip form; PostgreSQL reads it back to the same double
        Raw::Real(x) => {
            let _ = write!(out, "{x:?}");
        }
        Raw::Text(t) => {
            for b in t.bytes() {
                match b {
                    b'\\' => out.extend_from_slice(b"\\\\"),
                    b'\t' => out.extend_from_slice(b"\\t"),
                    b'\n' => out.extend_from_slice(b"\\n"),
                    b'\r' => out.extend_from_slice(b"\\r"),
                    _ => out.push(b),
                }
            }
        }
        Raw::Bytes(b) => {
            out.extend_from_slice(b"\\\\x");
            out.extend_from_slice(crate::chain::hex(b).as_bytes());
        }
    }
}

fn load_pg(
    src: &Opened,
    tx: &mut postgres::Transaction<'_>,
    table: &str,
) -> Result<u64, StoreError> {
    const FLUSH_AT: usize = 8 << 20;
    let mut buf: Vec<u8> = Vec::with_capacity(1 << 16);
    let mut n = 0;
    let send = |tx: &mut postgres::Transaction<'_>, buf: &mut Vec<u8>| -> Result<(), StoreError> {
        if buf.is_empty() {
            return Ok(());
        }
        let mut w = tx.copy_in(&format!("COPY {table} FROM STDIN"))?;
        w.write_all(buf).map_err(|source| StoreError::Io {
            path: "the server".into(),
            source,
        })?;
        w.finish()?;
        buf.clear();
        Ok(())
    };
    each_row(src, table, &mut |row| {
        for (i, v) in row.iter().enumerate() {
            if i > 0 {
                buf.push(b'\t');
            }
            copy_text(&mut buf, v);
        }
        buf.push(b'\n');
        n += 1;
        if buf.len() >= FLUSH_AT {
            send(tx, &mut buf)?;
        }
        Ok(())
    })?;
    send(tx, &mut buf)?;
    Ok(n)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// COPY's text format escapes backslash, tab, newline and carriage return, writes NULL as \N and
    /// bytes as \\x hex (PostgreSQL 15 docs, "COPY", Text Format; "Binary Data Types", hex format).
    #[test]
    fn copy_text_escapes_as_postgres_reads_it() {
        let mut out = Vec::new();
        for v in [
            Raw::Text("a\\b\tc\nd\re".into()),
            Raw::Null,
            Raw::Bytes(vec![0x0a, 0xff]),
            Raw::Real(0.1),
            Raw::Int(-7),
        ] {
            copy_text(&mut out, &v);
            out.push(b'|');
        }
        assert_eq!(
            String::from_utf8(out).unwrap_or_default(),
            "a\\\\b\\tc\\nd\\re|\\N|\\\\x0aff|0.1|-7|"
        );
    }
}
