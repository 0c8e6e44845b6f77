//! User intents and the one place that carries them out: [`Core::handle`] is the only code that writes
//! to the store. After a write it rebuilds exactly the view state that depends on it.

use crate::build::{self, FleetSummary};
use crate::flow::{self, DeliveryFlow, Flow, ReadingFlow};
use crate::fmt::{self, UnitSystem};
use crate::view::*;
use crate::{AppError, describe};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc::{Receiver, TryRecvError};
use store::{Repository, TankId};

mod import;
mod intent;
mod report;
use import::ImportJob;
pub use intent::{Action, ReportRequest};

/// The fleet summary running on its background thread.
struct FleetJob {
    done: Arc<AtomicUsize>,
    total: Arc<AtomicUsize>,
    cancel: Arc<AtomicBool>,
    rx: Receiver<Result<FleetSummary, AppError>>,
}

/// The store, the view state built from it, and background work.
pub struct Core {
    /// The open ledger: private, so that [`Core::handle`] is the only code that can write to it.
    store: Box<dyn Repository + Send>,
    /// The latest fleet audit (the fleet list and the tank page's open findings come from it).
    fleet_audit: Option<Arc<audit::FleetAudit>>,
    /// What the panels draw.
    pub view: ViewState,
    job: Option<FleetJob>,
    import_job: Option<ImportJob>,
    /// The first fleet summary waits for the first frame, so a page opened at start-up is built
    /// without competing with it.
    summary_pending: bool,
    /// Where the ledger lives, when another connection can reach it (a file or a server, not memory):
    /// the fleet summary then reads through its own connection on its thread, so the window never
    /// waits for a large fleet.
    location: Option<store::Location>,
}

impl Core {
    /// A core on an open store; the fleet summary starts in the background on the first frame (or
    /// [`Core::wait_for_background`]). With `db_path` (the store's file) the summary also reads on its
    /// own thread.
    pub fn new(
        store: Box<dyn Repository + Send>,
        units: UnitSystem,
        location: Option<store::Location>,
    ) -> Self {
        let mut core = Self {
            store,
            fleet_audit: None,
            view: ViewState {
                units,
                ..Default::default()
            },
            job: None,
            import_job: None,
            summary_pending: true,
            location: location.filter(|l| l.file().is_none_or(std::path::Path::is_file)),
        };
        core.view.cautions = build::cautions().to_vec();
        core.view.reading_editor.form = build::new_reading_form(None, units);
        core.view.delivery_editor.form = build::new_delivery_form(None, units);
        core
    }

    /// The latest fleet audit, once the fleet summary is in.
    pub fn fleet_audit(&self) -> Option<&audit::FleetAudit> {
        self.fleet_audit.as_deref()
    }

    /// The open store, to read (tests, start-up options); only [`Core::handle`] writes.
    pub fn repository(&self) -> &dyn Repository {
        self.store.as_ref()
    }

    /// Start (or restart) the fleet summary: the bridge's fleet audit and each tank's line, on a named
    /// background thread with its own connection (in memory, where no second connection can see the
    /// data, it runs here).
    pub fn start_fleet_summary(&mut self) {
        self.summary_pending = false;
        if let Some(old) = self.job.take() {
            old.cancel.store(true, Ordering::Relaxed);
        }
        let now = fmt::now_ms();
        let done = Arc::new(AtomicUsize::new(0));
        let total = Arc::new(AtomicUsize::new(0));
        let cancel = Arc::new(AtomicBool::new(false));
        let (tx, rx) = std::sync::mpsc::channel();
        let job = FleetJob {
            done: Arc::clone(&done),
            total: Arc::clone(&total),
            cancel: Arc::clone(&cancel),
            rx,
        };
        let mut progress = move |d: usize, t: usize| {
            done.store(d, Ordering::Relaxed);
            total.store(t, Ordering::Relaxed);
        };
        // the audit page is built on the summary's thread from the page's settings now
        let page = Some((build::audit_settings(&self.view.audit), self.view.units));
        let Some(location) = self.location.clone() else {
            self.view.fleet.as_of_ms = now;
            let result =
                build::fleet_summary(self.store.as_ref(), now, &mut progress, &cancel, None);
            return self.install_fleet(result);
        };
        let spawned = std::thread::Builder::new()
            .name("fleet-summary".into())
            .spawn(move || {
                let result = location.open().map_err(AppError::from).and_then(|s| {
                    build::fleet_summary(s.as_ref(), now, &mut progress, &cancel, page)
                });
                // The receiver may be gone when a newer summary replaced this one.
                let _ = tx.send(result);
            });
        match spawned {
            Ok(_) => {
                self.view.fleet.progress = Some((0, 0));
                self.view.fleet.as_of_ms = now;
                self.job = Some(job);
            }
            Err(e) => self.view.error = Some(format!("cannot start the fleet summary: {e}")),
        }
    }

