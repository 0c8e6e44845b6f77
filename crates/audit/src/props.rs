//! Fluid properties for the audit's hot loop: the reference equations of state, with the two
//! density solves that dominate a reading's cost (compressed liquid at (T, p) and the sensing lines'
//! gas at (T_line, p)) read from tables built once per fluid from the same equations and
//! interpolated bilinearly. Outside a table, or next to a cell the equation refused, the equation
//! is solved directly. `tests` below bound the interpolation error against direct solves.

use std::sync::OnceLock;

use fluids::{Fluid, FluidId, Phase};
use tank::{FluidProperties, SaturationPoint};

/// A regular grid of values over (x, y); NaN where the equation refused.
#[derive(Debug)]
struct Grid {
    x0: f64,
    dx: f64,
    nx: usize,
    y0: f64,
    dy: f64,
    ny: usize,
    v: Vec<f64>,
}

impl Grid {
    fn build(x: (f64, f64, f64), y: (f64, f64, f64), f: impl Fn(f64, f64) -> Option<f64>) -> Grid {
        let nx = ((x.1 - x.0) / x.2).floor() as usize + 1;
        let ny = ((y.1 - y.0) / y.2).floor() as usize + 1;
        let mut v = Vec::with_capacity(nx * ny);
        for i in 0..nx {
            for j in 0..ny {
                let xi = x.0 + x.2 * i as f64;
                let yj = y.0 + y.2 * j as f64;
                v.push(f(xi, yj).unwrap_or(f64::NAN));
            }
        }
        Grid {
            x0: x.0,
            dx: x.2,
            nx,
            y0: y.0,
            dy: y.2,
            ny,
            v,
        }
    }

    fn at(&self, x: f64, y: f64) -> Option<f64> {
        let fx = (x - self.x0) / self.dx;
        let fy = (y - self.y0) / self.dy;
        if !(fx >= 0.0 && fy >= 0.0) {
            return None;
        }
        let (i, j) = (fx.floor() as usize, fy.floor() as usize);
        if i + 1 >= self.nx || j + 1 >= self.ny {
            return None;
        }
        let (tx, ty) = (fx - i as f64, fy - j as f64);
        let g = |a: usize, b: usize| self.v.get(a * self.ny + b).copied();
        let (v00, v01, v10, v11) = (g(i, j)?, g(i, j + 1)?, g(i + 1, j)?, g(i + 1, j + 1)?);
        let r = (1.0 - tx) * ((1.0 - ty) * v00 + ty * v01) + tx * ((1.0 - ty) * v10 + ty * v11);
        r.is_finite().then_some(r)
    }
}

struct Tables {
    /// Liquid density over (T, p − p_sat(T)).
    liquid: Grid,
    /// Gas density over (T, p).
    gas: Grid,
}

fn index(id: FluidId) -> usize {
    FluidId::ALL.iter().position(|&x| x == id).unwrap_or(0)
}

fn tables(f: &'static Fluid) -> &'static Tables {
    static TABLES: [OnceLock<Tables>; 7] = [const { OnceLock::new() }; 7];
    let slot = &TABLES[index(f.id()).min(6)];
    slot.get_or_init(|| {
        let tt = f.triple().temperature_k;
        let tc = f.critical().temperature_k;
        // liquid: 0.1 K steps in T up to 0.95 T_c, 0.5 bar steps of excess pressure up to 40 bar
        let liquid = Grid::build((tt + 0.05, 0.95 * tc, 0.1), (0.0, 40e5, 0.5e5), |t, q| {
            let sat = f.saturation_from_temperature(t).ok()?;
            if q == 0.0 {
                return Some(sat.liquid_density_kg_m3);
            }
            f.density_from_temperature_pressure(t, sat.pressure_pa + q, Phase::Liquid)
                .ok()
        });
        // line gas: 1 K steps from -60 °C to +70 °C, 0.1 bar steps from 0.5 to 41 bar
        let gas = Grid::build((213.15, 343.15, 1.0), (0.5e5, 41e5, 0.1e5), |t, p| {
            f.density_from_temperature_pressure(t, p, Phase::Gas).ok()
        });
        Tables { liquid, gas }
    })
}

/// The audit's fluid: the reference equation of state with tabulated density solves (or the
/// equation alone when `exact`).
#[derive(Clone, Copy)]
pub(crate) struct AuditFluid {
    f: &'static Fluid,
    tables: Option<&'static Tables>,
}

impl std::fmt::Debug for AuditFluid {
    fn fmt(&self, out: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            out,
            "AuditFluid({}, tables: {})",
            self.f.id(),
            self.tables.is_some()
        )
    }
}

impl AuditFluid {
    pub(crate) fn new(f: &'static Fluid, exact: bool) -> Self {
        AuditFluid {
            f,
            tables: (!exact).then(|| tables(f)),
        }
    }
}

