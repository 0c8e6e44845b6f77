#!/usr/bin/env python3
"""Independent forward model of a fleet of cryogenic bulk tanks, for testing cryoledger's audit.

Writes tanks.csv, readings.csv and deliveries.csv in cryoledger's import formats, plus truth.json
(every fill with its true delivered mass, every planted fault) and truth_readings.csv (the true state
behind each reading). Shares no code, coefficients or settings with the Rust crates: the physics is
written here from first principles on top of CoolProp (see README.md in this folder).

Usage:  python tools/indep/fleet.py --out DIR [--seed N] [--short-all 0.015] ...
"""

from __future__ import annotations

import argparse
import csv
import datetime as dtm
import json
import math
import os
import random
import sys
import time
from dataclasses import dataclass, field

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from fluid import G_STD, Fluid, full_dp_check, gauge_dp, isa_pressure  # noqa: E402
from vessel import Vessel  # noqa: E402

DAY = 86400.0
HOUR = 3600.0
YEAR = 365.0 * DAY
LB = 0.45359237  # kg, international avoirdupois pound
# unit of the gauge scale: the conventional inch of water (1000 kg/m3 column of 25.4 mm at g_n)
DP_UNITS = {"inH2O": 1000.0 * 0.0254 * G_STD, "mbar": 100.0}
DP_RESOLUTION = {"inH2O": 0.1, "mbar": 1.0}
# payload of a road trailer of each product, kg (a fill never exceeds it)
TRAILER_KG = {"nitrogen": (16500, 19000), "oxygen": (19500, 23000), "argon": (22000, 26000),
              "carbon-dioxide": (20000, 24000)}
FLUID_CODE = {"nitrogen": "LIN", "oxygen": "LOX", "argon": "LAR", "carbon-dioxide": "CO2"}


# ---------------------------------------------------------------------------------------------
# settings
@dataclass
class Settings:
    seed: int
    start: str = "2026-01-01"
    end: str = "2026-12-31"  # last day (inclusive)
    tanks: int = 20
    step_minutes: float = 15.0
    short_all: float = 0.015  # the vehicle short on every fill: billed = delivered (1 + s)
    short_some: tuple = (0.03, 0.04)  # range of the occasional short
    short_some_share: float = 0.4
    drift_per_year: float = -0.04  # span drift of one gauge over a year
    step: float = -0.03  # span step of another gauge
    leak_fraction: tuple = (0.3, 0.6)  # leak rate / the tank's mean use
    leak_days: float = 10.0
    driver_share: tuple = (0.3, 0.5)  # fleet-wide share of fills with driver's readings (range)
    gauge_static: bool = True  # small span/zero calibration errors within the accuracy class
    odd_units: bool = True  # a few tickets in lb or Nm3
    line_temp_swing_c: float = 0.0  # seasonal swing of the true sensing-line temperature
    time_zones: bool = False  # write each site's time zone to tanks.csv (blank: UTC to the reader)


# ---------------------------------------------------------------------------------------------
# invented names
_STEM_A = ["Zor", "Quil", "Vex", "Plon", "Drav", "Ulm", "Tiz", "Krob", "Yel", "Orv", "Snel", "Fram",
           "Gob", "Hask", "Jiv", "Murl", "Nax", "Preb", "Wub", "Xel"]
_STEM_B = ["ander", "ix", "ovel", "ument", "asker", "irn", "ethy", "obal", "ungle", "arth", "oxley",
           "imber", "uzz", "ettle"]
_KIND_WORDS = {
    "three-shift": ["Castings", "Precision Forge", "Sinter Works", "Wire Mill"],
    "two-shift": ["Fabrication Yard", "Bottling Hall", "Laser Cutting", "Weld Shop"],
    "hospital": ["General Infirmary", "Care Campus", "Medical Centre"],
    "lab": ["Research Labs", "Test House", "Materials Lab"],
    "continuous": ["Deep Freeze", "Food Chillers", "Float Glass"],
}
_CARRIER_WORDS = ["Cryo Haulage", "Coldline Carriers", "Bulk Liquids", "Frostway Tankers"]


def _stems(rng: random.Random, n: int) -> list[str]:
    seen, out = set(), []
    while len(out) < n:
        s = rng.choice(_STEM_A) + rng.choice(_STEM_B)
        if s not in seen and s[:3].upper() not in {x[:3].upper() for x in out}:
            seen.add(s)
            out.append(s)
    return out


# ---------------------------------------------------------------------------------------------
# time helpers
def parse_day(s: str) -> float:
    d = dtm.datetime.strptime(s, "%Y-%m-%d").replace(tzinfo=dtm.timezone.utc)
    return d.timestamp()


