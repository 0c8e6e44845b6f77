//! The fleet model: configuration, tanks, the hourly forward simulation.

use fluids::FluidId;
use tank::{DpUnit, HeadShape, Orientation};

use crate::SimError;
use crate::rng::Rng;

pub(crate) const HOUR_MS: i64 = 3_600_000;
pub(crate) const DAY_MS: i64 = 24 * HOUR_MS;

/// 2026-01-01T00:00:00Z in ms since the Unix epoch (a Thursday).
pub const DEFAULT_START_MS: i64 = 1_767_225_600_000;

/// A fault planted in the fleet.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Fault {
    /// Vehicle number `vehicle` delivers `fraction` less than its tickets bill (0.05 = 5 % short).
    VehicleShort {
        /// Index into the vehicle pool.
        vehicle: usize,
        /// Fraction of the billed quantity not delivered.
        fraction: f64,
    },
    /// Tank number `tank`'s gauge span drifts linearly by `fraction_per_year` (−0.04: reads 4 % low
    /// after a year).
    GaugeSpanDrift {
        /// Tank index.
        tank: usize,
        /// Relative span change per 365 days.
        fraction_per_year: f64,
    },
    /// Tank number `tank`'s gauge shows `offset_pa` at zero DP.
    GaugeZeroOffset {
        /// Tank index.
        tank: usize,
        /// Offset, Pa.
        offset_pa: f64,
    },
    /// The first fill of tank `tank` due on or after day `day` (from the start) is one nobody logs:
    /// no ticket, no before/after readings.
    UnloggedDelivery {
        /// Tank index.
        tank: usize,
        /// Day number.
        day: u32,
    },
    /// Tank `tank` loses `kg_per_day` beyond its use for `days` days from day `from_day` (a leak or
    /// a stuck vent, found and mended).
    Leak {
        /// Tank index.
        tank: usize,
        /// First day of the leak.
        from_day: u32,
        /// How many days it lasts.
        days: u32,
        /// Loss rate, kg/day.
        kg_per_day: f64,
    },
}

/// Which names the fleet gets.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Naming {
    /// Plain numbered names (`S0001`, `T00001`, `V01`): tests and benchmarks.
    #[default]
    Numbered,
    /// The fictional demo scenario's names (a distributor's customers, carriers and vehicles).
    Demo,
}

impl Naming {
    /// The time zone of the fleet's sites: the demo's keep UK time; numbered fleets name none (UTC).
    pub fn zone(self) -> units::Zone {
        match self {
            Naming::Numbered => units::Zone::UTC,
            Naming::Demo => units::Zone::LONDON,
        }
    }

    /// The IANA name written to the tanks file ("" for none).
    pub fn zone_name(self) -> &'static str {
        match self {
            Naming::Numbered => "",
            Naming::Demo => "Europe/London",
        }
    }
}

/// How the fleet is built.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetConfig {
    /// Seed of every random draw.
    pub seed: u64,
    /// Number of tanks.
    pub tanks: usize,
    /// Days simulated.
    pub days: u32,
    /// Start instant, ms since the Unix epoch (midnight UTC).
    pub start_ms: i64,
    /// Vehicles in the pool; each fill is served by one drawn at random.
    pub vehicles: usize,
    /// Vehicles per carrier.
    pub vehicles_per_carrier: usize,
    /// Planted faults.
    pub faults: Vec<Fault>,
    /// Target days between fills (drawn per tank uniformly in this range).
    pub fill_interval_days: (f64, f64),
    /// True NER over nameplate NER (drawn per tank uniformly in this range).
    pub true_ner_factor: (f64, f64),
    /// Trailer meter noise, relative standard deviation (common practice, no source: 0.3 %).
    pub meter_noise_rel: f64,
    /// Gauge reading noise, standard deviation as a fraction of span (0.05 %).
    pub dp_noise_fraction_of_span: f64,
    /// Tank pressure reading noise, Pa standard deviation (2 kPa).
    pub pressure_noise_pa: f64,
    /// Fraction of tickets that carry the trailer's supply pressure.
    pub supply_pressure_on_ticket: f64,
    /// Names.
    pub naming: Naming,
}

