#!/usr/bin/env python3
"""Reference cases for the tank contents engine (crates/tank), computed independently.

Fluid properties come from CoolProp (PyPI package `CoolProp`); geometry from numerical
integration of the head profiles (composite Gauss-Legendre over the circular slices), not from
the closed forms the engine uses. Each case lists the CLI arguments of `cryoledger contents`
as strings with units, the same inputs converted to SI, and the expected outputs.

Usage:  python tools/tank_contents_cases.py [--out crates/tank/tests/data/contents_cases.json]
        python tools/tank_contents_cases.py --check crates/tank/tests/data/contents_cases.json
        (regenerate and compare: the same cases and text, every number within 1e-12 relative; the
        last bits differ between CPUs, whose libm picks FMA or plain code for exp and log)
Needs:  pip install CoolProp==8.0.0 numpy
"""

import argparse
import json
import math
import random
from pathlib import Path

import numpy as np
from numpy.polynomial.legendre import leggauss

import CoolProp
from CoolProp.CoolProp import PropsSI

G = 9.80665  # standard gravity, m/s^2
P_ATM = 101325.0
IN = 0.0254
FT = 0.3048
PSI = 0.45359237 * G / IN**2
IN_H2O = 1000.0 * IN * G  # conventional inch of water
UNITS_DP = {"Pa": 1.0, "kPa": 1e3, "mbar": 100.0, "mmH2O": G, "inH2O": IN_H2O, "psi": PSI}
UNITS_LEN = {"m": 1.0, "mm": 1e-3, "in": IN, "ft": FT}

# fluid id (CLI) -> CoolProp name, pressure range of tank, gauge (bar)
FLUIDS = {
    "nitrogen": ("Nitrogen", 0.5, 16.0),
    "oxygen": ("Oxygen", 0.5, 16.0),
    "argon": ("Argon", 0.5, 16.0),
    "carbon-dioxide": ("CarbonDioxide", 12.0, 22.0),
    "methane": ("Methane", 0.5, 10.0),
    "hydrogen": ("Hydrogen", 0.3, 6.0),
    "parahydrogen": ("ParaHydrogen", 0.3, 6.0),
}

XG, WG = leggauss(40)


def integrate(f, a, b, panels=64):
    """Composite Gauss-Legendre of a vectorised f over [a, b]."""
    if b <= a:
        return 0.0
    edges = np.linspace(a, b, panels + 1)
    total = 0.0
    for lo, hi in zip(edges[:-1], edges[1:]):
        mid, half = 0.5 * (lo + hi), 0.5 * (hi - lo)
        total += half * float(np.sum(WG * f(mid + half * XG)))
    return total


def head_profile(diameter, head):
    """(depth a, r(x)) with x the axial distance from the tangent line, 0..a."""
    R = diameter / 2
    if head == "flat":
        return 0.0, None
    if head in ("hemispherical", "ellipsoidal"):
        a = R if head == "hemispherical" else diameter / 4
        return a, lambda x: R * np.sqrt(np.maximum(1 - (np.asarray(x) / a) ** 2, 0.0))
    if head == "torispherical":  # ASME F&D: crown D, knuckle 0.06 D
        Rc, rk = diameter, 0.06 * diameter
        a = Rc - math.sqrt((Rc - rk) ** 2 - (R - rk) ** 2)
        xj = rk * (Rc - a) / (Rc - rk)  # axial position of the crown/knuckle junction

        def r(x):
            x = np.asarray(x, float)
            crown = np.sqrt(np.maximum(Rc**2 - (x - (a - Rc)) ** 2, 0.0))
            knuckle = (R - rk) + np.sqrt(np.maximum(rk**2 - x**2, 0.0))
            return np.where(x <= xj, knuckle, crown)

        return a, r
    raise ValueError(head)


def segment(r, d):
    """Area of circles of radii r below the horizontal line at distance d under their centres."""
    r = np.asarray(r, float)
    out = np.zeros_like(r)
    inside = r > abs(d)
    ri = r[inside]
    out[inside] = ri**2 * np.arccos(np.clip(d / ri, -1, 1)) - d * np.sqrt(ri**2 - d**2)
    if d < 0:
        out[~inside] = math.pi * r[~inside] ** 2
    return out


def volume(orientation, diameter, length, head, h):
    R = diameter / 2
    a, r = head_profile(diameter, head)
    if orientation == "vertical":
        H = length + 2 * a
        v = 0.0
        if a > 0:
            v += integrate(lambda z: math.pi * r(a - z) ** 2, 0.0, min(h, a))
            if h > a + length:
                v += integrate(lambda z: math.pi * r(z - a - length) ** 2, a + length, h)
        v += math.pi * R**2 * max(0.0, min(h, a + length) - a)
        return v, H
    d = R - h
    v = length * float(segment(np.array([R]), d)[0])
    if a > 0:
        v += 2 * integrate(lambda x: segment(r(x), d), 0.0, a, panels=256)
    return v, diameter


