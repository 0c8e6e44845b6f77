//! The fleet model: configuration, tanks, the hourly forward simulation.

use fluids::{FluidId, Phase, fluid};
use tank::{
    Conditions, ContentsOptions, Cylinder, DpUnit, Head, LiquidState, Orientation, Tank,
    barometer_pa_from_elevation, dp_unit_from_pa,
};

use crate::SimError;
use crate::rng::Rng;

/// 2026-01-01T00:00:00Z in ms since the Unix epoch (a Thursday).
pub const DEFAULT_START_MS: i64 = 1_767_225_600_000;
const HOUR_MS: i64 = 3_600_000;
const DAY_MS: i64 = 24 * HOUR_MS;

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
    /// Tank `tank` loses `kg_per_day` beyond its use from day `from_day` on.
    Leak {
        /// Tank index.
        tank: usize,
        /// First day of the leak.
        from_day: u32,
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
    pub heads: &'static str,
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

const DEMO_SITES: [&str; 12] = [
    "Alder Street Bakery Works",
    "Brackenfield Hospital",
    "Cobble Hill Brewery",
    "Dunmere Steel Fabrication",
    "Elmstead Food Freezing",
    "Foxglove Research Campus",
    "Gannet Bay Fish Processing",
    "Hollowell Lane Laser Cutting",
    "Inchmoor Glassworks",
    "Juniper Court Clinic",
    "Kestrel Park Semiconductor",
    "Larkspur Dairy",
];
const DEMO_CARRIERS: [&str; 3] = [
    "Bluefrost Haulage",
    "Marrowgate Cryo Transport",
    "Pinecrest Liquid Lines",
];

fn short_name(f: FluidId) -> &'static str {
    match f {
        FluidId::Nitrogen => "N2",
        FluidId::Oxygen => "O2",
        FluidId::Argon => "AR",
        FluidId::CarbonDioxide => "CO2",
        FluidId::Methane => "CH4",
        FluidId::Hydrogen | FluidId::Parahydrogen => "H2",
    }
}

/// Nameplate NER by fluid and gross volume, % per day: smaller tanks lose a larger share (surface over
/// volume); CO2 tanks at about half. Common practice, no source.
pub fn nameplate_ner_percent_per_day(f: FluidId, gross_volume_m3: f64) -> f64 {
    let base = (0.6 * (gross_volume_m3 / 5.0).powf(-0.4)).clamp(0.12, 1.0);
    if f == FluidId::CarbonDioxide {
        0.5 * base
    } else {
        base
    }
}

struct Build<'a> {
    cfg: &'a FleetConfig,
    rng: Rng,
}

