//! What the panels draw. Plain data, in SI unless a field says otherwise; built by [`crate::build`]
//! only when its inputs change (a selection, a saved record, a unit switch), never every frame.

use crate::fmt::UnitSystem;

mod pages;
pub use pages::*;

/// The central area's page.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Page {
    /// The selected tank's page.
    #[default]
    Tank,
    /// Tank setup: create or edit a site and tank.
    Setup,
    /// Help, cautions and the method's assumptions.
    Help,
    /// The fleet's audit: every fill's balance, vehicles, gauges and findings.
    Audit,
    /// Import CSV files: pick, check with a preview, then import all or nothing.
    Import,
}

/// A tab of the tank page.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum TankTab {
    /// The latest contents, the vessel, the safe-fill limit.
    #[default]
    Now,
    /// The reading log and its entry form.
    Readings,
    /// The delivery log and its entry form.
    Deliveries,
    /// Contents and pressure against time.
    Trend,
}

impl TankTab {
    /// Every tab, in the order shown.
    pub const ALL: [TankTab; 4] = [Self::Now, Self::Readings, Self::Deliveries, Self::Trend];
    /// Its title.
    pub fn title(self) -> &'static str {
        match self {
            Self::Now => "Now",
            Self::Readings => "Readings",
            Self::Deliveries => "Deliveries",
            Self::Trend => "Trend",
        }
    }
}

/// What the trend plot shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum TrendQuantity {
    /// Liquid plus vapour mass.
    #[default]
    TotalMass,
    /// Liquid volume over gross volume.
    FillFraction,
    /// Liquid volume.
    LiquidVolume,
    /// Gas equivalent at reference conditions.
    GasEquivalent,
}

impl TrendQuantity {
    /// Every choice, in the order offered.
    pub const ALL: [TrendQuantity; 4] = [
        Self::TotalMass,
        Self::FillFraction,
        Self::LiquidVolume,
        Self::GasEquivalent,
    ];
    /// Its name.
    pub fn title(self) -> &'static str {
        match self {
            Self::TotalMass => "Total mass",
            Self::FillFraction => "Fill fraction",
            Self::LiquidVolume => "Liquid volume",
            Self::GasEquivalent => "Gas equivalent",
        }
    }
}

/// Why a tank in the Fleet list wants attention.
#[derive(Debug, Clone, PartialEq)]
pub enum Attention {
    /// The latest reading is older than the stale limit (or there is none).
    StaleReading,
    /// The latest contents are below the reorder level.
    BelowReorder,
    /// The latest reading could not be evaluated.
    ReadingRefused(String),
    /// The audit found something open: a short or excess fill, a gain no ticket explains, a loss
    /// beyond use (the sentence says which).
    OpenFinding(String),
}

impl Attention {
    /// A word or two for a chip.
    pub fn short(&self) -> &'static str {
        match self {
            Self::StaleReading => "stale reading",
            Self::BelowReorder => "below reorder level",
            Self::ReadingRefused(_) => "latest reading refused",
            Self::OpenFinding(_) => "open finding",
        }
    }

    /// A full description for the tooltip and the tank page.
    pub fn describe(&self) -> String {
        match self {
            Self::StaleReading => "stale reading".into(),
            Self::BelowReorder => "below reorder level".into(),
            Self::ReadingRefused(why) => format!("latest reading refused: {why}"),
            Self::OpenFinding(what) => format!("open finding — {what}"),
        }
    }
}

/// One tank's line in the Fleet list.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetTank {
    /// Tank id.
    pub id: i64,
    /// Tank name.
    pub name: String,
    /// Fluid name.
    pub fluid: String,
    /// Fill fraction of the latest reading.
    pub fill: Option<f64>,
    /// Reorder level, fraction of gross volume.
    pub reorder: Option<f64>,
    /// Time of the latest reading, ms since the epoch.
    pub last_reading_ms: Option<i64>,
    /// What needs attention (empty: nothing).
    pub attention: Vec<Attention>,
}