def fmt(x, digits=4):
    return f"{x:.{digits}g}"


def make_case(rng, i):
    fluid_id = rng.choice(list(FLUIDS))
    cp, pg_lo, pg_hi = FLUIDS[fluid_id]
    orientation = rng.choice(["vertical", "horizontal"])
    head = rng.choice(["flat", "hemispherical", "ellipsoidal", "torispherical"])
    len_unit = rng.choice(list(UNITS_LEN))
    diameter_m = round(rng.uniform(1.0, 3.5), 3)
    length_m = round(rng.uniform(2.0, 12.0) if orientation == "vertical" else rng.uniform(3.0, 15.0), 3)
    diameter_s = fmt(diameter_m / UNITS_LEN[len_unit], 6)
    length_s = fmt(length_m / UNITS_LEN[len_unit], 6)
    diameter_m = float(diameter_s) * UNITS_LEN[len_unit]
    length_m = float(length_s) * UNITS_LEN[len_unit]

    args = [["--fluid", fluid_id], ["--orientation", orientation],
            ["--diameter", f"{diameter_s} {len_unit}"], ["--length", f"{length_s} {len_unit}"],
            ["--heads", head]]

    barometer_pa = P_ATM
    if rng.random() < 0.4:
        barometer_pa = round(rng.uniform(85.0, 103.0), 2) * 1e3
        args.append(["--barometer", f"{barometer_pa / 1e3:.2f} kPa"])
    if rng.random() < 0.5:
        pg = round(rng.uniform(pg_lo, pg_hi), 2)
        p_s = f"{pg:.2f} barg"
        p_tank = pg * 1e5 + barometer_pa
    else:
        pg = round(rng.uniform(pg_lo, pg_hi) * 1e5 / PSI, 1)
        p_s = f"{pg:.1f} psig"
        p_tank = pg * PSI + barometer_pa

    t_sat = PropsSI("T", "P", p_tank, "Q", 0, cp)
    rho_v = PropsSI("D", "P", p_tank, "Q", 1, cp)
    state = rng.choice(["saturated", "saturation-pressure", "temperature"])
    liquid_sat_pa = None
    liquid_t_k = None
    if state == "saturated":
        t_liq = t_sat
        rho_l = PropsSI("D", "P", p_tank, "Q", 0, cp)
    else:
        p_low = max(PropsSI("ptriple", cp) * 1.05, 1.05e5 if fluid_id != "carbon-dioxide" else 6.0e5)
        ps = rng.uniform(p_low, 0.9 * p_tank)
        if state == "saturation-pressure":
            ps = round(ps / 1e5, 3) * 1e5
            liquid_sat_pa = ps
            args.append(["--liquid-saturation-pressure", f"{ps / 1e5:.3f} bara"])
            t_liq = PropsSI("T", "P", ps, "Q", 0, cp)
        else:
            t = PropsSI("T", "P", ps, "Q", 0, cp)
            if rng.random() < 0.5:
                t_liq = round(t, 2)
                args.append(["--liquid-temperature", f"{t_liq:.2f} K"])
            else:
                tc = round(t - 273.15, 2)
                t_liq = tc + 273.15
                args.append(["--liquid-temperature", f"{tc:.2f} C"])
            liquid_t_k = t_liq
        # compressed liquid at the tank pressure
        rho_l = PropsSI("D", "T", t_liq, "P", p_tank, cp)

    line_t = 288.15
    if rng.random() < 0.5:
        line_c = round(rng.uniform(-20.0, 35.0), 1)
        if line_c + 273.15 < t_sat + 5.0:
            # Colder than saturation the line would hold liquid (CO2 at ~20 bar): keep it gas.
            line_c = round(t_sat - 273.15 + 5.0 + rng.uniform(0.0, 15.0), 1)
        line_t = line_c + 273.15
        args.append(["--line-temperature", f"{line_c:.1f} C"])
    rho_line = PropsSI("D", "T", line_t, "P", p_tank, cp)

    height = volume(orientation, diameter_m, length_m, head, 0.0)[1]
    gross = volume(orientation, diameter_m, length_m, head, height)[0]

    # A level, then the DP it shows, rounded as a gauge would be read; then the level back.
    h0 = rng.uniform(0.05, 0.95) * height
    dp0 = G * ((rho_l - rho_v) * h0 + (rho_v - rho_line) * height)
    dp_unit = rng.choice(list(UNITS_DP))
    dp_value = float(fmt(dp0 / UNITS_DP[dp_unit], 6))
    dp_pa = dp_value * UNITS_DP[dp_unit]
    h = (dp_pa / G - (rho_v - rho_line) * height) / (rho_l - rho_v)
    args.insert(5, ["--dp", f"{dp_value:g} {dp_unit}"])
    args.insert(6, ["--pressure", p_s])

    v_l = volume(orientation, diameter_m, length_m, head, h)[0]
    v_v = gross - v_l
    m_l, m_v = rho_l * v_l, rho_v * v_v
    total = m_l + m_v
    rho_n = PropsSI("D", "T", 273.15, "P", P_ATM, cp)
    rho_std = PropsSI("D", "T", (70.0 - 32.0) / 1.8 + 273.15, "P", 14.696 * PSI, cp)

    si = {
        "fluid": fluid_id, "orientation": orientation, "heads": head,
        "diameter_m": diameter_m, "length_m": length_m, "dp_pa": dp_pa,
        "pressure_pa": p_tank, "barometer_pa": barometer_pa,
        "liquid_saturation_pressure_pa": liquid_sat_pa, "liquid_temperature_k": liquid_t_k,
        "line_temperature_k": line_t,
    }
    expected = {
        "liquid_height_m": h, "liquid_volume_m3": v_l, "vapour_volume_m3": v_v,
        "gross_volume_m3": gross, "fill_fraction": v_l / gross,
        "liquid_density_kg_m3": rho_l, "vapour_density_kg_m3": rho_v,
        "liquid_temperature_k": t_liq, "liquid_mass_kg": m_l, "vapour_mass_kg": m_v,
        "total_mass_kg": total, "gas_nm3": total / rho_n, "gas_scf": total / rho_std / FT**3,
    }
    return {"name": f"case-{i:03}-{fluid_id}-{orientation}-{head}-{state}", "args": args, "si": si, "expected": expected}


