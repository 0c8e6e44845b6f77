//! End-to-end tests of the `cryoledger` binary, gathered in one test binary.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

/// Refused imports: exit status, the line named, the database unchanged.
#[path = "e2e/import_errors.rs"]
mod import_errors;

/// Export -> import into a fresh database reproduces the data exactly.
#[path = "e2e/round_trip.rs"]
mod round_trip;

/// A process killed in the middle of a large import leaves the database as it was.
#[path = "e2e/killed_import.rs"]
mod killed_import;

/// The engine commands (saturation, state, contents) against independent references.
#[path = "e2e/engine_cli.rs"]
mod engine_cli;

/// `audit`: the JSON contract, explanations whose numbers are in the JSON, filters and formats.
#[path = "e2e/audit.rs"]
mod audit;

/// `demo`: writes the embedded fleet once; its audit finds the planted faults.
#[path = "e2e/demo.rs"]
mod demo;

/// The window and the command line audit through one bridge and agree; a failing tank is named.
#[path = "e2e/one_path.rs"]
mod one_path;

/// Errors at the edges: each cause named once, no file left behind by a failed command, sizes
/// outside any real tank refused with the plausible range.
#[path = "e2e/edges.rs"]
mod edges;

/// Paths nobody tested before: spreadsheet CSV, empty and header-only files, gas-volume tickets,
/// `contents --tank`, thread counts, two writers, corrupt and newer databases.
#[path = "e2e/paths.rs"]
mod paths;

/// `verify` and `backup`: the hash-linked history, a consistent copy, read-only files refused.
#[path = "e2e/history.rs"]
mod history;

/// `report`: self-contained HTML whose figures equal the audit's JSON; statements as HTML and CSV.
#[path = "e2e/reports.rs"]
mod reports;

/// The command line on a PostgreSQL ledger: `--db postgres://...`, `copy` both ways, clear errors.
#[path = "e2e/postgres.rs"]
mod postgres;