impl Default for FleetConfig {
    fn default() -> Self {
        FleetConfig {
            seed: 1,
            tanks: 12,
            days: 365,
            start_ms: DEFAULT_START_MS,
            vehicles: 6,
            vehicles_per_carrier: 3,
            faults: Vec::new(),
            fill_interval_days: (14.0, 40.0),
            true_ner_factor: (0.75, 1.5),
            meter_noise_rel: 0.003,
            dp_noise_fraction_of_span: 0.0005,
            pressure_noise_pa: 2000.0,
            supply_pressure_on_ticket: 0.7,
            naming: Naming::Numbered,
        }
    }
}

/// A simulated tank with its settings (as written to the tanks CSV) and its hidden truth.
#[derive(Debug, Clone, PartialEq)]
pub struct SimTank {
    /// Site name.
    pub site: String,
    /// Tank name.
    pub name: String,
    /// Fluid.
    pub fluid: FluidId,
    /// Axis.
    pub orientation: Orientation,
    /// Inner diameter, m.
    pub diameter_m: f64,
    /// Shell length, m.
    pub length_m: f64,
    /// Head shape as the store names it (`ellipsoidal`, `torispherical`).
    pub heads: HeadShape,
    /// Site elevation, m.
    pub elevation_m: f64,
    /// Site barometer, Pa (ICAO atmosphere at the elevation).
    pub barometer_pa: f64,
    /// Gauge unit.
    pub dp_unit: DpUnit,
    /// Gauge span in `dp_unit`.
    pub gauge_span: f64,
    /// Gauge accuracy class, % of span.
    pub gauge_accuracy_percent: f64,
    /// Relief valve set pressure, barg.
    pub relief_barg: f64,
    /// Reorder level, % of gross volume.
    pub reorder_percent: f64,
    /// Nameplate NER, % per day (what the tanks CSV says).
    pub ner_percent_per_day: f64,
    /// True NER, % per day (hidden).
    pub true_ner_percent_per_day: f64,
    /// Pressure control band, Pa absolute.
    pub band_pa: (f64, f64),
    /// Tank pressure unit for readings: `barg` or `psig`.
    pub pressure_unit: &'static str,
    /// Mean use, kg/day (hidden).
    pub usage_kg_per_day: f64,
    /// Gross volume, m³.
    pub gross_volume_m3: f64,
}

/// One reading as written to the readings CSV, with the truth behind it.
#[derive(Debug, Clone, PartialEq)]
pub struct SimReading {
    /// Tank index.
    pub tank: usize,
    /// Time, ms since the epoch.
    pub time_ms: i64,
    /// DP shown, in the tank's unit (quantised).
    pub dp: f64,
    /// Tank pressure shown, in the tank's pressure unit (quantised).
    pub pressure: f64,
    /// True total mass, kg (hidden).
    pub true_total_mass_kg: f64,
    /// True liquid saturation pressure, Pa (hidden).
    pub true_liquid_saturation_pa: f64,
}

/// One fill: its ticket and the truth.
#[derive(Debug, Clone, PartialEq)]
pub struct SimDelivery {
    /// Tank index.
    pub tank: usize,
    /// Ticket number (empty for an unlogged fill).
    pub ticket: String,
    /// Start, ms.
    pub start_ms: i64,
    /// End, ms.
    pub end_ms: i64,
    /// Billed, kg.
    pub billed_kg: f64,
    /// Vehicle index.
    pub vehicle: usize,
    /// Supply pressure on the ticket, barg.
    pub supply_pressure_barg: Option<f64>,
    /// Truly delivered, kg (hidden).
    pub delivered_kg: f64,
    /// Whether a ticket exists.
    pub logged: bool,
}

/// A vehicle of the pool.
#[derive(Debug, Clone, PartialEq)]
pub struct SimVehicle {
    /// Name.
    pub name: String,
    /// Carrier name.
    pub carrier: String,
    /// Fraction it delivers short (hidden; 0 for honest vehicles).
    pub short_fraction: f64,
}

