#!/usr/bin/env python3
"""Regenerate crates/fluids/src/data/<fluid>.rs from CoolProp's published fluid JSON.

The coefficients are the published figures of each paper (named in the output); CoolProp is only the
carrier. Constants are copied verbatim (gas constant, molar mass, reducing state, every ideal-gas term) so
that the Rust equations reproduce CoolProp to round-off.

The output is Rust source (constant tables, no parsing at run time, so nothing can fail when a fluid is
built); the tool runs rustfmt on it when rustfmt is on PATH.

Usage:  python3 tools/fluids_coefficients.py [--out crates/fluids/src/data]
Needs:  pip install CoolProp==8.0.0   (see tools/requirements.txt)
"""

import argparse
import json
import pathlib
import shutil
import subprocess
import sys

import CoolProp
import CoolProp.CoolProp as CP

# (our name, CoolProp name, citation of the equation of state)
FLUIDS = [
    ("nitrogen", "Nitrogen",
     "R. Span, E. W. Lemmon, R. T Jacobsen, W. Wagner, A. Yokozeki, J. Phys. Chem. Ref. Data 29, 1361 (2000)"),
    ("oxygen", "Oxygen",
     "R. Schmidt, W. Wagner, Fluid Phase Equilib. 19, 175 (1985); ideal-gas part as fitted in "
     "R. B. Stewart, R. T Jacobsen, W. Wagner, J. Phys. Chem. Ref. Data 20, 917 (1991)"),
    ("argon", "Argon",
     "Ch. Tegeler, R. Span, W. Wagner, J. Phys. Chem. Ref. Data 28, 779 (1999)"),
    ("carbon-dioxide", "CarbonDioxide",
     "R. Span, W. Wagner, J. Phys. Chem. Ref. Data 25, 1509 (1996)"),
    ("methane", "Methane",
     "U. Setzmann, W. Wagner, J. Phys. Chem. Ref. Data 20, 1061 (1991)"),
    ("hydrogen", "Hydrogen",
     "J. W. Leachman, R. T Jacobsen, S. G. Penoncello, E. W. Lemmon, J. Phys. Chem. Ref. Data 38, 721 (2009)"
     " (normal hydrogen)"),
    ("parahydrogen", "ParaHydrogen",
     "J. W. Leachman, R. T Jacobsen, S. G. Penoncello, E. W. Lemmon, J. Phys. Chem. Ref. Data 38, 721 (2009)"
     " (parahydrogen)"),
]


def ideal_terms(alpha0):
    out = []
    for term in alpha0:
        kind = term["type"]
        if kind == "IdealGasHelmholtzLead":
            out.append({"kind": "lead", "a1": term["a1"], "a2": term["a2"]})
        elif kind == "IdealGasHelmholtzLogTau":
            out.append({"kind": "log_tau", "a": term["a"]})
        elif kind == "IdealGasHelmholtzPower":
            out.append({"kind": "power", "n": term["n"], "t": term["t"]})
        elif kind == "IdealGasHelmholtzPlanckEinstein":
            out.append({"kind": "planck_einstein", "n": term["n"], "theta": term["t"]})
        elif kind == "IdealGasHelmholtzPlanckEinsteinFunctionT":
            # CoolProp turns v_i (in K) into theta_i = v_i / Tcrit before use; do the same, once, here.
            tc = term["Tcrit"]
            out.append({"kind": "planck_einstein", "n": term["n"], "theta": [v / tc for v in term["v"]]})
        elif kind == "IdealGasHelmholtzEnthalpyEntropyOffset":
            out.append({"kind": "offset", "a1": term["a1"], "a2": term["a2"], "reference": term["reference"]})
        else:
            sys.exit(f"unsupported ideal-gas term {kind}: teach crates/fluids/src/helmholtz.rs first")
    return out


