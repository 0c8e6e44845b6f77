//! Panels: each is `xxx_ui(ui, &ViewState, &mut Vec<Action>)`; it draws from the view state and emits
//! actions, and never reaches the database or an engine.

pub mod audit;
pub mod deliveries;
pub mod fleet;
pub mod help;
pub mod import;
pub mod now;
pub mod readings;
pub mod setup;
pub mod tank_page;
pub mod top;
pub mod trend;
pub mod vessel;
pub mod widgets;
