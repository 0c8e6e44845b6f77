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

/// [`stale`] for a site whose stored version is `now`, changed to `settings`.
pub(crate) fn stale_site(now: &Site, opened: i64, settings: &SiteSettings) -> StoreError {
    let mut yours = now.clone();
    (yours.elevation_m, yours.barometer_kpa, yours.time_zone) = (
        settings.elevation_m,
        settings.barometer_kpa,
        settings.time_zone.clone(),
    );
    stale(
        RecordRef::Site(now.id),
        opened,
        now.revision,
        EarlierVersion::Site(now.clone()),
        Some(EarlierVersion::Site(yours)),
    )
}

/// [`stale`] for a tank whose stored version is `now`, changed to `spec`.
pub(crate) fn stale_tank(now: TankRecord, opened: i64, spec: &TankSpec) -> StoreError {
    stale(
        RecordRef::Tank(now.id),
        opened,
        now.revision,
        EarlierVersion::Tank(Box::new(now.spec)),
        Some(EarlierVersion::Tank(Box::new(spec.clone()))),
    )
}

/// [`stale`] for a reading whose stored version is `now`.
pub(crate) fn stale_reading(
    now: Reading,
    opened: i64,
    yours: Option<EarlierVersion>,
) -> StoreError {
    stale(
        RecordRef::Reading(now.id),
        opened,
        now.revision,
        EarlierVersion::Reading(now.entry),
        yours,
    )
}

/// [`stale`] for a delivery whose stored version is `now`.
pub(crate) fn stale_delivery(
    now: Delivery,
    opened: i64,
    yours: Option<EarlierVersion>,
) -> StoreError {
    stale(
        RecordRef::Delivery(now.id),
        opened,
        now.revision,
        EarlierVersion::Delivery(now.entry),
        yours,
    )
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
