//! What every report shares: the data's identity and the audit it was judged by.

use audit::{AuditOptions, FleetAudit};
use store::{RecordRef, Repository};

use crate::ReportError;
use crate::html::{Cell, Doc};
use crate::rounding::Figure;

/// What identifies the data a report was written from.
#[derive(Debug, Clone)]
pub struct Source {
    /// The database as the user named it (a file name).
    pub database: String,
    /// Its schema version.
    pub schema_version: i64,
    /// The history's hash-chain head when the report was written (hex).
    pub chain_head: String,
    /// Records checked against the chain, and problems found.
    pub chain_records: usize,
    /// Problems the chain check found (0: every record is as cryoledger wrote it).
    pub chain_problems: usize,
    /// When the report was written (RFC 3339, UTC).
    pub written: String,
}

impl Source {
    /// Read the identity of the data: the schema version and the history's chain, checked now.
    pub fn read(
        repo: &dyn Repository,
        database: &str,
        written_ms: i64,
    ) -> Result<Self, ReportError> {
        let v = repo.verify()?;
        Ok(Source {
            database: database.to_string(),
            schema_version: repo.schema_version()?,
            chain_head: v.head,
            chain_records: v.records,
            chain_problems: v.problems.len(),
            written: store::Stamp::from_ms(written_ms).text,
        })
    }
}

/// A record a report names, with its revision count.
pub(crate) struct Traced {
    pub what: String,
    pub id: i64,
    pub revisions: usize,
}

pub(crate) fn traced(
    repo: &dyn Repository,
    what: impl Into<String>,
    r: RecordRef,
) -> Result<Traced, ReportError> {
    let id = match r {
        RecordRef::Site(i) => i.0,
        RecordRef::Tank(i) => i.0,
        RecordRef::Reading(i) => i.0,
        RecordRef::Delivery(i) => i.0,
    };
    Ok(Traced {
        what: what.into(),
        id,
        revisions: repo.history(r)?.len(),
    })
}

/// The section naming the data, the audit settings and the records.
pub(crate) fn data_section(
    doc: &mut Doc,
    src: &Source,
    opts: Option<&AuditOptions>,
    records: &[Traced],
) {
    doc.heading(2, "The data");
    let chain = if src.chain_problems == 0 {
        format!(
            "{} records checked against the history's hash chain: every one is as cryoledger wrote it",
            src.chain_records
        )
    } else {
        format!(
            "{} records checked against the history's hash chain: {} changed, added or removed outside cryoledger (run `cryoledger verify`)",
            src.chain_records, src.chain_problems
        )
    };
    let mut rows: Vec<(&str, Cell)> = vec![
        ("Database", Cell::t(src.database.clone())),
        ("Schema version", Cell::t(src.schema_version.to_string())),
        ("History chain head", Cell::t(src.chain_head.clone())),
        ("History check", Cell::t(chain)),
        ("Written", Cell::t(src.written.clone())),
    ];
    if let Some(o) = opts {
        rows.push((
            "Coverage factor k",
            Cell::n("coverage_factor", Figure::Factor, o.coverage_factor),
        ));
        rows.push((
            "Coverage factor k, fills of a vehicle the fleet test clears",
            Cell::n(
                "cleared_coverage_factor",
                Figure::Factor,
                o.cleared_coverage_factor,
            ),
        ));
        rows.push((
            "Materiality, % of billed",
            Cell::n(
                "materiality_percent",
                Figure::Percent,
                100.0 * o.materiality_fraction,
            ),
        ));
        rows.push((
            "Legal tolerance of the meters, %",
            Cell::n(
                "legal_tolerance_percent",
                Figure::Percent,
                100.0 * o.legal_tolerance,
            ),
        ));
        rows.push((
            "Liquid thermal history",
            Cell::t(if o.thermal_history {
                "tracked"
            } else {
                "off (saturated at tank pressure)"
            }),
        ));
        rows.push((
            "Gauge scale from the tank's other fills",
            Cell::t(if o.calibrate_gauges { "on" } else { "off" }),
        ));
    }
    doc.key_values(&rows);
    if !records.is_empty() {
        let rows: Vec<Vec<Cell>> = records
            .iter()
            .map(|r| {
                vec![
                    Cell::t(r.what.clone()),
                    Cell::Plain(Figure::Count, r.id as f64),
                    Cell::Plain(Figure::Count, r.revisions as f64),
                ]
            })
            .collect();
        doc.table("narrow", &["Record", "Id", "Earlier versions"], &rows);
        doc.para_class(
            "small",
            "Each record's earlier versions, with who changed what and why, are in the ledger's history; `cryoledger verify` checks them against the hash chain above.",
        );
    }
}

/// The fleet audit's balance of a ticket.
pub(crate) fn balance_of<'a>(a: &'a FleetAudit, ticket: &str) -> Option<&'a audit::Balance> {
    a.fills.iter().find(|b| b.ticket == ticket)
}

/// A time as printed: RFC 3339 UTC to the minute.
pub(crate) fn when(ms: i64) -> String {
    let t = store::Stamp::from_ms(ms).text;
    // "2026-03-01T06:40:00Z" -> "2026-03-01 06:40"
    t.get(..16).map(|s| s.replace('T', " ")).unwrap_or(t)
}

/// A day as printed.
pub(crate) fn day(ms: i64) -> String {
    let t = store::Stamp::from_ms(ms).text;
    t.get(..10).map(str::to_string).unwrap_or(t)
}

/// The method in plain words, shared by the fill and vehicle reports.
pub(crate) const METHOD: &[&str] = &[
    "Each reading's DP is turned into the tank's contents with a reference equation of state for the fluid: the liquid's density at its own temperature (tracked through each fill's mixing and the heat leak between fills, not assumed saturated at the tank pressure), the vapour's head above the liquid and the gas in the sensing lines, and the vessel's volume as a function of level.",
    "A fill's balance compares what was billed with what the tank gained between the nearest usable readings before and after it, plus what the site drew in that time (from the tank's own weekly use pattern, fitted from its readings). The residual is billed − (gained + drawn).",
    "Its standard uncertainty combines the two readings (the inputs they share largely cancel), the use drawn in the gap, the delivering meter's repeatability and, where the gauge's scale was fitted from the tank's other fills, that scale's uncertainty (GUM, JCGM 100:2008). The spread of the fleet's own balances refines these settings.",
    "A fill is short or excess when its residual passes both k standard uncertainties and the materiality limit; consistent when it passes neither; inconclusive when k standard uncertainties exceed the limit for a judgement.",
    "A vehicle's bias is the weighted mean of its fills' (gained + drawn) / billed less each tank's level from other vehicles' fills, with a Student-t interval; with a binomial test of its count of short fills, corrected for the number of vehicles tested (Holm).",
];
