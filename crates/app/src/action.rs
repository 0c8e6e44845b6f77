//! User intents and the one place that carries them out: [`Core::handle`] is the only code that writes
//! to the store. After a write it rebuilds exactly the view state that depends on it.

use crate::build;
use crate::fmt::{self, UnitSystem};
use crate::view::*;
use std::sync::Arc;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::{Receiver, TryRecvError};
use store::Store;

/// One user intent, emitted by a panel or a test.
#[derive(Debug, Clone, PartialEq)]
pub enum Action {
    /// Show this tank's page (Fleet navigator click).
    SelectTank(i64),
    /// Filter the fleet navigator by this text.
    SetFleetFilter(String),
    /// Open or close a site in the navigator.
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
    EditSetupForm(SetupForm),
    /// Save the setup form: create the site and tank, or edit them with the form's reason.
    SaveTank,
    /// Dismiss the notice or error line.
    DismissMessage,
    /// Re-read everything from the store (the fleet summary runs in the background).
    Reload,
}

/// The fleet summary running on its background thread.
struct FleetJob {
    done: Arc<AtomicUsize>,
    total: usize,
    rx: Receiver<Result<Vec<(i64, FleetTank)>, String>>,
}

/// The store, the view state built from it, and background work.
pub struct Core {
    /// The open store (written only by [`Core::handle`]).
    pub store: Store,
    /// What the panels draw.
    pub view: ViewState,
    job: Option<FleetJob>,
    /// The first fleet summary waits for the first frame, so a page opened at start-up is built
    /// without competing with it.
    summary_pending: bool,
    /// The database file, when there is one: the fleet summary then reads through its own connection
    /// on its thread, so the window never waits for a large fleet.
    db_path: Option<std::path::PathBuf>,
}

impl Core {
    /// A core on an open store; the fleet summary starts in the background on the first frame (or
    /// [`Core::wait_for_background`]). With `db_path` (the store's file) the summary also reads on its
    /// own thread.
    pub fn new(store: Store, units: UnitSystem, db_path: Option<std::path::PathBuf>) -> Self {
        let mut core = Self {
            store,
            view: ViewState {
                units,
                ..Default::default()
            },
            job: None,
            summary_pending: true,
            db_path: db_path.filter(|p| p.is_file()),
        };
        core.view.cautions = build::cautions().to_vec();
        core.view.reading_form = build::new_reading_form(None, units);
        core.view.delivery_form = build::new_delivery_form(units);
        core
    }

    /// Start (or restart) the fleet summary on a named background thread.
    pub fn start_fleet_summary(&mut self) {
        self.summary_pending = false;
        let now = fmt::now_ms();
        // Read here only when the thread cannot open the database itself (in memory).
        let inputs = match &self.db_path {
            Some(_) => None,
            None => match build::fleet_inputs(&self.store, now) {
                Ok(i) => Some(i),
                Err(e) => {
                    self.view.error = Some(e.to_string());
                    return;
                }
            },
        };
        let total = match &inputs {
            Some(i) => i.len(),
            None => self.store.tanks().map(|t| t.len()).unwrap_or(0),
        };
        let path = self.db_path.clone();
        let done = Arc::new(AtomicUsize::new(0));
        let (tx, rx) = std::sync::mpsc::channel();
        let counter = Arc::clone(&done);
        let spawned = std::thread::Builder::new()
            .name("fleet-summary".into())
            .spawn(move || {
                let inputs = match (inputs, path) {
                    (Some(i), _) => i,
                    (None, Some(p)) => {
                        match Store::open(&p).and_then(|s| build::fleet_inputs(&s, now)) {
                            Ok(i) => i,
                            Err(e) => {
                                let _ = tx.send(Err(e.to_string()));
                                return;
                            }
                        }
                    }
                    (None, None) => Vec::new(),
                };
                let out: Vec<(i64, FleetTank)> = inputs
                    .iter()
                    .map(|i| {
                        let t = build::fleet_tank(i, now);
                        counter.fetch_add(1, Ordering::Relaxed);
                        (i.tank.site_id, t)
                    })
                    .collect();
                // The receiver may be gone when a newer summary replaced this one.
                let _ = tx.send(Ok(out));
            });
        match spawned {
            Ok(_) => {
                self.view.fleet.progress = Some((0, total));
                self.view.fleet.as_of_ms = now;
                self.job = Some(FleetJob { done, total, rx });
            }
            Err(e) => self.view.error = Some(format!("cannot start the fleet summary: {e}")),
        }
    }

