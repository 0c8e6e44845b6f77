"""Fluid properties and the gauge's hydrostatics for the independent fleet model (tools/indep).

Every property comes from CoolProp (Bell et al. 2014), which evaluates the reference Helmholtz-energy
equations of state of each fluid. Two kinds of calls:

* exact CoolProp calls, used wherever a number reaches a CSV file (the DP a gauge shows at a
  reading, the liquid temperature at that instant, the normal density for Nm3 tickets);
* small tables of saturation properties against pressure or temperature, built from CoolProp once per
  fluid and interpolated linearly, used only inside the 15-minute time stepping (how fast the heat
  leak warms the liquid, when a fill is called), where they steer the simulation but never produce a
  reported figure.
"""

from __future__ import annotations

import bisect

import CoolProp.CoolProp as CP
from CoolProp.CoolProp import AbstractState

G_STD = 9.80665  # standard acceleration of gravity, m/s^2 (3rd CGPM 1901; ISO 80000-3)
P_NORMAL = 101325.0  # Pa, "normal" conditions for Nm3
T_NORMAL = 273.15  # K
T_ZERO_C = 273.15

COOLPROP_NAME = {
    "nitrogen": "Nitrogen",
    "oxygen": "Oxygen",
    "argon": "Argon",
    "carbon-dioxide": "CarbonDioxide",
}


def isa_pressure(elevation_m: float) -> float:
    """Standard-atmosphere pressure (Pa) at a geopotential height (troposphere; ICAO Doc 7488, ISO 2533)."""
    t0, lapse = 288.15, 0.0065  # K, K/m
    molar, r_gas = 0.0289644, 8.31432  # kg/mol, J/(mol K), the values of the standard atmosphere
    expo = G_STD * molar / (r_gas * lapse)
    return 101325.0 * (1.0 - lapse * elevation_m / t0) ** expo


class _Table:
    """y(x) on a rising grid, linear interpolation, clamped at the ends."""

    def __init__(self, xs, ys):
        self.xs = list(xs)
        self.ys = list(ys)
        self.n = len(self.xs)
        self.x0 = self.xs[0]
        self.uniform = False
        dx = [b - a for a, b in zip(self.xs, self.xs[1:])]
        if max(dx) - min(dx) < 1e-9 * abs(max(dx)):
            self.uniform = True
            self.dx = dx[0]

    def __call__(self, x: float) -> float:
        xs, ys = self.xs, self.ys
        if self.uniform:
            i = int((x - self.x0) / self.dx)
        else:
            i = bisect.bisect_right(xs, x) - 1
        if i < 0:
            i = 0
        elif i > self.n - 2:
            i = self.n - 2
        x0, x1 = xs[i], xs[i + 1]
        f = (x - x0) / (x1 - x0)
        return ys[i] + f * (ys[i + 1] - ys[i])


