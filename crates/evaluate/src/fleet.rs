//! The fleet audit over a stored ledger: tanks are read from the repository in the calling thread and
//! audited on worker threads as they come (memory holds one batch of readings and every tank's
//! balances, not the whole history), then the fleet statistics run. Progress is reported as tanks
//! finish; a cancel flag stops it; a tank whose audit fails or panics is an error that names it.

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;

use crate::EvalError;
use crate::audit_input::{Meters, meters, tank_input};
use audit::{
    AuditOptions, Balance, Finding, FindingKind, FleetAudit, TankAudit, TankInput, Verdict,
};
use store::{Delivery, Repository, TankId, TankRecord};

/// What to audit and how.
#[derive(Debug, Clone)]
pub struct AuditRequest {
    /// Only this tank (its name); the fleet statistics then cover it alone.
    pub tank: Option<String>,
    /// Only fills starting at or after this instant, ms; earlier readings still feed the thermal
    /// history and the usage model.
    pub since_ms: Option<i64>,
    /// The audit's settings.
    pub options: AuditOptions,
    /// Worker threads (at least one).
    pub threads: usize,
}

impl Default for AuditRequest {
    fn default() -> Self {
        Self {
            tank: None,
            since_ms: None,
            options: AuditOptions::default(),
            threads: std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get),
        }
    }
}

/// Fleets smaller than this solve every density from the equation of state; larger ones build the
/// audit's density tables once (about half a second), which then pay off.
const EXACT_PROPERTIES_BELOW_TANKS: usize = 500;

fn load(
    repo: &dyn Repository,
    t: &TankRecord,
    deliveries: &[Delivery],
    meters: &Meters,
    req: &AuditRequest,
) -> Result<TankInput, EvalError> {
    // readings from a usage window before `since` feed the history and the usage model
    let from = req
        .since_ms
        .map(|s| s - ((req.options.usage_window_days + 30.0) * 86_400_000.0) as i64);
    let readings = repo.readings(t.id, from.map(|f| (f, i64::MAX)))?;
    tank_input(t, &readings, deliveries, meters, req.since_ms)
}

fn audit_one(input: &TankInput, opts: &AuditOptions) -> Result<TankAudit, EvalError> {
    match catch_unwind(AssertUnwindSafe(|| audit::audit_tank(input, opts))) {
        Ok(Ok(a)) => Ok(a),
        Ok(Err(e)) => Err(EvalError::Audit(e)),
        Err(panic) => Err(EvalError::Failed {
            tank: input.name.clone(),
            reason: panic
                .downcast_ref::<&str>()
                .map(|s| (*s).to_owned())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "an internal error".into()),
        }),
    }
}