def residual_terms(alphar):
    out = {"power": None, "gaussian": None, "non_analytic": None}
    for term in alphar:
        kind = term["type"]
        if kind == "ResidualHelmholtzPower":
            out["power"] = {k: term[k] for k in ("n", "d", "t", "l")}
        elif kind == "ResidualHelmholtzGaussian":
            out["gaussian"] = {k: term[k] for k in ("n", "d", "t", "eta", "epsilon", "beta", "gamma")}
        elif kind == "ResidualHelmholtzNonAnalytic":
            # keep the paper's capital letters distinct from a, b, beta
            out["non_analytic"] = {
                "n": term["n"], "a": term["a"], "b": term["b"], "beta": term["beta"],
                "big_a": term["A"], "big_b": term["B"], "big_c": term["C"], "big_d": term["D"],
            }
        else:
            sys.exit(f"unsupported residual term {kind}: teach crates/fluids/src/helmholtz.rs first")
    return {k: v for k, v in out.items() if v is not None}


def ancillary(entry):
    kind = entry["type"]
    exp_form = kind in ("pL", "pV", "rhoV")
    if kind not in ("pL", "pV", "rhoV", "rhoLnoexp"):
        sys.exit(f"unsupported ancillary type {kind}")
    return {
        "form": "exp" if exp_form else "linear",
        "using_tau_r": bool(entry["using_tau_r"]),
        "reducing_value": entry["reducing_value"],
        "t_r_k": entry["T_r"],
        "n": entry["n"],
        "t": entry["t"],
    }


def one_fluid(ours, cp_name, citation):
    doc = json.loads(CP.get_fluid_param_string(cp_name, "JSON"))
    doc = doc[0] if isinstance(doc, list) else doc
    eos = doc["EOS"][0]
    states = eos["STATES"]
    red = states["reducing"]
    crit = doc["STATES"]["critical"]
    anc = doc["ANCILLARIES"]
    return {
        "fluid": ours,
        "equation_of_state": citation,
        "generated_by": f"tools/fluids_coefficients.py from CoolProp {CoolProp.__version__} "
                        f"(get_fluid_param_string('{cp_name}', 'JSON'))",
        "gas_constant_j_mol_k": eos["gas_constant"],
        "molar_mass_kg_mol": eos["molar_mass"],
        "reducing": {"temperature_k": red["T"], "molar_density_mol_m3": red["rhomolar"]},
        "critical": {"temperature_k": crit["T"], "pressure_pa": crit["p"],
                     "molar_density_mol_m3": crit["rhomolar"]},
        "triple_temperature_k": eos["Ttriple"],
        "max_temperature_k": eos["T_max"],
        "max_pressure_pa": eos["p_max"],
        "ideal": ideal_terms(eos["alpha0"]),
        "residual": residual_terms(eos["alphar"]),
        "ancillaries": {"p_sat": ancillary(anc["pS"]), "rho_liquid": ancillary(anc["rhoL"]),
                        "rho_vapour": ancillary(anc["rhoV"])},
    }


def lit(x):
    """A Rust f64 literal that parses back to exactly the same double."""
    x = float(x)
    r = repr(x)
    return r if ("." in r or "e" in r or "inf" in r or "nan" in r) else r + ".0"


def int_lit(x):
    if float(x) != int(x):
        sys.exit(f"expected an integer exponent, got {x}")
    return str(int(x))


def slice_lit(xs):
    return "&[" + ", ".join(lit(x) for x in xs) + "]"


