//! The SQLite side of a CSV import: one transaction, every row checked, all or nothing.

use super::chain::{self, Action, ChainWriter, Kind};
use super::rows::*;
use super::{Store, site_with};
use crate::StoreError;
use crate::csv_format::*;
use crate::import::{End, ImportWriter, RowWrite, SiteError};
use crate::records::{DeliveryEntry, ReadingEntry, SiteId, SiteSettings, TankId, TankSpec};
use crate::repository::Repository;
use rusqlite::Connection;

pub(crate) fn import(
    store: &mut Store,
    sources: ImportSources<'_>,
    opts: &ImportOptions<'_>,
) -> Result<ImportSummary, StoreError> {
    let tanks = store
        .tanks()?
        .into_iter()
        .map(|t| (t.spec.name.clone(), t))
        .collect();
    let tx = store.conn.transaction()?;
    let mut writer = Writer {
        conn: &tx,
        chain: ChainWriter::new(&tx)?,
        insert: tx.prepare(&READINGS.insert_sql())?,
    };
    let (summary, sink) = crate::import::rows(&mut writer, tanks, sources, opts)?;
    drop(writer);
    let (end, result) = crate::import::ending(summary, sink, opts.dry_run);
    match end {
        End::Commit => tx.commit()?,
        End::Rollback => tx.rollback()?,
        // SQLite may have rolled the transaction back by itself (a full disk, an I/O error)
        End::Abandon if !tx.is_autocommit() => tx.rollback()?,
        End::Abandon => {}
    }
    result
}

/// A failure of the storage, not of a row: the import stops.
fn storage_failure(e: &rusqlite::Error) -> bool {
    use rusqlite::ErrorCode::*;
    matches!(
        e.sqlite_error_code(),
        Some(DiskFull | SystemIoFailure | ReadOnly | DatabaseCorrupt | NotADatabase | OutOfMemory)
    )
}

/// A failed insert as the importer sees it.
fn refused<T>(e: rusqlite::Error) -> RowWrite<T> {
    if storage_failure(&e) {
        RowWrite::Fatal(e.into())
    } else if is_unique_violation(&e) {
        RowWrite::Duplicate
    } else {
        RowWrite::Refused(e.to_string())
    }
}

/// The import's writes in SQLite, inside its transaction.
struct Writer<'c> {
    conn: &'c Connection,
    chain: ChainWriter,
    /// The prepared insert of a reading (the hot loop).
    insert: rusqlite::Statement<'c>,
}

impl Writer<'_> {
    fn chained<T>(
        &mut self,
        done: T,
        kind: Kind,
        id: i64,
        fill: impl FnOnce(&mut String),
    ) -> RowWrite<T> {
        match self.chain.append(self.conn, kind, id, Action::Insert, fill) {
            Ok(()) => RowWrite::Done(done),
            Err(e) => RowWrite::Fatal(e),
        }
    }
}

impl ImportWriter for Writer<'_> {
    fn site(&mut self, name: &str, settings: &SiteSettings) -> Result<SiteId, SiteError> {
        site_with(self.conn, &mut self.chain, name, settings)
    }

    fn tank(&mut self, site: SiteId, spec: &TankSpec) -> RowWrite<TankId> {
        match insert_tank(self.conn, site, spec) {
            Ok(id) => self.chained(id, Kind::Tank, id.0, |out| {
                chain::canonical_tank(out, site, spec)
            }),
            Err(e) => refused(e),
        }
    }

    fn reading(&mut self, tank: TankId, r: &ReadingEntry) -> RowWrite<()> {
        match execute_reading(&mut self.insert, tank, r, None) {
            Ok(_) => {
                let id = self.conn.last_insert_rowid();
                self.chained((), Kind::Reading, id, |out| {
                    chain::canonical_reading(out, tank, r)
                })
            }
            Err(e) => refused(e),
        }
    }

    fn delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<(), StoreError> {
        let Some(id) = write_delivery(self.conn, tank, d, None)? else {
            return Ok(()); // an insert always writes its row
        };
        self.chain
            .append(self.conn, Kind::Delivery, id.0, Action::Insert, |out| {
                chain::canonical_delivery(out, tank, d)
            })
    }
}