    /// Take the fleet summary's result when it is ready; true while it still runs.
    pub fn poll_background(&mut self) -> bool {
        if std::mem::take(&mut self.summary_pending) {
            self.start_fleet_summary();
        }
        if let Some(job) = &self.import_job {
            match job.rx.try_recv() {
                Ok(result) => {
                    self.import_job = None;
                    self.view.import.progress = None;
                    self.import_done(result, false);
                }
                Err(TryRecvError::Empty) => {
                    self.view.import.progress = Some((job.read.load(Ordering::Relaxed), job.total));
                    return true;
                }
                Err(TryRecvError::Disconnected) => {
                    self.import_job = None;
                    self.view.import.progress = None;
                    self.view
                        .import
                        .errors
                        .push("the import stopped unexpectedly; nothing was written".into());
                }
            }
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
                self.view.fleet.progress = Some((
                    job.done.load(Ordering::Relaxed),
                    job.total.load(Ordering::Relaxed),
                ));
                true
            }
            Err(TryRecvError::Disconnected) => {
                self.job = None;
                self.view.fleet.progress = None;
                self.fail(AppError::BackgroundStopped);
                false
            }
        }
    }

    /// Block until the background fleet summary has finished (tests, benchmarks, first frame).
    pub fn wait_for_background(&mut self) {
        if let Some(job) = self.import_job.take() {
            self.view.import.progress = None;
            match job.rx.recv() {
                Ok(result) => self.import_done(result, false),
                Err(_) => self
                    .view
                    .import
                    .errors
                    .push("the import stopped unexpectedly; nothing was written".into()),
            }
        }
        if std::mem::take(&mut self.summary_pending) {
            self.start_fleet_summary();
        }
        if let Some(job) = self.job.take() {
            match job.rx.recv() {
                Ok(result) => self.install_fleet(result),
                Err(_) => self.fail(AppError::BackgroundStopped),
            }
        }
    }

    fn install_fleet(&mut self, result: Result<FleetSummary, AppError>) {
        self.view.fleet.progress = None;
        match result {
            Ok(summary) => {
                self.view.history_check = Some(summary.history);
                let old_sites = std::mem::replace(&mut self.view.fleet.sites, summary.sites);
                // the page built on the summary's thread, unless its settings changed meanwhile
                let current = build::audit_settings(&self.view.audit);
                let new_page = match summary.audit_view {
                    Some((v, settings, units))
                        if settings == current && units == self.view.units =>
                    {
                        v
                    }
                    _ => build::audit_view(
                        &summary.audit,
                        &self.view.fleet.sites,
                        audit::AuditOptions::default().materiality_fraction,
                        self.view.units,
                        &self.view.audit,
                    ),
                };
                let old_page = std::mem::replace(&mut self.view.audit, new_page);
                let old_audit = self.fleet_audit.replace(summary.audit);
                // freeing the old fleet's pages takes milliseconds on a large fleet: not in a frame
                let _ = std::thread::Builder::new()
                    .name("free-old-audit".into())
                    .spawn(move || drop((old_sites, old_page, old_audit)));
                build::fleet_rows(&mut self.view.fleet);
                // the open tank page's findings, verdicts and marks come from the fleet audit; its
                // readings need no new evaluation
                if let (Some(tv), Some(fa)) = (self.view.tank.as_mut(), self.fleet_audit.as_deref())
                    && let Err(e) = build::apply_fleet_audit(tv, self.store.as_ref(), fa)
                {
                    self.view.error = Some(e.to_string());
                }
            }
            Err(AppError::Eval(evaluate::EvalError::Cancelled)) => {}
            Err(e) => self.fail(e),
        }
    }

    /// The fleet list and open findings follow a change of one tank's records: the fleet audit runs
    /// again in the background (its statistics span the fleet); until it is in, the tank page takes
    /// its open findings from the tank's own audit.
    fn refresh_fleet_tank(&mut self, _id: i64) {
        self.fleet_audit = None;
        self.start_fleet_summary();
    }

    fn selected(&self) -> Option<i64> {
        self.view.tank.as_ref().map(|t| t.id)
    }

    fn store_tank(&self) -> Option<store::TankRecord> {
        self.selected()
            .and_then(|id| self.store.tank(TankId(id)).ok())
    }

    /// Rebuild the selected tank's page from the store.
    fn rebuild_tank(&mut self, id: i64) {
        let q = self
            .view
            .tank
            .as_ref()
            .map(|t| t.trend.quantity)
            .unwrap_or_default();
        let fleet_audit = self.fleet_audit.as_deref();
        match build::tank_view(self.store.as_ref(), id, self.view.units, q, fleet_audit) {
            Ok(mut tv) => {
                if let Some(old) = &self.view.tank
                    && old.id == id
                {
                    tv.trend.period_days = old.trend.period_days;
                }
                self.view.tank = Some(tv);
            }
            Err(e) => self.view.error = Some(e.to_string()),
        }
    }

    /// Check a record form again against the selected tank.
    fn recheck<F: Flow>(&mut self) {
        if let Some(t) = self.store_tank() {
            let units = self.view.units;
            let editor = F::editor(&mut self.view);
            editor.check = F::check(&editor.form, &t, units).0;
        }
    }

    fn recheck_setup(&mut self) {
        let (check, preview, _) = build::check_setup(&self.view.setup_form, self.view.units);
        self.view.setup_check = check;
        self.view.setup_preview = preview;
    }

    /// Show the history of the record a form edits (none for a new record).
    fn load_history<F: Flow>(&mut self, id: Option<i64>) {
        let rows = match id.map(|id| build::history(self.store.as_ref(), F::record(id))) {
            Some(Ok(rows)) => rows,
            Some(Err(e)) => {
                self.fail(e);
                Vec::new()
            }
            None => Vec::new(),
        };
        F::editor(&mut self.view).history = rows;
    }

    /// Load a stored record into its form (None: a blank form).
    fn select<F: Flow>(&mut self, id: Option<i64>) {
        let form = match id {
            Some(id) => match F::load(self.store.as_ref(), id) {
                Ok(f) => f,
                Err(e) => return self.fail(e),
            },
            None => F::blank(self.store_tank().as_ref(), self.view.units),
        };
        let editor = F::editor(&mut self.view);
        editor.form = form;
        editor.tried = false;
        editor.check = FormCheck::default();
        if id.is_some() {
            self.recheck::<F>();
        }
        self.load_history::<F>(id);
    }

    /// Delete the record in a form, with the form's reason (kept in its history).
    fn delete<F: Flow>(&mut self) {
        let form = &F::editor(&mut self.view).form;
        let (Some(id), reason) = (F::editing(form), F::reason(form).trim().to_owned()) else {
            return;
        };
        if reason.is_empty() {
            return self.fail(format!(
                "say why the {} is deleted (kept in its history)",
                F::NOUN
            ));
        }
        match F::delete(self.store.as_mut(), id, &reason) {
            Ok(()) => {
                self.after_change::<F>(None);
                self.saved(format!(
                    "{} deleted; its values stay in the history.",
                    flow::capitalised(F::NOUN)
                ));
            }
            Err(e) => self.fail(e),
        }
    }

    /// Save a form: a new record, or the edit of the selected one with its reason.
    fn save<F: Flow>(&mut self) {
        let Some(t) = self.store_tank() else {
            return self.fail("select a tank first");
        };
        let units = self.view.units;
        let editor = F::editor(&mut self.view);
        editor.tried = true;
        let (check, entry) = F::check(&editor.form, &t, units);
        editor.check = check;
        let Some(entry) = entry else {
            return;
        };
        let form = editor.form.clone();
        let result = match F::editing(&form) {
            Some(id) => F::edit(self.store.as_mut(), id, &entry, F::reason(&form).trim())
                .map(|()| (Some(id.0), format!("{} changed.", F::label(&entry)))),
            None => F::add(self.store.as_mut(), t.id, &entry)
                .map(|()| (None, format!("{} saved.", F::label(&entry)))),
        };
        match result {
            Ok((keep, msg)) => {
                self.after_change::<F>(keep);
                self.saved(msg);
            }
            Err(e) => self.fail(e),
        }
    }

    /// After a record changed: the tank page and the fleet list follow, the form shows the kept
    /// record (or a blank form) with its history.
    fn after_change<F: Flow>(&mut self, keep: Option<i64>) {
        if let Some(id) = self.selected() {
            self.refresh_fleet_tank(id);
            self.rebuild_tank(id);
        }
        let t = self.store_tank();
        let units = self.view.units;
        let form = keep
            .and_then(|id| F::load(self.store.as_ref(), id).ok())
            .unwrap_or_else(|| F::blank(t.as_ref(), units));
        let editor = F::editor(&mut self.view);
        editor.form = form;
        editor.tried = false;
        editor.check = FormCheck::default();
        self.load_history::<F>(keep);
    }

    fn fail(&mut self, e: impl Into<AppError>) {
        self.view.notice = None;
        self.view.error = Some(describe(&e.into()));
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
                self.select::<ReadingFlow>(None);
                self.select::<DeliveryFlow>(None);
                self.view.notice = None;
                self.view.error = None;
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
            Action::ShowAudit => self.view.page = Page::Audit,
            Action::ShowImport => self.view.page = Page::Import,
            Action::SetImportPath(k, p) => {
                if let Some(slot) = self.view.import.paths.get_mut(k) {
                    *slot = p;
                    // a check is for the files it read
                    self.view.import.checked = None;
                }
            }
            Action::ChooseImportFile(k) => {
                if let Some(p) = build::pick_csv_file(IMPORT_KINDS.get(k).copied().unwrap_or("CSV"))
                {
                    self.handle(Action::SetImportPath(k, p));
                }
            }
            Action::SaveReport { what, to } => self.save_report(&what, to),
            Action::CheckImport => self.run_import(true),
            Action::RunImport => self.run_import(false),
            Action::ShowAuditSection(s) => {
                self.view.page = Page::Audit;
                self.view.audit.section = s;
            }
            Action::SetAuditFilter(f) => {
                self.view.audit.filter = f;
                build::apply_filter(&mut self.view.audit, self.view.units);
            }
            Action::SortAudit(c) => {
                let (old, descending) = self.view.audit.sort;
                self.view.audit.sort = (c, old == c && !descending);
                build::apply_filter(&mut self.view.audit, self.view.units);
            }
            Action::SelectBalance(i) => {
                self.view.audit.selected = i.filter(|&i| i < self.view.audit.rows.len());
            }
            Action::SelectGauge(i) => {
                self.view.audit.gauge_open = i.filter(|&i| i < self.view.audit.gauges.len());
            }
            Action::SelectVehicle(i) => {
                self.view.audit.vehicle_open = i.filter(|&i| i < self.view.audit.vehicles.len());
            }
            Action::SetDiagnostics(on) => self.view.diagnostics = on,
            Action::StopAudit => {
                if let Some(job) = self.job.take() {
                    job.cancel.store(true, Ordering::Relaxed);
                    self.view.fleet.progress = None;
                    self.view.audit.stopped = true;
                }
            }
            Action::RunAudit => {
                self.view.audit.stopped = false;
                self.start_fleet_summary();
            }
            Action::OpenReading { tank, time_ms } => {
                self.handle(Action::SelectTank(tank));
                self.view.tab = TankTab::Readings;
                let id = self
                    .store
                    .readings(TankId(tank), Some((time_ms, time_ms.saturating_add(1))))
                    .ok()
                    .and_then(|r| r.into_iter().next())
                    .map(|r| r.id.0);
                self.select::<ReadingFlow>(id);
            }
            Action::OpenFill { tank, ticket } => {
                self.handle(Action::SelectTank(tank));
                self.view.tab = TankTab::Deliveries;
                let id = self
                    .store
                    .deliveries(Some(TankId(tank)))
                    .ok()
                    .and_then(|d| d.into_iter().find(|d| d.entry.ticket == ticket))
                    .map(|d| d.id.0);
                self.select::<DeliveryFlow>(id);
            }
            Action::OpenSetup(id) => {
                self.view.page = Page::Setup;
                self.view.setup_tried = false;
                self.view.setup_form = match id {
                    Some(id) => match build::setup_form_for(self.store.as_ref(), id) {
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
                self.recheck::<ReadingFlow>();
                self.recheck_setup();
                build::apply_filter(&mut self.view.audit, units);
            }
            Action::EditReadingForm(form) => {
                self.view.reading_editor.form = form;
                self.recheck::<ReadingFlow>();
            }
            Action::SaveReading => self.save::<ReadingFlow>(),
            Action::SelectReading(id) => self.select::<ReadingFlow>(id),
            Action::DeleteReading => self.delete::<ReadingFlow>(),
            Action::EditDeliveryForm(form) => {
                self.view.delivery_editor.form = form;
                self.recheck::<DeliveryFlow>();
            }
            Action::SaveDelivery => self.save::<DeliveryFlow>(),
            Action::SelectDelivery(id) => self.select::<DeliveryFlow>(id),
            Action::DeleteDelivery => self.delete::<DeliveryFlow>(),
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
                self.view.setup_form = *form;
                self.recheck_setup();
            }
            Action::SaveTank => self.save_tank(),
            Action::DismissMessage => {
                self.view.notice = None;
                self.view.error = None;
            }
            Action::VerifyHistory => {
                self.view.history_check = None;
                self.start_fleet_summary();
            }
            Action::Reload => {
                self.start_fleet_summary();
                if let Some(id) = self.selected() {
                    self.rebuild_tank(id);
                }
            }
        }
    }

    fn save_tank(&mut self) {
        self.view.setup_tried = true;
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
            None => self.store.add_site(&spec.site, &site).map(|_| ()),
            Some(s) if store::SiteSettings::of(&s) != site => {
                let why = if reason.is_empty() {
                    "site settings entered in Tank setup".to_owned()
                } else {
                    reason.clone()
                };
                self.store.edit_site(s.id, s.revision, &site, &why)
            }
            Some(_) => Ok(()),
        };
        if let Err(e) = site_result {
            return self.fail(e);
        }
        let result = match self.view.setup_form.editing {
            Some(id) => self
                .store
                .edit_tank(TankId(id), self.view.setup_form.opened, &spec, &reason)
                .map(|()| id),
            None => self.store.add_tank(&spec).map(|id| id.0),
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
                    // A new tank or site: the Fleet list's grouping changes; small fleets are quick.
                    self.start_fleet_summary();
                    self.wait_for_background();
                }
                self.handle(Action::SelectTank(id));
                self.view.page = Page::Setup;
                self.view.setup_form = build::setup_form_for(self.store.as_ref(), id)
                    .unwrap_or_else(|_| self.view.setup_form.clone());
                self.recheck_setup();
                self.saved(format!("Tank {} saved.", spec.name));
            }
            Err(e) => self.fail(e),
        }
    }
}