def rust_source(d):
    out = []
    w = out.append
    w(f"//! {d['fluid']}: {d['equation_of_state']}.")
    w("//!")
    w(f"//! Generated by {d['generated_by']}.")
    w("//! Do not edit by hand: rerun the tool.")
    w("")
    used = ["Ancillary", "AncillaryForm", "FluidData", "IdealTerm"]
    used += [name for key, name in (("power", "PowerTerm"), ("gaussian", "GaussianTerm"),
                                    ("non_analytic", "NonAnalyticTerm")) if d["residual"].get(key)]
    w("use super::{" + ", ".join(sorted(used)) + "};")
    w("")
    w("pub(crate) const DATA: FluidData = FluidData {")
    w(f"    equation_of_state: {json.dumps(d['equation_of_state'])},")
    w(f"    generated_by: {json.dumps(d['generated_by'])},")
    w(f"    gas_constant_j_mol_k: {lit(d['gas_constant_j_mol_k'])},")
    w(f"    molar_mass_kg_mol: {lit(d['molar_mass_kg_mol'])},")
    w(f"    reducing_temperature_k: {lit(d['reducing']['temperature_k'])},")
    w(f"    reducing_density_mol_m3: {lit(d['reducing']['molar_density_mol_m3'])},")
    w(f"    critical_temperature_k: {lit(d['critical']['temperature_k'])},")
    w(f"    critical_pressure_pa: {lit(d['critical']['pressure_pa'])},")
    w(f"    critical_density_mol_m3: {lit(d['critical']['molar_density_mol_m3'])},")
    w(f"    triple_temperature_k: {lit(d['triple_temperature_k'])},")
    w(f"    max_temperature_k: {lit(d['max_temperature_k'])},")
    w(f"    max_pressure_pa: {lit(d['max_pressure_pa'])},")
    w("    ideal: &[")
    for t in d["ideal"]:
        k = t["kind"]
        if k == "lead":
            w(f"        IdealTerm::Lead {{ a1: {lit(t['a1'])}, a2: {lit(t['a2'])} }},")
        elif k == "offset":
            w(f"        // reference-state offset ({t['reference']})")
            w(f"        IdealTerm::Offset {{ a1: {lit(t['a1'])}, a2: {lit(t['a2'])} }},")
        elif k == "log_tau":
            w(f"        IdealTerm::LogTau {{ a: {lit(t['a'])} }},")
        elif k == "power":
            w(f"        IdealTerm::Power {{ n: {slice_lit(t['n'])}, t: {slice_lit(t['t'])} }},")
        elif k == "planck_einstein":
            w(f"        IdealTerm::PlanckEinstein {{ n: {slice_lit(t['n'])}, theta: {slice_lit(t['theta'])} }},")
    w("    ],")
    r = d["residual"]
    w("    power: &[")
    p = r.get("power")
    if p:
        for i in range(len(p["n"])):
            w(f"        PowerTerm {{ n: {lit(p['n'][i])}, d: {int_lit(p['d'][i])}, t: {lit(p['t'][i])}, "
              f"l: {int_lit(p['l'][i])} }},")
    w("    ],")
    w("    gaussian: &[")
    g = r.get("gaussian")
    if g:
        for i in range(len(g["n"])):
            w(f"        GaussianTerm {{ n: {lit(g['n'][i])}, d: {int_lit(g['d'][i])}, t: {lit(g['t'][i])}, "
              f"eta: {lit(g['eta'][i])}, epsilon: {lit(g['epsilon'][i])}, beta: {lit(g['beta'][i])}, "
              f"gamma: {lit(g['gamma'][i])} }},")
    w("    ],")
    w("    non_analytic: &[")
    na = r.get("non_analytic")
    if na:
        for i in range(len(na["n"])):
            w(f"        NonAnalyticTerm {{ n: {lit(na['n'][i])}, a: {lit(na['a'][i])}, b: {lit(na['b'][i])}, "
              f"beta: {lit(na['beta'][i])}, big_a: {lit(na['big_a'][i])}, big_b: {lit(na['big_b'][i])}, "
              f"big_c: {lit(na['big_c'][i])}, big_d: {lit(na['big_d'][i])} }},")
    w("    ],")
    for key, name in (("p_sat", "ancillary_pressure"), ("rho_liquid", "ancillary_liquid_density"),
                      ("rho_vapour", "ancillary_vapour_density")):
        a = d["ancillaries"][key]
        form = "Exp" if a["form"] == "exp" else "Linear"
        w(f"    {name}: Ancillary {{ form: AncillaryForm::{form}, using_tau_r: {str(a['using_tau_r']).lower()}, "
          f"reducing_value: {lit(a['reducing_value'])}, t_r_k: {lit(a['t_r_k'])}, n: {slice_lit(a['n'])}, "
          f"t: {slice_lit(a['t'])} }},")
    w("};")
    return "\n".join(out) + "\n"


def main():
    here = pathlib.Path(__file__).resolve().parent.parent
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--out", type=pathlib.Path, default=here / "crates" / "fluids" / "src" / "data")
    args = ap.parse_args()
    args.out.mkdir(parents=True, exist_ok=True)
    rustfmt = shutil.which("rustfmt")
    for ours, cp_name, citation in FLUIDS:
        path = args.out / (ours.replace("-", "_") + ".rs")
        path.write_text(rust_source(one_fluid(ours, cp_name, citation)))
        if rustfmt:
            subprocess.run([rustfmt, "--edition", "2024", str(path)], check=True)
        print(f"wrote {path}")


if __name__ == "__main__":
    main()
