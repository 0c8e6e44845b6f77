//! What the panels draw, rebuilt only when its inputs change.

use store::{Store, Tank};

/// One tank's line in the fleet navigator.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetTank {
    /// Tank id.
    pub id: i64,
    /// Tank name.
    pub name: String,
    /// Fluid name.
    pub fluid: String,
    /// Readings on record.
    pub readings: i64,
}

/// A site and its tanks, for the navigator.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetSite {
    /// Site name.
    pub name: String,
    /// Its tanks.
    pub tanks: Vec<FleetTank>,
}

/// The selected tank's page.
#[derive(Debug, Clone, PartialEq)]
pub struct TankView {
    /// Tank id.
    pub id: i64,
    /// The stored tank.
    pub tank: Tank,
    /// Readings on record.
    pub readings: i64,
}

/// Everything the panels draw.
#[derive(Debug, Clone, Default)]
pub struct ViewState {
    /// Sites and tanks.
    pub fleet: Vec<FleetSite>,
    /// Text filter of the navigator.
    pub fleet_filter: String,
    /// The tank page, when a tank is selected.
    pub tank: Option<TankView>,
    /// The last error to show, if any.
    pub error: Option<String>,
}

impl ViewState {
    /// Re-read the fleet from the store.
    pub fn rebuild_fleet(&mut self, store: &Store) {
        let (sites, tanks) = match (store.sites(), store.tanks()) {
            (Ok(s), Ok(t)) => (s, t),
            (Err(e), _) | (_, Err(e)) => {
                self.error = Some(e.to_string());
                return;
            }
        };
        self.fleet = sites
            .into_iter()
            .map(|s| FleetSite {
                tanks: tanks
                    .iter()
                    .filter(|t| t.site_id == s.id)
                    .map(|t| FleetTank {
                        id: t.id,
                        name: t.spec.name.clone(),
                        fluid: t.spec.fluid.to_string(),
                        readings: store.reading_count(Some(t.id)).unwrap_or(0),
                    })
                    .collect(),
                name: s.name,
            })
            .collect();
    }

    /// Show the tank `id`.
    pub fn select_tank(&mut self, store: &Store, id: i64) {
        match store.tank(id) {
            Ok(tank) => {
                self.tank = Some(TankView {
                    id,
                    readings: store.reading_count(Some(id)).unwrap_or(0),
                    tank,
                });
                self.error = None;
            }
            Err(e) => self.error = Some(e.to_string()),
        }
    }
}
