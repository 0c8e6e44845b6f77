//! The audit page's and the import page's view state (plain data, built by `crate::build`).

/// A fill's verdict, as the window shows it: a word always, a colour beside it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum VerdictWord {
    /// Beyond its limit: less arrived than was billed.
    Short,
    /// Beyond its limit: more arrived than was billed.
    Excess,
    /// Too uncertain to judge.
    Inconclusive,
    /// Within its limit.
    Consistent,
}

impl VerdictWord {
    /// Every verdict, in the order offered.
    pub const ALL: [VerdictWord; 4] = [
        Self::Short,
        Self::Excess,
        Self::Inconclusive,
        Self::Consistent,
    ];
    /// The word.
    pub fn word(self) -> &'static str {
        match self {
            Self::Short => "short",
            Self::Excess => "excess",
            Self::Inconclusive => "inconclusive",
            Self::Consistent => "consistent",
        }
    }
}

/// A part of the audit page.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum AuditSection {
    /// Every fill's balance.
    #[default]
    Fills,
    /// Each vehicle's bias.
    Vehicles,
    /// Each gauge's drift or step.
    Gauges,
    /// Gains and losses between fills.
    Findings,
}

impl AuditSection {
    /// Every section, in the order shown.
    pub const ALL: [AuditSection; 4] = [Self::Fills, Self::Vehicles, Self::Gauges, Self::Findings];
    /// Its title.
    pub fn title(self) -> &'static str {
        match self {
            Self::Fills => "Fills",
            Self::Vehicles => "Vehicles",
            Self::Gauges => "Gauges",
            Self::Findings => "Findings",
        }
    }
}

/// A column the fills can be sorted by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum AuditColumn {
    /// Start of the fill.
    #[default]
    Start,
    /// Ticket.
    Ticket,
    /// Tank.
    Tank,
    /// Vehicle.
    Vehicle,
    /// Verdict.
    Verdict,
    /// Billed.
    Billed,
    /// Residual, % of the ticket.
    Residual,
}

impl AuditColumn {
    /// Every sortable column, in the order shown.
    pub const ALL: [AuditColumn; 7] = [
        Self::Start,
        Self::Ticket,
        Self::Tank,
        Self::Vehicle,
        Self::Verdict,
        Self::Billed,
        Self::Residual,
    ];
    /// Its name.
    pub fn title(self) -> &'static str {
        match self {
            Self::Start => "start",
            Self::Ticket => "ticket",
            Self::Tank => "tank",
            Self::Vehicle => "vehicle",
            Self::Verdict => "verdict",
            Self::Billed => "billed",
            Self::Residual => "residual",
        }
    }
}

/// What the audit page's fill list keeps (empty text: any).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AuditFilter {
    /// Site name.
    pub site: String,
    /// Tank name.
    pub tank: String,
    /// Carrier name.
    pub carrier: String,
    /// Vehicle name.
    pub vehicle: String,
    /// Verdict.
    pub verdict: Option<VerdictWord>,
    /// First day kept, YYYY-MM-DD (UTC).
    pub from: String,
    /// Last day kept, YYYY-MM-DD (UTC).
    pub to: String,
}

/// One part of a balance's uncertainty budget.
#[derive(Debug, Clone, PartialEq)]
pub struct BudgetPart {
    /// What it is.
    pub label: &'static str,
    /// Its standard uncertainty, kg.
    pub kg: f64,
}

/// A reading that bracketed a fill, with the liquid state assumed.
#[derive(Debug, Clone, PartialEq)]
pub struct BracketView {
    /// When, ms since the epoch.
    pub time_ms: i64,
    /// Total mass, kg.
    pub mass_kg: f64,
    /// Liquid volume over gross volume.
    pub fill: f64,
    /// The liquid's temperature assumed (its thermal history), K.
    pub liquid_temperature_k: f64,
    /// Saturation temperature at the tank pressure, K.
    pub saturation_temperature_k: f64,
}

/// One fill's balance on the audit page.
#[derive(Debug, Clone, PartialEq)]
pub struct BalanceRow {
    /// Ticket.
    pub ticket: String,
    /// The site's time zone: the row's times are shown on its clock.
    pub zone: units::Zone,
    /// Site.
    pub site: String,
    /// Tank.
    pub tank: String,
    /// The tank's id, to open its page.
    pub tank_id: Option<i64>,
    /// Carrier.
    pub carrier: String,
    /// Vehicle.
    pub vehicle: String,
    /// Start, ms since the epoch.
    pub start_ms: i64,
    /// Verdict.
    pub verdict: VerdictWord,
    /// Billed, kg.
    pub billed_kg: f64,
    /// Gained by the tank between the readings, kg.
    pub gained_kg: f64,
    /// Drawn by the customer between the readings, kg.
    pub drawn_kg: f64,
    /// Lost beyond use between the readings in a found leak or venting, kg (counted with the use).
    pub lost_kg: f64,
    /// billed − (gained + drawn) (with the gauge's scale), kg.
    pub residual_kg: f64,
    /// The residual, % of the ticket.
    pub residual_percent: f64,
    /// Its standard uncertainty, kg.
    pub sigma_kg: f64,
    /// The limit a residual must pass to be short, kg.
    pub limit_kg: f64,
    /// The limit a negative residual must pass to be excess, kg.
    pub excess_limit_kg: f64,
    /// The materiality limit alone, kg.
    pub materiality_kg: f64,
    /// The uncertainty budget.
    pub budget: Vec<BudgetPart>,
    /// The reading before.
    pub before: Option<BracketView>,
    /// The reading after.
    pub after: Option<BracketView>,
    /// The gauge's scale the gain was read with, as text.
    pub scale: String,
    /// When the verdict also rests on the vehicle's other fills: what they show, as text.
    pub with_vehicle: Option<String>,
    /// The sentence to hand to a carrier.
    pub explanation: String,
}

