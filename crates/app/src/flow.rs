//! One flow for every kind of record a form enters (readings, deliveries): its form and check, the
//! store calls that add, edit and delete it, the key of its history, and the words its messages use.
//! The action handler selects, saves, deletes and shows history once, over a [`Flow`].

use crate::build;
use crate::fmt::UnitSystem;
use crate::view::*;
use store::{
    DeliveryEntry, DeliveryId, ReadingEntry, ReadingId, RecordRef, Repository, StoreError, TankId,
    TankRecord,
};

/// A kind of record entered through a form.
pub trait Flow {
    /// The form as typed.
    type Form: Clone + Default;
    /// The checked record.
    type Entry;
    /// The record's name in messages ("reading").
    const NOUN: &'static str;
    /// Its editor in the view state.
    fn editor(view: &mut ViewState) -> &mut Editor<Self::Form>;
    /// The record the form edits, if any, and the revision of it the form was filled from.
    fn editing(form: &Self::Form) -> Option<(i64, i64)>;
    /// The reason typed for an edit or deletion.
    fn reason(form: &Self::Form) -> &str;
    /// A blank form for a tank.
    fn blank(t: Option<&TankRecord>, units: UnitSystem) -> Self::Form;
    /// The form filled from a stored record.
    fn load(repo: &dyn Repository, id: i64) -> Result<Self::Form, StoreError>;
    /// Check the form against its tank.
    fn check(
        form: &Self::Form,
        t: &TankRecord,
        units: UnitSystem,
    ) -> (FormCheck, Option<Self::Entry>);
    /// Store a new record.
    fn add(repo: &mut dyn Repository, tank: TankId, e: &Self::Entry) -> Result<(), StoreError>;
    /// Replace a stored record (as of revision `opened`), with the reason.
    fn edit(
        repo: &mut dyn Repository,
        id: (i64, i64),
        e: &Self::Entry,
        reason: &str,
    ) -> Result<(), StoreError>;
    /// Delete a stored record (as of revision `opened`), with the reason.
    fn delete(repo: &mut dyn Repository, id: (i64, i64), reason: &str) -> Result<(), StoreError>;
    /// The key of a stored record's history.
    fn record(id: i64) -> RecordRef;
    /// How a message names the record ("Reading of 2026-03-01T08:00:00Z").
    fn label(e: &Self::Entry) -> String;
}

/// Readings.
pub struct ReadingFlow;

impl Flow for ReadingFlow {
    type Form = ReadingForm;
    type Entry = ReadingEntry;
    const NOUN: &'static str = "reading";
    fn editor(view: &mut ViewState) -> &mut Editor<ReadingForm> {
        &mut view.reading_editor
    }
    fn editing(form: &ReadingForm) -> Option<(i64, i64)> {
        form.editing.map(|id| (id, form.opened))
    }
    fn reason(form: &ReadingForm) -> &str {
        &form.reason
    }
    fn blank(t: Option<&TankRecord>, units: UnitSystem) -> ReadingForm {
        build::new_reading_form(t, units)
    }
    fn load(repo: &dyn Repository, id: i64) -> Result<ReadingForm, StoreError> {
        build::reading_form_for(repo, id)
    }
    fn check(
        form: &ReadingForm,
        t: &TankRecord,
        units: UnitSystem,
    ) -> (FormCheck, Option<ReadingEntry>) {
        build::check_reading(form, t, units)
    }
    fn add(repo: &mut dyn Repository, tank: TankId, e: &ReadingEntry) -> Result<(), StoreError> {
        repo.add_reading(tank, e).map(|_| ())
    }
    fn edit(
        repo: &mut dyn Repository,
        (id, opened): (i64, i64),
        e: &ReadingEntry,
        reason: &str,
    ) -> Result<(), StoreError> {
        repo.edit_reading(ReadingId(id), opened, e, reason)
    }
    fn delete(
        repo: &mut dyn Repository,
        (id, opened): (i64, i64),
        reason: &str,
    ) -> Result<(), StoreError> {
        repo.delete_reading(ReadingId(id), opened, reason)
    }
    fn record(id: i64) -> RecordRef {
        RecordRef::Reading(ReadingId(id))
    }
    fn label(e: &ReadingEntry) -> String {
        format!("Reading of {}", e.time.text)
    }
}

/// Deliveries.
pub struct DeliveryFlow;

impl Flow for DeliveryFlow {
    type Form = DeliveryForm;
    type Entry = DeliveryEntry;
    const NOUN: &'static str = "delivery";
    fn editor(view: &mut ViewState) -> &mut Editor<DeliveryForm> {
        &mut view.delivery_editor
    }
    fn editing(form: &DeliveryForm) -> Option<(i64, i64)> {
        form.editing.map(|id| (id, form.opened))
    }
    fn reason(form: &DeliveryForm) -> &str {
        &form.reason
    }
    fn blank(t: Option<&TankRecord>, units: UnitSystem) -> DeliveryForm {
        build::new_delivery_form(t, units)
    }
    fn load(repo: &dyn Repository, id: i64) -> Result<DeliveryForm, StoreError> {
        build::delivery_form_for(repo, id)
    }
    fn check(
        form: &DeliveryForm,
        t: &TankRecord,
        _: UnitSystem,
    ) -> (FormCheck, Option<DeliveryEntry>) {
        build::check_delivery(form, t)
    }
    fn add(repo: &mut dyn Repository, tank: TankId, e: &DeliveryEntry) -> Result<(), StoreError> {
        repo.add_delivery(tank, e).map(|_| ())
    }
    fn edit(
        repo: &mut dyn Repository,
        (id, opened): (i64, i64),
        e: &DeliveryEntry,
        reason: &str,
    ) -> Result<(), StoreError> {
        repo.edit_delivery(DeliveryId(id), opened, e, reason)
    }
    fn delete(
        repo: &mut dyn Repository,
        (id, opened): (i64, i64),
        reason: &str,
    ) -> Result<(), StoreError> {
        repo.delete_delivery(DeliveryId(id), opened, reason)
    }
    fn record(id: i64) -> RecordRef {
        RecordRef::Delivery(DeliveryId(id))
    }
    fn label(e: &DeliveryEntry) -> String {
        format!("Delivery {}", e.ticket)
    }
}

/// "Reading" from "reading".
pub fn capitalised(noun: &str) -> String {
    let mut c = noun.chars();
    c.next()
        .map(|f| f.to_uppercase().chain(c).collect())
        .unwrap_or_default()
}
