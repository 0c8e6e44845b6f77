//! A record's history, whatever database keeps it: the key of a record's earlier versions, a change's
//! reason and earlier version as stored (JSON), their decoding back into records, and the refusal of a
//! change made from a revision the record has moved on from, with both versions.

use crate::StoreError;
use crate::check::FieldError;
use crate::records::*;

/// The table and row of a record reference.
pub(crate) fn table_row(record: RecordRef) -> (&'static str, i64) {
    match record {
        RecordRef::Site(id) => ("sites", id.0),
        RecordRef::Tank(id) => ("tanks", id.0),
        RecordRef::Reading(id) => ("readings", id.0),
        RecordRef::Delivery(id) => ("deliveries", id.0),
    }
}

/// A change made from revision `opened` of a record that is now at `current` (its stored version
/// `theirs`): refused with both versions (`yours` None for a deletion).
pub(crate) fn stale(
    record: RecordRef,
    opened: i64,
    current: i64,
    theirs: EarlierVersion,
    yours: Option<EarlierVersion>,
) -> StoreError {
    StoreError::Conflict(Box::new(Conflict {
        record,
        opened,
        current,
        theirs,
        yours,
    }))
}

/// A stored record with a revision: what a change made from an older one is refused against.
pub(crate) trait Revised: Sized {
    /// Its revision now.
    fn revision(&self) -> i64;
    /// Which record, and its stored version.
    fn version(self) -> (RecordRef, EarlierVersion);
}

impl Revised for Site {
    fn revision(&self) -> i64 {
        self.revision
    }
    fn version(self) -> (RecordRef, EarlierVersion) {
        (RecordRef::Site(self.id), EarlierVersion::Site(self))
    }
}

impl Revised for TankRecord {
    fn revision(&self) -> i64 {
        self.revision
    }
    fn version(self) -> (RecordRef, EarlierVersion) {
        (
            RecordRef::Tank(self.id),
            EarlierVersion::Tank(Box::new(self.spec)),
        )
    }
}

impl Revised for Reading {
    fn revision(&self) -> i64 {
        self.revision
    }
    fn version(self) -> (RecordRef, EarlierVersion) {
        (
            RecordRef::Reading(self.id),
            EarlierVersion::Reading(self.entry),
        )
    }
}

impl Revised for Delivery {
    fn revision(&self) -> i64 {
        self.revision
    }
    fn version(self) -> (RecordRef, EarlierVersion) {
        (
            RecordRef::Delivery(self.id),
            EarlierVersion::Delivery(self.entry),
        )
    }
}

/// A change made from revision `opened`, refused against the record as stored `now`, with both
/// versions (`yours` None for a deletion).
pub(crate) fn refused<T: Revised>(
    now: T,
    opened: i64,
    yours: Option<EarlierVersion>,
) -> StoreError {
    let current = now.revision();
    let (record, theirs) = now.version();
    stale(record, opened, current, theirs, yours)
}

/// The record as stored `now`, when it is still at the revision `opened` a change was made from.
pub(crate) fn unchanged_since<T: Revised>(
    now: T,
    opened: i64,
    yours: &Option<EarlierVersion>,
) -> Result<T, StoreError> {
    if now.revision() == opened {
        Ok(now)
    } else {
        Err(refused(now, opened, yours.clone()))
    }
}

/// What a site looks like with `settings` (the change refused, shown beside the stored one).
pub(crate) fn site_as(site: &Site, settings: &SiteSettings) -> EarlierVersion {
    let mut s = site.clone();
    (s.elevation_m, s.barometer_kpa, s.time_zone) = (
        settings.elevation_m,
        settings.barometer_kpa,
        settings.time_zone.clone(),
    );
    EarlierVersion::Site(s)
}

/// A revision's reason (refused when empty) and its earlier version as JSON.
pub(crate) fn revision_text<'r>(
    reason: &'r str,
    before: &EarlierVersion,
) -> Result<(&'r str, String), StoreError> {
    let reason = reason.trim();
    if reason.is_empty() {
        return Err(StoreError::Invalid(vec![FieldError::new(
            "reason",
            "say why the record is changed; the reason is kept with its history",
        )]));
    }
    let json = match before {
        EarlierVersion::Site(s) => serde_json::to_string(s),
        EarlierVersion::Tank(t) => serde_json::to_string(t),
        EarlierVersion::Reading(r) => serde_json::to_string(r),
        EarlierVersion::Delivery(d) => serde_json::to_string(d),
    }
    .map_err(|e| StoreError::Encode(e.to_string()))?;
    Ok((reason, json))
}

/// Decode a stored earlier version of a record.
pub(crate) fn decode_revision(
    record: RecordRef,
    action: &str,
    revised_at: String,
    reason: String,
    json: &str,
) -> Result<Revision, StoreError> {
    let bad = |e: &dyn std::fmt::Display| StoreError::Corrupt {
        what: format!("the history of {record:?}"),
        reason: e.to_string(),
    };
    let before = match record {
        RecordRef::Site(_) => serde_json::from_str(json).map(EarlierVersion::Site),
        RecordRef::Tank(_) => serde_json::from_str(json).map(|t| EarlierVersion::Tank(Box::new(t))),
        RecordRef::Reading(_) => serde_json::from_str(json).map(EarlierVersion::Reading),
        RecordRef::Delivery(_) => serde_json::from_str(json).map(EarlierVersion::Delivery),
    }
    .map_err(|e| bad(&e))?;
    let action = match action {
        "edit" => RevisionAction::Edit,
        "delete" => RevisionAction::Delete,
        other => return Err(bad(&format!("unknown action '{other}'"))),
    };
    Ok(Revision {
        record,
        action,
        revised_at,
        reason,
        before,
    })
}