impl Build<'_> {
    fn tank(&mut self, i: usize) -> Result<SimTank, SimError> {
        let rng = &mut self.rng;
        let fluids4 = [
            FluidId::Nitrogen,
            FluidId::Oxygen,
            FluidId::Argon,
            FluidId::CarbonDioxide,
        ];
        let f = fluids4[i % 4];
        let horizontal = (i / 4 + i) % 2 == 1;
        let orientation = if horizontal {
            Orientation::Horizontal
        } else {
            Orientation::Vertical
        };
        let diameter_m = (rng.range(1.6, 3.0) * 20.0).round() / 20.0;
        let length_m = (diameter_m * rng.range(1.6, 4.0) * 10.0).round() / 10.0;
        let (heads, head) = if rng.uniform() < 0.5 {
            ("ellipsoidal", Head::ELLIPSOIDAL_2_1)
        } else {
            ("torispherical", Head::ASME_FD)
        };
        let cyl =
            Cylinder::new(orientation, diameter_m, length_m, head).map_err(|e| SimError::Tank {
                tank: format!("#{i}"),
                source: e,
            })?;
        let gross = cyl.gross_volume_m3();
        // two tanks a site: they share its elevation
        let site_rng = &mut Rng::new(self.cfg.seed ^ (0xE1E7 + (i / 2) as u64));
        let elevation_m = (site_rng.range(0.0, 600.0)).round();
        let barometer_pa =
            barometer_pa_from_elevation(elevation_m).map_err(|e| SimError::Tank {
                tank: format!("#{i}"),
                source: e,
            })?;
        let (lo_barg, width) = if f == FluidId::CarbonDioxide {
            (rng.range(13.0, 13.5), rng.range(0.8, 1.5))
        } else {
            (rng.range(3.0, 12.0), rng.range(1.0, 2.5))
        };
        let hi_barg = (lo_barg + width).min(15.0);
        let band_pa = (lo_barg * 1e5 + barometer_pa, hi_barg * 1e5 + barometer_pa);
        let dp_unit = if i % 3 == 2 {
            DpUnit::Mbar
        } else {
            DpUnit::InH2O
        };
        // span: a round figure above a full tank of liquid saturated at 1 atm
        let cold = fluid(f)
            .saturation_from_pressure(fluid(f).triple().pressure_pa.max(101_325.0) * 1.01)
            .map_err(|e| SimError::Fluid {
                tank: format!("#{i}"),
                source: e,
            })?;
        let full_dp = tank::STANDARD_GRAVITY * cold.liquid_density_kg_m3 * cyl.inner_height_m();
        let step = if dp_unit == DpUnit::Mbar { 50.0 } else { 25.0 };
        let gauge_span = (dp_unit_from_pa(full_dp * 1.1, dp_unit) / step).ceil() * step;
        let ner = nameplate_ner_percent_per_day(f, gross);
        let true_ner = ner * rng.range(self.cfg.true_ner_factor.0, self.cfg.true_ner_factor.1);
        let interval = rng.range(self.cfg.fill_interval_days.0, self.cfg.fill_interval_days.1);
        let reorder_percent = [20.0, 25.0, 30.0][rng.below(3)];
        let mid_sat = fluid(f)
            .saturation_from_pressure(0.5 * (band_pa.0 + band_pa.1))
            .map_err(|e| SimError::Fluid {
                tank: format!("#{i}"),
                source: e,
            })?;
        let full_mass = gross * mid_sat.liquid_density_kg_m3;
        let usage_kg_per_day = (0.86 - reorder_percent / 100.0) * full_mass / interval;
        let (site, name) = match self.cfg.naming {
            Naming::Numbered => (format!("S{:04}", i / 2 + 1), format!("T{:05}", i + 1)),
            Naming::Demo => {
                let s = DEMO_SITES[(i / 2) % DEMO_SITES.len()];
                let round = i / (2 * DEMO_SITES.len());
                let site = if round == 0 {
                    s.to_string()
                } else {
                    format!("{s} {}", round + 1)
                };
                let initials: String = s
                    .split_whitespace()
                    .filter_map(|w| w.chars().next())
                    .take(3)
                    .collect();
                (site, format!("{initials}-{}-{}", short_name(f), i + 1))
            }
        };
        Ok(SimTank {
            site,
            name,
            fluid: f,
            orientation,
            diameter_m,
            length_m,
            heads,
            elevation_m,
            barometer_pa,
            dp_unit,
            gauge_span,
            gauge_accuracy_percent: [0.25, 0.5][rng.below(2)],
            relief_barg: (hi_barg + 2.0).min(17.2),
            reorder_percent,
            ner_percent_per_day: (ner * 1000.0).round() / 1000.0,
            true_ner_percent_per_day: true_ner,
            band_pa,
            pressure_unit: if i % 5 == 4 { "psig" } else { "barg" },
            usage_kg_per_day,
            gross_volume_m3: gross,
        })
    }
}

/// Relative use by weekday, Monday first (weekends quieter). Common practice, no source.
const WEEKLY: [f64; 7] = [1.15, 1.15, 1.15, 1.15, 1.1, 0.75, 0.55];

/// Relative use by hour of day (a day shift). Common practice, no source.
fn hourly_shape(hour: i64) -> f64 {
    if (6..18).contains(&hour) { 1.5 } else { 0.5 }
}