/// A site and its tanks, for the Fleet list.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetSite {
    /// Site id.
    pub id: i64,
    /// Site name.
    pub name: String,
    /// The site's time zone (UTC when none is set).
    pub zone: units::Zone,
    /// Its tanks, by name.
    pub tanks: Vec<FleetTank>,
}

/// One visible line of the Fleet list (the list is virtualised, so it is flattened).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FleetRow {
    /// A site header: index into [`FleetView::sites`], and whether it is open.
    Site(usize, bool),
    /// A tank: site index and tank index.
    Tank(usize, usize),
}

/// The Fleet list's content.
#[derive(Debug, Clone, Default)]
pub struct FleetView {
    /// Sites and tanks.
    pub sites: Vec<FleetSite>,
    /// Text filter.
    pub filter: String,
    /// Site ids the user closed.
    pub closed: std::collections::BTreeSet<i64>,
    /// The visible lines after filtering.
    pub rows: Vec<FleetRow>,
    /// Tanks in the fleet and tanks needing attention.
    pub counts: (usize, usize),
    /// Background summary progress (done, total) while it runs.
    pub progress: Option<(usize, usize)>,
    /// Time the summary was computed, ms since the epoch (ages are relative to it).
    pub as_of_ms: i64,
}

/// A value with its standard uncertainty (GUM, k = 1), SI.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Figure {
    /// The value.
    pub value: f64,
    /// Its standard uncertainty, when a budget was computed.
    pub u: Option<f64>,
}

/// What one reading means, SI.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct RowContents {
    /// Total mass, kg.
    pub mass_kg: Figure,
    /// Fill fraction.
    pub fill: Figure,
    /// Liquid volume, m³.
    pub volume_m3: Figure,
    /// Gas equivalent, Nm³.
    pub gas_nm3: Figure,
    /// Gas equivalent, scf (uncertainty scaled from Nm³).
    pub gas_scf: Figure,
    /// Liquid height above the bottom tap, m.
    pub level_m: f64,
    /// Liquid temperature, K.
    pub liquid_temperature_k: f64,
    /// Saturation temperature at the tank pressure, K.
    pub saturation_temperature_k: f64,
    /// Liquid density, kg/m³.
    pub liquid_density_kg_m3: f64,
    /// Vapour density, kg/m³.
    pub vapour_density_kg_m3: f64,
    /// The level was clamped at empty or full (within the gauge tolerance).
    pub clamped: bool,
}

/// One row of the reading log.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadingRow {
    /// Reading id.
    pub id: i64,
    /// Time, ms since the epoch.
    pub time_ms: i64,
    /// The DP as entered, e.g. `182.5 inH2O`.
    pub dp_text: String,
    /// The tank pressure as entered, e.g. `11.8 barg`.
    pub pressure_text: String,
    /// Tank pressure above the site's barometer, Pa.
    pub pressure_gauge_pa: f64,
    /// Measured liquid temperature, K.
    pub liquid_temperature_k: Option<f64>,
    /// The note.
    pub note: String,
    /// What it means, or why it could not be evaluated.
    pub contents: Result<RowContents, String>,
}

/// One row of the delivery log.
#[derive(Debug, Clone, PartialEq)]
pub struct DeliveryRow {
    /// Delivery id.
    pub id: i64,
    /// Ticket number.
    pub ticket: String,
    /// Start, ms since the epoch.
    pub start_ms: i64,
    /// End, ms since the epoch.
    pub end_ms: i64,
    /// Billed quantity as entered.
    pub quantity_text: String,
    /// Carrier.
    pub carrier: String,
    /// Vehicle.
    pub vehicle: String,
    /// Supply pressure as entered, or empty.
    pub supply_text: String,
    /// The fill's verdict and residual (% of the ticket), once audited.
    pub verdict: Option<(VerdictWord, f64)>,
}

