#!/usr/bin/env python3
"""Per-call time of CoolProp's low-level interface for the operations crates/fluids benchmarks, to report
beside `cargo bench -p fluids`: AbstractState.update(PQ_INPUTS, p, 0) (saturation from pressure) and
update(PT_INPUTS, p, T) on subcooled liquid (density from T and p), in a Python loop over the same kind of
states the Rust benches use. Python's call overhead is part of what a Python user pays, so it is included.

Usage:  python3 tools/fluids_bench_coolprop.py [--repeat 200000]
Needs:  pip install CoolProp==8.0.0
"""

import argparse
import time

import CoolProp
import CoolProp.CoolProp as CP


def per_call(fn, states, repeat):
    n = 0
    start = time.perf_counter()
    while n < repeat:
        for s in states:
            fn(*s)
        n += len(states)
    return (time.perf_counter() - start) / n


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--repeat", type=int, default=200_000)
    args = ap.parse_args()
    print(f"CoolProp {CoolProp.__version__}, HEOS backend, superancillaries "
          f"{'on' if CP.get_config_bool(CP.ENABLE_SUPERANCILLARIES) else 'off'}")
    print("| operation | fluid | CoolProp per call |")
    print("|---|---|---|")
    for name in ("Nitrogen", "CarbonDioxide"):
        st = CP.AbstractState("HEOS", name)
        tt, tc = st.Ttriple(), st.T_critical()
        st.update(CP.QT_INPUTS, 0, tt)
        pt = st.p()
        pc = st.p_critical()
        pressures = [(pt * (0.99 * pc / pt) ** (i / 63),) for i in range(64)]
        t_sat = per_call(lambda p: st.update(CP.PQ_INPUTS, p, 0.0), pressures, args.repeat)
        liquid = []
        for k in range(64):
            t = tt + 1.0 + (0.9 * tc - tt - 1.0) * k / 63
            st.update(CP.QT_INPUTS, 0, t)
            liquid.append((st.p() + 2e5, t))
        st.specify_phase(CP.iphase_liquid)
        t_liq = per_call(lambda p, t: st.update(CP.PT_INPUTS, p, t), liquid, args.repeat // 4)
        st.unspecify_phase()
        t_liq_free = per_call(lambda p, t: st.update(CP.PT_INPUTS, p, t), liquid, args.repeat // 4)
        print(f"| update(PQ_INPUTS, p, 0) | {name} | {t_sat * 1e9:.0f} ns |")
        print(f"| update(PT_INPUTS, p, T), liquid, phase specified | {name} | {t_liq * 1e9:.0f} ns |")
        print(f"| update(PT_INPUTS, p, T), liquid, phase not specified | {name} | {t_liq_free * 1e9:.0f} ns |")


if __name__ == "__main__":
    main()
