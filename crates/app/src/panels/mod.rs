//! Panels: each draws from the view state and emits actions; none touches the store or an engine.

pub mod fleet;
pub mod tank;
