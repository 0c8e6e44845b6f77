//! The SQLite ledger: opening, migrations, and the [`Repository`] in SQL.

pub(crate) mod chain;
pub(crate) mod export;
mod import;
pub(crate) mod rows;

use crate::StoreError;
use crate::check::FieldError;
use crate::csv_format::{ImportOptions, ImportSources, ImportSummary};
use crate::import::SiteError;
use crate::records::*;
use crate::repository::{RecordKind, Repository};
use crate::revision::*;
use chain::{Action, ChainWriter, Kind};
use rows::*;
use rusqlite::{Connection, OptionalExtension, params};
use rusqlite_migration::{M, Migrations};
use std::path::Path;

/// The numbered SQL files of `migrations/`, applied in order. A test checks none is missing.
pub const MIGRATION_FILES: &[(&str, &str)] = &[
    (
        "0001_initial.sql",
        include_str!("../../../../migrations/0001_initial.sql"),
    ),
    (
        "0002_chain.sql",
        include_str!("../../../../migrations/0002_chain.sql"),
    ),
    (
        "0003_site_time_zone.sql",
        include_str!("../../../../migrations/0003_site_time_zone.sql"),
    ),
    (
        "0004_revision.sql",
        include_str!("../../../../migrations/0004_revision.sql"),
    ),
    (
        "0005_access.sql",
        include_str!("../../../../migrations/0005_access.sql"),
    ),
];

fn migrations() -> Migrations<'static> {
    Migrations::new(MIGRATION_FILES.iter().map(|(_, sql)| M::up(sql)).collect())
}

/// The ledger in one SQLite file (or in memory): the embedded default.
pub struct Store {
    pub(crate) conn: Connection,
}

impl Store {
    /// Open (creating if needed) the database at `path`, with WAL, foreign keys, and every migration.
    pub fn open(path: &Path) -> Result<Self, StoreError> {
        if let Some(dir) = path.parent()
            && !dir.as_os_str().is_empty()
        {
            std::fs::create_dir_all(dir).map_err(|source| StoreError::Io {
                path: dir.display().to_string(),
                source,
            })?;
        }
        // refused up front, by the permission bits (the operating system may let an administrator
        // write anyway; the ledger keeps to what the file says)
        let read_only = |p: &Path| std::fs::metadata(p).is_ok_and(|m| m.permissions().readonly());
        if read_only(path) {
            return Err(StoreError::ReadOnly {
                path: path.display().to_string(),
            });
        }
        if !path.exists()
            && let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty())
            && read_only(dir)
        {
            return Err(StoreError::ReadOnly {
                path: dir.display().to_string(),
            });
        }
        Self::setup(Connection::open(path)?)
    }

    /// An empty database in memory (tests, previews).
    pub fn open_in_memory() -> Result<Self, StoreError> {
        Self::setup(Connection::open_in_memory()?)
    }

    fn setup(mut conn: Connection) -> Result<Self, StoreError> {
        conn.pragma_update(None, "journal_mode", "WAL")?;
        // WAL with FULL syncs the log at every commit: an acknowledged entry survives a power cut, not
        // only a crash of the program (SQLite docs, "PRAGMA synchronous"; NORMAL may lose the last
        // commits on power loss). Its cost is measured by the import benchmark (README).
        conn.pragma_update(None, "synchronous", "FULL")?;
        conn.pragma_update(None, "foreign_keys", "ON")?;
        conn.pragma_update(None, "cache_size", -131_072)?; // up to 128 MiB page cache: large imports spill less
        conn.busy_timeout(std::time::Duration::from_secs(5))?;
        let found: i64 = conn.pragma_query_value(None, "user_version", |r| r.get(0))?;
        let known = MIGRATION_FILES.len() as i64;
        if found > known {
            return Err(StoreError::NewerSchema { found, known });
        }
        migrations().to_latest(&mut conn)?;
        chain::adopt_existing(&conn)?;
        Ok(Self { conn })
    }

    /// Switch this connection to synchronous=NORMAL, to measure what durable commits cost beside it
    /// (the `commit_cost` example); the ledger itself always runs with FULL.
    #[doc(hidden)]
    pub fn set_synchronous_normal_for_benchmark(&self) -> Result<(), StoreError> {
        Ok(self.conn.pragma_update(None, "synchronous", "NORMAL")?)
    }

    fn not_found(what: &'static str, key: impl ToString) -> StoreError {
        StoreError::NotFound {
            what,
            key: key.to_string(),
        }
    }
}

