//! The import page's work: a check (the store's dry run) or an import, the latter on its own thread
//! and connection when the ledger is a file, its progress the bytes read.

use super::Core;
use crate::build;
use crate::describe;
use std::sync::Arc;
use std::sync::atomic::Ordering;
use std::sync::mpsc::Receiver;

/// An import running on its own thread and connection: bytes read of the files' total, and the result.
pub(super) struct ImportJob {
    pub(super) read: Arc<std::sync::atomic::AtomicU64>,
    pub(super) total: u64,
    pub(super) rx: Receiver<Result<store::ImportSummary, store::StoreError>>,
}

/// A reader that counts the bytes read through it (an import's progress).
struct Counting<R> {
    inner: R,
    read: Arc<std::sync::atomic::AtomicU64>,
}

impl<R: std::io::Read> std::io::Read for Counting<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.read.fetch_add(n as u64, Ordering::Relaxed);
        Ok(n)
    }
}

impl Core {
    /// Check (a dry run) or import the files of the import page; an import refreshes the fleet list
    /// and the audit.
    pub(super) fn run_import(&mut self, check_only: bool) {
        let iv = &mut self.view.import;
        iv.done = None;
        let (files, errors) = build::import_preview(&iv.paths);
        iv.files = files;
        iv.errors = errors;
        iv.truncated = false;
        iv.checked = None;
        if !iv.errors.is_empty() {
            return;
        }
        if iv.paths.iter().all(|p| p.trim().is_empty()) {
            iv.errors.push("choose at least one file".into());
            return;
        }
        let checker = evaluate::ReadingChecker::new();
        let check = |t: &store::TankRecord, r: &store::ReadingEntry| checker.check(t, r);
        let opts = store::ImportOptions {
            reading_check: Some(&check),
            dry_run: check_only,
            ..store::ImportOptions::default()
        };
        // a real import of a database file runs on its own thread and connection, its progress the
        // bytes read; a check, or a database in memory, runs here
        if !check_only
            && let Some(location) = self.location.clone()
            && self.import_job.is_none()
        {
            let paths = self.view.import.paths.clone();
            let total: u64 = paths
                .iter()
                .filter(|p| !p.trim().is_empty())
                .filter_map(|p| std::fs::metadata(p.trim()).ok())
                .map(|m| m.len())
                .sum();
            let read = Arc::new(std::sync::atomic::AtomicU64::new(0));
            let counter = Arc::clone(&read);
            let (tx, rx) = std::sync::mpsc::channel();
            let spawned = std::thread::Builder::new()
                .name("import".into())
                .spawn(move || {
                    let result = (|| {
                        let mut store = location.open()?;
                        let mut sources = build::import_sources(&paths)?;
                        for s in [
                            &mut sources.tanks,
                            &mut sources.readings,
                            &mut sources.deliveries,
                        ]
                        .into_iter()
                        .flatten()
                        {
                            let inner =
                                std::mem::replace(&mut s.reader, Box::new(std::io::empty()));
                            s.reader = Box::new(Counting {
                                inner,
                                read: Arc::clone(&counter),
                            });
                        }
                        let checker = evaluate::ReadingChecker::new();
                        let check =
                            |t: &store::TankRecord, r: &store::ReadingEntry| checker.check(t, r);
                        let opts = store::ImportOptions {
                            reading_check: Some(&check),
                            ..store::ImportOptions::default()
                        };
                        store.import(sources, &opts)
                    })();
                    let _ = tx.send(result);
                });
            match spawned {
                Ok(_) => {
                    self.view.import.progress = Some((0, total));
                    self.import_job = Some(ImportJob { read, total, rx });
                }
                Err(e) => self
                    .view
                    .import
                    .errors
                    .push(format!("cannot start the import: {e}")),
            }
            return;
        }
        let sources = match build::import_sources(&self.view.import.paths) {
            Ok(s) => s,
            Err(e) => {
                self.view.import.errors.push(describe(&e));
                return;
            }
        };
        let result = self.store.import(sources, &opts);
        self.import_done(result, check_only);
    }

    /// Show what a check or an import did; after an import the fleet list and the audit follow.
    pub(super) fn import_done(
        &mut self,
        result: Result<store::ImportSummary, store::StoreError>,
        check_only: bool,
    ) {
        let iv = &mut self.view.import;
        match result {
            Ok(s) => {
                let what = format!(
                    "{} tanks, {} readings, {} deliveries",
                    s.tanks, s.readings, s.deliveries
                );
                if check_only {
                    iv.checked = Some(format!(
                        "Every row checks out: an import would add {what}. Nothing is written yet."
                    ));
                } else {
                    iv.done = Some(format!("Imported {what}. The audit runs again."));
                    iv.paths = Default::default();
                    iv.files.clear();
                    self.fleet_audit = None;
                    self.start_fleet_summary();
                }
            }
            Err(store::StoreError::Import(e)) => {
                iv.errors = e.errors.iter().map(ToString::to_string).collect();
                iv.truncated = e.truncated;
            }
            Err(e) => iv.errors.push(describe(&e)),
        }
    }
}
