//! The cryoledger desktop app (eframe/egui), as a library so tests can drive it.
//!
//! Data flows one way: the store and the bridge to the engines (`evaluate`) feed [`view::ViewState`]
//! (built in [`build`]); panels draw from it and emit [`action::Action`]s; [`CryoApp`] drains the
//! actions in `logic`, where [`action::Core::handle`] is the only code that can write to the store (it
//! keeps it private) and rebuilds what changed, one [`flow::Flow`] per record kind. The fleet summary —
//! the fleet audit the command line gives, every tank's latest contents and open findings, and the
//! check of the ledger's history — runs on a named background thread. Contents follow the liquid's
//! thermal history from the audit engine.
//!
//! Start-up options for screenshots and demos: `CRYOLEDGER_OPEN` opens a page
//! (`tank:NAME[:now|readings|deliveries|trend]`, `audit[:fills|vehicles|gauges|findings]`,
//! `audit:ticket:T` (that fill's balance open), `audit:gauges:TANK` (its fills plotted),
//! `audit:vehicles:VEHICLE` (its tank-adjusted fills plotted), `import`, `import:check:DIR` (DIR's
//! tanks.csv, readings.csv and deliveries.csv checked), `tank:NAME:readings:latest` to open the latest
//! reading for editing, `setup:NAME`, `setup:new`, `help`), and
//! `CRYOLEDGER_UNITS` (`si` or `us`) sets the display units for this session.
#![deny(missing_docs)]

pub mod action;
pub mod build;
pub mod flow;
pub mod fmt;
pub mod panels;
pub mod style;
pub mod view;

use action::{Action, Core};
use fmt::UnitSystem;
use serde::{Deserialize, Serialize};
use std::time::Instant;
use view::{AuditSection, Page, TankTab, ViewState};

