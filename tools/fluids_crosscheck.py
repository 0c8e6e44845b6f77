#!/usr/bin/env python3
"""Cross-check the cryoledger command line against CoolProp on a fresh random sample of states.

Each run draws new states (the seed comes from the clock unless --seed is given, and is printed so that a
failure can be replayed), runs

  BIN saturation --fluid F --temperature "T K" --format json
  BIN saturation --fluid F --pressure "P Pa" --format json
  BIN state --fluid F --temperature "T K" --pressure "P Pa" --format json

and compares temperature_k, pressure_pa, liquid_density_kg_m3, vapour_density_kg_m3, latent_heat_j_kg
(saturation) and density_kg_m3, phase (state) with CoolProp. Pressures are absolute. Exits 1 when any
relative deviation exceeds --tol (default 1e-6) or a phase differs, 2 when the binary fails.

Usage:  python3 tools/fluids_crosscheck.py path/to/cryoledger [--samples 60] [--seed S] [--tol 1e-6]
Needs:  pip install CoolProp==8.0.0
"""

import argparse
import json
import math
import random
import subprocess
import sys
import time

import CoolProp
import CoolProp.CoolProp as CP

FLUIDS = {"nitrogen": "Nitrogen", "oxygen": "Oxygen", "argon": "Argon", "carbon-dioxide": "CarbonDioxide",
          "methane": "Methane", "hydrogen": "Hydrogen", "parahydrogen": "ParaHydrogen"}

PHASES = {CP.iphase_liquid: "liquid", CP.iphase_supercritical_liquid: "liquid", CP.iphase_gas: "gas",
          CP.iphase_supercritical_gas: "gas", CP.iphase_supercritical: "supercritical"}


def run(binary, args):
    proc = subprocess.run([binary, *args], capture_output=True, text=True, timeout=60)
    if proc.returncode != 0:
        raise RuntimeError(f"{' '.join([binary, *args])} exited {proc.returncode}: {proc.stderr.strip()}")
    return json.loads(proc.stdout)


def coolprop_saturation(st, t=None, p=None):
    if t is not None:
        st.update(CP.QT_INPUTS, 0.0, t)
    else:
        st.update(CP.PQ_INPUTS, p, 0.0)
    t, p, rho_l, h_l = st.T(), st.p(), st.rhomass(), st.hmass()
    st.update(CP.QT_INPUTS, 1.0, t)
    return {"temperature_k": t, "pressure_pa": p, "liquid_density_kg_m3": rho_l,
            "vapour_density_kg_m3": st.rhomass(), "latent_heat_j_kg": st.hmass() - h_l}