#[derive(Clone, Copy)]
struct State {
    mass_kg: f64,
    liquid_h_j_kg: f64,
    pressure_pa: f64,
    set_pa: f64,
    liquid_fraction: f64,
    time_ms: i64,
}

struct TankSim<'a> {
    t: &'a SimTank,
    engine: Tank<&'static fluids::Fluid>,
    f: &'static fluids::Fluid,
    heat_w: f64,
    day_factor: Vec<f64>,
    leak: Option<(i64, f64)>,
    span_drift_per_ms: f64,
    zero_offset_pa: f64,
    start_ms: i64,
}

impl TankSim<'_> {
    fn fluid_err(&self, e: fluids::FluidError) -> SimError {
        SimError::Fluid {
            tank: self.t.name.clone(),
            source: e,
        }
    }
    fn tank_err(&self, e: tank::TankError) -> SimError {
        SimError::Tank {
            tank: self.t.name.clone(),
            source: e,
        }
    }

    fn liquid_saturation_pa(&self, s: &State) -> Result<f64, SimError> {
        let sat = self
            .f
            .saturation_from_liquid_enthalpy(s.liquid_h_j_kg)
            .map_err(|e| self.fluid_err(e))?;
        Ok(sat.pressure_pa.min(s.pressure_pa))
    }

    /// Integrate use, heat leak and pressure control to `to_ms`, in steps of at most an hour.
    fn advance(&self, s: &mut State, to_ms: i64) -> Result<(), SimError> {
        while s.time_ms < to_ms {
            let next = ((s.time_ms / HOUR_MS) + 1) * HOUR_MS;
            let step_end = next.min(to_ms);
            let dt_s = (step_end - s.time_ms) as f64 / 1000.0;
            let rel = s.time_ms - self.start_ms;
            let day = usize::try_from(rel.div_euclid(DAY_MS)).unwrap_or(0);
            let hour = rel.rem_euclid(DAY_MS) / HOUR_MS;
            let factor = self.day_factor.get(day).copied().unwrap_or(1.0);
            let mut draw = self.t.usage_kg_per_day / 86_400.0 * factor * hourly_shape(hour) * dt_s;
            if let Some((from, kg_day)) = self.leak
                && s.time_ms >= from
            {
                draw += kg_day / 86_400.0 * dt_s;
            }
            s.mass_kg = (s.mass_kg - draw).max(1.0);
            let m_liquid = (s.mass_kg * s.liquid_fraction).max(1.0);
            s.liquid_h_j_kg += self.heat_w * dt_s / m_liquid;
            let sat = self
                .f
                .saturation_from_pressure(s.pressure_pa)
                .map_err(|e| self.fluid_err(e))?;
            if s.liquid_h_j_kg > sat.liquid_enthalpy_j_kg {
                // the heat beyond saturation boils liquid away
                let boiled = (s.liquid_h_j_kg - sat.liquid_enthalpy_j_kg) * m_liquid
                    / sat.latent_heat_j_kg();
                s.mass_kg = (s.mass_kg - boiled).max(1.0);
                s.liquid_h_j_kg = sat.liquid_enthalpy_j_kg;
            }
            // the pressure builder brings the pressure back to its set point (time constant 6 h)
            s.pressure_pa += (s.set_pa - s.pressure_pa) * (1.0 - (-dt_s / 21_600.0).exp());
            s.time_ms = step_end;
        }
        Ok(())
    }

    /// Liquid volume and conditions of the current state.
    fn observe(&self, s: &mut State) -> Result<(f64, Conditions, f64), SimError> {
        let p_s = self.liquid_saturation_pa(s)?;
        let sat_tank = self
            .f
            .saturation_from_pressure(s.pressure_pa)
            .map_err(|e| self.fluid_err(e))?;
        let sat_liq = self
            .f
            .saturation_from_pressure(p_s)
            .map_err(|e| self.fluid_err(e))?;
        let rho_l = if p_s >= s.pressure_pa * (1.0 - 1e-12) {
            sat_tank.liquid_density_kg_m3
        } else {
            self.f
                .density_from_temperature_pressure(
                    sat_liq.temperature_k,
                    s.pressure_pa,
                    Phase::Liquid,
                )
                .map_err(|e| self.fluid_err(e))?
        };
        let rho_v = sat_tank.vapor_density_kg_m3;
        let gross = self.t.gross_volume_m3;
        let v_l = ((s.mass_kg - rho_v * gross) / (rho_l - rho_v)).clamp(0.0, gross);
        s.liquid_fraction = (rho_l * v_l / s.mass_kg).clamp(0.0, 1.0);
        let c = Conditions::saturated(s.pressure_pa)
            .with_liquid(LiquidState::SaturatedAtPressure { pressure_pa: p_s });
        Ok((v_l, c, p_s))
    }

    fn reading(
        &self,
        s: &mut State,
        rng: &mut Rng,
        index: usize,
        noise: (f64, f64),
    ) -> Result<SimReading, SimError> {
        let (v_l, c, p_s) = self.observe(s)?;
        let dp_true = self
            .engine
            .dp_from_liquid_volume(v_l, &c, &ContentsOptions::default())
            .map_err(|e| self.tank_err(e))?;
        let span_pa = tank::dp_pa_from_unit(self.t.gauge_span, self.t.dp_unit);
        let drift = 1.0 + self.span_drift_per_ms * (s.time_ms - self.start_ms) as f64;
        let shown_pa = dp_true * drift + self.zero_offset_pa + noise.0 * span_pa * rng.normal();
        let resolution = if self.t.dp_unit == DpUnit::Mbar {
            1.0
        } else {
            0.1
        };
        let dp = (dp_unit_from_pa(shown_pa, self.t.dp_unit) / resolution).round() * resolution;
        let p_gauge_pa = s.pressure_pa - self.t.barometer_pa + noise.1 * rng.normal();
        let pressure = if self.t.pressure_unit == "psig" {
            (p_gauge_pa / units::PSI_PA).round()
        } else {
            (p_gauge_pa / 1e4).round() / 10.0
        };
        Ok(SimReading {
            tank: index,
            time_ms: s.time_ms,
            dp: (dp * 10.0).round() / 10.0,
            pressure,
            true_total_mass_kg: s.mass_kg,
            true_liquid_saturation_pa: p_s,
        })
    }

    /// Fill fraction (liquid volume over gross) of the current state.
    fn fill_fraction(&self, s: &mut State) -> Result<f64, SimError> {
        Ok(self.observe(s)?.0 / self.t.gross_volume_m3)
    }
}