    /// Take the fleet summary's result when it is ready; true while it still runs.
    pub fn poll_background(&mut self) -> bool {
        if std::mem::take(&mut self.summary_pending) {
            self.start_fleet_summary();
        }
        let Some(job) = &self.job else {
            return false;
        };
        match job.rx.try_recv() {
            Ok(result) => {
                self.job = None;
                self.install_fleet(result);
                false
            }
            Err(TryRecvError::Empty) => {
                self.view.fleet.progress = Some((job.done.load(Ordering::Relaxed), job.total));
                true
            }
            Err(TryRecvError::Disconnected) => {
                self.job = None;
                self.view.fleet.progress = None;
                self.view.error = Some("the fleet summary stopped unexpectedly".into());
                false
            }
        }
    }

    /// Block until the background fleet summary has finished (tests, benchmarks, first frame).
    pub fn wait_for_background(&mut self) {
        if std::mem::take(&mut self.summary_pending) {
            self.start_fleet_summary();
        }
        if let Some(job) = self.job.take() {
            match job.rx.recv() {
                Ok(result) => self.install_fleet(result),
                Err(_) => self.view.error = Some("the fleet summary stopped unexpectedly".into()),
            }
        }
    }

    fn install_fleet(&mut self, result: Result<Vec<(i64, FleetTank)>, String>) {
        self.view.fleet.progress = None;
        let tanks = match result {
            Ok(t) => t,
            Err(e) => {
                self.view.error = Some(format!("fleet summary: {e}"));
                return;
            }
        };
        match build::fleet_sites(&self.store, tanks) {
            Ok(sites) => {
                self.view.fleet.sites = sites;
                build::fleet_rows(&mut self.view.fleet);
            }
            Err(e) => self.view.error = Some(e.to_string()),
        }
    }

    /// Re-evaluate one tank's navigator line (after a reading or delivery of it changed).
    fn refresh_fleet_tank(&mut self, id: i64) {
        let now = fmt::now_ms();
        let Ok(inputs) = build::fleet_input(&self.store, id, now) else {
            return;
        };
        let line = build::fleet_tank(&inputs, now);
        for site in &mut self.view.fleet.sites {
            for t in &mut site.tanks {
                if t.id == id {
                    *t = line.clone();
                }
            }
        }
        build::fleet_rows(&mut self.view.fleet);
    }

    fn selected(&self) -> Option<i64> {
        self.view.tank.as_ref().map(|t| t.id)
    }

    fn store_tank(&self) -> Option<store::Tank> {
        self.selected().and_then(|id| self.store.tank(id).ok())
    }

    /// Rebuild the selected tank's page from the store.
    fn rebuild_tank(&mut self, id: i64) {
        let q = self
            .view
            .tank
            .as_ref()
            .map(|t| t.trend.quantity)
            .unwrap_or_default();
        match build::tank_view(&self.store, id, self.view.units, q) {
            Ok(mut tv) => {
                if let Some(old) = &self.view.tank
                    && old.id == id
                {
                    tv.history = old.history.clone();
                    tv.trend.period_days = old.trend.period_days;
                }
                self.view.tank = Some(tv);
            }
            Err(e) => self.view.error = Some(e.to_string()),
        }
    }

    fn recheck_reading(&mut self) {
        if let Some(t) = self.store_tank() {
            let (check, _) = build::check_reading(&self.view.reading_form, &t, self.view.units);
            self.view.reading_check = check;
        }
    }

    fn recheck_delivery(&mut self) {
        if let Some(t) = self.store_tank() {
            let (check, _) = build::check_delivery(&self.view.delivery_form, &t);
            self.view.delivery_check = check;
        }
    }

    fn recheck_setup(&mut self) {
        let (check, preview, _) = build::check_setup(&self.view.setup_form, self.view.units);
        self.view.setup_check = check;
        self.view.setup_preview = preview;
    }

    fn load_history(&mut self, table: &str, id: Option<i64>) {
        let rows = match id {
            Some(id) => build::history(&self.store, table, id).unwrap_or_default(),
            None => Vec::new(),
        };
        if let Some(t) = &mut self.view.tank {
            t.history = rows;
        }
    }

    fn fail(&mut self, e: impl std::fmt::Display) {
        self.view.notice = None;
        self.view.error = Some(e.to_string());
    }

    fn saved(&mut self, what: String) {
        self.view.error = None;
        self.view.notice = Some(what);
    }