/// Why something the window asked for failed.
#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// The ledger refused or failed.
    #[error(transparent)]
    Store(#[from] store::StoreError),
    /// Stored records could not be evaluated.
    #[error(transparent)]
    Eval(#[from] evaluate::EvalError),
    /// A request that cannot be carried out now (e.g. saving with no tank selected).
    #[error("{0}")]
    Refused(String),
    /// The background fleet summary ended without a result.
    #[error("the fleet summary stopped unexpectedly")]
    BackgroundStopped,
}

impl From<&str> for AppError {
    fn from(s: &str) -> Self {
        AppError::Refused(s.to_owned())
    }
}

impl From<String> for AppError {
    fn from(s: String) -> Self {
        AppError::Refused(s)
    }
}

/// An error with its causes, each once, as one line for the window.
pub fn describe(e: &(dyn std::error::Error + 'static)) -> String {
    let mut text = e.to_string();
    let mut source = e.source();
    while let Some(s) = source {
        let part = s.to_string();
        if !text.ends_with(&part) {
            text.push_str(": ");
            text.push_str(&part);
        }
        source = s.source();
    }
    text
}

/// What is remembered between sessions (eframe storage).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Settings {
    /// Display units.
    pub units: UnitSystem,
}

const SETTINGS_KEY: &str = "cryoledger-settings";

/// The application: the core (store, view state, background work) and the queue of user intents.
pub struct CryoApp {
    core: Core,
    location: store::Location,
    actions: Vec<Action>,
    frame_ms: f64,
    last_frame_ms: f64,
    styled: bool,
    select_first_when_ready: bool,
}

impl CryoApp {
    /// An app on an open ledger (at `location`: a file, a server, or a name such as `:memory:`), with
    /// default settings.
    pub fn new(
        store: impl store::Repository + Send + 'static,
        location: impl Into<store::Location>,
    ) -> Self {
        Self::with_settings(Box::new(store), location.into(), Settings::default())
    }

    /// An app on an open ledger with remembered settings.
    pub fn with_settings(
        store: Box<dyn store::Repository + Send>,
        location: store::Location,
        settings: Settings,
    ) -> Self {
        let mut core = Core::new(store, settings.units, Some(location.clone()));
        core.view.ledger = match &location {
            store::Location::Server(_) => format!("Shared ledger {location}"),
            store::Location::File(_) => format!("Ledger {}", location.name()),
        };
        Self {
            core,
            location,
            actions: Vec::new(),
            frame_ms: 0.0,
            last_frame_ms: 0.0,
            styled: false,
            select_first_when_ready: false,
        }
    }

    /// What the panels draw.
    pub fn view(&self) -> &ViewState {
        &self.core.view
    }

    /// The fleet audit behind the fleet list and the open findings (None until the fleet summary is
    /// in).
    pub fn fleet_audit(&self) -> Option<&audit::FleetAudit> {
        self.core.fleet_audit()
    }

    /// The open ledger, to read (tests); writes go through actions.
    pub fn repository(&self) -> &dyn store::Repository {
        self.core.repository()
    }

    /// Queue a user intent (panels and tests).
    pub fn push(&mut self, action: Action) {
        self.actions.push(action);
    }

    /// Handle every queued action and rebuild what changed.
    pub fn drain_actions(&mut self) {
        for a in std::mem::take(&mut self.actions) {
            self.core.handle(a);
        }
    }

    /// Block until background work has finished (tests and benchmarks).
    pub fn wait_for_background(&mut self) {
        self.core.wait_for_background();
    }

    /// The ledger this app shows.
    pub fn location(&self) -> &store::Location {
        &self.location
    }

    /// The settings to remember.
    pub fn settings(&self) -> Settings {
        Settings {
            units: self.core.view.units,
        }
    }

    /// Open a page by a start-up spec (see the crate docs); unknown names show an error line.
    pub fn open_on(&mut self, spec: &str) {
        let mut parts = spec.splitn(4, ':');
        let kind = parts.next().unwrap_or("");
        let name = parts.next().unwrap_or("");
        let tab = parts.next().unwrap_or("now");
        let edit_latest = parts.next() == Some("latest");
        let lookup =
            |core: &Core, name: &str| core.repository().tank_by_name(name).ok().map(|t| t.id.0);
        match kind {
            "help" => self.push(Action::ShowHelp),
            "import" => {
                self.push(Action::ShowImport);
                if name == "check" && !tab.is_empty() {
                    let dir = std::path::Path::new(tab);
                    for (k, file) in ["tanks.csv", "readings.csv", "deliveries.csv"]
                        .iter()
                        .enumerate()
                    {
                        let p = dir.join(file);
                        if p.is_file() {
                            self.push(Action::SetImportPath(k, p.display().to_string()));
                        }
                    }
                    self.push(Action::CheckImport);
                }
            }
            "audit" => {
                let section = AuditSection::ALL
                    .into_iter()
                    .find(|s| s.title().eq_ignore_ascii_case(name));
                match (section, name) {
                    (Some(AuditSection::Gauges), _) if !tab.is_empty() && tab != "now" => {
                        self.push(Action::ShowAuditSection(AuditSection::Gauges));
                        self.core.view.audit.open_gauge = Some(tab.to_owned());
                    }
                    (Some(AuditSection::Vehicles), _) if !tab.is_empty() && tab != "now" => {
                        self.push(Action::ShowAuditSection(AuditSection::Vehicles));
                        self.core.view.audit.open_vehicle = Some(tab.to_owned());
                    }
                    (Some(s), _) => self.push(Action::ShowAuditSection(s)),
                    (None, "ticket") => {
                        self.push(Action::ShowAudit);
                        self.core.view.audit.open_ticket = Some(tab.to_owned());
                    }
                    _ => self.push(Action::ShowAudit),
                }
            }
            "setup" if name == "new" || name.is_empty() => self.push(Action::OpenSetup(None)),
            "setup" | "tank" => match lookup(&self.core, name) {
                Some(id) => {
                    self.push(Action::SelectTank(id));
                    if kind == "setup" {
                        self.push(Action::OpenSetup(Some(id)));
                    } else {
                        let t = TankTab::ALL
                            .into_iter()
                            .find(|t| t.title().eq_ignore_ascii_case(tab))
                            .unwrap_or_default();
                        self.push(Action::ShowTab(t));
                        if edit_latest {
                            let latest = self
                                .core
                                .repository()
                                .latest_reading(store::TankId(id))
                                .ok()
                                .flatten()
                                .map(|r| r.id.0);
                            self.push(Action::SelectReading(latest));
                        }
                    }
                }
                None => self.core.view.error = Some(format!("no tank named '{name}'")),
            },
            _ => self.core.view.error = Some(format!("unknown page '{spec}'")),
        }
        self.drain_actions();
    }

    /// Select the first tank of the fleet (a first start shows something alive at once).
    pub fn select_first_tank(&mut self) {
        let first = self
            .core
            .view
            .fleet
            .sites
            .iter()
            .flat_map(|s| s.tanks.first())
            .next()
            .map(|t| t.id);
        if let Some(id) = first {
            self.push(Action::SelectTank(id));
            self.drain_actions();
        }
    }

    fn draw(&mut self, ui: &mut egui::Ui) {
        let view = &self.core.view;
        let mut out = Vec::new();
        egui::Panel::top("top_bar").show(ui, |ui| panels::top::top_ui(ui, view, &mut out));
        egui::Panel::bottom("status_bar").show(ui, |ui| panels::top::status_ui(ui, view, &mut out));
        egui::Panel::left("fleet")
            .resizable(true)
            .default_size(330.0)
            .min_size(240.0)
            .show(ui, |ui| panels::fleet::fleet_ui(ui, view, &mut out));
        egui::CentralPanel::default().show(ui, |ui| match view.page {
            Page::Tank => panels::tank_page::tank_page_ui(ui, view, &mut out),
            Page::Setup => panels::setup::setup_ui(ui, view, &mut out),
            Page::Help => panels::help::help_ui(ui, view, &mut out),
            Page::Audit => panels::audit::audit_ui(ui, view, &mut out),
            Page::Import => panels::import::import_ui(ui, view, &mut out),
        });
        self.actions.extend(out);
    }
}

impl eframe::App for CryoApp {
    fn logic(&mut self, ctx: &egui::Context, _frame: &mut eframe::Frame) {
        let started = Instant::now();
        if !self.styled {
            style::apply(ctx);
            self.styled = true;
        }
        self.drain_actions();
        if self.core.poll_background() {
            ctx.request_repaint_after(std::time::Duration::from_millis(50));
        } else if self.select_first_when_ready {
            self.select_first_when_ready = false;
            self.select_first_tank();
        }
        self.frame_ms += started.elapsed().as_secs_f64() * 1e3;
    }

    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        let started = Instant::now();
        self.draw(ui);
        // `frame_ms` holds this frame's logic time; fold it and the ui time into a running mean.
        let this = self.frame_ms + started.elapsed().as_secs_f64() * 1e3;
        self.last_frame_ms = this;
        let mean = self.core.view.frame_ms;
        self.core.view.frame_ms = if mean == 0.0 {
            this
        } else {
            0.9 * mean + 0.1 * this
        };
        self.frame_ms = 0.0;
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        eframe::set_value(storage, SETTINGS_KEY, &self.settings());
    }
}

