//! Integration tests of the tank engine, gathered in one binary.

// Test code: a failed set-up should panic loudly.
#![allow(clippy::unwrap_used)]

mod cases;
mod geometry;
mod physics;
mod uncertainty;
