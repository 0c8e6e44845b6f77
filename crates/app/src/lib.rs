//! The cryoledger desktop app (eframe/egui), as a library so tests can drive it.
//!
//! Data flows one way: the store and the engines feed [`view::ViewState`]; panels draw from it and emit
//! [`action::Action`]s; [`CryoApp`] drains the actions in `logic` (the only place that writes to the
//! store) and rebuilds the view state that changed.
#![deny(missing_docs)]

pub mod action;
pub mod panels;
pub mod view;

use action::Action;
use std::path::PathBuf;
use store::Store;
use view::ViewState;

/// The application: the open store, what the panels draw, and the queue of user intents.
pub struct CryoApp {
    store: Store,
    db_path: PathBuf,
    /// What the panels draw.
    pub view: ViewState,
    actions: Vec<Action>,
}

impl CryoApp {
    /// An app on an open store.
    pub fn new(store: Store, db_path: PathBuf) -> Self {
        let mut app = Self {
            store,
            db_path,
            view: ViewState::default(),
            actions: Vec::new(),
        };
        app.view.rebuild_fleet(&app.store);
        app
    }

    /// Queue a user intent (panels and tests).
    pub fn push(&mut self, action: Action) {
        self.actions.push(action);
    }

    /// Handle every queued action and rebuild what changed.
    pub fn drain_actions(&mut self) {
        for a in std::mem::take(&mut self.actions) {
            action::handle(a, &mut self.store, &mut self.view);
        }
    }

    /// The database this app shows.
    pub fn db_path(&self) -> &std::path::Path {
        &self.db_path
    }
}

impl eframe::App for CryoApp {
    fn logic(&mut self, _ctx: &egui::Context, _frame: &mut eframe::Frame) {
        self.drain_actions();
    }

    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        let mut out = Vec::new();
        egui::Panel::left("fleet")
            .resizable(true)
            .default_size(280.0)
            .show(ui, |ui| panels::fleet::fleet_ui(ui, &self.view, &mut out));
        egui::CentralPanel::default()
            .show(ui, |ui| panels::tank::tank_ui(ui, &self.view, &mut out));
        self.actions.extend(out);
    }
}

/// Open the window on the database at `db_path`.
pub fn run_native(store: Store, db_path: PathBuf) -> eframe::Result {
    let title = format!("cryoledger — {}", db_path.display());
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_title(title)
            .with_inner_size([1280.0, 800.0]),
        ..Default::default()
    };
    eframe::run_native(
        "cryoledger",
        options,
        Box::new(|_cc| Ok(Box::new(CryoApp::new(store, db_path)))),
    )
}

pub use eframe::egui;