impl CryoApp {
    /// CPU time of the last frame (logic + ui), ms.
    pub fn last_frame_ms(&self) -> f64 {
        self.last_frame_ms
    }

    /// Mean CPU time per frame (logic + ui) as shown in the status bar, ms.
    pub fn mean_frame_ms(&self) -> f64 {
        self.core.view.frame_ms
    }
}

/// Open the window on the ledger at `location`.
pub fn run_native(
    store: Box<dyn store::Repository + Send>,
    location: store::Location,
) -> eframe::Result {
    let title = format!("cryoledger — {location}");
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_title(title)
            .with_inner_size([1360.0, 860.0])
            .with_min_inner_size([900.0, 600.0]),
        ..Default::default()
    };
    eframe::run_native(
        "cryoledger",
        options,
        Box::new(|cc| {
            let mut settings: Settings = cc
                .storage
                .and_then(|s| eframe::get_value(s, SETTINGS_KEY))
                .unwrap_or_default();
            match std::env::var("CRYOLEDGER_UNITS").as_deref() {
                Ok("us") => settings.units = UnitSystem::Us,
                Ok("si") => settings.units = UnitSystem::Si,
                _ => {}
            }
            style::apply(&cc.egui_ctx);
            let mut app = CryoApp::with_settings(store, location, settings);
            match std::env::var("CRYOLEDGER_OPEN") {
                Ok(spec) if !spec.is_empty() => app.open_on(&spec),
                // A first start shows a living tank as soon as the fleet summary is in.
                _ => app.select_first_when_ready = true,
            }
            Ok(Box::new(app))
        }),
    )
}

pub use eframe::egui;
