//! The liquid's thermal history: default settings, adiabatic mixing at a fill, heat leak between fills,
//! and every reading's contents with the tracked liquid state.

use fluids::{Fluid, FluidId};
use tank::{Conditions, ContentsOptions, LiquidState};

use crate::props::{AuditFluid, saturation_pressure_from_liquid_enthalpy};
use crate::tank_audit::DAY_S;
use crate::{AuditOptions, DeliveryInput, ReadingInput, TankInput};

/// Default NER, % per day, for a tank whose nameplate gives none: the heat leak through its insulation
/// over the latent heat of a full tank, Q = (k / t) A (T_ambient − T_liquid) × 1.3, with
/// - A the inner vessel's surface, taken as 1.3 times that of a sphere of the gross volume
///   (an elongated vessel; common practice, no source);
/// - vacuum-insulated cryogens: evacuated perlite, k = 1.5 mW/(m K) (Barron, "Cryogenic Systems",
///   2nd ed. 1985, evacuated powder insulations, from memory), annulus t = 0.15 m;
/// - carbon dioxide (foam-insulated, not vacuum): polyurethane foam, k = 0.025 W/(m K) (ASHRAE
///   Handbook—Fundamentals, insulating materials, from memory), t = 0.15 m;
/// - × 1.3 for supports and piping, T_ambient = 288.15 K (common practice, no source).
///
/// A 10 m³ nitrogen tank comes out near 0.4 % per day, within the 0.2–0.5 % per day makers state for
/// such vessels (from memory).
pub fn default_ner_percent_per_day(
    fluid: FluidId,
    gross_volume_m3: f64,
    full_mass_kg: f64,
    latent_heat_j_kg: f64,
    liquid_temperature_k: f64,
) -> f64 {
    const AMBIENT_K: f64 = 288.15;
    let (k_w_m_k, thickness_m) = if fluid == FluidId::CarbonDioxide {
        (0.025, 0.15)
    } else {
        (1.5e-3, 0.15)
    };
    let sphere_m2 =
        (36.0 * std::f64::consts::PI).cbrt() * gross_volume_m3.max(0.01).powf(2.0 / 3.0);
    let area_m2 = 1.3 * sphere_m2;
    let heat_w =
        1.3 * k_w_m_k / thickness_m * area_m2 * (AMBIENT_K - liquid_temperature_k).max(0.0);
    let per_day = heat_w * DAY_S / (latent_heat_j_kg * full_mass_kg).max(f64::MIN_POSITIVE);
    100.0 * per_day
}

/// Default pressure of a trailer's liquid, Pa absolute, when the ticket has none: 2.5 bar for the
/// cryogens, 12 bar for carbon dioxide. Common practice, no source.
pub fn default_supply_pressure_pa(fluid: FluidId) -> f64 {
    match fluid {
        FluidId::CarbonDioxide => 12e5,
        _ => 2.5e5,
    }
}

/// Adiabatic mixing by enthalpy: `m1` kg of liquid at specific enthalpy `h1` with `m2` kg at `h2`;
/// returns the mixture's specific enthalpy, J/kg.
pub fn mix_liquids(m1_kg: f64, h1_j_kg: f64, m2_kg: f64, h2_j_kg: f64) -> f64 {
    let m = m1_kg + m2_kg;
    if m <= 0.0 {
        return h1_j_kg;
    }
    (m1_kg * h1_j_kg + m2_kg * h2_j_kg) / m
}

/// How far the contents `got` from a reading of `dp_reading_pa` move per unit relative error of the
/// gauge's span, kg: the reading times dM/dΔp = A(h)/g (the liquid's rise per pascal is
/// 1/(g(ρ_l − ρ_v)) and each metre of it holds A(h)(ρ_l − ρ_v) more); 0 where the level was clamped
/// at empty or full. In a vertical tank's straight shell it is about the liquid's mass as if the
/// shell reached the bottom; in a horizontal one it differs from the contents by a factor that
/// changes with the level.
pub(crate) fn span_mass_kg(
    geometry: &tank::Geometry,
    dp_reading_pa: f64,
    got: &tank::Contents,
) -> f64 {
    match got.level_clamp {
        tank::LevelClamp::None => geometry
            .surface_area_at_level(got.liquid_height_m)
            .map_or(0.0, |a| dp_reading_pa * a / tank::STANDARD_GRAVITY),
        _ => 0.0,
    }
}

/// The outcome of one reading in a history pass.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Eval {
    pub(crate) contents_total_kg: f64,
    pub(crate) liquid_kg: f64,
    pub(crate) fill_fraction: f64,
    pub(crate) liquid: LiquidState,
    pub(crate) liquid_saturation_pa: f64,
    pub(crate) liquid_temperature_k: f64,
    pub(crate) saturation_temperature_k: f64,
    pub(crate) liquid_cap_j_kg: f64,
    /// How far the contents move per unit relative error of the gauge's span, kg (see
    /// [`span_mass_kg`]).
    pub(crate) span_kg: f64,
}

