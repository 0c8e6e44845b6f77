//! What a panel or a test can ask of the app.

use crate::fmt::UnitSystem;
use crate::view::*;

/// One user intent, emitted by a panel or a test.
#[derive(Debug, Clone, PartialEq)]
pub enum Action {
    /// Show this tank's page (Fleet list click).
    SelectTank(i64),
    /// Filter the Fleet list by this text.
    SetFleetFilter(String),
    /// Open or close a site in the Fleet list.
    ToggleSite(i64),
    /// Show a tab of the tank page.
    ShowTab(TankTab),
    /// Show the tank page again (from setup or help).
    ShowTankPage,
    /// Open Tank setup on a stored tank, or on a new one (None).
    OpenSetup(Option<i64>),
    /// Open the help and cautions page.
    ShowHelp,
    /// Read and show figures in SI or US customary units (remembered between sessions).
    SetUnits(UnitSystem),
    /// The reading form's text changed (every keystroke; the check and preview follow).
    EditReadingForm(ReadingForm),
    /// Save the reading form: a new reading, or the edit of the selected one with its reason.
    SaveReading,
    /// Load a stored reading into the form for editing (None: a new reading).
    SelectReading(Option<i64>),
    /// Delete the reading in the form, with the form's reason (kept in its history).
    DeleteReading,
    /// The delivery form's text changed.
    EditDeliveryForm(DeliveryForm),
    /// Save the delivery form: new, or the edit of the selected one with its reason.
    SaveDelivery,
    /// Load a stored delivery into the form (None: a new delivery).
    SelectDelivery(Option<i64>),
    /// Delete the delivery in the form, with the form's reason.
    DeleteDelivery,
    /// Plot this quantity on the trend.
    SetTrendQuantity(TrendQuantity),
    /// Show this many days back from the latest reading on the trend (None: all of it).
    SetTrendPeriod(Option<u32>),
    /// The setup form's text changed (the vessel drawing and full-tank DP follow).
    EditSetupForm(Box<SetupForm>),
    /// Save the setup form: create the site and tank, or edit them with the form's reason.
    SaveTank,
    /// Dismiss the notice or error line.
    DismissMessage,
    /// Re-read everything from the store (the fleet summary runs in the background).
    Reload,
    /// Check the ledger's history (its hash chain) again, in the background with the fleet summary.
    VerifyHistory,
    /// Open the audit page.
    ShowAudit,
    /// Open the import page.
    ShowImport,
    /// The path of one kind of import file changed (an index into `IMPORT_KINDS`).
    SetImportPath(usize, String),
    /// Pick one kind of import file with the desktop's file dialog.
    ChooseImportFile(usize),
    /// Check the chosen files and preview them, writing nothing.
    CheckImport,
    /// Import the chosen files, all or nothing; the audit follows.
    RunImport,
    /// Show a section of the audit page.
    ShowAuditSection(AuditSection),
    /// Keep the audit page's fills the filter names.
    SetAuditFilter(AuditFilter),
    /// Order the fills by a column (again: the other way).
    SortAudit(AuditColumn),
    /// Open a balance's detail (an index into the audit page's rows; None: close it).
    SelectBalance(Option<usize>),
    /// Plot a gauge's fills on the audit page (an index into its gauges; None: close).
    SelectGauge(Option<usize>),
    /// Plot a vehicle's tank-adjusted fills on the audit page (an index into its vehicles; None:
    /// close).
    SelectVehicle(Option<usize>),
    /// Show or hide the frame and page-build timings in the status bar.
    SetDiagnostics(bool),
    /// Stop the audit running in the background.
    StopAudit,
    /// Run the fleet audit again.
    RunAudit,
    /// Open a tank's readings from the audit page, with the reading taken at this instant in the form.
    OpenReading {
        /// The tank.
        tank: i64,
        /// When the reading was taken, ms.
        time_ms: i64,
    },
    /// Save a report (the same document as `cryoledger report`); the desktop's save dialog asks
    /// where unless `to` names the file.
    SaveReport {
        /// Which report.
        what: ReportRequest,
        /// The file to write (None: ask with the save dialog).
        to: Option<std::path::PathBuf>,
    },
    /// Open a tank's deliveries from the audit page, with this ticket's delivery in the form.
    OpenFill {
        /// The tank.
        tank: i64,
        /// The ticket.
        ticket: String,
    },
}

/// Which report to save.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ReportRequest {
    /// One fill, by ticket.
    Fill(String),
    /// One vehicle, by name (all its fills).
    Vehicle(String),
    /// A tank's stock statement by month over the twelve months before this one and this month so
    /// far (HTML, or CSV when the file's name ends in .csv).
    Statement(i64),
}