/// A simulated fleet.
#[derive(Debug, Clone, PartialEq)]
pub struct Fleet {
    /// The configuration it came from.
    pub config: FleetConfig,
    /// Tanks, in index order.
    pub tanks: Vec<SimTank>,
    /// Vehicles, in index order.
    pub vehicles: Vec<SimVehicle>,
    /// Readings, by tank then time.
    pub readings: Vec<SimReading>,
    /// Fills (logged and unlogged), by tank then time.
    pub deliveries: Vec<SimDelivery>,
}

use crate::build::{Build, DEMO_CARRIERS};
use crate::forward::*;

/// Run the simulation.
pub fn simulate(cfg: &FleetConfig) -> Result<Fleet, SimError> {
    if cfg.tanks == 0 || cfg.vehicles == 0 || cfg.vehicles_per_carrier == 0 {
        return Err(SimError::Config {
            name: "tanks/vehicles",
            value: 0.0,
            reason: "need at least one tank and one vehicle",
        });
    }
    let mut build = Build {
        cfg,
        rng: Rng::new(cfg.seed),
    };
    let mut tanks = Vec::with_capacity(cfg.tanks);
    for i in 0..cfg.tanks {
        tanks.push(build.tank(i)?);
    }
    let vehicles: Vec<SimVehicle> = (0..cfg.vehicles)
        .map(|v| {
            let c = v / cfg.vehicles_per_carrier;
            let (carrier, name) = match cfg.naming {
                Naming::Numbered => (format!("Carrier {}", c + 1), format!("V{:02}", v + 1)),
                Naming::Demo => {
                    let carrier = DEMO_CARRIERS[c % DEMO_CARRIERS.len()];
                    let prefix: String = carrier
                        .split_whitespace()
                        .filter_map(|w| w.chars().next())
                        .take(2)
                        .collect();
                    (carrier.to_string(), format!("{prefix}-T{}", 21 + v))
                }
            };
            let short_fraction = cfg
                .faults
                .iter()
                .filter_map(|f| match f {
                    Fault::VehicleShort { vehicle, fraction } if *vehicle == v => Some(*fraction),
                    _ => None,
                })
                .sum();
            SimVehicle {
                name,
                carrier,
                short_fraction,
            }
        })
        .collect();
    // tanks are independent (each has its own random stream): simulate them on worker threads
    let threads = std::thread::available_parallelism()
        .map_or(1, std::num::NonZeroUsize::get)
        .min(tanks.len());
    let per = tanks.len().div_ceil(threads.max(1));
    let parts: Vec<Result<TankOutput, SimError>> = std::thread::scope(|scope| {
        let handles: Vec<_> = tanks
            .chunks(per)
            .enumerate()
            .map(|(c, chunk)| {
                let vehicles = &vehicles;
                scope.spawn(move || {
                    chunk
                        .iter()
                        .enumerate()
                        .map(|(j, t)| simulate_tank(cfg, c * per + j, t, vehicles))
                        .collect::<Vec<_>>()
                })
            })
            .collect();
        handles
            .into_iter()
            .flat_map(|h| {
                h.join().unwrap_or_else(|_| {
                    vec![Err(SimError::Config {
                        name: "worker",
                        value: 0.0,
                        reason: "a simulation thread panicked",
                    })]
                })
            })
            .collect()
    });
    let mut readings = Vec::new();
    let mut deliveries = Vec::new();
    for part in parts {
        let (r, d) = part?;
        readings.extend(r);
        deliveries.extend(d);
    }
    let mut ticket_no = 100_000u64;
    for d in deliveries.iter_mut().filter(|d| d.logged) {
        ticket_no += 1;
        d.ticket = format!("TK{ticket_no}");
    }
    Ok(Fleet {
        config: cfg.clone(),
        tanks,
        vehicles,
        readings,
        deliveries,
    })
}

pub(crate) type TankOutput = (Vec<SimReading>, Vec<SimDelivery>);
