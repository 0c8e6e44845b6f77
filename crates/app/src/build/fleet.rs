//! The fleet list: each tank's latest contents and what needs attention, from the bridge's fleet audit.

use super::*;
use crate::AppError;
use audit::{FleetAudit, TankSummary};
use std::sync::Arc;
use std::sync::atomic::AtomicBool;

/// The fleet list, the fleet audit it comes from, and the check of the ledger's history.
#[derive(Debug, Clone)]
pub struct FleetSummary {
    /// Sites with their tanks' lines.
    pub sites: Vec<FleetSite>,
    /// The fleet audit (the same the command line's `audit` gives).
    pub audit: Arc<FleetAudit>,
    /// The verify run over the hash chain.
    pub history: HistoryCheck,
    /// The audit page built from it (on the summary's thread), with the settings and units it was
    /// built for: the window installs it when they are still the page's.
    pub audit_view: Option<(AuditView, AuditView, UnitSystem)>,
}

/// Verify the ledger's history (the same walk as `cryoledger verify`).
pub fn history_check(repo: &dyn Repository) -> Result<HistoryCheck, StoreError> {
    let v = repo.verify()?;
    let head: String = v.head.chars().take(12).collect();
    Ok(match v.problems.first() {
        None => HistoryCheck {
            ok: true,
            text: format!(
                "History verified: {} records, {} links, chain head {head}…",
                v.records, v.links
            ),
        },
        Some(first) => HistoryCheck {
            ok: false,
            text: format!(
                "History NOT verified: {} record(s) changed outside cryoledger, e.g. {} — run `cryoledger verify` for the list",
                v.problems.len(),
                first
                    .record
                    .as_ref()
                    .map(|(k, id)| format!("{k} {id}: {}", first.what))
                    .unwrap_or_else(|| first.what.clone())
            ),
        },
    })
}

/// The fleet list: the bridge's fleet audit (the same as `cryoledger audit`), then each tank's latest
/// reading with the liquid state the audit tracked and its open findings. Runs on a background thread.
pub fn fleet_summary(
    repo: &dyn Repository,
    now_ms: i64,
    progress: &mut dyn FnMut(usize, usize),
    cancel: &AtomicBool,
    page: Option<(AuditView, UnitSystem)>,
) -> Result<FleetSummary, AppError> {
    // one core is left to the window: on a 2-core machine the audit takes longer, the frames stay
    // smooth
    let cores = std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get);
    let req = evaluate::AuditRequest {
        threads: cores.saturating_sub(1).max(1),
        ..evaluate::AuditRequest::default()
    };
    let audit = evaluate::audit_fleet(repo, &req, progress, cancel)?;
    let mut lines = Vec::new();
    for t in repo.tanks()? {
        let summary = audit.tanks.iter().find(|s| s.tank == t.spec.name);
        let latest = repo.latest_reading(t.id)?;
        lines.push((
            t.site_id.0,
            fleet_tank(&t, latest.as_ref(), summary, &audit, now_ms),
        ));
    }
    let sites = fleet_sites(repo, lines)?;
    let audit_view = page.map(|(settings, units)| {
        let v = super::audit_view(
            &audit,
            &sites,
            audit::AuditOptions::default().materiality_fraction,
            units,
            &settings,
        );
        (v, settings, units)
    });
    Ok(FleetSummary {
        sites,
        audit: Arc::new(audit),
        history: history_check(repo)?,
        audit_view,
    })
}

