//! The PostgreSQL side of a CSV import: one transaction holding the chain's lock, every row checked
//! by the shared driver, all or nothing. A uniqueness clash is caught by `ON CONFLICT DO NOTHING`
//! (no row comes back), so a duplicate row is reported without aborting the transaction; any other
//! failure of the server stops the import and rolls it back. The readings' chain links are sent in
//! one COPY at the end rather than one statement each.

use std::collections::HashMap;
use std::io::Write as _;

use postgres::{Client, GenericClient, Statement, Transaction};

use super::{PgChain, insert_tank, site_with, write_delivery};
use crate::StoreError;
use crate::chain::{self, Action, Kind};
use crate::csv_format::{ImportOptions, ImportSources, ImportSummary};
use crate::import::{End, ImportWriter, RowWrite, SiteError};
use crate::records::*;
use crate::sqlite::rows::{READINGS, reading_values};

fn insert_reading_sql() -> String {
    format!(
        "{} ON CONFLICT (tank_id, time_ms) WHERE deleted_at IS NULL DO NOTHING RETURNING id",
        READINGS.insert_sql_pg()
    )
}

/// Insert a reading; None when its tank already has a live reading at that instant.
pub(crate) fn insert_reading(
    tx: &mut impl GenericClient,
    tank: TankId,
    r: &ReadingEntry,
) -> Result<Option<ReadingId>, StoreError> {
    let values = reading_values(tank, r);
    let row = tx.query_opt(&insert_reading_sql(), &super::params(&values))?;
    Ok(match row {
        Some(row) => Some(ReadingId(row.try_get(0)?)),
        None => None,
    })
}

pub(crate) fn import(
    c: &mut Client,
    tanks: HashMap<String, TankRecord>,
    sources: ImportSources<'_>,
    opts: &ImportOptions<'_>,
) -> Result<ImportSummary, StoreError> {
    let mut tx = c.transaction()?;
    let chain = PgChain::new(&mut tx)?;
    let insert = tx.prepare(&insert_reading_sql())?;
    let mut w = Writer {
        tx: &mut tx,
        chain,
        insert,
        links: Vec::new(),
    };
    let (summary, mut sink) = crate::import::rows(&mut w, tanks, sources, opts)?;
    if sink.fatal.is_none()
        && let Err(e) = w.flush_links()
    {
        sink.fatal = Some(e);
    }
    drop(w);
    let (end, result) = crate::import::ending(summary, sink, opts.dry_run);
    match end {
        End::Commit => tx.commit()?,
        End::Rollback => tx.rollback()?,
        // best effort: a lost connection has rolled the transaction back already
        End::Abandon => drop(tx.rollback()),
    }
    result
}

/// The import's writes, inside its transaction.
struct Writer<'a, 'b> {
    tx: &'a mut Transaction<'b>,
    chain: PgChain,
    /// The prepared insert of a reading (the hot loop).
    insert: Statement,
    /// Chain rows of the readings, as COPY text lines, sent at the end.
    links: Vec<u8>,
}

impl Writer<'_, '_> {
    fn flush_links(&mut self) -> Result<(), StoreError> {
        if self.links.is_empty() {
            return Ok(());
        }
        let mut copy = self
            .tx
            .copy_in("COPY chain (seq, kind, record_id, action, digest, link) FROM STDIN")?;
        copy.write_all(&self.links)
            .map_err(|source| StoreError::Io {
                path: "the server".into(),
                source,
            })?;
        copy.finish()?;
        self.links.clear();
        Ok(())
    }
}

impl ImportWriter for Writer<'_, '_> {
    fn site(&mut self, name: &str, settings: &SiteSettings) -> Result<SiteId, SiteError> {
        site_with(self.tx, &mut self.chain, name, settings)
    }

    fn tank(&mut self, site: SiteId, spec: &TankSpec) -> RowWrite<TankId> {
        match insert_tank(self.tx, site, spec) {
            Ok(Some(id)) => {
                match self
                    .chain
                    .append(self.tx, Kind::Tank, id.0, Action::Insert, |out| {
                        chain::canonical_tank(out, site, spec)
                    }) {
                    Ok(()) => RowWrite::Done(id),
                    Err(e) => RowWrite::Fatal(e),
                }
            }
            Ok(None) => RowWrite::Duplicate,
            // the transaction is aborted: nothing more can be written
            Err(e) => RowWrite::Fatal(e.into()),
        }
    }

    fn reading(&mut self, tank: TankId, r: &ReadingEntry) -> RowWrite<()> {
        let values = reading_values(tank, r);
        match self.tx.query_opt(&self.insert, &super::params(&values)) {
            Ok(Some(row)) => {
                let id: i64 = match row.try_get(0) {
                    Ok(id) => id,
                    Err(e) => return RowWrite::Fatal(e.into()),
                };
                let (seq, digest, link) =
                    self.chain.next(Kind::Reading, id, Action::Insert, |out| {
                        chain::canonical_reading(out, tank, r)
                    });
                let _ = writeln!(
                    self.links,
                    "{seq}\t{}\t{id}\t{}\t\\\\x{}\t\\\\x{}",
                    Kind::Reading.as_str(),
                    Action::Insert.as_str(),
                    chain::hex(&digest),
                    chain::hex(&link)
                );
                RowWrite::Done(())
            }
            Ok(None) => RowWrite::Duplicate,
            Err(e) => RowWrite::Fatal(e.into()),
        }
    }

    fn delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<(), StoreError> {
        let Some(id) = write_delivery(self.tx, tank, d, None)? else {
            return Ok(()); // an insert always writes its row
        };
        self.chain
            .append(self.tx, Kind::Delivery, id.0, Action::Insert, |out| {
                chain::canonical_delivery(out, tank, d)
            })
    }
}
