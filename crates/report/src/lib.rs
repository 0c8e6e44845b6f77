//! Documents from the ledger that a carrier or a customer accepts.
//!
//! - [`fill_report`]: one disputed fill, self-contained HTML (inline SVG and CSS, no scripts, nothing
//!   fetched): its balance chain and chart, uncertainty budget, the readings used with the liquid
//!   states assumed, the delivering vehicle's fills across tanks, the method, the cautions, and what
//!   identifies the data (the database, its schema version, the history's chain head, record ids and
//!   their revision counts).
//! - [`vehicle_report`]: one vehicle's fills in a period with its bias, interval and the legal
//!   tolerance.
//! - [`statement`]: a tank's or a site's stock statement per month or week, with the running sum of
//!   fill residuals against its k = 2 band (statistical inventory reconciliation), as HTML or CSV.
//!
//! The figures come from the same fleet audit the command line prints (`cryoledger audit`), so a
//! report and the audit's JSON agree to the last digit before rounding. Every figure is rounded once,
//! by [`rounding::Figure`].

mod common;
mod fill;
pub mod html;
pub mod rounding;
mod statement;
pub mod svg;
mod vehicle;

pub use common::Source;
pub use fill::fill_report;
pub use statement::{
    Period, SYSTEMATIC_FLOOR, Scope, Statement, StatementRow, recent_months, statement,
    systematic_fraction,
};
pub use vehicle::vehicle_report;

/// Why a report could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The ledger could not be read.
    #[error(transparent)]
    Store(#[from] store::StoreError),
    /// The engines refused.
    #[error(transparent)]
    Eval(#[from] evaluate::EvalError),
    /// No delivery has this ticket.
    #[error("no delivery has ticket {0:?}")]
    NoTicket(String),
    /// No vehicle has this name.
    #[error("no delivery was made by vehicle {0:?}")]
    NoVehicle(String),
    /// No tank or site has this name.
    #[error("no {kind} is named {name:?}")]
    NoSuch {
        /// "tank" or "site".
        kind: &'static str,
        /// The name asked for.
        name: String,
    },
    /// A period that ends before it starts.
    #[error("the period is empty: {0}")]
    Period(String),
    /// Writing CSV failed.
    #[error("writing CSV: {0}")]
    Csv(#[from] csv::Error),
}
