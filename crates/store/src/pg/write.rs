//! The PostgreSQL ledger's writes, shared by the single-record methods and the importer: the chain's
//! lock and head, sites, tanks with their strapping, carriers and vehicles, deliveries, and the
//! history of a change. Every write runs inside a transaction that took the chain's lock first.

use postgres::GenericClient;
use postgres::error::SqlState;

use super::CHAIN_LOCK;
use crate::StoreError;
use crate::cell::Cells;
use crate::chain::{self, Action, Kind, next_link};
use crate::check::FieldError;
use crate::records::*;
use crate::revision::*;
use crate::sqlite::rows::*;

/// Take the chain's lock for the rest of this transaction (every writer takes it first).
pub(crate) fn lock_chain(tx: &mut impl GenericClient) -> Result<(), StoreError> {
    tx.execute("SELECT pg_advisory_xact_lock($1)", &[&CHAIN_LOCK])?;
    Ok(())
}

/// The chain's head inside one write transaction (which holds the chain's lock).
pub(crate) struct PgChain {
    head: [u8; 32],
    seq: i64,
    buf: String,
}

impl PgChain {
    pub(super) fn new(tx: &mut impl GenericClient) -> Result<Self, StoreError> {
        lock_chain(tx)?;
        let last = tx.query_opt("SELECT seq, link FROM chain ORDER BY seq DESC LIMIT 1", &[])?;
        let (seq, head) = match last {
            Some(r) => {
                let link: Vec<u8> = r.try_get(1)?;
                (r.try_get(0)?, link.try_into().unwrap_or([0xff; 32]))
            }
            None => (0, [0; 32]),
        };
        Ok(Self {
            head,
            seq,
            buf: String::with_capacity(256),
        })
    }

    /// The next link, as (seq, digest, link), advancing the head.
    pub(super) fn next(
        &mut self,
        kind: Kind,
        id: i64,
        action: Action,
        fill: impl FnOnce(&mut String),
    ) -> (i64, Vec<u8>, [u8; 32]) {
        let (digest, link) = next_link(&self.head, &mut self.buf, kind, id, action, fill);
        self.head = link;
        self.seq += 1;
        (self.seq, digest, link)
    }

    pub(super) fn append(
        &mut self,
        tx: &mut impl GenericClient,
        kind: Kind,
        id: i64,
        action: Action,
        fill: impl FnOnce(&mut String),
    ) -> Result<(), StoreError> {
        let (seq, digest, link) = self.next(kind, id, action, fill);
        tx.execute(
            "INSERT INTO chain (seq, kind, record_id, action, digest, link) VALUES ($1, $2, $3, $4, $5, $6)",
            &[&seq, &kind.as_str(), &id, &action.as_str(), &digest, &link.as_slice()],
        )?;
        Ok(())
    }
}

pub(super) fn is_unique_violation(e: &postgres::Error) -> bool {
    e.code() == Some(&SqlState::UNIQUE_VIOLATION)
}

/// A failed write as the user's field error when it broke the record's uniqueness rule.
pub(super) fn write_error(
    e: postgres::Error,
    columns: &Columns,
    message: impl FnOnce() -> String,
) -> StoreError {
    if is_unique_violation(&e) {
        StoreError::Invalid(vec![FieldError::new(columns.unique_field, message())])
    } else {
        e.into()
    }
}

pub(super) fn not_found(what: &'static str, key: impl ToString) -> StoreError {
    StoreError::NotFound {
        what,
        key: key.to_string(),
    }
}

/// The live site of this name (and false), or a new one (and true).
pub(super) fn site_id_for(
    tx: &mut impl GenericClient,
    name: &str,
    settings: &SiteSettings,
) -> Result<(SiteId, bool), crate::import::SiteError> {
    use crate::import::SiteError;
    settings.check().map_err(SiteError::Field)?;
    let existing = tx
        .query_opt(
            "SELECT id, elevation_m, barometer_kpa, time_zone FROM sites WHERE name = $1 AND deleted_at IS NULL",
            &[&name],
        )
        .map_err(|e| SiteError::Store(e.into()))?;
    if let Some(r) = existing {
        let read = || -> Result<_, StoreError> {
            Ok((r.int(0)?, r.opt_real(1)?, r.opt_real(2)?, r.opt_text(3)?))
        };
        let (id, e0, b0, z0) = read().map_err(SiteError::Store)?;
        same_site_settings(name, settings, e0, b0, z0.as_deref()).map_err(SiteError::Field)?;
        return Ok((SiteId(id), false));
    }
    let row = tx
        .query_one(
            "INSERT INTO sites (name, elevation_m, barometer_kpa, barometer_pa, time_zone) \
             VALUES ($1, $2, $3, $4, $5) RETURNING id",
            &[
                &name,
                &settings.elevation_m,
                &settings.barometer_kpa,
                &settings.barometer_kpa.map(|k| k * 1e3),
                &settings.time_zone,
            ],
        )
        .map_err(|e| SiteError::Store(e.into()))?;
    Ok((SiteId(row.int(0).map_err(SiteError::Store)?), true))
}

/// Append a site's link with its current values.
pub(super) fn chain_site(
    tx: &mut impl GenericClient,
    chain: &mut PgChain,
    id: SiteId,
    action: Action,
) -> Result<(), StoreError> {
    let row = tx.query_one(
        &format!("SELECT {SITE_COLUMNS} FROM sites WHERE id = $1"),
        &[&id.0],
    )?;
    let site = site_from_row(&row)?;
    chain.append(tx, Kind::Site, id.0, action, |out| {
        chain::canonical_site(out, &site)
    })
}