    /// Carry out one action against the store and rebuild the affected view state.
    pub fn handle(&mut self, action: Action) {
        match action {
            Action::SelectTank(id) => {
                self.view.page = Page::Tank;
                self.rebuild_tank(id);
                let t = self.store_tank();
                self.view.reading_form = build::new_reading_form(t.as_ref(), self.view.units);
                self.view.delivery_form = build::new_delivery_form(self.view.units);
                self.view.reading_check = FormCheck::default();
                self.view.delivery_check = FormCheck::default();
                self.view.notice = None;
                self.view.error = None;
                self.load_history("readings", None);
            }
            Action::SetFleetFilter(text) => {
                self.view.fleet.filter = text;
                build::fleet_rows(&mut self.view.fleet);
            }
            Action::ToggleSite(id) => {
                if !self.view.fleet.closed.remove(&id) {
                    self.view.fleet.closed.insert(id);
                }
                build::fleet_rows(&mut self.view.fleet);
            }
            Action::ShowTab(tab) => {
                self.view.page = Page::Tank;
                self.view.tab = tab;
            }
            Action::ShowTankPage => self.view.page = Page::Tank,
            Action::ShowHelp => self.view.page = Page::Help,
            Action::OpenSetup(id) => {
                self.view.page = Page::Setup;
                self.view.setup_form = match id {
                    Some(id) => match build::setup_form_for(&self.store, id) {
                        Ok(f) => f,
                        Err(e) => return self.fail(e),
                    },
                    None => build::new_setup_form(
                        self.view
                            .tank
                            .as_ref()
                            .map(|t| t.site.as_str())
                            .unwrap_or(""),
                    ),
                };
                self.recheck_setup();
            }
            Action::SetUnits(units) => {
                self.view.units = units;
                if let Some(t) = &mut self.view.tank {
                    let period = t.trend.period_days;
                    t.trend = build::trend(t, units, t.trend.quantity);
                    t.trend.period_days = period;
                }
                self.recheck_reading();
                self.recheck_setup();
            }
            Action::EditReadingForm(form) => {
                self.view.reading_form = form;
                self.recheck_reading();
            }
            Action::SaveReading => self.save_reading(),
            Action::SelectReading(id) => {
                let units = self.view.units;
                self.view.reading_form = match id {
                    Some(id) => match build::reading_form_for(&self.store, id) {
                        Ok(f) => f,
                        Err(e) => return self.fail(e),
                    },
                    None => build::new_reading_form(self.store_tank().as_ref(), units),
                };
                self.view.reading_check = FormCheck::default();
                if id.is_some() {
                    self.recheck_reading();
                }
                self.load_history("readings", id);
            }
            Action::DeleteReading => {
                let f = &self.view.reading_form;
                let (Some(id), reason) = (f.editing, f.reason.trim().to_owned()) else {
                    return;
                };
                if reason.is_empty() {
                    return self.fail("say why the reading is deleted (kept in its history)");
                }
                match self.store.delete_reading(id, &reason) {
                    Ok(()) => {
                        self.after_reading_change(None);
                        self.saved("Reading deleted; its values stay in the history.".into());
                    }
                    Err(e) => self.fail(e),
                }
            }
            Action::EditDeliveryForm(form) => {
                self.view.delivery_form = form;
                self.recheck_delivery();
            }
            Action::SaveDelivery => self.save_delivery(),
            Action::SelectDelivery(id) => {
                self.view.delivery_form = match id {
                    Some(id) => match build::delivery_form_for(&self.store, id) {
                        Ok(f) => f,
                        Err(e) => return self.fail(e),
                    },
                    None => build::new_delivery_form(self.view.units),
                };
                self.view.delivery_check = FormCheck::default();
                if id.is_some() {
                    self.recheck_delivery();
                }
                self.load_history("deliveries", id);
            }
            Action::DeleteDelivery => {
                let f = &self.view.delivery_form;
                let (Some(id), reason) = (f.editing, f.reason.trim().to_owned()) else {
                    return;
                };
                if reason.is_empty() {
                    return self.fail("say why the delivery is deleted (kept in its history)");
                }
                match self.store.delete_delivery(id, &reason) {
                    Ok(()) => {
                        self.after_delivery_change(None);
                        self.saved("Delivery deleted; its values stay in the history.".into());
                    }
                    Err(e) => self.fail(e),
                }
            }
            Action::SetTrendQuantity(q) => {
                let units = self.view.units;
                if let Some(t) = &mut self.view.tank {
                    let period = t.trend.period_days;
                    t.trend = build::trend(t, units, q);
                    t.trend.period_days = period;
                }
            }
            Action::SetTrendPeriod(days) => {
                if let Some(t) = &mut self.view.tank {
                    t.trend.period_days = days;
                }
            }
            Action::EditSetupForm(form) => {
                self.view.setup_form = form;
                self.recheck_setup();
            }
            Action::SaveTank => self.save_tank(),
            Action::DismissMessage => {
                self.view.notice = None;
                self.view.error = None;
            }
            Action::Reload => {
                self.start_fleet_summary();
                if let Some(id) = self.selected() {
                    self.rebuild_tank(id);
                }
            }
        }
    }