fn invalid(e: FieldError) -> StoreError {
    StoreError::Invalid(vec![e])
}

/// Append a site's link with its current values.
fn chain_site(
    conn: &Connection,
    chain: &mut ChainWriter,
    id: SiteId,
    action: Action,
) -> Result<(), StoreError> {
    let site: Site = conn.query_row(
        &format!("SELECT {SITE_COLUMNS} FROM sites WHERE id = ?1"),
        [id.0],
        |r| site_from_row(r),
    )?;
    chain.append(conn, Kind::Site, id.0, action, |out| {
        chain::canonical_site(out, &site)
    })
}

/// The site of this name, created (and chained) when new.
pub(crate) fn site_for(
    conn: &Connection,
    chain: &mut ChainWriter,
    name: &str,
) -> Result<SiteId, StoreError> {
    site_with(conn, chain, name, &SiteSettings::default()).map_err(|e| match e {
        SiteError::Field(f) => invalid(f),
        SiteError::Store(e) => e,
    })
}

/// [`site_for`] with the site's settings (the importer's).
pub(crate) fn site_with(
    conn: &Connection,
    chain: &mut ChainWriter,
    name: &str,
    settings: &SiteSettings,
) -> Result<SiteId, SiteError> {
    let (id, created) = site_id_for(conn, name, settings).map_err(SiteError::Field)?;
    if created {
        chain_site(conn, chain, id, Action::Insert).map_err(SiteError::Store)?;
    }
    Ok(id)
}

impl Store {
    /// One live site.
    fn site(&self, id: SiteId) -> Result<Site, StoreError> {
        self.sites()?
            .into_iter()
            .find(|s| s.id == id)
            .ok_or_else(|| Self::not_found("site", id))
    }

    /// The one live tank a condition on `t` picks, with its strapping table (one query each, not the
    /// whole fleet's).
    fn one_tank(
        &self,
        condition: &str,
        value: &dyn rusqlite::ToSql,
    ) -> Result<Option<TankRecord>, StoreError> {
        let sql = format!(
            "SELECT {TANK_COLUMNS} FROM tanks t JOIN sites s ON s.id = t.site_id \
             WHERE t.deleted_at IS NULL AND {condition}"
        );
        let Some(mut t) = self
            .conn
            .query_row(&sql, [value], |r| tank_from_row(r))
            .optional()?
        else {
            return Ok(None);
        };
        let mut sp = self.conn.prepare_cached(
            "SELECT level_m, volume_m3 FROM strapping_points WHERE tank_id = ?1 ORDER BY level_m",
        )?;
        t.spec.strapping = sp
            .query_map([t.id.0], |r| Ok((r.get::<_, f64>(0)?, r.get::<_, f64>(1)?)))?
            .collect::<Result<_, _>>()?;
        Ok(Some(t))
    }
}