CHECK_REL = 1e-12


def differences(a, b, path):
    """(path, relative difference or None when not both numbers, a, b) of every leaf that differs."""
    if isinstance(a, dict) and isinstance(b, dict):
        out = []
        for k in sorted(set(a) | set(b)):
            if k not in a or k not in b:
                out.append((f"{path}/{k}", None, a.get(k), b.get(k)))
            elif k != "source":  # names the numpy build; the versions are pinned in requirements.txt
                out += differences(a[k], b[k], f"{path}/{k}")
        return out
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [(path, None, len(a), len(b))]
        return [d for i, (x, y) in enumerate(zip(a, b)) for d in differences(x, y, f"{path}[{i}]")]
    if isinstance(a, float) and isinstance(b, float):
        if a == b:
            return []
        return [(path, abs(a - b) / max(abs(a), abs(b)), a, b)]
    return [] if a == b and type(a) is type(b) else [(path, None, a, b)]


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=str(Path(__file__).resolve().parent.parent / "crates/tank/tests/data/contents_cases.json"))
    ap.add_argument("--count", type=int, default=80)
    ap.add_argument("--seed", type=int, default=20240611)
    ap.add_argument("--check", default=None,
                    help="compare the regenerated cases with this file instead of writing one")
    opts = ap.parse_args()
    rng = random.Random(opts.seed)
    cases = [make_case(rng, i) for i in range(opts.count)]
    doc = {
        "source": f"CoolProp {CoolProp.__version__} (PyPI), numpy {np.__version__}; geometry by numerical integration",
        "generator": "tools/tank_contents_cases.py",
        "seed": opts.seed,
        "notes": "pressure args are gauge unless marked 'bara'; si.pressure_pa is absolute (gauge + barometer); "
                 "tolerance for the engine: 1e-4 relative on every expected field",
        "cases": cases,
    }
    if opts.check:
        committed = json.loads(Path(opts.check).read_text())
        fresh = json.loads(json.dumps(doc))
        diffs = differences(committed, fresh, "")
        worst = max((d[1] for d in diffs if d[1] is not None), default=0.0)
        hard = [d for d in diffs if d[1] is None or d[1] > CHECK_REL]
        for path, rel, a, b in hard[:20]:
            print(f"differs at {path}: committed {a!r}, regenerated {b!r}")
        print(f"{len(cases)} cases regenerated; largest relative difference {worst:.2e} "
              f"(allowed {CHECK_REL:.0e}); {len(hard)} beyond")
        raise SystemExit(1 if hard else 0)
    Path(opts.out).parent.mkdir(parents=True, exist_ok=True)
    Path(opts.out).write_text(json.dumps(doc, indent=1) + "\n")
    print(f"wrote {len(cases)} cases to {opts.out}")


if __name__ == "__main__":
    main()
