//! The PostgreSQL side of a CSV import: one transaction holding the chain's lock, every row checked
//! by the shared driver, all or nothing.
//!
//! Readings, the bulk of any import, travel in multi-row INSERTs of [`BATCH`] with their chain links
//! beside them, not one round trip each (COPY would be faster still, but PostgreSQL refuses COPY into a
//! table under row-level security, which an operator's import is). Their ids are reserved from the
//! table's sequence in blocks, so that each link is computed as its row is read; deliveries' links join
//! the same batches, their carriers and vehicles are looked up once each. A duplicate reading is found
//! before it is sent: each tank's live instants are read once, when its first row comes, and every
//! row taken adds its own; no other cryoledger writer can add one meanwhile (they wait for the chain's
//! lock). Tanks and deliveries are inserted one by one, a clash caught by `ON CONFLICT DO NOTHING`. Any failure of the server stops the import and rolls it back.

use std::collections::{HashMap, HashSet};

use postgres::{Client, GenericClient, Transaction};

use super::{PgChain, insert_tank, site_with, vehicle_ids};
use crate::StoreError;
use crate::cell::Cell;
use crate::chain::{self, Action, Kind};
use crate::check::FieldError;
use crate::csv_format::{ImportOptions, ImportSources, ImportSummary};
use crate::import::{End, ImportWriter, RowWrite, SiteError};
use crate::records::*;
use crate::sqlite::rows::{
    DELIVERIES, READINGS, delivery_values, duplicate_delivery, reading_values,
};

/// Readings per INSERT (12 parameters each: well under the protocol's 65,535).
const BATCH: usize = 1000;

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
    let mut w = Writer {
        tx: &mut tx,
        chain,
        ids: Vec::new(),
        taken: HashMap::new(),
        rows: Vec::with_capacity(BATCH * 12),
        links: Vec::with_capacity(BATCH * 6),
        pending: 0,
        vehicles: HashMap::new(),
        insert_delivery: None,
        full_batch: None,
    };
    let (summary, mut sink) = crate::import::rows(&mut w, tanks, sources, opts)?;
    if sink.fatal.is_none()
        && let Err(e) = w.flush()
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
    /// Reading ids reserved from the sequence, not used yet (popped from the end).
    ids: Vec<i64>,
    /// Each tank's live instants, as stored and as taken in this import.
    taken: HashMap<TankId, HashSet<i64>>,
    /// Readings waiting to be sent: `id` then [`READINGS`]' columns, per row.
    rows: Vec<Cell>,
    /// Chain links waiting to be sent (the readings' and the deliveries').
    links: Vec<LinkCells>,
    pending: usize,
    /// Carrier and vehicle ids by their names, once found or made.
    vehicles: HashMap<(String, String), (i64, i64)>,
    /// The prepared insert of a delivery.
    insert_delivery: Option<postgres::Statement>,
    /// The prepared inserts of a full batch of readings and of links (parsed and planned once).
    full_batch: Option<(postgres::Statement, postgres::Statement)>,
}

struct LinkCells {
    seq: i64,
    kind: &'static str,
    id: i64,
    digest: Vec<u8>,
    link: Vec<u8>,
}

/// `INSERT INTO table (columns) VALUES ($1, ...), (...)` for `rows` rows of `width` values.
fn multi_insert(table: &str, columns: &str, width: usize, rows: usize) -> String {
    let mut sql = format!("INSERT INTO {table} ({columns}) VALUES ");
    for r in 0..rows {
        if r > 0 {
            sql.push_str(", ");
        }
        sql.push('(');
        for c in 0..width {
            if c > 0 {
                sql.push_str(", ");
            }
            sql.push_str(&format!("${}", r * width + c + 1));
        }
        sql.push(')');
    }
    sql
}

impl Writer<'_, '_> {
    /// The next reading id, reserving a block from the sequence when none is left.
    fn next_id(&mut self) -> Result<i64, StoreError> {
        if self.ids.is_empty() {
            let rows = self.tx.query(
                "SELECT nextval(pg_get_serial_sequence('readings', 'id')) FROM generate_series(1::BIGINT, $1::BIGINT)",
                &[&(BATCH as i64)],
            )?;
            self.ids = rows
                .iter()
                .map(|r| r.try_get(0))
                .collect::<Result<Vec<i64>, _>>()?;
            self.ids.reverse();
        }
        self.ids.pop().ok_or_else(|| StoreError::Corrupt {
            what: "the readings' id sequence".into(),
            reason: "it gave no id".into(),
        })
    }

