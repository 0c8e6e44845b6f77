//! The hourly forward model of one tank: use by the week and hour, fills, heat leak, pressures, and
//! the readings and tickets it leaves.

use fluids::{FluidId, Phase, fluid};
use tank::{Conditions, ContentsOptions, Cylinder, DpUnit, LiquidState, Tank, dp_unit_from_pa};

use crate::SimError;
use crate::fleet::*;
use crate::rng::Rng;

/// Relative use by weekday, Monday first (weekends quieter). Common practice, no source.
pub(crate) const WEEKLY: [f64; 7] = [1.15, 1.15, 1.15, 1.15, 1.1, 0.75, 0.55];

/// Relative use by hour of day (a day shift). Common practice, no source.
pub(crate) fn hourly_shape(hour: i64) -> f64 {
    if (6..18).contains(&hour) { 1.5 } else { 0.5 }
}

#[derive(Clone, Copy)]
pub(crate) struct State {
    pub(crate) mass_kg: f64,
    pub(crate) liquid_h_j_kg: f64,
    pub(crate) pressure_pa: f64,
    pub(crate) set_pa: f64,
    pub(crate) liquid_fraction: f64,
    pub(crate) time_ms: i64,
}

pub(crate) struct TankSim<'a> {
    pub(crate) t: &'a SimTank,
    pub(crate) engine: Tank<&'static fluids::Fluid>,
    pub(crate) f: &'static fluids::Fluid,
    pub(crate) heat_w: f64,
    pub(crate) day_factor: Vec<f64>,
    /// A leak: from, to (ms) and its rate, kg/day.
    pub(crate) leak: Option<(i64, i64, f64)>,
    pub(crate) span_drift_per_ms: f64,
    pub(crate) zero_offset_pa: f64,
    pub(crate) start_ms: i64,
    /// The site's clock: use follows the customer's hours and days on it.
    pub(crate) zone: units::Zone,
}

impl TankSim<'_> {
    pub(crate) fn fluid_err(&self, e: fluids::FluidError) -> SimError {
        SimError::Fluid {
            tank: self.t.name.clone(),
            cause: e,
        }
    }
    pub(crate) fn tank_err(&self, e: tank::TankError) -> SimError {
        SimError::Tank {
            tank: self.t.name.clone(),
            cause: e,
        }
    }

    pub(crate) fn liquid_saturation_pa(&self, s: &State) -> Result<f64, SimError> {
        let sat = self
            .f
            .saturation_from_liquid_enthalpy(s.liquid_h_j_kg)
            .map_err(|e| self.fluid_err(e))?;
        Ok(sat.pressure_pa.min(s.pressure_pa))
    }

    /// Integrate use, heat leak and pressure control to `to_ms`, in steps of at most an hour.
    pub(crate) fn advance(&self, s: &mut State, to_ms: i64) -> Result<(), SimError> {
        while s.time_ms < to_ms {
            let next = ((s.time_ms / HOUR_MS) + 1) * HOUR_MS;
            let step_end = next.min(to_ms);
            let dt_s = (step_end - s.time_ms) as f64 / 1000.0;
            // the customer's day and hour on the site's clock
            let rel = s.time_ms + self.zone.offset_ms(s.time_ms) - self.start_ms;
            let day = usize::try_from(rel.div_euclid(DAY_MS)).unwrap_or(0);
            let hour = rel.rem_euclid(DAY_MS) / HOUR_MS;
            let factor = self.day_factor.get(day).copied().unwrap_or(1.0);
            let draw = self.t.usage_kg_per_day / 86_400.0 * factor * hourly_shape(hour) * dt_s;
            let mut lost = draw;
            if let Some((from, to, kg_day)) = self.leak
                && s.time_ms >= from
                && s.time_ms < to
            {
                lost += kg_day / 86_400.0 * dt_s;
            }
            s.mass_kg = (s.mass_kg - lost).max(1.0);
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
                // the economiser sends the boiled vapour down the customer's line first: it meets
                // part of the draw (already taken), and only what exceeds the draw leaves by the
                // relief valve
                s.mass_kg = (s.mass_kg - (boiled - draw).max(0.0)).max(1.0);
                s.liquid_h_j_kg = sat.liquid_enthalpy_j_kg;
            }
            // the pressure builder brings the pressure back to its set point (time constant 6 h)
            s.pressure_pa += (s.set_pa - s.pressure_pa) * (1.0 - (-dt_s / 21_600.0).exp());
            s.time_ms = step_end;
        }
        Ok(())
    }

    /// Liquid volume and conditions of the current state.
    pub(crate) fn observe(&self, s: &mut State) -> Result<(f64, Conditions, f64), SimError> {
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
        let rho_v = sat_tank.vapour_density_kg_m3;
        let gross = self.t.gross_volume_m3;
        let v_l = ((s.mass_kg - rho_v * gross) / (rho_l - rho_v)).clamp(0.0, gross);
        s.liquid_fraction = (rho_l * v_l / s.mass_kg).clamp(0.0, 1.0);
        let c = Conditions::saturated(s.pressure_pa)
            .with_liquid(LiquidState::SaturatedAtPressure { pressure_pa: p_s });
        Ok((v_l, c, p_s))
    }

    pub(crate) fn reading(
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
    pub(crate) fn fill_fraction(&self, s: &mut State) -> Result<f64, SimError> {
        Ok(self.observe(s)?.0 / self.t.gross_volume_m3)
    }
}

pub(crate) enum Event {
    Daily,
    Fill { logged: bool },
}

pub(crate) fn simulate_tank(
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
            t.heads.head(None, None),
        )
        .map_err(|e| SimError::Tank {
            tank: t.name.clone(),
            cause: e,
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
                cause: e,
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
                    days,
                    kg_per_day,
                } if tank == index => {
                    let from = cfg.start_ms + i64::from(from_day) * DAY_MS;
                    leak = Some((from, from + i64::from(days) * DAY_MS, kg_per_day));
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
            zone: cfg.naming.zone(),
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
pub(crate) fn supply_pressure_pa(f: FluidId, rng: &mut Rng) -> f64 {
    if f == FluidId::CarbonDioxide {
        rng.range(11.0e5, 12.5e5)
    } else {
        rng.range(1.8e5, 3.5e5)
    }
}