class Fluid:
    def __init__(self, name: str, p_min: float = 1.0e5, p_max: float = 26.0e5):
        self.name = name
        self.cp_name = COOLPROP_NAME[name]
        self._sat = AbstractState("HEOS", self.cp_name)
        self._liq = AbstractState("HEOS", self.cp_name)
        self._liq.specify_phase(CP.iphase_liquid)
        self._gas = AbstractState("HEOS", self.cp_name)
        self._gas.specify_phase(CP.iphase_gas)
        self._any = AbstractState("HEOS", self.cp_name)
        self.t_triple = self._sat.keyed_output(CP.iT_triple)
        self.p_triple = self._sat.keyed_output(CP.iP_triple)
        self.molar_mass = self._sat.keyed_output(CP.imolar_mass)
        # stepping tables against absolute pressure
        p_min = max(p_min, self.p_triple * 1.02)
        n = 241
        ps = [p_min + (p_max - p_min) * i / (n - 1) for i in range(n)]
        hl, hg, rl, rv, ts = [], [], [], [], []
        for p in ps:
            s = self.sat_p(p)
            ts.append(s["T"])
            hl.append(s["hL"])
            hg.append(s["hV"])
            rl.append(s["rhoL"])
            rv.append(s["rhoV"])
        self.tab_hl_p = _Table(ps, hl)
        self.tab_hfg_p = _Table(ps, [b - a for a, b in zip(hl, hg)])
        self.tab_rv_p = _Table(ps, rv)
        self.tab_rl_p = _Table(ps, rl)
        self.tab_t_p = _Table(ps, ts)
        # saturated-liquid enthalpy -> (pressure, density): the liquid's own saturation state
        self.tab_p_hl = _Table(hl, ps)
        self.tab_rl_hl = _Table(hl, rl)
        self.p_tab_min, self.p_tab_max = p_min, p_max

    # exact calls -----------------------------------------------------------------------------
    def sat_p(self, p: float) -> dict:
        a = self._sat
        a.update(CP.PQ_INPUTS, p, 0.0)
        t, rl, hl = a.T(), a.rhomass(), a.hmass()
        a.update(CP.PQ_INPUTS, p, 1.0)
        return {"T": t, "rhoL": rl, "hL": hl, "rhoV": a.rhomass(), "hV": a.hmass()}

    def sat_t(self, t: float) -> dict:
        a = self._sat
        a.update(CP.QT_INPUTS, 0.0, t)
        p, rl, hl = a.p(), a.rhomass(), a.hmass()
        return {"p": p, "rhoL": rl, "hL": hl}

    def liquid(self, t: float, p: float) -> tuple[float, float, float]:
        """(density, enthalpy, isobaric heat capacity) of compressed liquid at (T, p)."""
        a = self._liq
        a.update(CP.PT_INPUTS, p, t)
        return a.rhomass(), a.hmass(), a.cpmass()

    def gas_density(self, t: float, p: float) -> float:
        a = self._gas
        a.update(CP.PT_INPUTS, p, t)
        return a.rhomass()

    def normal_density(self) -> float:
        """Density of the real gas at 0 degC and 101.325 kPa (for Nm3)."""
        a = self._any
        a.update(CP.PT_INPUTS, P_NORMAL, T_NORMAL)
        return a.rhomass()

    def liquid_temperature(self, h: float, p: float) -> tuple[float, bool]:
        """Temperature of liquid with specific enthalpy h at pressure p; (T, saturated?)."""
        s = self.sat_p(p)
        if h >= s["hL"]:
            return s["T"], True
        # start from the saturation temperature whose saturated-liquid enthalpy is h, then Newton on
        # the compressed-liquid enthalpy at p
        p_own = self.tab_p_hl(h)
        p_own = min(max(p_own, self.p_tab_min), p)
        t = self.sat_p(p_own)["T"]
        t = min(t, s["T"] - 1e-4)
        for _ in range(20):
            _, hh, cp = self.liquid(t, p)
            dt = (h - hh) / cp
            t_new = min(t + dt, s["T"] - 1e-7)
            if abs(t_new - t) < 1e-9:
                t = t_new
                break
            t = t_new
        return t, False

    def liquid_density(self, t: float, p: float, saturated: bool, p_sat_top: float) -> float:
        """Liquid density at its temperature and a local pressure (at or above the tank pressure)."""
        if saturated and p <= p_sat_top * (1.0 + 1e-12):
            return self.sat_p(p_sat_top)["rhoL"]
        if saturated:
            # liquid saturated at the surface is compressed by the head below it
            return self.liquid(min(t, self.sat_p(p)["T"] - 1e-7), p)[0]
        return self.liquid(t, p)[0]


def _rk4_column(p_top: float, height: float, density, steps: int) -> float:
    """Pressure at the foot of a static column: integrate dp/dz = rho(p) g downward from p_top."""
    if height <= 0.0:
        return p_top
    dz = height / steps
    p = p_top
    for _ in range(steps):
        k1 = density(p) * G_STD
        k2 = density(p + 0.5 * dz * k1) * G_STD
        k3 = density(p + 0.5 * dz * k2) * G_STD
        k4 = density(p + dz * k3) * G_STD
        p += dz * (k1 + 2 * k2 + 2 * k3 + k4) / 6.0
    return p