/// The fleet list's line of one tank.
fn fleet_tank(
    t: &TankRecord,
    latest: Option<&store::Reading>,
    summary: Option<&TankSummary>,
    audit: &FleetAudit,
    now_ms: i64,
) -> FleetTank {
    let contents = latest.map(|r| match evaluate::engine_tank(&t.spec) {
        Ok(e) => {
            let sat = summary
                .and_then(|s| s.latest)
                .filter(|state| state.time_ms == r.entry.time.ms)
                .map(|state| state.liquid_saturation_pa);
            contents_for(t, &e, &r.entry, sat, false)
        }
        Err(e) => Err(crate::describe(&e)),
    });
    let latest_ms = latest.map(|r| r.entry.time.ms);
    let findings = latest_ms
        .map(|ms| evaluate::open_findings(&audit.fills, &audit.findings, &t.spec.name, ms))
        .unwrap_or_default();
    let attention = attention_of(t, latest_ms.zip(contents.as_ref()), &findings, now_ms);
    FleetTank {
        id: t.id.0,
        name: t.spec.name.clone(),
        fluid: t.spec.fluid.to_string(),
        fill: contents.and_then(|c| c.ok()).map(|c| c.fill.value),
        reorder: t.spec.reorder_percent.map(|p| p / 100.0),
        last_reading_ms: latest_ms,
        attention,
    }
}

/// What needs attention given the latest reading's time and contents and the audit's open findings.
pub(super) fn attention_of(
    t: &TankRecord,
    latest: Option<(i64, &Result<RowContents, String>)>,
    findings: &[String],
    now_ms: i64,
) -> Vec<Attention> {
    let reorder = t.spec.reorder_percent.map(|p| p / 100.0);
    let mut attention = Vec::new();
    match latest {
        Some((ms, contents)) => {
            if now_ms - ms > STALE_AFTER_MS {
                attention.push(Attention::StaleReading);
            }
            match contents {
                Ok(c) if reorder.is_some_and(|ro| c.fill.value < ro) => {
                    attention.push(Attention::BelowReorder);
                }
                Ok(_) => {}
                Err(e) => attention.push(Attention::ReadingRefused(e.clone())),
            }
        }
        None => attention.push(Attention::StaleReading),
    }
    attention.extend(findings.iter().cloned().map(Attention::OpenFinding));
    attention
}

/// Group summarised tanks by site (sites in the store's order, tanks by name).
pub fn fleet_sites(
    repo: &dyn Repository,
    tanks: Vec<(i64, FleetTank)>,
) -> Result<Vec<FleetSite>, StoreError> {
    let mut sites: Vec<FleetSite> = repo
        .sites()?
        .into_iter()
        .map(|s| FleetSite {
            id: s.id.0,
            zone: s.zone(),
            name: s.name,
            tanks: Vec::new(),
        })
        .collect();
    for (site_id, t) in tanks {
        if let Some(s) = sites.iter_mut().find(|s| s.id == site_id) {
            s.tanks.push(t);
        }
    }
    for s in &mut sites {
        s.tanks.sort_by(|a, b| a.name.cmp(&b.name));
    }
    Ok(sites)
}

/// Recompute the Fleet list's visible lines from its sites, filter and closed sites.
pub fn fleet_rows(fleet: &mut FleetView) {
    let needle = fleet.filter.trim().to_lowercase();
    let mut rows = Vec::new();
    let (mut count, mut attention) = (0, 0);
    for (si, site) in fleet.sites.iter().enumerate() {
        count += site.tanks.len();
        attention += site
            .tanks
            .iter()
            .filter(|t| !t.attention.is_empty())
            .count();
        let site_hit = needle.is_empty() || site.name.to_lowercase().contains(&needle);
        let hits: Vec<usize> = site
            .tanks
            .iter()
            .enumerate()
            .filter(|(_, t)| {
                site_hit
                    || t.name.to_lowercase().contains(&needle)
                    || t.fluid.to_lowercase().contains(&needle)
            })
            .map(|(i, _)| i)
            .collect();
        if hits.is_empty() && !site_hit {
            continue;
        }
        // A search opens every site it matches in.
        let open = !needle.is_empty() || !fleet.closed.contains(&site.id);
        rows.push(FleetRow::Site(si, open));
        if open {
            rows.extend(hits.into_iter().map(|ti| FleetRow::Tank(si, ti)));
        }
    }
    fleet.rows = rows;
    fleet.counts = (count, attention);
}
