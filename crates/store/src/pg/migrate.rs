//! The PostgreSQL schema: the numbered files of `migrations/postgres/`, applied in order, each in
//! its own transaction, with the version reached kept in `cryoledger_schema`.

use postgres::Client;

use crate::StoreError;
use crate::sqlite::rows::now_text;

/// The numbered SQL files of `migrations/postgres/`, applied in order.
pub const PG_MIGRATION_FILES: &[(&str, &str)] = &[
    (
        "0001_initial.sql",
        include_str!("../../../../migrations/postgres/0001_initial.sql"),
    ),
    (
        "0002_chain.sql",
        include_str!("../../../../migrations/postgres/0002_chain.sql"),
    ),
    (
        "0003_site_time_zone.sql",
        include_str!("../../../../migrations/postgres/0003_site_time_zone.sql"),
    ),
    (
        "0004_revision.sql",
        include_str!("../../../../migrations/postgres/0004_revision.sql"),
    ),
    (
        "0005_access.sql",
        include_str!("../../../../migrations/postgres/0005_access.sql"),
    ),
];

pub(super) fn migrate_locked(c: &mut Client) -> Result<(), StoreError> {
    // asked first, so that a user who may not create tables (an operator) can open a ledger that is
    // up to date; the version is no secret
    let exists: bool = c
        .query_one("SELECT to_regclass('cryoledger_schema') IS NOT NULL", &[])?
        .try_get(0)?;
    if !exists {
        c.batch_execute(
            "CREATE TABLE cryoledger_schema (version BIGINT PRIMARY KEY, applied_at TEXT NOT NULL); \
             GRANT SELECT ON cryoledger_schema TO PUBLIC",
        )?;
    }
    let found: i64 = c
        .query_one(
            "SELECT COALESCE(MAX(version), 0) FROM cryoledger_schema",
            &[],
        )?
        .try_get(0)?;
    let known = PG_MIGRATION_FILES.len() as i64;
    if found > known {
        return Err(StoreError::NewerSchema { found, known });
    }
    for (n, (_, sql)) in (1..).zip(PG_MIGRATION_FILES) {
        if n <= found {
            continue;
        }
        let mut tx = c.transaction()?;
        tx.batch_execute(sql).map_err(|e| {
            StoreError::Migration(crate::DriverError {
                message: StoreError::from(e).to_string(),
            })
        })?;
        tx.execute(
            "INSERT INTO cryoledger_schema (version, applied_at) VALUES ($1, $2)",
            &[&n, &now_text()],
        )?;
        tx.commit()?;
    }
    Ok(())
}