def gauge_dp(fluid: Fluid, vessel, mass_total: float, h_liquid: float, p_abs: float,
             t_line: float) -> dict:
    """What an ideal DP cell shows for a tank holding mass_total (liquid + vapour).

    Taps: high at the inner vessel's bottom, low at its top; the cell sits at the level of the
    bottom tap, so the high line has no vertical run and the low line falls the full inner height,
    filled with product gas at the line temperature. The vapour above the liquid is saturated at the
    tank pressure; the liquid is at its own (usually subcooled) temperature and is compressed by
    the head above each point.
    """
    sat = fluid.sat_p(p_abs)
    t_l, saturated = fluid.liquid_temperature(h_liquid, p_abs)
    rho_v = sat["rhoV"]
    v_tot = vessel.volume_total
    height = vessel.height

    def rho_liq(p):
        return fluid.liquid_density(t_l, p, saturated, p_abs)

    # level from mass: liquid density taken at the pressure half-way down the liquid (the density
    # changes by parts in 1e5 over the column, so this is exact for our purpose)
    rho_l = rho_liq(p_abs)
    level = 0.0
    for _ in range(4):
        v_l = (mass_total - rho_v * v_tot) / (rho_l - rho_v)
        v_l = min(max(v_l, 0.0), v_tot)
        level = vessel.level(v_l)
        p_mid = p_abs + rho_v * G_STD * (height - level) + 0.5 * rho_l * G_STD * level
        rho_l = rho_liq(p_mid)
    v_l = (mass_total - rho_v * v_tot) / (rho_l - rho_v)
    level = vessel.level(min(max(v_l, 0.0), v_tot))

    # inside the vessel, from the low tap down to the high tap
    p_surface = p_abs + rho_v * G_STD * (height - level)
    p_bottom = _rk4_column(p_surface, level, rho_liq, 4)
    # the low sensing line: warm gas from the top tap down to the cell
    p_low = _rk4_column(p_abs, height, lambda p: fluid.gas_density(t_line, p), 2)
    dp = p_bottom - p_low
    rho_line = fluid.gas_density(t_line, p_abs)
    return {
        "dp_pa": dp,
        "level_m": level,
        "liquid_volume_m3": v_l,
        "liquid_temperature_k": t_l,
        "saturated": saturated,
        "rho_liquid": rho_l,
        "rho_vapour": rho_v,
        "rho_line": rho_line,
        "fill_fraction": v_l / v_tot,
    }


def full_dp_check(fluid: Fluid, vessel, p_abs: float, t_line: float) -> float:
    """DP of the vessel brim-full of liquid saturated at 1.5 bar below the tank pressure (for spans)."""
    p_cold = max(p_abs - 1.5e5, fluid.p_triple * 1.05, 1.2e5)
    t = fluid.sat_p(p_cold)["T"]
    rho_l = fluid.liquid(t, p_abs)[0]
    rho_line = fluid.gas_density(t_line, p_abs)
    return G_STD * (rho_l - rho_line) * vessel.height


if __name__ == "__main__":
    from vessel import Vessel

    for name in COOLPROP_NAME:
        f = Fluid(name)
        v = Vessel("vertical", 2.2, 6.0, "torispherical")
        p = (18.0 if name == "carbon-dioxide" else 11.0) * 1e5 + 101325.0
        s = f.sat_p(p)
        m = 0.5 * v.volume_total * s["rhoL"]
        r = gauge_dp(f, v, m, s["hL"] - 8000.0, p, 288.15)
        simple = G_STD * ((r["rho_liquid"] - r["rho_vapour"]) * r["level_m"]
                          + (r["rho_vapour"] - r["rho_line"]) * v.height)
        print(f"{name:15s} T={r['liquid_temperature_k']:.3f} K level={r['level_m']:.4f} m "
              f"DP={r['dp_pa']:.2f} Pa  textbook formula {simple:.2f} Pa "
              f"(rel {r['dp_pa'] / simple - 1:+.1e})  Nm3 density {f.normal_density():.5f}")