impl Repository for Store {
    fn schema_version(&self) -> Result<i64, StoreError> {
        Ok(self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))?)
    }

    fn sites(&self) -> Result<Vec<Site>, StoreError> {
        let mut st = self.conn.prepare(&format!(
            "SELECT {SITE_COLUMNS} FROM sites WHERE deleted_at IS NULL ORDER BY name"
        ))?;
        let rows = st.query_map([], |r| site_from_row(r))?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    fn add_site(&mut self, name: &str, settings: &SiteSettings) -> Result<SiteId, StoreError> {
        let name = name.trim();
        if name.is_empty() {
            return Err(invalid(FieldError::new("site", "a name is required")));
        }
        let exists: bool = self.conn.query_row(
            "SELECT EXISTS(SELECT 1 FROM sites WHERE name = ?1 AND deleted_at IS NULL)",
            [name],
            |r| r.get(0),
        )?;
        if exists {
            return Err(invalid(FieldError::new(
                "site",
                format!("a site named '{name}' already exists"),
            )));
        }
        let tx = self.conn.transaction()?;
        let (id, _) = site_id_for(&tx, name, settings).map_err(invalid)?;
        chain_site(&tx, &mut ChainWriter::new(&tx)?, id, Action::Insert)?;
        tx.commit()?;
        Ok(id)
    }

    fn edit_site(
        &mut self,
        id: SiteId,
        opened: i64,
        settings: &SiteSettings,
        reason: &str,
    ) -> Result<(), StoreError> {
        settings.check().map_err(invalid)?;
        let old = self.site(id)?;
        let yours = Some(site_as(&old, settings));
        let old = unchanged_since(old, opened, &yours)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Site(id),
            RevisionAction::Edit,
            reason,
            &EarlierVersion::Site(old.clone()),
        )?;
        let changed = tx.execute(
            "UPDATE sites SET elevation_m = ?2, barometer_kpa = ?3, barometer_pa = ?4, time_zone = ?5, \
             revision = revision + 1 WHERE id = ?1 AND revision = ?6",
            params![
                id.0,
                settings.elevation_m,
                settings.barometer_kpa,
                settings.barometer_kpa.map(|k| k * 1e3),
                settings.time_zone,
                opened
            ],
        )?;
        if changed == 0 {
            drop(tx);
            return Err(refused(self.site(id)?, opened, yours));
        }
        chain_site(&tx, &mut ChainWriter::new(&tx)?, id, Action::Edit)?;
        tx.commit()?;
        Ok(())
    }

    fn tanks(&self) -> Result<Vec<TankRecord>, StoreError> {
        let sql = format!(
            "SELECT {TANK_COLUMNS} FROM tanks t JOIN sites s ON s.id = t.site_id \
             WHERE t.deleted_at IS NULL ORDER BY s.name, t.name"
        );
        let mut st = self.conn.prepare(&sql)?;
        let mut tanks: Vec<TankRecord> = st
            .query_map([], |r| tank_from_row(r))?
            .collect::<Result<_, _>>()?;
        let mut sp = self.conn.prepare(
            "SELECT tank_id, level_m, volume_m3 FROM strapping_points ORDER BY tank_id, level_m",
        )?;
        let points = sp.query_map([], |r| {
            Ok((
                TankId(r.get::<_, i64>(0)?),
                r.get::<_, f64>(1)?,
                r.get::<_, f64>(2)?,
            ))
        })?;
        // each point to its tank through a map (a search per point was quadratic in a fleet with
        // many strapping tables)
        let at: std::collections::HashMap<i64, usize> =
            tanks.iter().enumerate().map(|(i, t)| (t.id.0, i)).collect();
        for p in points {
            let (id, l, v) = p?;
            if let Some(t) = at.get(&id.0).and_then(|&i| tanks.get_mut(i)) {
                t.spec.strapping.push((l, v));
            }
        }
        Ok(tanks)
    }

    fn tank(&self, id: TankId) -> Result<TankRecord, StoreError> {
        self.one_tank("t.id = ?1", &id.0)?
            .ok_or_else(|| Self::not_found("tank", id))
    }

    fn tank_by_name(&self, name: &str) -> Result<TankRecord, StoreError> {
        self.one_tank("t.name = ?1", &name)?
            .ok_or_else(|| Self::not_found("tank", name))
    }

    fn add_tank(&mut self, spec: &TankSpec) -> Result<TankId, StoreError> {
        let tx = self.conn.transaction()?;
        let mut chain = ChainWriter::new(&tx)?;
        let site_id = site_for(&tx, &mut chain, &spec.site)?;
        let id = insert_tank(&tx, site_id, spec)
            .map_err(|e| TANKS.write_error(e, || duplicate_tank(spec)))?;
        chain.append(&tx, Kind::Tank, id.0, Action::Insert, |out| {
            chain::canonical_tank(out, site_id, spec)
        })?;
        tx.commit()?;
        Ok(id)
    }

    fn edit_tank(
        &mut self,
        id: TankId,
        opened: i64,
        spec: &TankSpec,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.tank(id)?;
        let yours = Some(EarlierVersion::Tank(Box::new(spec.clone())));
        let old = unchanged_since(old, opened, &yours)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Tank(id),
            RevisionAction::Edit,
            reason,
            &EarlierVersion::Tank(Box::new(old.spec.clone())),
        )?;
        let mut chain = ChainWriter::new(&tx)?;
        let site_id = site_for(&tx, &mut chain, &spec.site)?;
        if !update_tank(&tx, id, opened, site_id, spec)
            .map_err(|e| TANKS.write_error(e, || duplicate_tank(spec)))?
        {
            drop(tx);
            return Err(refused(self.tank(id)?, opened, yours));
        }
        chain.append(&tx, Kind::Tank, id.0, Action::Edit, |out| {
            chain::canonical_tank(out, site_id, spec)
        })?;
        tx.commit()?;
        Ok(())
    }

    fn add_reading(&mut self, tank: TankId, r: &ReadingEntry) -> Result<ReadingId, StoreError> {
        let tx = self.conn.transaction()?;
        tx.prepare_cached(&READINGS.insert_sql())
            .and_then(|mut st| execute_reading(&mut st, tank, r, None))
            .map_err(|e| READINGS.write_error(e, || duplicate_reading(r)))?;
        let id = ReadingId(tx.last_insert_rowid());
        ChainWriter::new(&tx)?.append(&tx, Kind::Reading, id.0, Action::Insert, |out| {
            chain::canonical_reading(out, tank, r)
        })?;
        tx.commit()?;
        Ok(id)
    }

    fn readings(
        &self,
        tank: TankId,
        period_ms: Option<(i64, i64)>,
    ) -> Result<Vec<Reading>, StoreError> {
        let (from, to) = period_ms.unwrap_or((i64::MIN, i64::MAX));
        let sql = format!(
            "SELECT {READING_COLUMNS} FROM readings WHERE tank_id = ?1 AND deleted_at IS NULL \
             AND time_ms >= ?2 AND time_ms < ?3 ORDER BY time_ms"
        );
        let mut st = self.conn.prepare_cached(&sql)?;
        let rows = st.query_map(params![tank.0, from, to], |r| reading_from_row(r))?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    fn latest_reading(&self, tank: TankId) -> Result<Option<Reading>, StoreError> {
        let sql = format!(
            "SELECT {READING_COLUMNS} FROM readings WHERE tank_id = ?1 AND deleted_at IS NULL \
             ORDER BY time_ms DESC LIMIT 1"
        );
        Ok(self
            .conn
            .query_row(&sql, [tank.0], |r| reading_from_row(r))
            .optional()?)
    }

    fn reading(&self, id: ReadingId) -> Result<Reading, StoreError> {
        let sql = format!("SELECT {READING_COLUMNS} FROM readings WHERE id = ?1");
        self.conn
            .query_row(&sql, [id.0], |r| reading_from_row(r))
            .optional()?
            .ok_or_else(|| Self::not_found("reading", id))
    }

    fn edit_reading(
        &mut self,
        id: ReadingId,
        opened: i64,
        new: &ReadingEntry,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.reading(id)?;
        let yours = Some(EarlierVersion::Reading(new.clone()));
        let old = unchanged_since(old, opened, &yours)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Reading(id),
            RevisionAction::Edit,
            reason,
            &EarlierVersion::Reading(old.entry.clone()),
        )?;
        let changed = tx
            .prepare_cached(&READINGS.update_sql())
            .and_then(|mut st| execute_reading(&mut st, old.tank_id, new, Some((id, opened))))
            .map_err(|e| READINGS.write_error(e, || duplicate_reading(new)))?;
        if changed == 0 {
            drop(tx);
            return Err(refused(self.reading(id)?, opened, yours));
        }
        ChainWriter::new(&tx)?.append(&tx, Kind::Reading, id.0, Action::Edit, |out| {
            chain::canonical_reading(out, old.tank_id, new)
        })?;
        tx.commit()?;
        Ok(())
    }

    fn delete_reading(
        &mut self,
        id: ReadingId,
        opened: i64,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.reading(id)?;
        let old = unchanged_since(old, opened, &None)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Reading(id),
            RevisionAction::Delete,
            reason,
            &EarlierVersion::Reading(old.entry.clone()),
        )?;
        let changed = tx.execute(
            "UPDATE readings SET deleted_at = ?2, revision = revision + 1 \
             WHERE id = ?1 AND revision = ?3",
            params![id.0, now_text(), opened],
        )?;
        if changed == 0 {
            drop(tx);
            return Err(refused(self.reading(id)?, opened, None));
        }
        ChainWriter::new(&tx)?.append(&tx, Kind::Reading, id.0, Action::Delete, |_| {})?;
        tx.commit()?;
        Ok(())
    }

    fn reading_count(&self, tank: Option<TankId>) -> Result<i64, StoreError> {
        Ok(self.conn.query_row(
            "SELECT COUNT(*) FROM readings WHERE deleted_at IS NULL AND (?1 IS NULL OR tank_id = ?1)",
            [tank.map(|t| t.0)],
            |r| r.get(0),
        )?)
    }

    fn add_delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<DeliveryId, StoreError> {
        let tx = self.conn.transaction()?;
        let id =
            write_delivery(&tx, tank, d, None)?.ok_or_else(|| Self::not_found("delivery", ""))?;
        ChainWriter::new(&tx)?.append(&tx, Kind::Delivery, id.0, Action::Insert, |out| {
            chain::canonical_delivery(out, tank, d)
        })?;
        tx.commit()?;
        Ok(id)
    }

    fn deliveries(&self, tank: Option<TankId>) -> Result<Vec<Delivery>, StoreError> {
        // Two statements rather than `?1 IS NULL OR ...`, so that one tank's query uses its index.
        let base = format!(
            "SELECT {DELIVERY_COLUMNS} FROM deliveries d JOIN carriers c ON c.id = d.carrier_id \
             JOIN vehicles v ON v.id = d.vehicle_id WHERE d.deleted_at IS NULL"
        );
        let rows = match tank {
            Some(id) => {
                let sql = format!("{base} AND d.tank_id = ?1 ORDER BY d.start_ms, d.ticket");
                let mut st = self.conn.prepare_cached(&sql)?;
                st.query_map([id.0], |r| delivery_from_row(r))?
                    .collect::<Result<_, _>>()?
            }
            None => {
                let sql = format!("{base} ORDER BY d.start_ms, d.ticket");
                let mut st = self.conn.prepare_cached(&sql)?;
                st.query_map([], |r| delivery_from_row(r))?
                    .collect::<Result<_, _>>()?
            }
        };
        Ok(rows)
    }

    fn delivery(&self, id: DeliveryId) -> Result<Delivery, StoreError> {
        let sql = format!(
            "SELECT {DELIVERY_COLUMNS} FROM deliveries d JOIN carriers c ON c.id = d.carrier_id \
             JOIN vehicles v ON v.id = d.vehicle_id WHERE d.id = ?1"
        );
        self.conn
            .query_row(&sql, [id.0], |r| delivery_from_row(r))
            .optional()?
            .ok_or_else(|| Self::not_found("delivery", id))
    }

    fn edit_delivery(
        &mut self,
        id: DeliveryId,
        opened: i64,
        new: &DeliveryEntry,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.delivery(id)?;
        let yours = Some(EarlierVersion::Delivery(new.clone()));
        let old = unchanged_since(old, opened, &yours)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Delivery(id),
            RevisionAction::Edit,
            reason,
            &EarlierVersion::Delivery(old.entry.clone()),
        )?;
        if write_delivery(&tx, old.tank_id, new, Some((id, opened)))?.is_none() {
            drop(tx);
            return Err(refused(self.delivery(id)?, opened, yours));
        }
        ChainWriter::new(&tx)?.append(&tx, Kind::Delivery, id.0, Action::Edit, |out| {
            chain::canonical_delivery(out, old.tank_id, new)
        })?;
        tx.commit()?;
        Ok(())
    }

    fn delete_delivery(
        &mut self,
        id: DeliveryId,
        opened: i64,
        reason: &str,
    ) -> Result<(), StoreError> {
        let old = self.delivery(id)?;
        let old = unchanged_since(old, opened, &None)?;
        let tx = self.conn.transaction()?;
        record_revision(
            &tx,
            RecordRef::Delivery(id),
            RevisionAction::Delete,
            reason,
            &EarlierVersion::Delivery(old.entry.clone()),
        )?;
        let changed = tx.execute(
            "UPDATE deliveries SET deleted_at = ?2, revision = revision + 1 \
             WHERE id = ?1 AND revision = ?3",
            params![id.0, now_text(), opened],
        )?;
        if changed == 0 {
            drop(tx);
            return Err(refused(self.delivery(id)?, opened, None));
        }
        ChainWriter::new(&tx)?.append(&tx, Kind::Delivery, id.0, Action::Delete, |_| {})?;
        tx.commit()?;
        Ok(())
    }

    fn vehicles(&self) -> Result<Vec<Vehicle>, StoreError> {
        let mut st = self.conn.prepare(
            "SELECT v.id, v.name, c.name, v.meter_repeatability_percent FROM vehicles v \
             JOIN carriers c ON c.id = v.carrier_id ORDER BY v.name",
        )?;
        let rows = st.query_map([], |r| {
            Ok(Vehicle {
                id: VehicleId(r.get(0)?),
                name: r.get(1)?,
                carrier: r.get(2)?,
                meter_repeatability_percent: r.get(3)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    fn history(&self, record: RecordRef) -> Result<Vec<Revision>, StoreError> {
        let (table, row) = table_row(record);
        let mut st = self.conn.prepare(
            "SELECT action, revised_at, reason, old_row FROM revisions \
             WHERE table_name = ?1 AND row_id = ?2 ORDER BY id",
        )?;
        let rows = st.query_map(params![table, row], |r| {
            Ok((
                r.get::<_, String>(0)?,
                r.get::<_, String>(1)?,
                r.get::<_, String>(2)?,
                r.get::<_, String>(3)?,
            ))
        })?;
        let mut out = Vec::new();
        for r in rows {
            let (action, at, reason, json) = r?;
            out.push(decode_revision(record, &action, at, reason, &json)?);
        }
        Ok(out)
    }

    fn import(
        &mut self,
        sources: ImportSources<'_>,
        opts: &ImportOptions<'_>,
    ) -> Result<ImportSummary, StoreError> {
        import::import(self, sources, opts)
    }

    fn export(&self, kind: RecordKind, out: &mut dyn std::io::Write) -> Result<(), StoreError> {
        match kind {
            RecordKind::Tanks => export::tanks(self, out),
            RecordKind::Readings => export::readings(self, out),
            RecordKind::Deliveries => export::deliveries(self, out),
        }
    }

    fn dump(&self) -> Result<String, StoreError> {
        export::dump(self)
    }

    fn verify(&self) -> Result<crate::chain::Verification, StoreError> {
        chain::verify(&self.conn)
    }

    fn backup(&self, to: &Path) -> Result<(), StoreError> {
        if to.exists() {
            return Err(StoreError::Io {
                path: to.display().to_string(),
                source: std::io::Error::new(
                    std::io::ErrorKind::AlreadyExists,
                    "a backup never overwrites a file: name a new one",
                ),
            });
        }
        let mut dst = Connection::open(to)?;
        // SQLite's online backup: pages are copied in steps; a write by another connection restarts
        // the copy, so what lands is one consistent state of the database
        let copied = rusqlite::backup::Backup::new(&self.conn, &mut dst)
            .and_then(|b| b.run_to_completion(256, std::time::Duration::from_millis(5), None));
        if let Err(e) = copied {
            drop(dst);
            // best effort: a partial copy is no backup
            let _ = std::fs::remove_file(to);
            return Err(e.into());
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::csv_format::ImportSource;

    /// A full disk (simulated by SQLite's page limit) refuses an import with the message that says
    /// what to do, and nothing of it is written (all or nothing; common practice, no source).
    #[test]
    fn a_full_disk_refuses_an_import_and_writes_nothing() {
        let mut s = Store::open_in_memory().unwrap();
        let tanks = "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
                     Yard,T-1,nitrogen,vertical,2,5,flat,15\n";
        s.import(
            ImportSources {
                tanks: Some(ImportSource::text("t.csv", tanks)),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
        let pages: i64 = s
            .conn
            .pragma_query_value(None, "page_count", |r| r.get(0))
            .unwrap();
        s.conn
            .pragma_update(None, "max_page_count", pages + 2)
            .unwrap();
        let mut readings = String::from("tank,time,dp,dp_unit,pressure,pressure_unit,note\n");
        for i in 0..5000 {
            readings.push_str(&format!(
                "T-1,2026-01-01T00:00:{:02}.{:03}Z,{},inH2O,5,barg,a note long enough to fill pages\n",
                i / 1000,
                i % 1000,
                10 + i % 50
            ));
        }
        let e = s
            .import(
                ImportSources {
                    readings: Some(ImportSource::text("r.csv", &readings)),
                    ..Default::default()
                },
                &ImportOptions::default(),
            )
            .unwrap_err();
        assert!(matches!(e, StoreError::Full), "{e:?}");
        assert!(e.to_string().contains("free some space"), "{e}");
        assert_eq!(s.reading_count(None).unwrap(), 0);
    }
}