def iso(t: float) -> str:
    return dtm.datetime.fromtimestamp(round(t), tz=dtm.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def local_weekday(t: float, offset_h: float) -> int:
    return dtm.datetime.fromtimestamp(t + offset_h * HOUR, tz=dtm.timezone.utc).weekday()


# ---------------------------------------------------------------------------------------------
# use profiles: 168 hourly multipliers (Monday 00:00 local first), weekly mean 1
def use_profile(kind: str, rng: random.Random) -> list[float]:
    w = []
    if kind == "three-shift":
        day, night = rng.uniform(1.05, 1.25), rng.uniform(0.75, 0.95)
        weekend = rng.uniform(0.10, 0.30)
        for d in range(7):
            for h in range(24):
                v = day if 6 <= h < 22 else night
                w.append(v * (weekend if d >= 5 else 1.0))
    elif kind == "two-shift":
        night = rng.uniform(0.05, 0.15)
        sat = rng.uniform(0.3, 0.6)
        for d in range(7):
            for h in range(24):
                if d < 5:
                    v = 1.0 if 6 <= h < 22 else night
                elif d == 5:
                    v = sat if 6 <= h < 14 else night
                else:
                    v = night * 0.6
                w.append(v)
    elif kind == "hospital":
        day, night = rng.uniform(1.05, 1.2), rng.uniform(0.8, 0.95)
        wk = rng.uniform(0.85, 1.0)
        for d in range(7):
            for h in range(24):
                w.append((day if 8 <= h < 20 else night) * (wk if d >= 5 else 1.0))
    elif kind == "lab":
        base = rng.uniform(0.02, 0.08)
        start, stop = rng.choice([7, 8]), rng.choice([17, 18, 19])
        for d in range(7):
            for h in range(24):
                w.append(1.0 if d < 5 and start <= h < stop else base)
    elif kind == "continuous":
        for d in range(7):
            for h in range(24):
                w.append(rng.uniform(0.93, 1.07))
    else:
        raise ValueError(kind)
    m = sum(w) / len(w)
    return [x / m for x in w]


# ---------------------------------------------------------------------------------------------
# fleet layout
@dataclass
class Site:
    name: str
    code: str
    kind: str
    utc_offset_h: float
    elevation_m: float
    habit: str  # weekday | twice | daily
    skip: float
    weather: list = field(default_factory=list)  # barometric deviation (Pa) on the step grid


@dataclass
class Vehicle:
    name: str
    carrier: str
    carrier_code: str
    fluid: str
    bias: float
    noise: float
    pump_kg_per_min: float
    capacity_kg: float = 20000.0
    role: str = "honest"  # honest | short_all | short_some
    short: float = 0.0


@dataclass
class Tank:
    name: str
    site: Site
    fluid: str
    orientation: str
    diameter: float
    length: float
    heads: str
    vessel: Vessel = None
    p_set_barg: float = 10.0
    p_econ_barg: float = 11.0
    relief_barg: float = 12.0
    heat_w: float = 100.0
    heat_flux: float = 2.0
    ner_true: float = 0.3
    ner_nameplate: float = 0.3
    dp_unit: str = "inH2O"
    span: float = 100.0
    accuracy: float = 0.5
    noise_frac: float = 0.002
    span_err: float = 0.0
    zero_err: float = 0.0
    reorder: float = 25.0
    target: float = 0.88
    interval_days: float = 20.0
    mean_use_kg_day: float = 300.0
    profile: list = field(default_factory=list)
    day_factor: list = field(default_factory=list)
    # the day-to-day scatter (lognormal sd) and the seasonal swing (amplitude) of its use, for the truth
    use_day_sd: float = 0.0
    use_season_amp: float = 0.0
    vehicles: list = field(default_factory=list)
    weights: list = field(default_factory=list)
    pressure_tau_h: float = 12.0
    drop_bar: tuple = (2.0, 4.0)
    line_c: float = 15.0
    fault: str = ""  # "", drift, step
    step_time: float = 0.0


def build_fleet(cfg: Settings, rng: random.Random, fluids: dict, t0: float, t1: float):
    n = cfg.tanks
    n_co2 = max(2, round(0.15 * n))
    n_ar = max(2, round(0.20 * n))
    n_o2 = max(2, round(0.25 * n))
    n_n2 = max(3, n - n_co2 - n_ar - n_o2)
    kinds = ["nitrogen"] * n_n2 + ["oxygen"] * n_o2 + ["argon"] * n_ar + ["carbon-dioxide"] * n_co2
    rng.shuffle(kinds)

    # sites of 1-3 tanks
    groups = []
    i = 0
    while i < len(kinds):
        k = rng.choice([1, 1, 2, 2, 2, 3])
        groups.append(kinds[i:i + k])
        i += k
    stems = _stems(rng, len(groups) + 4)
    site_kinds = ["three-shift", "two-shift", "hospital", "lab", "continuous"]
    habits = ["weekday"] * len(groups)
    idx = list(range(len(groups)))
    rng.shuffle(idx)
    n_daily = 1 if len(groups) < 8 else 2
    n_twice = 2 if len(groups) >= 6 else 1
    for j in idx[:n_daily]:
        habits[j] = "daily"
    for j in idx[n_daily:n_daily + n_twice]:
        habits[j] = "twice"
    sites = []
    for j, g in enumerate(groups):
        kind = site_kinds[j % len(site_kinds)] if j < len(site_kinds) else rng.choice(site_kinds)
        stem = stems[j]
        sites.append(Site(
            name=f"{stem} {rng.choice(_KIND_WORDS[kind])}",
            code=stem[:3].upper(),
            kind=kind,
            utc_offset_h=rng.choice([-6, -5, -4, -3, 0, 1, 2, 3]),
            elevation_m=round(rng.uniform(0, 900)),
            habit=habits[j],
            skip=rng.uniform(0.05, 0.15),
        ))
    carrier_stems = stems[len(groups):]

    # tanks
    tanks = []
    k = 0
    for site, g in zip(sites, groups):
        for fl in g:
            k += 1
            horizontal = rng.random() < 0.45
            orient = "horizontal" if horizontal else "vertical"
            # a nominal size, then a diameter from a shell length-to-diameter ratio
            size = rng.choices([6.0, 9.0, 11.0, 15.0, 20.0, 25.0, 30.0, 40.0],
                               [1, 2, 2, 3, 3, 2, 2, 1])[0]
            if fl in ("argon", "carbon-dioxide"):
                size = min(size, 30.0)
            if horizontal:
                heads = rng.choices(["ellipsoidal", "torispherical", "hemispherical", "flat"],
                                    [40, 35, 20, 5])[0]
                ratio = rng.uniform(2.5, 5.0)
            else:
                heads = rng.choices(["torispherical", "ellipsoidal", "hemispherical", "flat"],
                                    [45, 35, 15, 5])[0]
                ratio = rng.uniform(2.0, 4.5)
            if heads == "flat":
                size = min(size, 11.0)
            d = round((4.0 * size / (math.pi * ratio)) ** (1.0 / 3.0), 2)
            ell = round(d * ratio, 2)
            t = Tank(name=f"{site.code}-{FLUID_CODE[fl]}-{k}", site=site, fluid=fl,
                     orientation=orient, diameter=d, length=ell, heads=heads)
            t.vessel = Vessel(orient, d, ell, heads)
            if fl == "carbon-dioxide":
                t.p_set_barg = round(rng.uniform(16.0, 19.0), 1)
                t.p_econ_barg = t.p_set_barg + rng.uniform(0.5, 1.0)
                t.relief_barg = round(t.p_econ_barg + rng.uniform(1.0, 2.0), 1)
                t.drop_bar = (0.8, 2.5)
            else:
                t.p_set_barg = round(rng.uniform(6.0, 15.0), 1)
                t.p_econ_barg = t.p_set_barg + rng.uniform(0.5, 1.2)
                t.relief_barg = round(t.p_econ_barg + rng.uniform(1.0, 2.5), 1)
                t.drop_bar = (1.5, 4.5)
            t.pressure_tau_h = rng.uniform(6.0, 18.0)
            # true heat leak: surface area times a flux typical of vacuum-perlite insulation
            t.heat_flux = rng.uniform(1.0, 3.0)
            t.heat_w = t.heat_flux * t.vessel.area_surface
            f = fluids[fl]
            # NER: share of the full tank boiled off per day; at 1 atm for the cryogens, at the
            # storage pressure (20 bara) for CO2, which is not liquid at 1 atm
            p_ref = 20.0e5 if fl == "carbon-dioxide" else 101325.0
            s = f.sat_p(p_ref)
            boil = t.heat_w * DAY / (s["hV"] - s["hL"])
            t.ner_true = 100.0 * boil / (s["rhoL"] * t.vessel.volume_total)
            sign = rng.choice([-1.0, 1.0])
            t.ner_nameplate = round(t.ner_true * (1.0 + sign * rng.uniform(0.2, 0.4)), 3)
            # gauge
            t.dp_unit = "inH2O" if rng.random() < 0.65 else "mbar"
            unit = DP_UNITS[t.dp_unit]
            full = full_dp_check(f, t.vessel, (t.relief_barg + 1.01325) * 1e5, 288.15) / unit
            step = 25.0 if t.dp_unit == "inH2O" else 50.0
            if full < 100 and t.dp_unit == "inH2O":
                step = 10.0
            t.span = math.ceil(full * rng.uniform(1.05, 1.3) / step) * step
            t.accuracy = rng.choice([0.5, 0.5, 1.0])
            t.noise_frac = rng.uniform(0.001, 0.002) if t.accuracy < 1 else rng.uniform(0.002, 0.003)
            if cfg.gauge_static:
                t.span_err = rng.uniform(-0.25, 0.25) / 100.0
                t.zero_err = rng.uniform(-0.1, 0.1) / 100.0
            t.reorder = rng.choice([20.0, 25.0, 30.0, 35.0])
            t.target = rng.uniform(0.82, 0.92)
            t.interval_days = rng.uniform(10.0, 32.0)
            rho_l = f.sat_p((t.p_set_barg + 1.0) * 1e5)["rhoL"]
            usable = (t.target - t.reorder / 100.0) * t.vessel.volume_total * rho_l
            t.mean_use_kg_day = usable / t.interval_days
            t.profile = use_profile(site.kind, rng)
            t.line_c = 15.0
            tanks.append(t)

    # daily factors: day-to-day scatter, seasonal swing, holiday shutdown of factories
    n_days = int(round((t1 - t0) / DAY)) + 3
    for t in tanks:
        sig = rng.uniform(0.06, 0.14)
        amp = rng.uniform(0.0, 0.12)
        ph = rng.uniform(0.0, 2 * math.pi)
        fac = []
        for d in range(-1, n_days):
            x = math.exp(rng.gauss(0.0, sig) - 0.5 * sig * sig) * (1.0 + amp * math.sin(2 * math.pi * d / 365.0 + ph))
            date = dtm.datetime.fromtimestamp(t0 + d * DAY, tz=dtm.timezone.utc)
            if t.site.kind in ("three-shift", "two-shift") and (
                    (date.month == 12 and date.day >= 24) or (date.month == 1 and date.day == 1)):
                x *= 0.15
            fac.append(x)
        t.day_factor = fac
        t.use_day_sd, t.use_season_amp = sig, amp

    # trailers: each carries one product; 2-4 per fluid, dealt to 3-4 carriers
    by_fluid = {}
    for t in tanks:
        by_fluid.setdefault(t.fluid, []).append(t)
    trailer_fluids = []
    for fl, ts in sorted(by_fluid.items()):
        trailer_fluids += [fl] * max(2, min(4, math.ceil(len(ts) / 2)))
    rng.shuffle(trailer_fluids)
    n_carriers = 4 if len(trailer_fluids) >= 11 else 3
    carriers = []
    for c in range(n_carriers):
        st = carrier_stems[c]
        name = f"{st} {_CARRIER_WORDS[c % len(_CARRIER_WORDS)]}"
        code = "".join(w[0] for w in name.split()).upper()
        carriers.append((name, code))
    vehicles = []
    used_numbers = set()
    for j, fl in enumerate(trailer_fluids):
        cname, ccode = carriers[j % n_carriers]
        num = rng.randrange(100, 999)
        while num in used_numbers:
            num = rng.randrange(100, 999)
        used_numbers.add(num)
        pump = {"nitrogen": (250, 450), "oxygen": (350, 650), "argon": (400, 750),
                "carbon-dioxide": (300, 600)}[fl]
        vehicles.append(Vehicle(name=f"{ccode}-{num}", carrier=cname, carrier_code=ccode, fluid=fl,
                                bias=rng.uniform(-0.003, 0.003), noise=rng.uniform(0.002, 0.004),
                                pump_kg_per_min=rng.uniform(*pump),
                                capacity_kg=rng.uniform(*TRAILER_KG[fl])))
    for t in tanks:
        own = [v for v in vehicles if v.fluid == t.fluid]
        k = min(len(own), rng.choice([2, 2, 3]))
        t.vehicles = rng.sample(own, k)
        t.weights = [rng.uniform(0.6, 1.4) for _ in t.vehicles]

    # planted vehicles: short on every fill (the N2 trailer reaching most tanks) and now and then
    def reach(v):
        return sum(1 for t in tanks if v in t.vehicles)

    n2 = sorted([v for v in vehicles if v.fluid == "nitrogen"], key=lambda v: (-reach(v), v.name))
    v_all = n2[0]
    v_all.role, v_all.short = "short_all", cfg.short_all
    others = [v for v in vehicles if v is not v_all and reach(v) >= 2]
    others.sort(key=lambda v: (v.fluid == "nitrogen", -reach(v), v.name))
    v_some = others[0]
    v_some.role, v_some.short = "short_some", rng.uniform(*cfg.short_some)
    for v in (v_all, v_some):
        v.bias, v.noise = rng.uniform(-0.003, 0.003), rng.uniform(0.002, 0.004)
    # every tank keeps at least one honest trailer
    for t in tanks:
        if all(v.role != "honest" for v in t.vehicles):
            extra = [v for v in vehicles if v.fluid == t.fluid and v.role == "honest"]
            t.vehicles.append(rng.choice(extra))
            t.weights.append(1.0)
    return sites, tanks, vehicles, carriers


# ---------------------------------------------------------------------------------------------
# weather: barometric deviation per site on the step grid (Ornstein-Uhlenbeck, sd 800 Pa, 2 days)
def weather_series(rng: random.Random, n: int, dt: float) -> list[float]:
    a = math.exp(-dt / (2.0 * DAY))
    b = 800.0 * math.sqrt(1.0 - a * a)
    x = rng.gauss(0.0, 800.0)
    out = []
    for _ in range(n):
        out.append(x)
        x = a * x + b * rng.gauss(0.0, 1.0)
    return out


def next_fill_window(t: float, offset_h: float, rng: random.Random) -> float:
    """First time at or after t that falls between 08:00 and 20:00 local."""
    loc = t + offset_h * HOUR
    hod = (loc % DAY) / HOUR
    if 8.0 <= hod < 19.5:
        return t
    day0 = loc - (loc % DAY)
    if hod >= 19.5:
        day0 += DAY
    return day0 + (8.0 + rng.uniform(0.0, 4.0)) * HOUR - offset_h * HOUR


# ---------------------------------------------------------------------------------------------
def simulate_tank(t: Tank, f: Fluid, cfg: Settings, rng: random.Random, t0: float, t1: float,
                  leak: dict | None, unlogged_after: float | None):
    """March the tank through the period in small steps; return the trajectory and the fills."""
    dt_grid = cfg.step_minutes * 60.0
    site = t.site
    v_tot = t.vessel.volume_total
    q_w = t.heat_w
    off = site.utc_offset_h * HOUR
    # Monday 00:00 local before t0
    wd = local_weekday(t0, site.utc_offset_h)
    loc0 = t0 + off
    monday = loc0 - (loc0 % DAY) - wd * DAY

    tab_rv, tab_hl, tab_hfg, tab_rl_h, tab_p_h = f.tab_rv_p, f.tab_hl_p, f.tab_hfg_p, f.tab_rl_hl, f.tab_p_hl
    p_atm0 = isa_pressure(site.elevation_m)
    weather = site.weather

    # initial state
    p_g = t.p_set_barg
    s_set = f.sat_p(p_g * 1e5 + p_atm0)
    s_low = f.sat_p((2.0 if t.fluid != "carbon-dioxide" else 13.0) * 1e5 + p_atm0)
    h = s_low["hL"] + rng.uniform(0.3, 1.0) * (s_set["hL"] - s_low["hL"])
    frac0 = rng.uniform(t.reorder / 100.0 + 0.1, t.target)
    rho_l0 = tab_rl_h(h)
    rho_v0 = s_set["rhoV"]
    v_l = frac0 * v_tot
    mass = rho_l0 * v_l + rho_v0 * (v_tot - v_l)

    # pressure control state
    ctrl = {"kind": "steady", "p_from": p_g, "p_to": p_g, "ta": t0, "tb": t0}
    ou = rng.gauss(0.0, 0.12)
    ou_tau = rng.uniform(4.0, 10.0) * HOUR
    ou_sd = 0.12 if t.fluid != "carbon-dioxide" else 0.18
    base = t.mean_use_kg_day / DAY

    traj_t, traj_m, traj_h, traj_pc, traj_pa = [], [], [], [], []
    fills = []
    pending = None  # the next fill: dict with start, end, mass ...
    active = None
    tt = t0
    k_grid = 0

    def p_ctrl_at(x):
        c = ctrl
        if c["kind"] == "fill" and x < c["tb"]:
            w = (x - c["ta"]) / max(c["tb"] - c["ta"], 1.0)
            return c["p_from"] + w * (c["p_to"] - c["p_from"])
        if c["kind"] in ("fill", "recover"):
            return t.p_set_barg + (c["p_to"] - t.p_set_barg) * math.exp(-(x - c["tb"]) / (t.pressure_tau_h * HOUR))
        return t.p_set_barg

    def record(x):
        traj_t.append(x)
        traj_m.append(mass)
        traj_h.append(h)
        traj_pc.append(p_ctrl_at(x) + ou)
        traj_pa.append(p_atm0 + weather[min(int((x - t0) / dt_grid), len(weather) - 1)])

    record(tt)
    while tt < t1 - 1e-6:
        t_next = t0 + (k_grid + 1) * dt_grid
        if t_next <= tt + 1e-6:
            k_grid += 1
            continue
        if pending is not None and tt < pending["start"] < t_next:
            t_next = pending["start"]
        if active is not None and tt < active["end"] < t_next:
            t_next = active["end"]
        t_next = min(t_next, t1)
        step = t_next - tt
        xm = tt + 0.5 * step
        # fill begins
        if pending is not None and abs(tt - pending["start"]) < 1e-6:
            active = pending
            pending = None
            frac_now = (mass - tab_rv(p_atm0 + 1e5 * p_g) * v_tot) / (tab_rl_h(h) - tab_rv(p_atm0 + 1e5 * p_g)) / v_tot
            m_d = max(0.0, (active["target"] - frac_now)) * v_tot * active["rho_d"]
            m_d = min(m_d, active["vehicle"].capacity_kg)
            active["mass"] = m_d
            dur = m_d / (active["vehicle"].pump_kg_per_min / 60.0)
            active["hookup"] = rng.uniform(8.0, 20.0) * 60.0
            active["end"] = tt + dur + active["hookup"]
            active["flow"] = m_d / dur
            active["flow_from"] = tt + 0.5 * active["hookup"]
            active["flow_to"] = active["end"] - 0.5 * active["hookup"]
            # the tank's pressure falls during the fill and recovers after it
            m_l_est = mass
            h_mix = (m_l_est * h + m_d * active["h_d"]) / (m_l_est + m_d)
            p_floor = (tab_p_h(h_mix) - p_atm0) / 1e5
            p_to = max(t.p_set_barg - rng.uniform(*t.drop_bar), p_floor + 0.3)
            ctrl.update(kind="fill", p_from=p_ctrl_at(tt), p_to=p_to, ta=tt, tb=active["end"])
            if t_next > active["end"]:
                t_next = active["end"]
                step = t_next - tt
                xm = tt + 0.5 * step

        p_atm = p_atm0 + weather[min(int((xm - t0) / dt_grid), len(weather) - 1)]
        p_g = p_ctrl_at(xm) + ou
        p_abs = max(p_g * 1e5 + p_atm, f.p_tab_min)
        rho_v = tab_rv(p_abs)
        # liquid share of the mass (approximate, for the heat balance only)
        rho_l = tab_rl_h(h)
        v_l = min(max((mass - rho_v * v_tot) / (rho_l - rho_v), 1e-3 * v_tot), v_tot)
        m_l = mass - rho_v * (v_tot - v_l)
        h += q_w * step / m_l
        dm = 0.0
        if active is not None:
            a = max(tt, active["flow_from"])
            b = min(t_next, active["flow_to"])
            if b > a:
                dm = active["flow"] * (b - a)
                h = (m_l * h + dm * active["h_d"]) / (m_l + dm)
                m_l += dm
        # liquid warmed to saturation at the economiser setting: the excess boils off
        p_cap = max(t.p_econ_barg * 1e5 + p_atm, p_abs)
        h_cap = tab_hl(p_cap)
        boil = 0.0
        if h > h_cap:
            boil = m_l * (h - h_cap) / tab_hfg(p_cap)
            h = h_cap
        how = int(((xm + off - monday) // HOUR) % 168)
        day = int((xm - t0) // DAY) + 1
        demand = base * t.profile[how] * t.day_factor[day] * step
        out = max(demand, boil)
        if leak is not None and leak["start"] < t_next and leak["end"] > tt:
            ov = min(t_next, leak["end"]) - max(tt, leak["start"])
            out += leak["rate_kg_day"] / DAY * ov
        mass += dm - out
        # Ornstein-Uhlenbeck pressure noise
        a_ou = math.exp(-step / ou_tau)
        ou = a_ou * ou + ou_sd * math.sqrt(1.0 - a_ou * a_ou) * rng.gauss(0.0, 1.0)
        tt = t_next
        if abs(tt - t0 - (k_grid + 1) * dt_grid) < 1e-6:
            k_grid += 1
        record(tt)

        if active is not None and tt >= active["end"] - 1e-6:
            active["end"] = tt
            ctrl.update(kind="recover", tb=tt)
            fills.append(active)
            active = None
            continue
        # call for a fill at the reorder level
        if pending is None and active is None:
            rho_l = tab_rl_h(h)
            frac = (mass - rho_v * v_tot) / (rho_l - rho_v) / v_tot
            if frac <= t.reorder / 100.0:
                when = next_fill_window(tt + rng.uniform(3.0, 36.0) * HOUR, site.utc_offset_h, rng)
                when = round(when)
                if when < t1 - 6 * HOUR:
                    j = rng.choices(range(len(t.vehicles)), t.weights)[0]
                    v = t.vehicles[j]
                    if t.fluid == "carbon-dioxide":
                        sup = round(rng.uniform(max(11.0, t.p_set_barg - 6.0), t.p_set_barg - 2.0), 1)
                    else:
                        sup = round(rng.uniform(1.0, 3.0), 1)
                    sd = f.sat_p(sup * 1e5 + p_atm0)
                    pending = {"start": float(when), "vehicle": v, "supply_barg": sup, "h_d": sd["hL"],
                               "rho_d": sd["rhoL"], "target": min(t.target + rng.gauss(0.0, 0.015), 0.93),
                               "tank": t.name}
                    if unlogged_after is not None and when >= unlogged_after:
                        pending["unlogged"] = True
                        unlogged_after = None
    traj = {
        "t": np.array(traj_t), "m": np.array(traj_m), "h": np.array(traj_h),
        "pc": np.array(traj_pc), "pa": np.array(traj_pa),
    }
    return traj, fills


# ---------------------------------------------------------------------------------------------
def routine_times(site: Site, rng: random.Random, t0: float, t1: float) -> list[float]:
    """Operator reading times (UTC seconds) of one site over the period."""
    out = []
    off = site.utc_offset_h * HOUR
    d_loc0 = (t0 + off) - ((t0 + off) % DAY)
    d = d_loc0
    while d < t1 + off:
        wd = dtm.datetime.fromtimestamp(d, tz=dtm.timezone.utc).weekday()
        if site.habit == "daily":
            hours = [rng.uniform(7.0, 10.0) if wd < 5 else rng.uniform(8.0, 12.0)]
        elif wd >= 5:
            hours = []
        elif site.habit == "twice":
            hours = [rng.uniform(7.0, 9.5), rng.uniform(13.0, 16.0)]
        else:
            hours = [rng.uniform(7.0, 16.0)]
        for hr in hours:
            if rng.random() < site.skip:
                continue
            u = d + hr * HOUR - off
            if t0 + 3 * HOUR <= u < t1:
                out.append(float(round(u)))
        d += DAY
    return out


def generate(cfg: Settings, out_dir: str, quiet: bool = False) -> dict:
    t_begin = time.time()
    rng = random.Random(cfg.seed)
    t0 = parse_day(cfg.start)
    t1 = parse_day(cfg.end) + DAY
    fluids = {name: Fluid(name) for name in ("nitrogen", "oxygen", "argon", "carbon-dioxide")}
    sites, tanks, vehicles, carriers = build_fleet(cfg, rng, fluids, t0, t1)
    n_grid = int((t1 - t0) / (cfg.step_minutes * 60.0)) + 2
    for s in sites:
        s.weather = weather_series(rng, n_grid, cfg.step_minutes * 60.0)

    # planted tank faults on four different tanks. So that each fault can be seen at all, the gauge
    # faults go to tanks filled at least as often as the median tank (a gauge is judged by its fills)
    # and the leak to a tank using at least the median amount (a leak is judged against use).
    by_fills = sorted(tanks, key=lambda x: x.interval_days)
    frequent = by_fills[:max(2, len(tanks) // 2)]
    t_drift, t_step = rng.sample(frequent, 2)
    rest = [x for x in tanks if x not in (t_drift, t_step)]
    by_use = sorted(rest, key=lambda x: -x.mean_use_kg_day)
    t_leak = rng.choice(by_use[:max(1, len(by_use) // 2)])
    t_unlogged = rng.choice([x for x in rest if x is not t_leak])
    t_drift.fault = "drift"
    t_step.fault = "step"
    step_day = t0 + rng.randrange(59, 300) * DAY
    t_step.step_time = float(round(step_day + (rng.uniform(9.0, 15.0) - t_step.site.utc_offset_h) * HOUR))
    unlogged_after = t0 + rng.uniform(120.0, 240.0) * DAY
    leak_start = float(round(t0 + rng.uniform(45.0, 320.0) * DAY))
    leak = {"tank": t_leak.name, "start": leak_start,
            "end": float(round(leak_start + cfg.leak_days * DAY * rng.uniform(0.9, 1.1))),
            "rate_kg_day": rng.uniform(*cfg.leak_fraction) * t_leak.mean_use_kg_day}
    leak["fraction_of_use"] = leak["rate_kg_day"] / t_leak.mean_use_kg_day

    driver_share = rng.uniform(*cfg.driver_share)
    all_fills = []
    readings_rows = []
    truth_rows = []
    for t in tanks:
        f = fluids[t.fluid]
        trng = random.Random(f"{cfg.seed}:{t.name}")
        traj, fills = simulate_tank(t, f, cfg, trng, t0, t1,
                                    leak if t is t_leak else None,
                                    unlogged_after if t is t_unlogged else None)
        # meter, ticket, driver's readings
        for fl in fills:
            v = fl["vehicle"]
            fl["unlogged"] = fl.get("unlogged", False)
            short = 0.0
            if v.role == "short_all":
                short = v.short
            elif v.role == "short_some" and trng.random() < cfg.short_some_share:
                short = v.short
            fl["short"] = short
            meter = v.bias + trng.gauss(0.0, v.noise)
            fl["meter_error"] = meter
            fl["billed_exact"] = fl["mass"] * (1.0 + meter) * (1.0 + short)
            fl["driver"] = (not fl["unlogged"]) and trng.random() < driver_share
            if fl["driver"]:
                fl["t_before"] = float(round(fl["start"] - trng.uniform(5.0, 15.0) * 60.0))
                fl["t_after"] = float(round(fl["end"] + trng.uniform(5.0, 15.0) * 60.0))
            fl["start"] = float(round(fl["start"]))
            fl["end"] = float(round(fl["end"]))
        # readings: routine ones away from fills, plus driver's
        times = routine_times(t.site, trng, t0, t1)
        shift = 60.0 * (1 + tanks.index(t) % 5) * trng.uniform(1.0, 3.0)
        times = [x + round(shift) for x in times]
        busy = [(fl["start"] - 30 * 60, fl["end"] + 30 * 60) for fl in fills]
        keep = []
        bi = 0
        for x in sorted(times):
            while bi < len(busy) and busy[bi][1] < x:
                bi += 1
            if bi < len(busy) and busy[bi][0] <= x <= busy[bi][1]:
                continue
            if x < t1:
                keep.append((x, ""))
        for fl in fills:
            if fl["driver"]:
                keep.append((fl["t_before"], "before"))
                keep.append((fl["t_after"], "after"))
        keep.sort(key=lambda r: (r[0], r[1] == ""))  # a driver's reading wins a tie
        seen = set()
        for x, what in keep:
            if x in seen or not (t0 <= x < t1):
                continue
            seen.add(x)
            m = float(np.interp(x, traj["t"], traj["m"]))
            hl = float(np.interp(x, traj["t"], traj["h"]))
            pc = float(np.interp(x, traj["t"], traj["pc"]))
            pa = float(np.interp(x, traj["t"], traj["pa"]))
            # the liquid sets the pressure when it is warmer than the control would hold
            p_liq = f.tab_p_hl(hl)
            p_abs = max(pc * 1e5 + pa, p_liq)
            line_k = 273.15 + t.line_c + cfg.line_temp_swing_c * math.sin(2 * math.pi * (x - t0) / YEAR - 1.9)
            st = gauge_dp(f, t.vessel, m, hl, p_abs, line_k)
            gain = 1.0 + t.span_err
            if t.fault == "drift":
                gain += cfg.drift_per_year * (x - t0) / YEAR
            elif t.fault == "step" and x >= t.step_time:
                gain += cfg.step
            unit = DP_UNITS[t.dp_unit]
            shown = st["dp_pa"] / unit * gain + t.zero_err * t.span + trng.gauss(0.0, t.noise_frac * t.span)
            res = DP_RESOLUTION[t.dp_unit]
            shown = max(0.0, round(shown / res) * res)
            p_show = round((p_abs - pa) / 1e5 + trng.gauss(0.0, 0.03), 1)
            note = ""
            if what:
                for fl in fills:
                    if fl.get("t_before") == x or fl.get("t_after") == x:
                        fl["_reading_" + what] = {"time": iso(x), "mass_kg": m}
                        note_fill = fl
                        break
                note = "driver ticket {TICKET:" + str(id(note_fill)) + "}"
            readings_rows.append([t.name, x, shown, t.dp_unit, p_show, note])
            truth_rows.append([t.name, iso(x), round(m, 3), round(st["level_m"], 5),
                               round(st["fill_fraction"], 6), round(st["liquid_temperature_k"], 4),
                               int(st["saturated"]), round(p_abs, 1), round(pa, 1), round(st["dp_pa"], 3),
                               shown, t.dp_unit, round(gain, 6)])
        for fl in fills:
            fl["tank_obj"] = t
        all_fills += fills

    # tickets in time order, numbered per carrier
    all_fills.sort(key=lambda x: x["start"])
    counters = {c[1]: rng.randrange(20000, 80000) for c in carriers}
    fleet_units = cfg.odd_units
    for fl in all_fills:
        v = fl["vehicle"]
        if fl["unlogged"]:
            fl["ticket"] = None
            continue
        counters[v.carrier_code] += rng.randrange(1, 40)
        fl["ticket"] = f"{v.carrier_code}{counters[v.carrier_code]:06d}"
        kg = fl["billed_exact"]
        u = rng.random() if fleet_units else 1.0
        if u < 0.04:
            q = round(kg / LB)
            fl["qty"], fl["unit"], fl["billed_kg"] = q, "lb", q * LB
        elif u < 0.07 and v.fluid != "carbon-dioxide":
            rho_n = fluids[v.fluid].normal_density()
            q = round(kg / rho_n)
            fl["qty"], fl["unit"], fl["billed_kg"] = q, "Nm3", q * rho_n
            fl["normal_density"] = rho_n
        else:
            q = round(kg)
            fl["qty"], fl["unit"], fl["billed_kg"] = q, "kg", float(q)
    by_id = {str(id(fl)): fl for fl in all_fills}
    for row in readings_rows:
        if row[5].startswith("driver ticket {TICKET:"):
            key = row[5][len("driver ticket {TICKET:"):-1]
            row[5] = f"driver ticket {by_id[key]['ticket']}"

    # short-some vehicle: make sure a few of its fills are short and a few are honest
    some = [fl for fl in all_fills if fl["vehicle"].role == "short_some" and not fl["unlogged"]]
    n_short = sum(1 for fl in some if fl["short"] > 0)
    if some and n_short < min(3, len(some)):
        for fl in some:
            if fl["short"] == 0.0 and n_short < min(3, len(some)):
                fl["short"] = fl["vehicle"].short
                n_short += 1
                fl["billed_exact"] = fl["mass"] * (1.0 + fl["meter_error"]) * (1.0 + fl["short"])
                q = fl["billed_exact"] / (LB if fl["unit"] == "lb" else fl.get("normal_density", 1.0))
                fl["qty"] = round(q)
                fl["billed_kg"] = fl["qty"] * (LB if fl["unit"] == "lb" else fl.get("normal_density", 1.0))

    os.makedirs(out_dir, exist_ok=True)
    write_outputs(out_dir, cfg, sites, tanks, vehicles, all_fills, readings_rows, truth_rows, leak,
                  t_drift, t_step, t_unlogged, t0, t1, driver_share)
    summary = {
        "tanks": len(tanks), "sites": len(sites), "vehicles": len(vehicles),
        "fills": len(all_fills), "readings": len(readings_rows), "seconds": time.time() - t_begin,
    }
    if not quiet:
        print(f"fleet seed {cfg.seed}: {summary['tanks']} tanks at {summary['sites']} sites, "
              f"{summary['vehicles']} trailers, {summary['fills']} fills, {summary['readings']} readings "
              f"({summary['seconds']:.1f} s) -> {out_dir}")
    return summary


def _num(x: float, nd: int) -> str:
    s = f"{x:.{nd}f}"
    if "." in s:
        s = s.rstrip("0").rstrip(".")
    return s


def zone_name(offset_h: float) -> str:
    """The IANA name of a fixed offset from UTC (whole hours): the Etc/GMT zones count west as
    positive, so UTC+1 is Etc/GMT-1."""
    h = int(round(offset_h))
    return "Etc/GMT" if h == 0 else f"Etc/GMT{-h:+d}"


def write_outputs(out_dir, cfg, sites, tanks, vehicles, fills, readings_rows, truth_rows, leak,
                  t_drift, t_step, t_unlogged, t0, t1, driver_share):
    with open(os.path.join(out_dir, "tanks.csv"), "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["site", "tank", "fluid", "orientation", "diameter_m", "length_m", "heads",
                    "line_temperature_c", "elevation_m", "dp_unit", "gauge_span", "gauge_accuracy_percent",
                    "relief_pressure", "relief_pressure_unit", "reorder_percent", "ner_percent_per_day",
                    "time_zone"])
        for t in tanks:
            w.writerow([t.site.name, t.name, t.fluid, t.orientation, _num(t.diameter, 3), _num(t.length, 3),
                        t.heads, _num(t.line_c, 1), _num(t.site.elevation_m, 0), t.dp_unit, _num(t.span, 1),
                        _num(t.accuracy, 2), _num(t.relief_barg, 1), "barg", _num(t.reorder, 1),
                        _num(t.ner_nameplate, 3), zone_name(t.site.utc_offset_h) if cfg.time_zones else ""])
    rows = sorted(readings_rows, key=lambda r: (r[0], r[1]))
    with open(os.path.join(out_dir, "readings.csv"), "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tank", "time", "dp", "dp_unit", "pressure", "pressure_unit", "note"])
        for r in rows:
            w.writerow([r[0], iso(r[1]), _num(r[2], 1 if r[3] == "inH2O" else 0), r[3], _num(r[4], 1),
                        "barg", r[5]])
    with open(os.path.join(out_dir, "deliveries.csv"), "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tank", "ticket", "start", "end", "quantity", "quantity_unit", "carrier", "vehicle",
                    "supply_pressure", "supply_pressure_unit"])
        for fl in sorted(fills, key=lambda x: (x["tank"], x["start"])):
            if fl["unlogged"]:
                continue
            v = fl["vehicle"]
            w.writerow([fl["tank"], fl["ticket"], iso(fl["start"]), iso(fl["end"]), str(fl["qty"]), fl["unit"],
                        v.carrier, v.name, _num(fl["supply_barg"], 1), "barg"])
    with open(os.path.join(out_dir, "truth_readings.csv"), "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tank", "time", "mass_kg", "level_m", "fill_fraction", "liquid_temperature_k",
                    "saturated", "pressure_pa_abs", "barometer_pa", "dp_true_pa", "dp_shown", "dp_unit",
                    "gauge_gain"])
        for r in sorted(truth_rows, key=lambda r: (r[0], r[1])):
            w.writerow(r)

    unl = [fl for fl in fills if fl["unlogged"]]
    truth = {
        "seed": cfg.seed,
        "generator": "tools/indep/fleet.py",
        "period": {"start": iso(t0), "end": iso(t1)},
        "settings": {
            "tanks": cfg.tanks, "step_minutes": cfg.step_minutes, "short_all": cfg.short_all,
            "short_some_range": list(cfg.short_some), "short_some_share": cfg.short_some_share,
            "drift_per_year": cfg.drift_per_year, "step": cfg.step, "leak_fraction_range": list(cfg.leak_fraction),
            "leak_days": cfg.leak_days, "driver_share": driver_share, "gauge_static": cfg.gauge_static,
            "odd_units": cfg.odd_units, "line_temp_swing_c": cfg.line_temp_swing_c, "time_zones": cfg.time_zones,
        },
        "tanks": [{
            "tank": t.name, "site": t.site.name, "fluid": t.fluid, "orientation": t.orientation,
            "heads": t.heads, "diameter_m": t.diameter, "length_m": t.length,
            "gross_volume_m3": t.vessel.volume_total, "inner_height_m": t.vessel.height,
            "surface_m2": t.vessel.area_surface, "heat_leak_w": t.heat_w, "heat_flux_w_m2": t.heat_flux,
            "ner_true_percent_per_day": t.ner_true, "ner_nameplate_percent_per_day": t.ner_nameplate,
            "pressure_setpoint_barg": t.p_set_barg, "economiser_barg": t.p_econ_barg,
            "relief_barg": t.relief_barg, "mean_use_kg_per_day": t.mean_use_kg_day,
            "use_profile": t.site.kind, "reading_habit": t.site.habit, "utc_offset_h": t.site.utc_offset_h,
            "gauge_noise_percent_of_span": 100 * t.noise_frac, "gauge_span_error_percent": 100 * t.span_err,
            "gauge_zero_error_percent_of_span": 100 * t.zero_err, "gauge_fault": t.fault or None,
            "use_day_sd": t.use_day_sd, "use_season_amp": t.use_season_amp,
            "vehicles": [v.name for v in t.vehicles],
        } for t in tanks],
        "vehicles": [{
            "vehicle": v.name, "carrier": v.carrier, "fluid": v.fluid, "role": v.role,
            "short_fraction": v.short, "meter_bias": v.bias, "meter_noise": v.noise,
        } for v in vehicles],
        "fills": [{
            "ticket": fl["ticket"], "tank": fl["tank"], "vehicle": fl["vehicle"].name,
            "carrier": fl["vehicle"].carrier, "start": iso(fl["start"]), "end": iso(fl["end"]),
            "delivered_kg": fl["mass"], "billed_kg": fl["billed_kg"] if not fl["unlogged"] else None,
            "billed_quantity": fl.get("qty"), "billed_unit": fl.get("unit"),
            "honest": fl["short"] == 0.0 and not fl["unlogged"], "short_fraction": fl["short"],
            "meter_error": fl["meter_error"], "supply_pressure_barg": fl["supply_barg"],
            "has_driver_readings": bool(fl["driver"]),
            "driver_before": fl.get("_reading_before"), "driver_after": fl.get("_reading_after"),
        } for fl in fills],
        "faults": {
            "short_all": [{"vehicle": v.name, "carrier": v.carrier, "short_fraction": v.short}
                          for v in vehicles if v.role == "short_all"],
            "short_some": [{"vehicle": v.name, "carrier": v.carrier, "short_fraction": v.short,
                            "share": cfg.short_some_share} for v in vehicles if v.role == "short_some"],
            "gauge_drift": {"tank": t_drift.name, "span_change_per_year": cfg.drift_per_year,
                            "from": iso(t0)},
            "gauge_step": {"tank": t_step.name, "span_change": cfg.step, "time": iso(t_step.step_time),
                           "date": iso(t_step.step_time)[:10]},
            "unlogged_fill": ({"tank": unl[0]["tank"], "start": iso(unl[0]["start"]), "end": iso(unl[0]["end"]),
                               "delivered_kg": unl[0]["mass"], "vehicle": unl[0]["vehicle"].name}
                              if unl else None),
            "leak": {"tank": leak["tank"], "start": iso(leak["start"]), "end": iso(leak["end"]),
                     "kg_per_day": leak["rate_kg_day"], "fraction_of_mean_use": leak["fraction_of_use"]},
        },
    }
    with open(os.path.join(out_dir, "truth.json"), "w") as fh:
        json.dump(truth, fh, indent=1)


def settings_from_args(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[1])
    add_fleet_args(ap)
    ap.add_argument("--out", required=True, help="output folder")
    ap.add_argument("--quiet", action="store_true")
    a = ap.parse_args(argv)
    return settings_from(a), a


def add_fleet_args(ap):
    ap.add_argument("--seed", type=int, default=None, help="random seed (random when omitted; printed)")
    ap.add_argument("--tanks", type=int, default=20)
    ap.add_argument("--start", default="2026-01-01")
    ap.add_argument("--end", default="2026-12-31")
    ap.add_argument("--short-all", type=float, default=None,
                    help="fraction by which one vehicle over-bills every fill (default 0.015)")
    ap.add_argument("--short-some", type=float, nargs=2, default=(0.03, 0.04), metavar=("LO", "HI"))
    ap.add_argument("--short-some-share", type=float, default=0.4)
    ap.add_argument("--drift", type=float, default=-0.04, help="span drift per year of one gauge")
    ap.add_argument("--step", type=float, default=-0.03, help="span step of another gauge")
    ap.add_argument("--no-gauge-static", action="store_true", help="no span/zero calibration errors")
    ap.add_argument("--kg-only", action="store_true", help="every ticket in kg")
    ap.add_argument("--line-temp-swing", type=float, default=0.0, help="seasonal swing (degC) of line temperature")
    ap.add_argument("--time-zones", action="store_true",
                    help="write each site's time zone to tanks.csv (default blank, read as UTC)")


def settings_from(a, default_short_all: float = 0.015) -> Settings:
    seed = a.seed if a.seed is not None else random.SystemRandom().randrange(1, 2**31)
    return Settings(
        seed=seed, start=a.start, end=a.end, tanks=a.tanks,
        short_all=a.short_all if a.short_all is not None else default_short_all,
        short_some=tuple(a.short_some), short_some_share=a.short_some_share,
        drift_per_year=a.drift, step=a.step, gauge_static=not a.no_gauge_static,
        odd_units=not a.kg_only, line_temp_swing_c=a.line_temp_swing, time_zones=a.time_zones,
    )


if __name__ == "__main__":
    cfg, args = settings_from_args()
    print(f"seed {cfg.seed}")
    generate(cfg, args.out, quiet=args.quiet)
