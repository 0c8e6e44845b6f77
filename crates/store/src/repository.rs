//! The store's interface in domain terms: what the window, the importer, the audit bridge and the
//! command line ask of a ledger, whatever database holds it. The SQLite [`crate::Store`] implements it;
//! a shared server implements the same trait, so callers never see tables, SQL or a driver.

use std::io::Write;

use crate::StoreError;
use crate::chain::Verification;
use crate::csv_format::{ImportOptions, ImportSources, ImportSummary};
use crate::records::*;

/// The kinds of record the CSV formats carry.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum RecordKind {
    /// Tanks (with their sites' barometer settings).
    Tanks,
    /// Readings.
    Readings,
    /// Deliveries.
    Deliveries,
}

/// A ledger of sites, tanks, readings and deliveries, with the history of every change.
///
/// Writes that change or delete a record take a reason and keep the earlier version
/// ([`Repository::history`]). Entered values are kept as entered beside their SI value.
pub trait Repository {
    /// The schema version (number of migrations applied).
    fn schema_version(&self) -> Result<i64, StoreError>;

    /// All live sites, by name.
    fn sites(&self) -> Result<Vec<Site>, StoreError>;
    /// Create a site; its name must be new.
    fn add_site(&mut self, name: &str, settings: &SiteSettings) -> Result<SiteId, StoreError>;
    /// Change a site's settings (barometer, time zone), keeping the earlier version. `opened` is the revision the change was
    /// made from: when someone else changed the site since, nothing is written and
    /// [`StoreError::Conflict`] shows both versions (so for every edit and deletion below).
    fn edit_site(
        &mut self,
        id: SiteId,
        opened: i64,
        settings: &SiteSettings,
        reason: &str,
    ) -> Result<(), StoreError>;

    /// All live tanks, by site then name, with their strapping tables.
    fn tanks(&self) -> Result<Vec<TankRecord>, StoreError>;
    /// One tank.
    fn tank(&self, id: TankId) -> Result<TankRecord, StoreError>;
    /// One tank by its name.
    fn tank_by_name(&self, name: &str) -> Result<TankRecord, StoreError>;
    /// Create a tank (and its site if new).
    fn add_tank(&mut self, spec: &TankSpec) -> Result<TankId, StoreError>;
    /// Change a tank's settings, keeping the earlier version.
    fn edit_tank(
        &mut self,
        id: TankId,
        opened: i64,
        spec: &TankSpec,
        reason: &str,
    ) -> Result<(), StoreError>;

    /// Add one reading to a tank.
    fn add_reading(&mut self, tank: TankId, entry: &ReadingEntry) -> Result<ReadingId, StoreError>;
    /// Live readings of a tank, oldest first; optionally only those with `from_ms <= time < to_ms`.
    fn readings(
        &self,
        tank: TankId,
        period_ms: Option<(i64, i64)>,
    ) -> Result<Vec<Reading>, StoreError>;
    /// The latest live reading of a tank.
    fn latest_reading(&self, tank: TankId) -> Result<Option<Reading>, StoreError>;
    /// One reading (live or deleted).
    fn reading(&self, id: ReadingId) -> Result<Reading, StoreError>;
    /// Replace a reading's values, keeping the earlier version with the reason.
    fn edit_reading(
        &mut self,
        id: ReadingId,
        opened: i64,
        entry: &ReadingEntry,
        reason: &str,
    ) -> Result<(), StoreError>;
    /// Delete a reading: marked deleted, its values kept in the history with the reason.
    fn delete_reading(
        &mut self,
        id: ReadingId,
        opened: i64,
        reason: &str,
    ) -> Result<(), StoreError>;
    /// Number of live readings, of one tank or all.
    fn reading_count(&self, tank: Option<TankId>) -> Result<i64, StoreError>;

    /// Add one delivery to a tank (its carrier and vehicle are created when new).
    fn add_delivery(
        &mut self,
        tank: TankId,
        entry: &DeliveryEntry,
    ) -> Result<DeliveryId, StoreError>;
    /// Live deliveries, of one tank or of all, by start time.
    fn deliveries(&self, tank: Option<TankId>) -> Result<Vec<Delivery>, StoreError>;
    /// One delivery (live or deleted).
    fn delivery(&self, id: DeliveryId) -> Result<Delivery, StoreError>;
    /// Replace a delivery's values, keeping the earlier version with the reason.
    fn edit_delivery(
        &mut self,
        id: DeliveryId,
        opened: i64,
        entry: &DeliveryEntry,
        reason: &str,
    ) -> Result<(), StoreError>;
    /// Delete a delivery, keeping its values in the history with the reason.
    fn delete_delivery(
        &mut self,
        id: DeliveryId,
        opened: i64,
        reason: &str,
    ) -> Result<(), StoreError>;

    /// All vehicles with their carriers, by name.
    fn vehicles(&self) -> Result<Vec<Vehicle>, StoreError>;

    /// The earlier versions of one record, oldest first.
    fn history(&self, record: RecordRef) -> Result<Vec<Revision>, StoreError>;

    /// Import CSV sources in one transaction: every row is checked; on any error nothing is written
    /// and all errors (up to the cap) are returned as [`StoreError::Import`].
    fn import(
        &mut self,
        sources: ImportSources<'_>,
        opts: &ImportOptions<'_>,
    ) -> Result<ImportSummary, StoreError>;
    /// Write every live record of a kind in its CSV format (the importer reads it back exactly).
    fn export(&self, kind: RecordKind, out: &mut dyn Write) -> Result<(), StoreError>;

    /// A full text dump of every stored row, for comparing two databases.
    fn dump(&self) -> Result<String, StoreError>;

    /// Walk the hash chain and the current records: every record changed, added or removed outside
    /// cryoledger is named.
    fn verify(&self) -> Result<Verification, StoreError>;

    /// A consistent copy of the whole ledger at `to` (a new file), safe while others write.
    fn backup(&self, to: &std::path::Path) -> Result<(), StoreError>;
}