/// One vehicle's line.
#[derive(Debug, Clone, PartialEq)]
pub struct VehicleLine {
    /// Vehicle.
    pub vehicle: String,
    /// Carrier.
    pub carrier: String,
    /// Status word.
    pub status: String,
    /// True when biased.
    pub flagged: bool,
    /// Fills compared.
    pub fills: usize,
    /// Bias and its 95 % interval, %.
    pub bias: Option<(f64, f64, f64)>,
    /// Fills judged short on their own balances.
    pub short_fills: usize,
    /// Further fills judged short with the vehicle's other fills.
    pub short_with_vehicle: usize,
    /// p-value after Holm's correction.
    pub p_adjusted: Option<f64>,
    /// The legal tolerance, %.
    pub tolerance_percent: f64,
    /// Each compared fill against its tank's level from the other vehicles' fills, %: (days since
    /// the epoch, adjusted ratio less 100 %, tank).
    pub points: Vec<(f64, f64, String)>,
}

/// One gauge's line.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeLine {
    /// Tank.
    pub tank: String,
    /// Status word.
    pub status: String,
    /// True when drifting or stepped.
    pub flagged: bool,
    /// Fills tested.
    pub fills: usize,
    /// Drift, % of span per year.
    pub drift: Option<f64>,
    /// Step, % and when (ms).
    pub step: Option<(f64, i64)>,
    /// p-value after Holm's correction.
    pub p_adjusted: Option<f64>,
    /// The smallest drift (% of span per year) and step (%) the test finds with probability 95 %.
    pub detectable: (Option<f64>, Option<f64>),
    /// Each fill's (gained + drawn) / billed, %: (days since the epoch, ratio, vehicle).
    pub points: Vec<(f64, f64, String)>,
    /// The drift the test found, drawn through the fills' mean: ((x0, y0), (x1, y1)).
    pub drift_line: Option<[[f64; 2]; 2]>,
    /// The step the test found: the mean before and after, each over its span of days.
    pub step_lines: Vec<[[f64; 2]; 2]>,
    /// The vehicle whose fills alone carry the fault the test found (taken for its deliveries).
    pub carried_by_vehicle: Option<String>,
    /// The rate of a ten-day leak clear of fills that the loss scan finds at the tank with
    /// probability 95 %, in the chosen mass unit per day ("—" where the record is too short).
    pub leak_seen: String,
}

/// One finding between fills.
#[derive(Debug, Clone, PartialEq)]
pub struct FindingLine {
    /// Tank.
    pub tank: String,
    /// The site's time zone.
    pub zone: units::Zone,
    /// The tank's id.
    pub tank_id: Option<i64>,
    /// What it is.
    pub kind: String,
    /// From, ms.
    pub from_ms: i64,
    /// To, ms.
    pub to_ms: i64,
    /// The sentence.
    pub text: String,
}

/// The audit page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AuditView {
    /// True once a fleet audit is in.
    pub ready: bool,
    /// Every balance of the fleet.
    pub rows: Vec<BalanceRow>,
    /// The rows kept by the filter, in the chosen order (indexes into `rows`).
    pub visible: Vec<usize>,
    /// The filter.
    pub filter: AuditFilter,
    /// The sort column and whether it runs high to low.
    pub sort: (AuditColumn, bool),
    /// A message about the filter (a date that cannot be read).
    pub filter_error: Option<String>,
    /// Names offered by the filter: sites, tanks, carriers, vehicles.
    pub choices: [Vec<String>; 4],
    /// The summary line of the kept rows.
    pub summary: String,
    /// The open balance (index into `rows`).
    pub selected: Option<usize>,
    /// A ticket to open once the audit is in (start-up option).
    pub open_ticket: Option<String>,
    /// The section shown.
    pub section: AuditSection,
    /// Vehicles.
    pub vehicles: Vec<VehicleLine>,
    /// Gauges.
    pub gauges: Vec<GaugeLine>,
    /// The gauge whose fills are plotted (index into `gauges`).
    pub gauge_open: Option<usize>,
    /// A tank whose gauge to plot once the audit is in (start-up option).
    pub open_gauge: Option<String>,
    /// The vehicle whose fills are plotted (index into `vehicles`).
    pub vehicle_open: Option<usize>,
    /// A vehicle whose fills to plot once the audit is in (start-up option).
    pub open_vehicle: Option<String>,
    /// Findings between fills.
    pub findings: Vec<FindingLine>,
    /// True when the user stopped the audit before it finished.
    pub stopped: bool,
}

/// The kinds of file an import takes, in the order they are read.
pub const IMPORT_KINDS: [&str; 3] = ["Tanks", "Readings", "Deliveries"];

/// One file of an import, as it will be read.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ImportFileView {
    /// Which kind (an index into [`IMPORT_KINDS`]).
    pub kind: usize,
    /// Its path.
    pub path: String,
    /// Its header.
    pub header: Vec<String>,
    /// Its first rows, as read.
    pub rows: Vec<Vec<String>>,
    /// Rows in the file (without the header).
    pub row_count: usize,
}

/// The import page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ImportView {
    /// The path of each kind of file (empty: none).
    pub paths: [String; 3],
    /// The files as they will be read (after a check).
    pub files: Vec<ImportFileView>,
    /// Every refused row, "file:line: field: reason", or a file that cannot be read.
    pub errors: Vec<String>,
    /// True when checking stopped at the cap.
    pub truncated: bool,
    /// What an import would add, once every row checks out.
    pub checked: Option<String>,
    /// What the last import wrote.
    pub done: Option<String>,
    /// An import running in the background: bytes read of the files' total.
    pub progress: Option<(u64, u64)>,
}