/// The vessel drawing's inputs, m.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct VesselView {
    /// True for a horizontal axis.
    pub horizontal: bool,
    /// A strapping table rather than a drawn shape.
    pub strapping: bool,
    /// Inner diameter.
    pub diameter_m: f64,
    /// Straight shell length.
    pub length_m: f64,
    /// Depth of each head.
    pub head_depth_m: f64,
    /// Inner height (distance between the taps).
    pub inner_height_m: f64,
    /// Gross volume, m³.
    pub gross_volume_m3: f64,
    /// Head shape name.
    pub heads: String,
    /// Liquid level, when known.
    pub level_m: Option<f64>,
    /// Level at the safe-fill limit.
    pub safe_fill_level_m: Option<f64>,
    /// Level at the reorder volume.
    pub reorder_level_m: Option<f64>,
}

/// The safe-fill limit at the latest reading's conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SafeFillView {
    /// Relief set pressure above the barometer, Pa.
    pub relief_gauge_pa: f64,
    /// Largest fill fraction now.
    pub max_fill: f64,
    /// Largest liquid mass, kg.
    pub max_liquid_mass_kg: f64,
    /// Vapour space kept at relief, fraction of gross.
    pub vapour_fraction: f64,
}

/// The Now tab.
#[derive(Debug, Clone, PartialEq)]
pub struct NowView {
    /// The latest evaluated reading's row (time, DP, pressure, contents).
    pub latest: Option<ReadingRow>,
    /// Use, kg per day, over the recent readings (rises from fills left out).
    pub usage_kg_per_day: Option<f64>,
    /// The period the use was taken over, days.
    pub usage_days: f64,
    /// How the use was worked out.
    pub usage_source: String,
    /// Days until the reorder level at that rate.
    pub days_to_reorder: Option<f64>,
    /// Reorder level, fraction of gross volume.
    pub reorder: Option<f64>,
    /// Safe-fill limit, or why there is none.
    pub safe_fill: Result<SafeFillView, String>,
    /// How the liquid's state was taken.
    pub liquid_state_note: String,
}

impl Default for NowView {
    fn default() -> Self {
        Self {
            latest: None,
            usage_kg_per_day: None,
            usage_days: 0.0,
            usage_source: String::new(),
            days_to_reorder: None,
            reorder: None,
            safe_fill: Err(String::new()),
            liquid_state_note: String::new(),
        }
    }
}

/// The trend plot's series, in display units.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TrendView {
    /// What is plotted.
    pub quantity: TrendQuantity,
    /// Days shown back from the latest reading (None: the whole history).
    pub period_days: Option<u32>,
    /// Axis label with unit.
    pub y_label: String,
    /// x (days since the epoch) and y of each evaluated reading, oldest first.
    pub points: Vec<[f64; 2]>,
    /// x of the band.
    pub band_x: Vec<f64>,
    /// Lower edge of the ±1 u band.
    pub band_lo: Vec<f64>,
    /// Upper edge.
    pub band_hi: Vec<f64>,
    /// Tank pressure (display unit) against the same x.
    pub pressure: Vec<[f64; 2]>,
    /// Pressure axis label.
    pub pressure_label: String,
    /// Deliveries: x of the fill start, the ticket and its verdict once audited.
    pub deliveries: Vec<(f64, String, Option<VerdictWord>)>,
    /// The audit's findings between fills: x from, x to, what.
    pub findings: Vec<(f64, f64, String)>,
    /// Reorder level in the plotted quantity.
    pub reorder_y: Option<f64>,
    /// Safe-fill limit in the plotted quantity.
    pub safe_fill_y: Option<f64>,
    /// Hover text of each point.
    pub hover: Vec<String>,
}

/// A message from a check, at its field: the store's own field error.
pub use store::FieldError as FieldMessage;

/// A form's checked state.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FormCheck {
    /// Messages by field; empty when the form may be saved.
    pub errors: Vec<FieldMessage>,
    /// Lines describing what the entry implies (contents, for a reading).
    pub preview: Vec<String>,
    /// True when everything checks and the form may be saved.
    pub ok: bool,
}

impl FormCheck {
    /// Messages for the fields whose names start with `prefix`.
    pub fn at<'a>(&'a self, prefix: &'a str) -> impl Iterator<Item = &'a str> + 'a {
        self.errors
            .iter()
            .filter(move |e| e.field == prefix || e.field.starts_with(&format!("{prefix}_")))
            .map(|e| e.reason.as_str())
    }
}