def draw_state(rng, st):
    """A liquid, gas or supercritical (T, p), away from the phase boundaries by 1 %."""
    tt, tc, pc = st.Ttriple(), st.T_critical(), st.p_critical()
    kind = rng.choice(["liquid", "gas", "supercritical"])
    if kind == "liquid":
        t = rng.uniform(tt + 0.5, 0.95 * tc)
        p_sat = coolprop_saturation(st, t=t)["pressure_pa"]
        top = p_sat + 5e6
        # a compressed liquid stays a liquid: below the melting pressure at t (hydrogen's melting line
        # is shallow enough that 5 MPa over saturation at 15 K would be solid), for fluids that have one
        try:
            top = min(top, 0.99 * st.melting_line(CP.iP, CP.iT, t))
        except ValueError:
            pass
        return t, rng.uniform(1.01 * p_sat, max(top, 1.02 * p_sat))
    if kind == "gas":
        t = rng.uniform(max(tt + 1.0, 200.0), 330.0)
        top = 25e5 if t > tc else min(25e5, 0.99 * coolprop_saturation(st, t=t)["pressure_pa"])
        if t > tc:
            top = min(top, 0.99 * pc)
        return t, rng.uniform(min(1e5, 0.5 * top), top)
    t = rng.uniform(1.05 * tc, 2.0 * tc)
    return t, rng.uniform(1.05 * pc, min(3.0 * pc, 0.9 * st.pmax()))


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("binary")
    ap.add_argument("--samples", type=int, default=60)
    ap.add_argument("--seed", type=int, default=None)
    ap.add_argument("--tol", type=float, default=1e-6)
    args = ap.parse_args()
    seed = args.seed if args.seed is not None else time.time_ns() % 2**32
    print(f"fluids cross-check: seed {seed}, {args.samples} samples, CoolProp {CoolProp.__version__}, "
          f"tolerance {args.tol:g}")
    rng = random.Random(seed)
    worst = {}
    failures = []

    def compare(label, ours, ref, keys):
        for k in keys:
            if k not in ours:
                failures.append(f"{label}: field {k} missing from the output")
                continue
            dev = abs(ours[k] - ref[k]) / abs(ref[k])
            if not math.isfinite(dev) or dev > args.tol:
                failures.append(f"{label}: {k} {ours[k]!r} vs CoolProp {ref[k]!r} (relative {dev:.2e})")
            if math.isfinite(dev) and dev > worst.get(k, (0.0, ""))[0]:
                worst[k] = (dev, label)

    sat_keys = ["temperature_k", "pressure_pa", "liquid_density_kg_m3", "vapour_density_kg_m3", "latent_heat_j_kg"]
    try:
        for _ in range(args.samples):
            ours_name = rng.choice(sorted(FLUIDS))
            st = CP.AbstractState("HEOS", FLUIDS[ours_name])
            tt, tc = st.Ttriple(), st.T_critical()
            what = rng.choice(["sat_t", "sat_p", "state"])
            if what == "sat_t":
                t = rng.uniform(tt + 0.5, 0.97 * tc)
                ours = run(args.binary, ["saturation", "--fluid", ours_name, "--temperature", f"{t!r} K",
                                         "--format", "json"])
                compare(f"{ours_name} saturation at {t!r} K", ours, coolprop_saturation(st, t=t), sat_keys)
            elif what == "sat_p":
                p_lo = coolprop_saturation(st, t=tt + 0.5)["pressure_pa"]
                p_hi = coolprop_saturation(st, t=0.97 * tc)["pressure_pa"]
                p = p_lo * (p_hi / p_lo) ** rng.random()
                ours = run(args.binary, ["saturation", "--fluid", ours_name, "--pressure", f"{p!r} Pa",
                                         "--format", "json"])
                compare(f"{ours_name} saturation at {p!r} Pa", ours, coolprop_saturation(st, p=p), sat_keys)
            else:
                t, p = draw_state(rng, st)
                ours = run(args.binary, ["state", "--fluid", ours_name, "--temperature", f"{t!r} K",
                                         "--pressure", f"{p!r} Pa", "--format", "json"])
                st.update(CP.PT_INPUTS, p, t)
                ref = {"density_kg_m3": st.rhomass()}
                label = f"{ours_name} state at {t!r} K, {p!r} Pa"
                compare(label, ours, ref, ["density_kg_m3"])
                phase = PHASES.get(st.phase(), f"coolprop-phase-{st.phase()}")
                if ours.get("phase") != phase:
                    failures.append(f"{label}: phase {ours.get('phase')!r} vs CoolProp {phase!r}")
    except (RuntimeError, json.JSONDecodeError, subprocess.TimeoutExpired) as e:
        print(f"FAILED to run the binary: {e}", file=sys.stderr)
        sys.exit(2)
    for k, (dev, label) in sorted(worst.items()):
        print(f"  worst {k}: {dev:.2e} ({label})")
    if failures:
        print(f"{len(failures)} deviation(s) above {args.tol:g} (replay with --seed {seed}):", file=sys.stderr)
        for f in failures:
            print(f"  {f}", file=sys.stderr)
        sys.exit(1)
    print("all within tolerance")


if __name__ == "__main__":
    main()