enum Event {
    Daily,
    Fill { logged: bool },
}

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

type TankOutput = (Vec<SimReading>, Vec<SimDelivery>);

fn simulate_tank(
    cfg: &FleetConfig,
    index: usize,
    t: &SimTank,
    vehicles: &[SimVehicle],
) -> Result<TankOutput, SimError> {
    let mut readings = Vec::new();
    let mut deliveries = Vec::new();
    {
        let mut rng =
            Rng::new(cfg.seed ^ (0x5EED_0000_0000 + index as u64).wrapping_mul(0x9E37_79B9));
        let f = fluid(t.fluid);
        let geometry = Cylinder::new(
            t.orientation,
            t.diameter_m,
            t.length_m,
            if t.heads == "ellipsoidal" {
                Head::ELLIPSOIDAL_2_1
            } else {
                Head::ASME_FD
            },
        )
        .map_err(|e| SimError::Tank {
            tank: t.name.clone(),
            source: e,
        })?;
        let engine = Tank::new(geometry, f);
        // heat leak at the true NER: full tank of liquid at 1 atm (CO2: at its band) times latent heat
        let reference_pa = if t.fluid == FluidId::CarbonDioxide {
            0.5 * (t.band_pa.0 + t.band_pa.1)
        } else {
            101_325.0
        };
        let reference = f
            .saturation_from_pressure(reference_pa)
            .map_err(|e| SimError::Fluid {
                tank: t.name.clone(),
                source: e,
            })?;
        let heat_w = t.true_ner_percent_per_day / 100.0
            * t.gross_volume_m3
            * reference.liquid_density_kg_m3
            * reference.latent_heat_j_kg()
            / 86_400.0;
        let day_factor: Vec<f64> = (0..cfg.days)
            .map(|d| {
                let weekday = (3 + d as usize) % 7;
                WEEKLY[weekday] * (0.15 * rng.normal()).exp()
            })
            .collect();
        let mut leak = None;
        let mut span_drift_per_ms = 0.0;
        let mut zero_offset_pa = 0.0;
        let mut unlogged: Vec<u32> = Vec::new();
        for fault in &cfg.faults {
            match *fault {
                Fault::Leak {
                    tank,
                    from_day,
                    kg_per_day,
                } if tank == index => {
                    leak = Some((cfg.start_ms + i64::from(from_day) * DAY_MS, kg_per_day))
                }
                Fault::GaugeSpanDrift {
                    tank,
                    fraction_per_year,
                } if tank == index => {
                    span_drift_per_ms = fraction_per_year / (365.0 * DAY_MS as f64)
                }
                Fault::GaugeZeroOffset { tank, offset_pa } if tank == index => {
                    zero_offset_pa = offset_pa
                }
                Fault::UnloggedDelivery { tank, day } if tank == index => unlogged.push(day),
                _ => {}
            }
        }
        let sim = TankSim {
            t,
            engine,
            f,
            heat_w,
            day_factor,
            leak,
            span_drift_per_ms,
            zero_offset_pa,
            start_ms: cfg.start_ms,
        };
        // start half full, the liquid part-way between supply and tank saturation
        let supply_pa = supply_pressure_pa(t.fluid, &mut rng);
        let p0 = 0.5 * (t.band_pa.0 + t.band_pa.1);
        let h_supply = f
            .saturation_from_pressure(supply_pa)
            .map_err(|e| sim.fluid_err(e))?
            .liquid_enthalpy_j_kg;
        let h_tank = f
            .saturation_from_pressure(p0)
            .map_err(|e| sim.fluid_err(e))?
            .liquid_enthalpy_j_kg;
        let mut s = State {
            mass_kg: 0.6 * t.gross_volume_m3 * reference.liquid_density_kg_m3,
            liquid_h_j_kg: 0.5 * (h_supply + h_tank),
            pressure_pa: p0,
            set_pa: p0,
            liquid_fraction: 0.97,
            time_ms: cfg.start_ms,
        };
        let noise = (cfg.dp_noise_fraction_of_span, cfg.pressure_noise_pa);
        let mut fill_day: Option<u32> = None;
        for day in 0..cfg.days {
            let day_ms = cfg.start_ms + i64::from(day) * DAY_MS;
            let mut events: Vec<(i64, Event)> = vec![(
                day_ms + 8 * HOUR_MS + (rng.uniform() * 3_600_000.0) as i64 / 1000 * 1000,
                Event::Daily,
            )];
            if fill_day == Some(day) {
                let start = day_ms
                    + 10 * HOUR_MS
                    + (rng.uniform() * 5.0 * 3_600_000.0) as i64 / 60_000 * 60_000;
                // an unlogged delivery takes the place of the first fill due on or after its day
                let logged = match unlogged.iter().position(|&d| d <= day) {
                    Some(k) => {
                        unlogged.remove(k);
                        false
                    }
                    None => true,
                };
                events.push((start, Event::Fill { logged }));
            }
            events.sort_by_key(|e| e.0);
            for (at, event) in events {
                match event {
                    Event::Daily => {
                        sim.advance(&mut s, at)?;
                        readings.push(sim.reading(&mut s, &mut rng, index, noise)?);
                        if fill_day.is_none()
                            && sim.fill_fraction(&mut s)? * 100.0 < t.reorder_percent
                        {
                            fill_day = Some(day + 1);
                        }
                        // the pressure set point wanders inside the band
                        s.set_pa = rng.range(t.band_pa.0, t.band_pa.1);
                    }
                    Event::Fill { logged } => {
                        fill_day = None;
                        sim.advance(&mut s, at)?;
                        let supply_pa = supply_pressure_pa(t.fluid, &mut rng);
                        let supply = f
                            .saturation_from_pressure(supply_pa)
                            .map_err(|e| sim.fluid_err(e))?;
                        let target = 0.87 * t.gross_volume_m3 * supply.liquid_density_kg_m3;
                        let intended = target - s.mass_kg;
                        if intended < 0.1 * target {
                            continue;
                        }
                        let vehicle = rng.below(cfg.vehicles);
                        let short = vehicles.get(vehicle).map_or(0.0, |v| v.short_fraction);
                        let delivered = intended * (1.0 - short);
                        let billed = intended * (1.0 + cfg.meter_noise_rel * rng.normal());
                        // readings bracket the fill: the before reading at `at`, the fill starts
                        // after it
                        let start = if logged {
                            readings.push(sim.reading(&mut s, &mut rng, index, noise)?);
                            at + ((5.0 + rng.uniform() * 35.0) * 60_000.0) as i64
                        } else {
                            at
                        };
                        sim.advance(&mut s, start)?;
                        let m_liquid = s.mass_kg * s.liquid_fraction;
                        let minutes = 20.0 + intended / 250.0;
                        let end = start + (minutes * 60_000.0) as i64 / 60_000 * 60_000;
                        // the delivered liquid goes in during the fill; mixing by enthalpy at its end
                        sim.advance(&mut s, end)?;
                        let m_left = (s.mass_kg * s.liquid_fraction).min(m_liquid);
                        s.liquid_h_j_kg = (m_left * s.liquid_h_j_kg
                            + delivered * supply.liquid_enthalpy_j_kg)
                            / (m_left + delivered);
                        s.mass_kg += delivered;
                        // a top fill collapses the ullage pressure, the builder restores it
                        let p_s = sim.liquid_saturation_pa(&s)?;
                        s.pressure_pa =
                            (t.band_pa.0 - rng.range(0.5e5, 2.0e5)).max(p_s.max(supply_pa) + 0.2e5);
                        s.liquid_h_j_kg = s.liquid_h_j_kg.min(
                            f.saturation_from_pressure(s.pressure_pa)
                                .map_err(|e| sim.fluid_err(e))?
                                .liquid_enthalpy_j_kg,
                        );
                        s.set_pa = rng.range(t.band_pa.0, t.band_pa.1);
                        let supply_barg = (rng.uniform() < cfg.supply_pressure_on_ticket)
                            .then(|| ((supply_pa - t.barometer_pa) / 1e4).round() / 10.0);
                        if logged {
                            let after = end + ((5.0 + rng.uniform() * 35.0) * 60_000.0) as i64;
                            sim.advance(&mut s, after)?;
                            readings.push(sim.reading(&mut s, &mut rng, index, noise)?);
                        }
                        deliveries.push(SimDelivery {
                            tank: index,
                            ticket: if logged {
                                String::from("pending")
                            } else {
                                String::new()
                            },
                            start_ms: start,
                            end_ms: end,
                            billed_kg: (billed * 10.0).round() / 10.0,
                            vehicle,
                            supply_pressure_barg: supply_barg,
                            delivered_kg: delivered,
                            logged,
                        });
                    }
                }
            }
        }
    }
    Ok((readings, deliveries))
}

/// The pressure of a trailer's liquid, Pa absolute: 1.8–3.5 bar for the cryogens, 11–12.5 bar for
/// carbon dioxide. Common practice, no source.
fn supply_pressure_pa(f: FluidId, rng: &mut Rng) -> f64 {
    if f == FluidId::CarbonDioxide {
        rng.range(11.0e5, 12.5e5)
    } else {
        rng.range(1.8e5, 3.5e5)
    }
}
