//! # evaluate — stored records through the engines
//!
//! The store knows what users entered; the engines know physics in SI. This crate is the one bridge
//! between them, so the command line, the window and the reports always agree:
//! - [`engine_tank`], [`conditions`], [`contents_of`]: a stored tank as an engine tank, a stored reading
//!   as engine conditions, and what it means;
//! - [`tank_input`]: the audit engine's input for a stored tank (gauge resolution, meter figures, gas
//!   volumes as masses);
//! - [`audit_fleet`]: the threaded fleet audit over any [`store::Repository`], with progress,
//!   cancellation, and a failing tank reported by name; [`audit_tank`] for one tank's page;
//!   [`open_findings`] for what needs attention;
//! - [`ReadingChecker`]: the importer's check that no DP exceeds what a full tank can show.
//!
//! ```
//! use store::{Repository, Store, TankFields, ReadingFields};
//! let mut s = Store::open_in_memory().unwrap();
//! let spec = TankFields { site: "Quarry Lane", tank: "QL-1", fluid: "nitrogen", orientation: "vertical",
//!     diameter_m: "2.0", length_m: "5.0", heads: "ellipsoidal", line_temperature_c: "15",
//!     ..Default::default() }.check().unwrap();
//! let id = s.add_tank(&spec).unwrap();
//! let t = s.tank(id).unwrap();
//! let r = ReadingFields { time: "2026-03-01T08:00:00Z", dp: "150", dp_unit: "inH2O", pressure: "10",
//!     pressure_unit: "barg", ..Default::default() }.check(t.barometer_pa).unwrap();
//! let c = evaluate::contents_of(&t, &r).unwrap();
//! assert!(c.fill_fraction > 0.0 && c.fill_fraction < 1.0);
//! ```
#![deny(missing_docs)]

mod audit_input;
mod engine;
mod fleet;
mod reading_check;

pub use audit_input::{Meters, billed_kg, dp_resolution_u_pa, meters, tank_input};
pub use engine::{conditions, contents_of, engine_tank, gauge, geometry, pressure_abs_pa};
pub use fleet::{
    AuditRequest, OPEN_WINDOW_MS, audit_fleet, audit_tank, audit_tank_records, open_findings,
};
pub use reading_check::{ReadingChecker, check_reading_against_tank};

/// Why stored records could not be evaluated. Each names its cause once; the cause's own words
/// follow in the error's source chain.
#[derive(Debug, thiserror::Error)]
pub enum EvalError {
    /// The contents engine refused.
    #[error(transparent)]
    Tank(#[from] tank::TankError),
    /// The fluid engine refused.
    #[error(transparent)]
    Fluid(#[from] fluids::FluidError),
    /// The ledger could not be read.
    #[error(transparent)]
    Store(#[from] store::StoreError),
    /// A tank's stored settings are not a vessel the engine accepts.
    #[error("tank {tank}: its settings are refused")]
    Settings {
        /// Tank name.
        tank: String,
        /// Why.
        source: EngineRefusal,
    },
    /// A tank's audit failed (the audit engine's error names the tank).
    #[error(transparent)]
    Audit(#[from] audit::AuditError),
    /// A tank's audit stopped on an internal error.
    #[error("the audit of tank {tank} stopped: {reason}")]
    Failed {
        /// Tank name.
        tank: String,
        /// What stopped it.
        reason: String,
    },
    /// The audit was cancelled.
    #[error("the audit was cancelled")]
    Cancelled,
}

/// An engine's refusal of stored settings.
#[derive(Debug, thiserror::Error)]
pub enum EngineRefusal {
    /// The contents engine refused.
    #[error(transparent)]
    Tank(#[from] tank::TankError),
    /// The fluid engine refused.
    #[error(transparent)]
    Fluid(#[from] fluids::FluidError),
}

impl EvalError {
    pub(crate) fn settings(t: &store::TankRecord, e: EvalError) -> Self {
        let source = match e {
            EvalError::Tank(e) => EngineRefusal::Tank(e),
            EvalError::Fluid(e) => EngineRefusal::Fluid(e),
            other => return other,
        };
        EvalError::Settings {
            tank: t.spec.name.clone(),
            source,
        }
    }
}