/// A record's entry form with its check and the history of the record it edits: one per record kind,
/// so each form shows its own record's history.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Editor<F> {
    /// The form as typed.
    pub form: F,
    /// Its check.
    pub check: FormCheck,
    /// Earlier versions of the record being edited, oldest first (empty for a new record).
    pub history: Vec<HistoryRow>,
    /// The user tried to save this form: a missing reason is said only from then on.
    pub tried: bool,
}

/// The text of the reading form, as typed.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ReadingForm {
    /// The reading being edited, or None for a new reading.
    pub editing: Option<i64>,
    /// The revision of it the form was filled from (an edit of a later one is refused).
    pub opened: i64,
    /// When it was read, on the site's clock.
    pub time: LocalEntry,
    /// DP (a number, or a number and unit).
    pub dp: String,
    /// DP unit when the DP has none.
    pub dp_unit: String,
    /// Tank pressure (a number, or a number and unit).
    pub pressure: String,
    /// Its unit when the pressure has none.
    pub pressure_unit: String,
    /// Optional liquid temperature (`83 K`, `-190 C`; a bare number is K).
    pub liquid_temperature: String,
    /// Optional note.
    pub note: String,
    /// Why it is edited or deleted (required then).
    pub reason: String,
}

/// The text of the delivery form, as typed.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DeliveryForm {
    /// The delivery being edited, or None for a new one.
    pub editing: Option<i64>,
    /// The revision of it the form was filled from (an edit of a later one is refused).
    pub opened: i64,
    /// Ticket number.
    pub ticket: String,
    /// Start of the fill, on the site's clock.
    pub start: LocalEntry,
    /// End of the fill, on the site's clock.
    pub end: LocalEntry,
    /// Quantity (a number, or a number and unit).
    pub quantity: String,
    /// Its unit when the quantity has none.
    pub quantity_unit: String,
    /// Carrier.
    pub carrier: String,
    /// Vehicle.
    pub vehicle: String,
    /// Optional supply pressure (a number and unit, or a number with the unit field).
    pub supply_pressure: String,
    /// Its unit.
    pub supply_pressure_unit: String,
    /// Why it is edited or deleted.
    pub reason: String,
}

/// A time as the site's clock shows it, as entered in a form (stored as the instant, UTC, with the
/// text as entered: RFC 3339 with the site's offset).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LocalEntry {
    /// The day, `YYYY-MM-DD`.
    pub date: String,
    /// Hour and minute, `HH:MM`.
    pub clock: String,
    /// When the clocks show this time twice (going back): Some(false) the first, Some(true) the
    /// second; None until the user says.
    pub repeat: Option<bool>,
}

/// The text of the tank setup form.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SetupForm {
    /// The tank being edited, or None for a new one.
    pub editing: Option<i64>,
    /// The revision of it the form was filled from (an edit of a later one is refused).
    pub opened: i64,
    /// Site name.
    pub site: String,
    /// Site elevation, m (optional).
    pub elevation_m: String,
    /// Site barometer, kPa absolute (optional).
    pub barometer_kpa: String,
    /// Site time zone, an IANA name (optional; times are shown and entered in it).
    pub time_zone: String,
    /// Tank name.
    pub tank: String,
    /// Fluid.
    pub fluid: String,
    /// vertical / horizontal.
    pub orientation: String,
    /// Inner diameter, m.
    pub diameter_m: String,
    /// Straight length, m.
    pub length_m: String,
    /// Head shape.
    pub heads: String,
    /// Line temperature, °C.
    pub line_temperature_c: String,
    /// Gauge unit.
    pub dp_unit: String,
    /// Gauge span in its unit.
    pub gauge_span: String,
    /// Gauge accuracy, % of span.
    pub gauge_accuracy_percent: String,
    /// Relief set pressure.
    pub relief_pressure: String,
    /// Its unit.
    pub relief_pressure_unit: String,
    /// Reorder level, %.
    pub reorder_percent: String,
    /// NER, % per day.
    pub ner_percent_per_day: String,
    /// Why an existing tank is changed.
    pub reason: String,
}

