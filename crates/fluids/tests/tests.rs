//! Integration tests of the `fluids` crate, gathered in one binary. Every expected value names its source
//! beside it and every comparison has an explicit tolerance.
//!
//! * `reference`: the committed CoolProp 8.0.0 table (`tests/data/coolprop_reference.csv`).
//! * `published`: critical, triple and normal boiling points from the papers; industrial conversion factors.
//! * `consistency`: identities that can't be tuned (derivatives vs finite differences, Clausius-Clapeyron,
//!   Maxwell's equal areas, round trips, fast curves vs the full solver).
//! * `errors`: typed errors and their messages.
//! * `robustness`: property tests, no panic on any f64.

// helpers outside #[test] functions unwrap too: a failed unwrap is a failed test here
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;
mod consistency;
mod errors;
mod published;
mod reference;
mod robustness;