pub(crate) struct Ctx<'a> {
    pub(crate) input: &'a TankInput,
    pub(crate) tank: tank::Tank<AuditFluid>,
    pub(crate) opts: &'a AuditOptions,
    pub(crate) f: &'static Fluid,
    pub(crate) readings: Vec<ReadingInput>,
    pub(crate) deliveries: Vec<DeliveryInput>,
    pub(crate) contents_opts: ContentsOptions,
    pub(crate) full_mass_kg: f64,
    pub(crate) latent_j_kg: f64,
}

pub(crate) enum Mode<'a> {
    Full,
    Brackets {
        liquid_kg: &'a [f64],
        caps: &'a [f64],
        needed: &'a [bool],
    },
}

impl Ctx<'_> {
    pub(crate) fn conditions(&self, r: &ReadingInput, liquid: LiquidState) -> Conditions {
        let liquid = match r.liquid_temperature_k {
            Some(t) => LiquidState::Temperature { temperature_k: t },
            None => liquid,
        };
        Conditions::saturated(r.pressure_pa)
            .with_liquid(liquid)
            .with_line_temperature_k(self.input.line_temperature_k)
    }

    pub(crate) fn supply_h(&self, d: &DeliveryInput) -> Option<f64> {
        let p = d
            .supply_pressure_pa
            .unwrap_or_else(|| default_supply_pressure_pa(self.f.id()));
        self.f
            .saturation_from_pressure(p)
            .or_else(|_| {
                self.f
                    .saturation_from_pressure(default_supply_pressure_pa(self.f.id()))
            })
            .ok()
            .map(|s| s.liquid_enthalpy_j_kg)
    }

    /// Evaluate one reading with liquid enthalpy `h` (already capped).
    pub(crate) fn evaluate(
        &self,
        r: &ReadingInput,
        h: f64,
        cap: f64,
        guess_k: f64,
    ) -> Option<Eval> {
        let (liquid, p_s) = if !self.opts.thermal_history || h >= cap - 1e-6 {
            (LiquidState::SaturatedAtTankPressure, r.pressure_pa)
        } else {
            let (ps, _) = saturation_pressure_from_liquid_enthalpy(self.f, h, guess_k)?;
            if ps >= r.pressure_pa {
                (LiquidState::SaturatedAtTankPressure, r.pressure_pa)
            } else {
                (LiquidState::SaturatedAtPressure { pressure_pa: ps }, ps)
            }
        };
        let c = self.conditions(r, liquid);
        let got = self
            .tank
            .contents_from_reading(r.dp_pa, &c, &self.contents_opts)
            .ok()?;
        let span_kg = span_mass_kg(&self.tank.geometry, r.dp_pa, &got);
        Some(Eval {
            span_kg,
            contents_total_kg: got.total_mass_kg,
            liquid_kg: got.liquid_mass_kg,
            fill_fraction: got.fill_fraction,
            liquid,
            liquid_saturation_pa: p_s,
            liquid_temperature_k: got.liquid_temperature_k,
            saturation_temperature_k: got.saturation_temperature_k,
            liquid_cap_j_kg: cap,
        })
    }

    /// One pass of the thermal history with heat leak `heat_w`.
    pub(crate) fn history(&self, heat_w: f64, mode: &Mode<'_>) -> Vec<Option<Eval>> {
        let n = self.readings.len();
        let mut out: Vec<Option<Eval>> = vec![None; n];
        // fills in order of their end, each applied once the clock passes it
        let mut fills = self.deliveries.iter().peekable();
        let mut h: Option<f64> = None;
        let mut cap_last = f64::INFINITY;
        let mut liquid_kg: f64 = 0.0;
        let mut guess_k = self.f.triple().temperature_k + 10.0;
        let mut t_last: Option<i64> = None;
        for (i, r) in self.readings.iter().enumerate() {
            // apply fills that ended before this reading
            while let Some(d) = fills.peek() {
                if d.end_ms > r.time_ms {
                    break;
                }
                if let (Some(hh), Some(t0)) = (h, t_last) {
                    let dt = (d.end_ms - t0).max(0) as f64 / 1000.0;
                    let warmed = (hh + heat_w * dt / liquid_kg.max(1.0)).min(cap_last);
                    if let Some(hs) = self.supply_h(d) {
                        let delivered = d.billed_kg.max(0.0);
                        h = Some(mix_liquids(liquid_kg, warmed, delivered, hs));
                        liquid_kg += delivered;
                        t_last = Some(d.end_ms);
                    }
                }
                fills.next();
            }
            let (cap, hint_liquid) = match mode {
                Mode::Full => {
                    let Ok(sat) = self.f.saturation_from_pressure(r.pressure_pa) else {
                        continue;
                    };
                    (sat.liquid_enthalpy_j_kg, None)
                }
                Mode::Brackets {
                    liquid_kg, caps, ..
                } => (
                    caps.get(i).copied().unwrap_or(f64::INFINITY),
                    liquid_kg.get(i).copied(),
                ),
            };
            if !cap.is_finite() {
                continue;
            }
            let hh = match (h, t_last) {
                (Some(hh), Some(t0)) => {
                    let dt = (r.time_ms - t0).max(0) as f64 / 1000.0;
                    (hh + heat_w * dt / liquid_kg.max(1.0)).min(cap)
                }
                // no history yet: half-way between the supply's liquid and saturation at the tank
                _ => {
                    let hs = self
                        .deliveries
                        .first()
                        .and_then(|d| self.supply_h(d))
                        .or_else(|| {
                            self.f
                                .saturation_from_pressure(default_supply_pressure_pa(self.f.id()))
                                .ok()
                                .map(|s| s.liquid_enthalpy_j_kg)
                        })
                        .unwrap_or(cap);
                    (0.5 * (hs + cap)).min(cap)
                }
            };
            let evaluate = match mode {
                Mode::Full => true,
                Mode::Brackets { needed, .. } => needed.get(i).copied().unwrap_or(false),
            };
            if evaluate {
                if let Some(e) = self.evaluate(r, hh, cap, guess_k) {
                    liquid_kg = e.liquid_kg;
                    guess_k = e.liquid_temperature_k;
                    out[i] = Some(e);
                }
            } else if let Some(m) = hint_liquid {
                liquid_kg = m;
            }
            h = Some(hh);
            cap_last = cap;
            t_last = Some(r.time_ms);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use fluids::{FluidId, fluid};
    use tank::{Conditions, ContentsOptions, Cylinder, Head, LiquidState, Orientation, Tank};

    /// First principles: the span mass is the derivative of the contents read with respect to a
    /// relative error of the reading, so it equals the central difference of the conversion at
    /// Δp(1 ± 10⁻⁴) to 10⁻⁴ relative, for a horizontal tank (where it differs from the contents by a
    /// factor that changes with the level) and a vertical one, at low, middle and high levels of
    /// saturated nitrogen at 9 bar. In the vertical tank's straight shell (radius 1 m, inner height
    /// 7 m: 6 m of shell and two 0.5 m heads) it is, from the hydrostatic balance
    /// Δp = g((ρ_l − ρ_v)h + (ρ_v − ρ_gas)H), π·1²·((ρ_l − ρ_v)h + (ρ_v − ρ_gas)·7) to 1e-9 relative.
    #[test]
    fn the_span_mass_is_the_contents_derivative_in_the_span() {
        let c = Conditions::saturated(9e5).with_liquid(LiquidState::SaturatedAtTankPressure);
        let opts = ContentsOptions::default();
        for orientation in [Orientation::Horizontal, Orientation::Vertical] {
            let engine = Tank::new(
                Cylinder::new(orientation, 2.0, 6.0, Head::ELLIPSOIDAL_2_1).unwrap(),
                fluid(FluidId::Nitrogen),
            );
            let full = engine.geometry.gross_volume_m3();
            for fraction in [0.2, 0.5, 0.85] {
                let dp = engine
                    .dp_from_liquid_volume(fraction * full, &c, &opts)
                    .unwrap();
                let got = engine.contents_from_reading(dp, &c, &opts).unwrap();
                let span = span_mass_kg(&engine.geometry, dp, &got);
                let d = 1e-4;
                let mass = |x: f64| {
                    engine
                        .contents_from_reading(dp * x, &c, &opts)
                        .unwrap()
                        .total_mass_kg
                };
                let numeric = (mass(1.0 + d) - mass(1.0 - d)) / (2.0 * d);
                assert!(
                    (span / numeric - 1.0).abs() < 1e-4,
                    "{orientation:?} at {fraction}: {span} against {numeric}"
                );
                if orientation == Orientation::Vertical && fraction == 0.5 {
                    let (l, v, g) = (
                        got.liquid_density_kg_m3,
                        got.vapour_density_kg_m3,
                        got.line_gas_density_kg_m3,
                    );
                    let shell =
                        std::f64::consts::PI * ((l - v) * got.liquid_height_m + (v - g) * 7.0);
                    assert!((span / shell - 1.0).abs() < 1e-9, "{span} against {shell}");
                }
            }
        }
    }
}
