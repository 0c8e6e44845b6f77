//! Builds view state from the store's records through the bridge to the engines (`evaluate`). Called
//! by the action handler when an input changes, and by the background fleet summary; never by panels.
//! One file per part of the window: the fleet list, the tank page, the trend, the forms and their
//! checks, the histories.

mod audit_page;
mod fleet;
mod form_fill;
mod forms;
mod history;
mod import_page;
mod reading;
mod tank_page;
mod trend;

pub use audit_page::{apply_filter, audit_settings, audit_view, finding_words, verdict_word};
pub use fleet::{FleetSummary, fleet_rows, fleet_sites, fleet_summary, history_check};
pub use form_fill::{
    delivery_form_for, entry_instant, local_entry, new_delivery_form, new_reading_form,
    new_setup_form, reading_form_for, setup_form_for,
};
pub use forms::{check_delivery, check_reading, check_setup, split_value_unit};
pub use history::history;
pub use import_page::{PREVIEW_ROWS, import_preview, import_sources, pick_csv_file};
pub use tank_page::{apply_fleet_audit, tank_view, vessel};
pub use trend::{quantity_of, quantity_unit, trend};

use crate::fmt::{self, CUBIC_FEET_PER_M3, UnitSystem};
use crate::view::*;
use fleet::attention_of;
use reading::{contents_for, liquid_for, reading_row, row_contents};
use store::{
    DeliveryEntry, DeliveryFields, ReadingEntry, ReadingFields, Repository, StoreError, TankFields,
    TankRecord, TankSpec,
};
use tank::{
    CAUTIONS, Contents, ContentsOptions, DEFAULT_VAPOUR_FRACTION, LevelClamp, LiquidState,
    SolverOptions, UncertaintyInputs,
};
use units::{AbsolutePressure, Unit};

/// A reading older than this is stale (common practice for daily telemetry, no source).
pub const STALE_AFTER_MS: i64 = 3 * 86_400_000;
/// Use per day is taken over the readings of this many days before the latest.
pub const USAGE_WINDOW_MS: i64 = 30 * 86_400_000;

/// Days the trend shows at first (the user can widen it or zoom out).
pub const DEFAULT_TREND_DAYS: u32 = 180;

/// The caution texts shown beside the safe-fill limit and in help (from the contents engine).
pub fn cautions() -> &'static [&'static str] {
    &CAUTIONS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splits_numbers_from_units() {
        assert_eq!(split_value_unit(" 85 inH2O "), ("85", "inH2O"));
        assert_eq!(split_value_unit("-1.5e2mbar"), ("-1.5e2", "mbar"));
        assert_eq!(split_value_unit("12"), ("12", ""));
        assert_eq!(split_value_unit("abc"), ("", "abc"));
    }
}
