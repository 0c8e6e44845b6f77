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