/// The setup form's live preview.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SetupPreview {
    /// The vessel, when the shape checks.
    pub vessel: Option<VesselView>,
    /// Full-tank DP lines (sanity check against the gauge span).
    pub full_dp: Vec<String>,
    /// A warning about the gauge span, if any.
    pub span_warning: Option<String>,
}

/// One earlier version of a record.
#[derive(Debug, Clone, PartialEq)]
pub struct HistoryRow {
    /// When it changed (RFC 3339).
    pub when: String,
    /// `edit` or `delete`.
    pub action: String,
    /// Why.
    pub reason: String,
    /// The earlier values, summarised.
    pub old: String,
}

/// The selected tank's page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TankView {
    /// Tank id.
    pub id: i64,
    /// The site's time zone (UTC when none is set): times are shown and entered in it.
    pub zone: units::Zone,
    /// Tank name.
    pub name: String,
    /// Site name.
    pub site: String,
    /// Fluid name.
    pub fluid: String,
    /// True for oxygen service.
    pub oxygen: bool,
    /// One line on the vessel and gauge.
    pub summary: String,
    /// The gauge's unit symbol.
    pub dp_unit: String,
    /// Site barometer, Pa.
    pub barometer_pa: f64,
    /// The vessel.
    pub vessel: VesselView,
    /// Needs attention.
    pub attention: Vec<Attention>,
    /// Readings, newest first.
    pub readings: Vec<ReadingRow>,
    /// Deliveries, newest first.
    pub deliveries: Vec<DeliveryRow>,
    /// The audit's findings between fills at this tank: from, to (ms) and what.
    pub finding_spans: Vec<(i64, i64, String)>,
    /// The Now tab.
    pub now: NowView,
    /// The trend.
    pub trend: TrendView,
    /// Time to build this page, ms (shown in the status bar).
    pub build_ms: f64,
}

/// The result of a verify run over the ledger's hash chain.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct HistoryCheck {
    /// True when no record was changed, added or removed outside cryoledger.
    pub ok: bool,
    /// One line to show: the summary, or the problems counted with the first named.
    pub text: String,
}

/// Everything the panels draw.
#[derive(Debug, Clone, Default)]
pub struct ViewState {
    /// Display units.
    pub units: UnitSystem,
    /// The central page.
    pub page: Page,
    /// The tank page's tab.
    pub tab: TankTab,
    /// The Fleet list.
    pub fleet: FleetView,
    /// The tank page, when a tank is selected.
    pub tank: Option<TankView>,
    /// The reading form, its check and the history of the reading it edits.
    pub reading_editor: Editor<ReadingForm>,
    /// The delivery form, its check and the history of the delivery it edits.
    pub delivery_editor: Editor<DeliveryForm>,
    /// The setup form.
    pub setup_form: SetupForm,
    /// Its check.
    pub setup_check: FormCheck,
    /// Its preview.
    pub setup_preview: SetupPreview,
    /// The user tried to save the setup form (a missing reason is said only from then on).
    pub setup_tried: bool,
    /// A confirmation to show (saved, deleted).
    pub notice: Option<String>,
    /// The last error to show, if any.
    pub error: Option<String>,
    /// Mean CPU time of the last frames (logic + ui), ms.
    pub frame_ms: f64,
    /// The caution texts shown beside the safe-fill limit and in help.
    pub cautions: Vec<&'static str>,
    /// The last check of the ledger's history (its hash chain), when one has run.
    pub history_check: Option<HistoryCheck>,
    /// The audit page.
    pub audit: AuditView,
    /// The import page.
    pub import: ImportView,
    /// Show frame and page-build timings in the status bar (a diagnostics switch on the help page).
    pub diagnostics: bool,
    /// Which ledger the window writes to, as the status bar names it ("ledger.db", or a shared
    /// ledger's login, server and database; never a password).
    pub ledger: String,
}
