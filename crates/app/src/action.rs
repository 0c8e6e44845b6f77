//! User intents and the one place that carries them out.

use crate::view::ViewState;
use store::Store;

/// One user intent, emitted by a panel or a test.
#[derive(Debug, Clone, PartialEq)]
pub enum Action {
    /// Show this tank on the tank page.
    SelectTank(i64),
    /// Filter the fleet navigator by this text.
    SetFleetFilter(String),
    /// Re-read everything from the store.
    Reload,
}

/// Carry out `action` against the store and rebuild the affected view state.
pub fn handle(action: Action, store: &mut Store, view: &mut ViewState) {
    match action {
        Action::SelectTank(id) => view.select_tank(store, id),
        Action::SetFleetFilter(text) => view.fleet_filter = text,
        Action::Reload => {
            view.rebuild_fleet(store);
            if let Some(id) = view.tank.as_ref().map(|t| t.id) {
                view.select_tank(store, id);
            }
        }
    }
}