    fn after_reading_change(&mut self, keep: Option<i64>) {
        if let Some(id) = self.selected() {
            self.rebuild_tank(id);
            self.refresh_fleet_tank(id);
        }
        let t = self.store_tank();
        self.view.reading_form = match keep {
            Some(rid) => build::reading_form_for(&self.store, rid)
                .unwrap_or_else(|_| build::new_reading_form(t.as_ref(), self.view.units)),
            None => build::new_reading_form(t.as_ref(), self.view.units),
        };
        self.view.reading_check = FormCheck::default();
        self.load_history("readings", keep);
    }

    fn after_delivery_change(&mut self, keep: Option<i64>) {
        if let Some(id) = self.selected() {
            self.rebuild_tank(id);
            self.refresh_fleet_tank(id);
        }
        self.view.delivery_form = match keep {
            Some(did) => build::delivery_form_for(&self.store, did)
                .unwrap_or_else(|_| build::new_delivery_form(self.view.units)),
            None => build::new_delivery_form(self.view.units),
        };
        self.view.delivery_check = FormCheck::default();
        self.load_history("deliveries", keep);
    }

    fn save_reading(&mut self) {
        let Some(t) = self.store_tank() else {
            return self.fail("select a tank first");
        };
        let (check, input) = build::check_reading(&self.view.reading_form, &t, self.view.units);
        self.view.reading_check = check;
        let Some(input) = input else {
            return;
        };
        let form = &self.view.reading_form;
        let result = match form.editing {
            Some(id) => {
                let reason = form.reason.trim().to_owned();
                self.store
                    .edit_reading(id, &input, &reason)
                    .map(|()| (Some(id), format!("Reading of {} changed.", input.time.text)))
            }
            None => self
                .store
                .add_reading(t.id, &input)
                .map(|_| (None, format!("Reading of {} saved.", input.time.text))),
        };
        match result {
            Ok((keep, msg)) => {
                self.after_reading_change(keep);
                self.saved(msg);
            }
            Err(e) => self.fail(e),
        }
    }

    fn save_delivery(&mut self) {
        let Some(t) = self.store_tank() else {
            return self.fail("select a tank first");
        };
        let (check, input) = build::check_delivery(&self.view.delivery_form, &t);
        self.view.delivery_check = check;
        let Some(input) = input else {
            return;
        };
        let form = &self.view.delivery_form;
        let result = match form.editing {
            Some(id) => {
                let reason = form.reason.trim().to_owned();
                self.store
                    .edit_delivery(id, &input, &reason)
                    .map(|()| (Some(id), format!("Delivery {} changed.", input.ticket)))
            }
            None => self
                .store
                .add_delivery(t.id, &input)
                .map(|_| (None, format!("Delivery {} saved.", input.ticket))),
        };
        match result {
            Ok((keep, msg)) => {
                self.after_delivery_change(keep);
                self.saved(msg);
            }
            Err(e) => self.fail(e),
        }
    }

    fn save_tank(&mut self) {
        let (check, preview, out) = build::check_setup(&self.view.setup_form, self.view.units);
        self.view.setup_check = check;
        self.view.setup_preview = preview;
        let Some((spec, site)) = out else {
            return;
        };
        let reason = self.view.setup_form.reason.trim().to_owned();
        let existing = self
            .store
            .sites()
            .ok()
            .and_then(|s| s.into_iter().find(|s| s.name == spec.site));
        let site_result = match existing {
            None => self
                .store
                .add_site(&spec.site, site.elevation_m, site.barometer_kpa)
                .map(|_| ()),
            Some(s)
                if s.elevation_m != site.elevation_m || s.barometer_kpa != site.barometer_kpa =>
            {
                let why = if reason.is_empty() {
                    "site settings entered in Tank setup".to_owned()
                } else {
                    reason.clone()
                };
                self.store
                    .edit_site(s.id, site.elevation_m, site.barometer_kpa, &why)
            }
            Some(_) => Ok(()),
        };
        if let Err(e) = site_result {
            return self.fail(e);
        }
        let result = match self.view.setup_form.editing {
            Some(id) => self.store.edit_tank(id, &spec, &reason).map(|()| id),
            None => self.store.add_tank(&spec),
        };
        match result {
            Ok(id) => {
                let known = self
                    .view
                    .fleet
                    .sites
                    .iter()
                    .any(|s| s.name == spec.site && s.tanks.iter().any(|t| t.id == id));
                if known {
                    // Same site, same tank: only its line changes.
                    self.refresh_fleet_tank(id);
                } else {
                    // A new tank or site: the navigator's grouping changes; small fleets are quick.
                    self.start_fleet_summary();
                    self.wait_for_background();
                }
                self.handle(Action::SelectTank(id));
                self.view.page = Page::Setup;
                self.view.setup_form = build::setup_form_for(&self.store, id)
                    .unwrap_or_else(|_| self.view.setup_form.clone());
                self.recheck_setup();
                self.saved(format!("Tank {} saved.", spec.name));
            }
            Err(e) => self.fail(e),
        }
    }
}