    /// Whether the tank already has a live reading at `ms` (its instants read at its first row).
    fn seen(&mut self, tank: TankId, ms: i64) -> Result<bool, StoreError> {
        if !self.taken.contains_key(&tank) {
            let rows = self.tx.query(
                "SELECT time_ms FROM readings WHERE tank_id = $1 AND deleted_at IS NULL",
                &[&tank.0],
            )?;
            let times = rows
                .iter()
                .map(|r| r.try_get(0))
                .collect::<Result<HashSet<i64>, _>>()?;
            self.taken.insert(tank, times);
        }
        Ok(!self.taken.entry(tank).or_default().insert(ms))
    }

    /// Send the waiting readings and links.
    fn flush(&mut self) -> Result<(), StoreError> {
        let columns = format!("id, {}", READINGS.write.join(", "));
        let width = READINGS.write.len() + 1;
        const LINK_COLUMNS: &str = "seq, kind, record_id, action, digest, link";
        if self.full_batch.is_none() && (self.pending == BATCH || self.links.len() == BATCH) {
            let readings = self
                .tx
                .prepare(&multi_insert("readings", &columns, width, BATCH))?;
            let links = self
                .tx
                .prepare(&multi_insert("chain", LINK_COLUMNS, 6, BATCH))?;
            self.full_batch = Some((readings, links));
        }
        if self.pending > 0 {
            let params = super::params(&self.rows);
            match &self.full_batch {
                Some((st, _)) if self.pending == BATCH => self.tx.execute(st, &params)?,
                _ => self.tx.execute(
                    &multi_insert("readings", &columns, width, self.pending),
                    &params,
                )?,
            };
            self.rows.clear();
            self.pending = 0;
        }
        if self.links.is_empty() {
            return Ok(());
        }
        let action = Action::Insert.as_str();
        let mut params: Vec<&(dyn postgres::types::ToSql + Sync)> =
            Vec::with_capacity(self.links.len() * 6);
        for l in &self.links {
            params.extend([
                &l.seq as &(dyn postgres::types::ToSql + Sync),
                &l.kind,
                &l.id,
                &action,
                &l.digest,
                &l.link,
            ]);
        }
        match &self.full_batch {
            Some((_, st)) if self.links.len() == BATCH => self.tx.execute(st, &params)?,
            _ => self.tx.execute(
                &multi_insert("chain", LINK_COLUMNS, 6, self.links.len()),
                &params,
            )?,
        };
        self.links.clear();
        Ok(())
    }

    fn take_reading(&mut self, tank: TankId, r: &ReadingEntry) -> Result<RowWrite<()>, StoreError> {
        if self.seen(tank, r.time.ms)? {
            return Ok(RowWrite::Duplicate);
        }
        let id = self.next_id()?;
        let (seq, digest, link) = self.chain.next(Kind::Reading, id, Action::Insert, |out| {
            chain::canonical_reading(out, tank, r)
        });
        self.rows.push(Cell::Int(id));
        self.rows.extend(reading_values(tank, r));
        self.links.push(LinkCells {
            seq,
            kind: Kind::Reading.as_str(),
            id,
            digest,
            link: link.to_vec(),
        });
        self.pending += 1;
        if self.pending == BATCH || self.links.len() >= BATCH {
            self.flush()?;
        }
        Ok(RowWrite::Done(()))
    }

    fn take_delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<(), StoreError> {
        let key = (d.carrier.clone(), d.vehicle.clone());
        let (carrier_id, vehicle_id) = match self.vehicles.get(&key) {
            Some(ids) => *ids,
            None => {
                let ids = vehicle_ids(self.tx, &d.carrier, &d.vehicle)?;
                self.vehicles.insert(key, ids);
                ids
            }
        };
        let insert = match &self.insert_delivery {
            Some(st) => st.clone(),
            None => {
                let st = self.tx.prepare(&format!(
                    "{} ON CONFLICT (ticket) WHERE deleted_at IS NULL DO NOTHING RETURNING id",
                    DELIVERIES.insert_sql_pg()
                ))?;
                self.insert_delivery = Some(st.clone());
                st
            }
        };
        let values = delivery_values(tank, carrier_id, vehicle_id, d);
        let Some(row) = self.tx.query_opt(&insert, &super::params(&values))? else {
            return Err(StoreError::Invalid(vec![FieldError::new(
                "ticket",
                duplicate_delivery(d),
            )]));
        };
        let id: i64 = row.try_get(0)?;
        let (seq, digest, link) = self.chain.next(Kind::Delivery, id, Action::Insert, |out| {
            chain::canonical_delivery(out, tank, d)
        });
        self.links.push(LinkCells {
            seq,
            kind: Kind::Delivery.as_str(),
            id,
            digest,
            link: link.to_vec(),
        });
        if self.links.len() >= BATCH {
            self.flush()?;
        }
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
        self.take_reading(tank, r).unwrap_or_else(RowWrite::Fatal)
    }

    fn delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<(), StoreError> {
        self.take_delivery(tank, d)
    }
}