/// Audit the stored fleet (or one tank). `progress(done, total)` is called in this thread as tanks
/// finish; setting `cancel` stops the audit with [`EvalError::Cancelled`].
pub fn audit_fleet(
    repo: &dyn Repository,
    req: &AuditRequest,
    progress: &mut dyn FnMut(usize, usize),
    cancel: &AtomicBool,
) -> Result<FleetAudit, EvalError> {
    let tanks = match &req.tank {
        Some(name) => vec![repo.tank_by_name(name)?],
        None => repo.tanks()?,
    };
    // every delivery in one query, grouped by tank (one query a tank would scan them all each time)
    let mut by_tank: std::collections::HashMap<TankId, Vec<Delivery>> =
        std::collections::HashMap::new();
    for d in repo.deliveries(None)? {
        by_tank.entry(d.tank_id).or_default().push(d);
    }
    let opts = AuditOptions {
        exact_properties: req.options.exact_properties
            || tanks.len() < EXACT_PROPERTIES_BELOW_TANKS,
        ..req.options.clone()
    };
    let meters = meters(repo)?;
    let total = tanks.len();
    let threads = req.threads.clamp(1, total.max(1));
    let (send, recv) = mpsc::sync_channel::<(usize, TankInput)>(4 * threads);
    let recv = std::sync::Mutex::new(recv);
    let (done_send, done_recv) = mpsc::channel::<(usize, Result<TankAudit, EvalError>)>();
    let mut results: Vec<Option<Result<TankAudit, EvalError>>> = (0..total).map(|_| None).collect();
    let loaded = std::thread::scope(|s| {
        for _ in 0..threads {
            let (recv, done_send, opts) = (&recv, done_send.clone(), &opts);
            s.spawn(move || {
                loop {
                    let next = match recv.lock() {
                        Ok(r) => r.recv(),
                        Err(_) => break,
                    };
                    let Ok((i, input)) = next else { break };
                    let result = if cancel.load(Ordering::Relaxed) {
                        Err(EvalError::Cancelled)
                    } else {
                        audit_one(&input, opts)
                    };
                    if done_send.send((i, result)).is_err() {
                        break;
                    }
                }
            });
        }
        drop(done_send);
        let mut done = 0;
        let mut take = |results: &mut Vec<Option<_>>, (i, r): (usize, _)| {
            if let Some(slot) = results.get_mut(i) {
                *slot = Some(r);
            }
            done += 1;
            progress(done, total);
        };
        let mut loaded: Result<(), EvalError> = Ok(());
        for (i, t) in tanks.iter().enumerate() {
            if cancel.load(Ordering::Relaxed) {
                loaded = Err(EvalError::Cancelled);
                break;
            }
            let stored = by_tank.remove(&t.id).unwrap_or_default();
            match load(repo, t, &stored, &meters, req) {
                Ok(input) => {
                    if send.send((i, input)).is_err() {
                        break;
                    }
                }
                Err(e) => {
                    loaded = Err(e);
                    break;
                }
            }
            while let Ok(r) = done_recv.try_recv() {
                take(&mut results, r);
            }
        }
        drop(send);
        for r in done_recv.iter() {
            take(&mut results, r);
        }
        loaded
    });
    loaded?;
    let mut audits = Vec::with_capacity(total);
    for (slot, t) in results.into_iter().zip(&tanks) {
        match slot {
            Some(r) => audits.push(r?),
            None => {
                return Err(EvalError::Failed {
                    tank: t.spec.name.clone(),
                    reason: "its audit worker stopped".into(),
                });
            }
        }
    }
    Ok(audit::audit_fleet(audits, &opts))
}

/// One tank's audit with every reading's state kept (the window's tank page: the liquid's thermal
/// history behind each reading), over all its readings and deliveries.
pub fn audit_tank(
    repo: &dyn Repository,
    tank: TankId,
    options: &AuditOptions,
) -> Result<TankAudit, EvalError> {
    let t = repo.tank(tank)?;
    let readings = repo.readings(tank, None)?;
    let deliveries = repo.deliveries(Some(tank))?;
    audit_tank_records(&t, &readings, &deliveries, &meters(repo)?, options)
}

/// [`audit_tank`] of records already read (the window's tank page reads them once for both).
pub fn audit_tank_records(
    t: &TankRecord,
    readings: &[store::Reading],
    deliveries: &[Delivery],
    meters: &Meters,
    options: &AuditOptions,
) -> Result<TankAudit, EvalError> {
    let input = tank_input(t, readings, deliveries, meters, None)?;
    let opts = AuditOptions {
        keep_readings: true,
        ..options.clone()
    };
    audit_one(&input, &opts)
}

/// Balances and findings this recent (before the tank's latest reading) are open, ms.
pub const OPEN_WINDOW_MS: i64 = 60 * 86_400_000;

/// One sentence per open finding of a tank in an audit: short or excess fills and findings
/// between fills that end within [`OPEN_WINDOW_MS`] of `latest_ms`. The window's fleet list and the
/// command line's findings use this one rule.
pub fn open_findings(
    fills: &[Balance],
    findings: &[Finding],
    tank: &str,
    latest_ms: i64,
) -> Vec<String> {
    let from = latest_ms - OPEN_WINDOW_MS;
    let mut open: Vec<String> = fills
        .iter()
        .filter(|b| b.tank == tank && b.end_ms >= from)
        .filter(|b| matches!(b.verdict, Verdict::Short | Verdict::Excess))
        .map(|b| format!("fill {}: {}", b.ticket, b.explanation))
        .collect();
    open.extend(
        findings
            .iter()
            .filter(|f| f.tank == tank && f.to_ms >= from)
            .map(|f| match f.kind {
                FindingKind::UnexplainedGain => format!("unexplained gain: {}", f.explanation),
                FindingKind::LossBeyondUse => format!("loss beyond use: {}", f.explanation),
            }),
    );
    open
}