/// [`site_id_for`], chaining a new site.
pub(super) fn site_with(
    tx: &mut impl GenericClient,
    chain: &mut PgChain,
    name: &str,
    settings: &SiteSettings,
) -> Result<SiteId, crate::import::SiteError> {
    let (id, created) = site_id_for(tx, name, settings)?;
    if created {
        chain_site(tx, chain, id, Action::Insert).map_err(crate::import::SiteError::Store)?;
    }
    Ok(id)
}

pub(super) fn site_for(
    tx: &mut impl GenericClient,
    chain: &mut PgChain,
    name: &str,
) -> Result<SiteId, StoreError> {
    site_with(tx, chain, name, &SiteSettings::default()).map_err(|e| match e {
        crate::import::SiteError::Field(f) => StoreError::Invalid(vec![f]),
        crate::import::SiteError::Store(e) => e,
    })
}

/// Write a tank's strapping table (replacing any earlier one).
pub(super) fn write_strapping(
    tx: &mut impl GenericClient,
    tank: TankId,
    points: &[(f64, f64)],
) -> Result<(), postgres::Error> {
    tx.execute(
        "DELETE FROM strapping_points WHERE tank_id = $1",
        &[&tank.0],
    )?;
    for (l, v) in points {
        tx.execute(
            "INSERT INTO strapping_points (tank_id, level_m, volume_m3) VALUES ($1, $2, $3)",
            &[&tank.0, l, v],
        )?;
    }
    Ok(())
}

pub(super) fn params(values: &[crate::cell::Cell]) -> Vec<&(dyn postgres::types::ToSql + Sync)> {
    values
        .iter()
        .map(|v| v as &(dyn postgres::types::ToSql + Sync))
        .collect()
}

/// Insert a tank; None when its name is taken.
pub(super) fn insert_tank(
    tx: &mut impl GenericClient,
    site: SiteId,
    spec: &TankSpec,
) -> Result<Option<TankId>, postgres::Error> {
    let sql = format!(
        "{} ON CONFLICT (name) DO NOTHING RETURNING id",
        TANKS.insert_sql_pg()
    );
    let values = tank_values(site, spec);
    let Some(row) = tx.query_opt(&sql, &params(&values))? else {
        return Ok(None);
    };
    let id = TankId(row.try_get(0)?);
    write_strapping(tx, id, &spec.strapping)?;
    Ok(Some(id))
}

/// The carrier's and vehicle's ids, each created when new.
pub(crate) fn vehicle_ids(
    tx: &mut impl GenericClient,
    carrier: &str,
    vehicle: &str,
) -> Result<(i64, i64), StoreError> {
    tx.execute(
        "INSERT INTO carriers (name) VALUES ($1) ON CONFLICT (name) DO NOTHING",
        &[&carrier],
    )?;
    let carrier_id: i64 = tx
        .query_one("SELECT id FROM carriers WHERE name = $1", &[&carrier])?
        .try_get(0)?;
    tx.execute(
        "INSERT INTO vehicles (carrier_id, name) VALUES ($1, $2) ON CONFLICT (name) DO NOTHING",
        &[&carrier_id, &vehicle],
    )?;
    let row = tx.query_one(
        "SELECT id, carrier_id FROM vehicles WHERE name = $1",
        &[&vehicle],
    )?;
    let (vid, cid): (i64, i64) = (row.try_get(0)?, row.try_get(1)?);
    if cid != carrier_id {
        return Err(StoreError::Invalid(vec![other_carrier(vehicle, carrier)]));
    }
    Ok((carrier_id, vid))
}

/// Insert (`id` None) or update a delivery made from a revision; an update that finds the record
/// moved on writes nothing and gives None.
pub(super) fn write_delivery(
    tx: &mut impl GenericClient,
    tank: TankId,
    d: &DeliveryEntry,
    id: Option<(DeliveryId, i64)>,
) -> Result<Option<DeliveryId>, StoreError> {
    let (carrier_id, vehicle_id) = vehicle_ids(tx, &d.carrier, &d.vehicle)?;
    let mut values = delivery_values(tank, carrier_id, vehicle_id, d);
    let duplicate = || StoreError::Invalid(vec![FieldError::new("ticket", duplicate_delivery(d))]);
    match id {
        None => {
            let sql = format!(
                "{} ON CONFLICT (ticket) WHERE deleted_at IS NULL DO NOTHING RETURNING id",
                DELIVERIES.insert_sql_pg()
            );
            match tx.query_opt(&sql, &params(&values))? {
                Some(row) => Ok(Some(DeliveryId(row.try_get(0)?))),
                None => Err(duplicate()),
            }
        }
        Some((id, opened)) => {
            values.push(crate::cell::Cell::Int(id.0));
            values.push(crate::cell::Cell::Int(opened));
            let changed = tx
                .execute(&DELIVERIES.update_sql_pg(), &params(&values))
                .map_err(|e| write_error(e, &DELIVERIES, || duplicate_delivery(d)))?;
            Ok((changed > 0).then_some(id))
        }
    }
}

/// Keep the earlier version of a record with the reason.
pub(super) fn record_revision(
    tx: &mut impl GenericClient,
    record: RecordRef,
    action: RevisionAction,
    reason: &str,
    before: &EarlierVersion,
) -> Result<(), StoreError> {
    let (reason, json) = revision_text(reason, before)?;
    let (table, row) = table_row(record);
    tx.execute(
        "INSERT INTO revisions (table_name, row_id, action, revised_at, reason, old_row) \
         VALUES ($1, $2, $3, $4, $5, $6)",
        &[&table, &row, &action.as_str(), &now_text(), &reason, &json],
    )?;
    Ok(())
}