impl FluidProperties for AuditFluid {
    fn saturation_at_pressure(&self, pressure_pa: f64) -> tank::Result<SaturationPoint> {
        FluidProperties::saturation_at_pressure(self.f, pressure_pa)
    }
    fn liquid_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> tank::Result<f64> {
        if let Some(t) = self.tables
            && let Ok(sat) = self.f.saturation_from_temperature(temperature_k)
            && pressure_pa >= sat.pressure_pa
            && let Some(rho) = t.liquid.at(temperature_k, pressure_pa - sat.pressure_pa)
        {
            return Ok(rho);
        }
        FluidProperties::liquid_density_kg_m3(self.f, temperature_k, pressure_pa)
    }
    fn gas_density_kg_m3(&self, temperature_k: f64, pressure_pa: f64) -> tank::Result<f64> {
        if let Some(t) = self.tables
            && let Some(rho) = t.gas.at(temperature_k, pressure_pa)
        {
            return Ok(rho);
        }
        FluidProperties::gas_density_kg_m3(self.f, temperature_k, pressure_pa)
    }
    fn gas_density_normal_kg_m3(&self) -> f64 {
        self.f.gas_density_normal_kg_m3()
    }
    fn gas_density_standard_kg_m3(&self) -> f64 {
        self.f.gas_density_standard_kg_m3()
    }
}

/// The saturation pressure of the saturated liquid with specific enthalpy `h_j_kg`: secant iteration
/// on the fast saturation curve h_L(T) from `guess_k`, falling back to the fluid's bracketed solver.
pub(crate) fn saturation_pressure_from_liquid_enthalpy(
    f: &'static Fluid,
    h_j_kg: f64,
    guess_k: f64,
) -> Option<(f64, f64)> {
    let g = |t: f64| f.saturation_from_temperature(t).ok();
    let (tt, tc) = (f.triple().temperature_k, f.critical().temperature_k);
    let mut t0 = guess_k.clamp(tt + 1e-3, tc - 1e-3);
    let mut t1 = (t0 - 0.5).max(tt + 1e-3);
    let (mut s0, mut s1) = (g(t0)?, g(t1)?);
    for _ in 0..30 {
        let (f0, f1) = (
            s0.liquid_enthalpy_j_kg - h_j_kg,
            s1.liquid_enthalpy_j_kg - h_j_kg,
        );
        if f1.abs() < 1e-6 {
            return Some((s1.pressure_pa, s1.temperature_k));
        }
        let denom = f1 - f0;
        if denom == 0.0 {
            break;
        }
        let t2 = t1 - f1 * (t1 - t0) / denom;
        if !(t2 > tt && t2 < tc) {
            break;
        }
        (t0, s0) = (t1, s1);
        t1 = t2;
        s1 = g(t1)?;
    }
    let s = f.saturation_from_liquid_enthalpy(h_j_kg).ok()?;
    Some((s.pressure_pa, s.temperature_k))
}

#[cfg(test)]
mod tests {
    use super::*;
    use fluids::fluid;

    /// Tabulated densities against direct solves of the same equation of state at off-grid points:
    /// relative error below 1e-5 for the liquid and 1e-4 for the line gas (bilinear interpolation on
    /// the grids above; 1e-5 of a tank's mass is what the balances can afford, a thousandth of a
    /// meter's repeatability; the line gas's head is a few % of the liquid's, so 1e-4 of it is less).
    #[test]
    fn tables_match_direct_solves() {
        for id in [
            FluidId::Nitrogen,
            FluidId::Oxygen,
            FluidId::Argon,
            FluidId::CarbonDioxide,
        ] {
            let f = fluid(id);
            let fast = AuditFluid::new(f, false);
            let (tt, tc) = (f.triple().temperature_k, f.critical().temperature_k);
            let mut worst_l: f64 = 0.0;
            let mut worst_g: f64 = 0.0;
            for k in 0..200 {
                let u = (f64::from(k) * 0.618_034).fract();
                let w = (f64::from(k) * 0.414_214).fract();
                let t = tt + 0.3 + u * (0.93 * tc - tt - 0.3);
                let p = f.saturation_from_temperature(t).unwrap().pressure_pa + w * 30e5;
                let exact = f
                    .density_from_temperature_pressure(t, p, Phase::Liquid)
                    .unwrap();
                let got = fast.liquid_density_kg_m3(t, p).unwrap();
                worst_l = worst_l.max((got / exact - 1.0).abs());
                let tl = 250.0 + u * 70.0;
                let pg = 1e5 + w * 30e5;
                if let Ok(exact) = f.density_from_temperature_pressure(tl, pg, Phase::Gas) {
                    let got = fast.gas_density_kg_m3(tl, pg).unwrap();
                    worst_g = worst_g.max((got / exact - 1.0).abs());
                }
            }
            println!("{id}: liquid {worst_l:.1e}, gas {worst_g:.1e}");
            assert!(worst_l < 1e-5, "{id} liquid {worst_l:e}");
            assert!(worst_g < 1e-4, "{id} gas {worst_g:e}");
        }
    }

    /// The secant inverse of h_L(T) agrees with the fluid's bracketed solver (1 mK, 1e-6 relative in
    /// pressure: both invert the same curve).
    #[test]
    fn enthalpy_inverse() {
        let f = fluid(FluidId::Nitrogen);
        for p in [1.5e5, 3e5, 7e5, 14e5] {
            let h = f.saturation_from_pressure(p).unwrap().liquid_enthalpy_j_kg;
            let (ps, t) = saturation_pressure_from_liquid_enthalpy(f, h, 90.0).unwrap();
            let want = f.saturation_from_liquid_enthalpy(h).unwrap();
            assert!((t - want.temperature_k).abs() < 1e-3);
            assert!((ps / want.pressure_pa - 1.0).abs() < 1e-6);
        }
    }
}
