#!/usr/bin/env python3
"""Generate an independent test fleet, import it into cryoledger, run its audit and score the result.

Usage:
  python tools/indep/check.py --bin target/debug/cryoledger [--seed N]
                              [--profile strict|floor|current|fresh|seen]
                              [--gate PROFILE]
                              [--workdir DIR] [--json-out FILE] [fleet options, see fleet.py]

Profiles:
  strict   >= 90 % of short fills found, <= 3 % of honest fills flagged, <= 5 % of fills inconclusive
           (each also among fills bracketed only by routine readings), both gauge faults found and the
           step dated within 7 days, both short vehicles biased and no honest one, the unlogged fill and
           the leak found with at most two other findings, no healthy gauge flagged.
  floor    what the audit has met on every fleet measured so far: >= 90 % of the fills of the
           always-short vehicle found, <= 3 % of honest fills flagged, <= 6 % inconclusive, k = 2 covering 90-99.5 % of honest fills, the drifting gauge, the
           always-short vehicle and the unlogged fill found, no healthy gauge flagged, at most two other
           findings (same fleet settings as strict).
  current  >= 90 % of the fills of a vehicle 2.5 % short on every fill found, <= 3 % of honest fills
           flagged, every planted fault reported, no healthy gauge or honest vehicle flagged.
  seen     current's lines with each planted gauge fault and the leak judged against the size the
           audit states its test sees at that tank (a gauge fault as in fresh; the leak when its rate
           is at least the stated rate of a ten-day leak clear of fills and no fill lies inside it),
           and without the two lines of no false alarm (each a family-wise 5 % test, so a healthy
           gauge or an honest vehicle is flagged on a few fleets in a hundred by design; current
           prints them); CI gates on it at a fresh seed each run (current's fleet settings).
  fresh    the lines met on the fleets measured (see tools/indep/README.md): the always-short
           vehicle biased, <= 6 % of fills inconclusive, the unlogged fill found, at most two other
           findings, and each planted gauge fault found that is at least the size the audit states
           its test sees on that tank (the step's only with a quarter of the fills or more on either
           side) (strict's fleet settings); CI gates on it at a fresh seed each run (--gate).

Honest fills on the two tanks whose gauges carry a planted fault are scored apart (finding the gauge
is that fault's test); every other honest fill counts. Exit status: 0 when every line of the chosen
profile passes (of the --gate profile, when given), 1 when one fails, 2 when the fleet could not be
generated, imported or audited.
"""

from __future__ import annotations

import argparse
import datetime as dtm
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import fleet  # noqa: E402

DAY_MS = 86400_000


def ms(text: str) -> int:
    t = dtm.datetime.fromisoformat(text.replace("Z", "+00:00"))
    if t.tzinfo is None:
        t = t.replace(tzinfo=dtm.timezone.utc)
    return int(round(t.timestamp() * 1000))


def pct(a: int, b: int) -> float | None:
    return 100.0 * a / b if b else None


def fmt_pct(a: int, b: int) -> str:
    return f"{a}/{b} ({100.0 * a / b:.1f} %)" if b else f"{a}/0 (-)"


def run(cmd: list[str], out_path: str | None = None) -> subprocess.CompletedProcess:
    p = subprocess.run(cmd, capture_output=True, text=True)
    if out_path is not None and p.returncode == 0:
        with open(out_path, "w") as fh:
            fh.write(p.stdout)
    return p


# ---------------------------------------------------------------------------------------------
def gauge_fault(g: dict) -> str | None:
    """The fault a gauge entry reports (drift, step, ...), or None when it says the gauge is fine."""
    for key in ("fault", "status"):
        v = g.get(key)
        if isinstance(v, str) and v.lower() not in ("", "ok", "none", "not-enough-data", "unknown",
                                                      "insufficient-data", "no-data"):
            return v.lower()
    return None


def gauge_step_ms(g: dict) -> int | None:
    for key in ("step_ms", "step_time_ms", "step_at_ms"):
        if isinstance(g.get(key), (int, float)):
            return int(g[key])
    for key in ("step_date", "step_time", "step_at", "step"):
        v = g.get(key)
        if isinstance(v, str) and v:
            try:
                if len(v) == 10:
                    v = v + "T12:00:00Z"
                return ms(v)
            except ValueError:
                continue
    return None


def finding_kind(f: dict) -> str:
    return str(f.get("kind") or "").lower()


def finding_span(f: dict) -> tuple[int, int] | None:
    a, b = f.get("from_ms"), f.get("to_ms")
    if a is None and isinstance(f.get("from"), str):
        a = ms(f["from"])
    if b is None and isinstance(f.get("to"), str):
        b = ms(f["to"])
    if a is None or b is None:
        return None
    return int(a), int(b)


def overlaps(span, lo, hi) -> bool:
    return span is not None and span[0] <= hi and span[1] >= lo


def score(truth: dict, audit: dict, profile: str) -> dict:
    faults = truth["faults"]
    fills_t = [f for f in truth["fills"] if f["ticket"]]
    by_ticket = {f["ticket"]: f for f in audit.get("fills", [])}
    gauge_tanks = {faults["gauge_drift"]["tank"], faults["gauge_step"]["tank"]}
    short_all = {v["vehicle"] for v in faults["short_all"]}
    short_some = {v["vehicle"] for v in faults["short_some"]}

    def verdict(f):
        a = by_ticket.get(f["ticket"])
        return (a.get("verdict") or "missing").lower() if a else "missing"

    def block(sel):
        shorts = [f for f in sel if f["short_fraction"] > 0]
        honest = [f for f in sel if f["honest"] and f["tank"] not in gauge_tanks]
        honest_g = [f for f in sel if f["honest"] and f["tank"] in gauge_tanks]
        return {
            "fills": len(sel),
            "short_found": sum(1 for f in shorts if verdict(f) == "short"),
            "short_total": len(shorts),
            "short_inconclusive": sum(1 for f in shorts if verdict(f) in ("inconclusive", "missing")),
            "honest_flagged": sum(1 for f in honest if verdict(f) in ("short", "excess")),
            "honest_flagged_short": sum(1 for f in honest if verdict(f) == "short"),
            "honest_flagged_excess": sum(1 for f in honest if verdict(f) == "excess"),
            "honest_total": len(honest),
            "honest_faulty_gauge_flagged": sum(1 for f in honest_g if verdict(f) in ("short", "excess")),
            "honest_faulty_gauge_total": len(honest_g),
            "inconclusive": sum(1 for f in sel if verdict(f) in ("inconclusive", "missing")),
            "missing": sum(1 for f in sel if verdict(f) == "missing"),
        }

    # the k = 2 interval's coverage of honest fills (tanks with a planted gauge fault left out): a
    # residual within twice its stated standard uncertainty
    covered = total_cov = 0
    for f in fills_t:
        a = by_ticket.get(f["ticket"])
        if not (a and f["honest"] and f["tank"] not in gauge_tanks):
            continue
        sigma, resid = a.get("sigma_kg") or 0.0, a.get("residual_kg")
        if sigma > 0 and resid is not None and a.get("before") and a.get("after"):
            total_cov += 1
            covered += abs(resid) <= 2.0 * sigma

    fig = {"all": block(fills_t),
           "routine_only": block([f for f in fills_t if not f["has_driver_readings"]]),
           "driver": block([f for f in fills_t if f["has_driver_readings"]])}

    per_vehicle = {}
    for v in sorted(short_all | short_some):
        mine = [f for f in fills_t if f["vehicle"] == v and f["short_fraction"] > 0]
        per_vehicle[v] = {
            "role": "short_all" if v in short_all else "short_some",
            "short_fraction": next(x["short_fraction"] for x in faults["short_all"] + faults["short_some"]
                                   if x["vehicle"] == v),
            "found": sum(1 for f in mine if verdict(f) == "short"),
            "total": len(mine),
            "with_verdict": sum(1 for f in mine if verdict(f) not in ("inconclusive", "missing")),
            "routine_found": sum(1 for f in mine if verdict(f) == "short" and not f["has_driver_readings"]),
            "routine_total": sum(1 for f in mine if not f["has_driver_readings"]),
        }
    fig["short_vehicles"] = per_vehicle
    fig["coverage"] = {"covered": covered, "total": total_cov}

    # gauges
    gauges = {g.get("tank"): g for g in audit.get("gauges", [])}
    gd, gs = faults["gauge_drift"], faults["gauge_step"]
    g_drift = gauges.get(gd["tank"], {})
    g_step = gauges.get(gs["tank"], {})
    step_ms_found = gauge_step_ms(g_step)
    step_err = abs(step_ms_found - ms(gs["time"])) / DAY_MS if step_ms_found is not None else None
    false_gauges = sorted(t for t, g in gauges.items() if t not in gauge_tanks and gauge_fault(g))
    # the sizes the audit states its gauge test sees (found with probability 95 %): a planted fault
    # at or above it must be found; the step's applies to a step with at least a quarter of the
    # tank's fills on either side (as the audit states it)
    step_fills = sorted(f["start"] for f in fills_t if f["tank"] == gs["tank"])
    step_share = (sum(1 for t in step_fills if ms(t) < ms(gs["time"])) / len(step_fills)) if step_fills else None
    seen_drift = g_drift.get("drift_detectable_percent_per_year")
    seen_step = g_step.get("step_detectable_percent")
    drift_seeable = isinstance(seen_drift, (int, float)) and 100 * abs(gd["span_change_per_year"]) >= seen_drift
    step_seeable = (isinstance(seen_step, (int, float)) and 100 * abs(gs["span_change"]) >= seen_step
                    and step_share is not None and 0.25 <= step_share <= 0.75)
    fig["gauges"] = {
        "drift_tank": gd["tank"], "drift_reported": gauge_fault(g_drift),
        "drift_status": g_drift.get("status"),
        "drift_percent_per_year": g_drift.get("drift_percent_per_year"),
        "step_tank": gs["tank"], "step_date": gs["date"], "step_reported": gauge_fault(g_step),
        "step_status": g_step.get("status"),
        "step_date_found": (dtm.datetime.fromtimestamp(step_ms_found / 1000, tz=dtm.timezone.utc)
                            .strftime("%Y-%m-%d") if step_ms_found is not None else None),
        "step_date_error_days": step_err,
        "drift_seen_from": seen_drift, "drift_seeable": drift_seeable,
        "step_seen_from": seen_step, "step_share_before": step_share, "step_seeable": step_seeable,
        "false": false_gauges,
        "not_enough_data": sorted(t for t, g in gauges.items()
                                  if str(g.get("status", "")).lower() == "not-enough-data"),
    }

    # vehicles
    vehicles = {v.get("vehicle"): v for v in audit.get("vehicles", [])}

    def biased(name):
        return str(vehicles.get(name, {}).get("status", "")).lower() == "biased"

    fig["vehicles"] = {
        "planted": {v: {"biased": biased(v), "bias_percent": vehicles.get(v, {}).get("bias_percent"),
                        "status": vehicles.get(v, {}).get("status")} for v in sorted(short_all | short_some)},
        "false": sorted(v for v in vehicles if v not in short_all | short_some and biased(v)),
    }

    # findings
    unl = faults.get("unlogged_fill")
    leak = faults["leak"]
    m_unl, m_leak, other = [], [], []
    for f in audit.get("findings", []):
        kind = finding_kind(f)
        span = finding_span(f)
        hit = False
        if unl and f.get("tank") == unl["tank"] and not any(w in kind for w in ("loss", "leak", "vent")) \
                and overlaps(span, ms(unl["start"]) - DAY_MS, ms(unl["end"]) + DAY_MS):
            m_unl.append(f)
            hit = True
        if f.get("tank") == leak["tank"] and "gain" not in kind \
                and overlaps(span, ms(leak["start"]) - DAY_MS, ms(leak["end"]) + DAY_MS):
            m_leak.append(f)
            hit = True
        if not hit:
            other.append(f)
    kinds = {}
    for f in other:
        kinds[finding_kind(f) or "?"] = kinds.get(finding_kind(f) or "?", 0) + 1
    # the rate of a ten-day leak clear of fills the audit states its scan finds at the leak's tank:
    # a planted leak at or above it, with no fill inside it, must be found
    tanks = {t.get("tank"): t for t in audit.get("tanks", [])}
    leak_seen = tanks.get(leak["tank"], {}).get("leak_detectable_kg_per_day")
    leak_fill_inside = any(f["tank"] == leak["tank"] and ms(leak["start"]) <= ms(f["start"]) <= ms(leak["end"])
                           for f in truth["fills"])
    fig["findings"] = {
        "leak_kg_per_day": leak["kg_per_day"], "leak_seen_from": leak_seen,
        "leak_fill_inside": leak_fill_inside,
        "leak_seeable": isinstance(leak_seen, (int, float)) and leak["kg_per_day"] >= leak_seen
        and not leak_fill_inside,
        "total": len(audit.get("findings", [])),
        "unlogged_tank": unl["tank"] if unl else None,
        "unlogged_matched": len(m_unl),
        "leak_tank": leak["tank"], "leak_matched": len(m_leak),
        "leak_kinds": sorted({finding_kind(f) for f in m_leak}),
        "unlogged_kinds": sorted({finding_kind(f) for f in m_unl}),
        "other": len(other), "other_by_kind": kinds,
        "other_tanks": sorted({f.get("tank") for f in other}),
    }

    # thresholds
    checks = []
    a, r = fig["all"], fig["routine_only"]

    def add(name, ok, value):
        checks.append({"check": name, "pass": bool(ok), "value": value})

    def le(x, b, lim):
        return b > 0 and 100.0 * x / b <= lim or b == 0

    def ge(x, b, lim):
        return b > 0 and 100.0 * x / b >= lim

    def add_coverage_and_drift():
        cov = fig["coverage"]
        cov_pct = pct(cov["covered"], cov["total"])
        add("k = 2 covers about 95 % of honest fills (90-99.5 %)",
            cov_pct is not None and 90.0 <= cov_pct <= 99.5, fmt_pct(cov["covered"], cov["total"]))
        g = fig["gauges"]
        add("drifting gauge found", g["drift_reported"] is not None, f"{g['drift_tank']}: {g['drift_status']}")

    def add_seeable():
        g = fig["gauges"]
        due = [k for k, ok in (("drift", g["drift_seeable"]), ("step", g["step_seeable"])) if ok]
        missed = [k for k in due if not g[f"{k}_reported"]]
        add("gauge faults the audit says it sees found", not missed,
            (f"{', '.join(due)} at or above the stated size" if due else "neither at the stated size")
            + (f"; missed: {', '.join(missed)}" if missed else ""))

    def add_short_vehicles():
        for k, x in vp.items():
            if per_vehicle[k]["role"] == "short_all":
                add(f"always-short vehicle {k} biased", x["biased"], str(x["status"]))
            else:
                rep = x["biased"] or per_vehicle[k]["found"] > 0
                add(f"sometimes-short vehicle {k} reported (biased or a fill short)", rep,
                    f"{x['status']}, {per_vehicle[k]['found']}/{per_vehicle[k]['total']} short fills found")

    vp = fig["vehicles"]["planted"]
    if profile == "strict":
        add("short fills found >= 90 %", ge(a["short_found"], a["short_total"], 90), fmt_pct(a["short_found"], a["short_total"]))
        add("honest fills flagged <= 3 %", le(a["honest_flagged"], a["honest_total"], 3), fmt_pct(a["honest_flagged"], a["honest_total"]))
        add("fills inconclusive <= 5 %", le(a["inconclusive"], a["fills"], 5), fmt_pct(a["inconclusive"], a["fills"]))
        add("routine-only: short fills found >= 90 %", ge(r["short_found"], r["short_total"], 90) or r["short_total"] == 0,
            fmt_pct(r["short_found"], r["short_total"]))
        add("routine-only: honest fills flagged <= 3 %", le(r["honest_flagged"], r["honest_total"], 3), fmt_pct(r["honest_flagged"], r["honest_total"]))
        add("routine-only: fills inconclusive <= 5 %", le(r["inconclusive"], r["fills"], 5), fmt_pct(r["inconclusive"], r["fills"]))
        add_coverage_and_drift()
        g = fig["gauges"]
        add("stepped gauge found", g["step_reported"] is not None, f"{g['step_tank']}: {g['step_status']}")
        add("step dated within 7 days", g["step_date_error_days"] is not None and g["step_date_error_days"] <= 7.0,
            f"true {g['step_date']}, found {g['step_date_found']}"
            + (f" ({g['step_date_error_days']:.1f} d)" if g["step_date_error_days"] is not None else ""))
        add("no healthy gauge flagged", not g["false"], ", ".join(g["false"]) or "none")
        add("both short vehicles biased", all(x["biased"] for x in vp.values()),
            ", ".join(f"{k}: {x['status']}" for k, x in vp.items()))
        add("no honest vehicle biased", not fig["vehicles"]["false"], ", ".join(fig["vehicles"]["false"]) or "none")
        fd = fig["findings"]
        add("unlogged fill found", fd["unlogged_matched"] > 0, f"{fd['unlogged_matched']} finding(s) at {fd['unlogged_tank']}")
        add("leak found", fd["leak_matched"] > 0, f"{fd['leak_matched']} finding(s) at {fd['leak_tank']}")
        add("at most 2 other findings", fd["other"] <= 2, str(fd["other"]))
    elif profile == "fresh":
        # The lines the audit has met on the independent fleets measured (tools/indep/README.md):
        # CI gates on them at a fresh seed each run, beside the fixed seed's strict and floor gates.
        sa = {k: x for k, x in vp.items() if per_vehicle.get(k, {}).get("role") == "short_all"}
        add("the always-short vehicle biased", bool(sa) and all(x["biased"] for x in sa.values()),
            ", ".join(f"{k}: {x['status']}" for k, x in sa.items()) or "none planted")
        add("fills inconclusive <= 6 %", le(a["inconclusive"], a["fills"], 6), fmt_pct(a["inconclusive"], a["fills"]))
        add_seeable()
        fd = fig["findings"]
        add("unlogged fill found", fd["unlogged_matched"] > 0, f"{fd['unlogged_matched']} finding(s) at {fd['unlogged_tank']}")
        add("at most 2 other findings", fd["other"] <= 2, str(fd["other"]))
    elif profile == "floor":
        # What the audit has met on every independent fleet measured so far (twelve seeds); CI gates on
        # it at a fixed seed so a regression cannot land while the strict figures are still out of reach.
        sa = [x for x in per_vehicle.values() if x["role"] == "short_all"]
        sa_found, sa_total = sum(x["found"] for x in sa), sum(x["total"] for x in sa)
        add("fills of the always-short vehicle found >= 90 %", ge(sa_found, sa_total, 90), fmt_pct(sa_found, sa_total))
        add("honest fills flagged <= 3 %", le(a["honest_flagged"], a["honest_total"], 3), fmt_pct(a["honest_flagged"], a["honest_total"]))
        add("fills inconclusive <= 6 %", le(a["inconclusive"], a["fills"], 6), fmt_pct(a["inconclusive"], a["fills"]))
        add_coverage_and_drift()
        g = fig["gauges"]
        add("no healthy gauge flagged", not g["false"], ", ".join(g["false"]) or "none")
        add("both short vehicles biased", bool(vp) and all(x["biased"] for x in vp.values()),
            ", ".join(f"{k}: {x['status']}" for k, x in vp.items()) or "none planted")
        fd = fig["findings"]
        add("unlogged fill found", fd["unlogged_matched"] > 0, f"{fd['unlogged_matched']} finding(s) at {fd['unlogged_tank']}")
        add("at most 2 other findings", fd["other"] <= 2, str(fd["other"]))
    else:
        # current: the lines as written; seen: the same, each planted gauge fault and the
        # leak judged against the size the audit states its test sees at that tank (CI gates on it
        # at a fresh seed each run)
        sa = [x for x in per_vehicle.values() if x["role"] == "short_all"]
        found = sum(x["found"] for x in sa)
        total = sum(x["total"] for x in sa)
        add("fills of the always-short vehicle found >= 90 %", ge(found, total, 90), fmt_pct(found, total))
        add("honest fills flagged <= 3 %", le(a["honest_flagged"], a["honest_total"], 3), fmt_pct(a["honest_flagged"], a["honest_total"]))
        g = fig["gauges"]
        seen = profile == "seen"
        if seen:
            add_seeable()
        else:
            add("drifting gauge reported", g["drift_reported"] is not None, f"{g['drift_tank']}: {g['drift_status']}")
            add("stepped gauge reported", g["step_reported"] is not None, f"{g['step_tank']}: {g['step_status']}")
        add_short_vehicles()
        fd = fig["findings"]
        add("unlogged fill reported", fd["unlogged_matched"] > 0, f"{fd['unlogged_matched']} finding(s) at {fd['unlogged_tank']}")
        if seen:
            seen_from = fd["leak_seen_from"]
            add("leak found if at least the rate the audit states (clear of fills)",
                fd["leak_matched"] > 0 or not fd["leak_seeable"],
                f"{fd['leak_matched']} finding(s) at {fd['leak_tank']}; planted {fd['leak_kg_per_day']:.0f} kg/day, "
                + (f"seen from {seen_from:.0f}" if isinstance(seen_from, (int, float)) else "no rate stated")
                + (", a fill inside" if fd["leak_fill_inside"] else ""))
        else:
            add("leak reported", fd["leak_matched"] > 0, f"{fd['leak_matched']} finding(s) at {fd['leak_tank']}")
            add("no false drift", not g["false"], ", ".join(g["false"]) or "none")
            add("no false bias", not fig["vehicles"]["false"], ", ".join(fig["vehicles"]["false"]) or "none")
    fig["checks"] = checks
    fig["pass"] = all(c["pass"] for c in checks)
    return fig


def print_report(fig: dict, truth: dict, profile: str) -> None:
    a, r, d = fig["all"], fig["routine_only"], fig["driver"]
    print()
    print(f"{'fills':34s} {'all':>20s} {'routine-only':>20s} {'driver-read':>20s}")
    rows = [
        ("fills", lambda x: str(x["fills"])),
        ("short fills found", lambda x: fmt_pct(x["short_found"], x["short_total"])),
        ("short fills inconclusive", lambda x: fmt_pct(x["short_inconclusive"], x["short_total"])),
        ("honest fills flagged", lambda x: fmt_pct(x["honest_flagged"], x["honest_total"])),
        ("  of them short / excess", lambda x: f"{x['honest_flagged_short']} / {x['honest_flagged_excess']}"),
        ("inconclusive (all fills)", lambda x: fmt_pct(x["inconclusive"], x["fills"])),
        ("honest, faulty-gauge tanks flagged", lambda x: fmt_pct(x["honest_faulty_gauge_flagged"], x["honest_faulty_gauge_total"])),
        ("not in the audit output", lambda x: str(x["missing"])),
    ]
    for name, fn in rows:
        print(f"{name:34s} {fn(a):>20s} {fn(r):>20s} {fn(d):>20s}")
    print()
    print("short vehicles")
    for v, x in fig["short_vehicles"].items():
        st = fig["vehicles"]["planted"][v]
        b = st["bias_percent"]
        print(f"  {v:10s} {x['role']:10s} short {100 * x['short_fraction']:.2f} %: fills found "
              f"{fmt_pct(x['found'], x['total'])}, with a verdict {x['with_verdict']}, routine-only found "
              f"{fmt_pct(x['routine_found'], x['routine_total'])}; vehicle {st['status']}"
              + (f" ({b:+.2f} %)" if isinstance(b, (int, float)) else ""))
    print(f"  honest vehicles biased: {', '.join(fig['vehicles']['false']) or 'none'}")
    g = fig["gauges"]
    print("gauges")
    dpy = g["drift_percent_per_year"]
    print(f"  drift {g['drift_tank']}: {g['drift_status']}"
          + (f" ({dpy:+.2f} %/year)" if isinstance(dpy, (int, float)) else ""))
    print(f"  step  {g['step_tank']} on {g['step_date']}: {g['step_status']}, date found {g['step_date_found']}"
          + (f", error {g['step_date_error_days']:.1f} days" if g["step_date_error_days"] is not None else ""))
    def seen(x):
        return f"{x:.1f}" if isinstance(x, (int, float)) else "-"
    gd, gs = truth["faults"]["gauge_drift"], truth["faults"]["gauge_step"]
    print(f"  the audit says it sees a drift from {seen(g['drift_seen_from'])} %/year at {g['drift_tank']} "
          f"(planted {100 * abs(gd['span_change_per_year']):.1f}: {'due' if g['drift_seeable'] else 'not due'}), "
          f"a step from {seen(g['step_seen_from'])} % at {g['step_tank']} (planted "
          f"{100 * abs(gs['span_change']):.1f} with {100 * (g['step_share_before'] or 0):.0f} % of the fills "
          f"before it, due at a quarter to three quarters: {'due' if g['step_seeable'] else 'not due'})")
    print(f"  healthy gauges flagged: {', '.join(g['false']) or 'none'}; not enough data: "
          f"{len(g['not_enough_data'])}")
    fd = fig["findings"]
    print("findings")
    print(f"  unlogged fill at {fd['unlogged_tank']}: {fd['unlogged_matched']} matching finding(s) {fd['unlogged_kinds']}")
    seen_from = fd["leak_seen_from"]
    print(f"  leak at {fd['leak_tank']}: {fd['leak_matched']} matching finding(s) {fd['leak_kinds']}; planted "
          f"{fd['leak_kg_per_day']:.0f} kg/day, the audit says it sees a ten-day leak clear of fills from "
          + (f"{seen_from:.0f}" if isinstance(seen_from, (int, float)) else "-")
          + f" ({'a fill inside' if fd['leak_fill_inside'] else 'clear of fills'}: "
          + f"{'due' if fd['leak_seeable'] else 'not due'})")
    print(f"  other findings: {fd['other']} {fd['other_by_kind']} on {len(fd['other_tanks'])} tank(s)")
    print()
    print(f"profile {profile}")
    for c in fig["checks"]:
        print(f"  {'PASS' if c['pass'] else 'FAIL'}  {c['check']:52s} {c['value']}")
    print(f"{'PASS' if fig['pass'] else 'FAIL'} ({profile})")


PROFILES = ("strict", "floor", "current", "fresh", "seen")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Score cryoledger's audit on an independent fleet.")
    ap.add_argument("--bin", required=True, help="the cryoledger binary")
    ap.add_argument("--profile", choices=PROFILES, default="strict")
    ap.add_argument("--gate", choices=PROFILES, default=None,
                    help="judge the same fleet on this profile too and take the exit status from it "
                         "(the chosen --profile is then printed, not gating)")
    ap.add_argument("--workdir", default=None,
                    help="folder for the fleet, database and audit (kept); default a temporary folder, "
                         "removed at the end unless --keep")
    ap.add_argument("--keep", action="store_true", help="keep the temporary folder")
    ap.add_argument("--json-out", default=None, help="write the figures as JSON here")
    ap.add_argument("--audit-arg", action="append", default=[],
                    help="extra argument passed to `audit` (repeatable), e.g. --audit-arg=--window-hours=30")
    fleet.add_fleet_args(ap)
    a = ap.parse_args(argv)
    t_start = time.time()
    cfg = fleet.settings_from(a, default_short_all=0.025 if a.profile in ("current", "seen") else 0.015)
    print(f"seed {cfg.seed} (profile {a.profile}, always-short vehicle {100 * cfg.short_all:.1f} %)", flush=True)
    work = a.workdir or tempfile.mkdtemp(prefix="cryoledger-indep-")
    os.makedirs(work, exist_ok=True)
    fdir = os.path.join(work, "fleet")
    try:
        gen = fleet.generate(cfg, fdir)
    except Exception as e:  # noqa: BLE001
        print(f"ERROR: generating the fleet failed: {e!r}")
        return 2
    db = os.path.join(work, "f.db")
    for p in (db, db + "-wal", db + "-shm"):
        if os.path.exists(p):
            os.remove(p)
    t_imp = time.time()
    p = run([a.bin, "import", "--db", db, "--tanks", os.path.join(fdir, "tanks.csv"),
             "--readings", os.path.join(fdir, "readings.csv"), "--deliveries", os.path.join(fdir, "deliveries.csv")])
    if p.returncode != 0:
        print(f"ERROR: import failed (workdir {work})")
        print(p.stdout[-4000:])
        print(p.stderr[-4000:])
        return 2
    print(p.stdout.strip())
    t_aud = time.time()
    audit_path = os.path.join(work, "audit.json")
    p = run([a.bin, "audit", "--db", db, "--format", "json", *a.audit_arg], audit_path)
    if p.returncode != 0:
        print(f"ERROR: audit failed (workdir {work})")
        print(p.stderr[-4000:])
        return 2
    t_done = time.time()
    with open(audit_path) as fh:
        audit = json.load(fh)
    with open(os.path.join(fdir, "truth.json")) as fh:
        truth = json.load(fh)
    fig = score(truth, audit, a.profile)
    # the same fleet judged on each fill's own balance only (no vehicle's other fills): what the
    # vehicle's evidence adds, printed beside the figures
    own_path = os.path.join(work, "audit_own.json")
    p = run([a.bin, "audit", "--db", db, "--format", "json", "--own-balance-only", *a.audit_arg], own_path)
    if p.returncode != 0:
        print(f"ERROR: audit --own-balance-only failed (workdir {work})")
        print(p.stderr[-4000:])
        return 2
    with open(own_path) as fh:
        own = score(truth, json.load(fh), a.profile)
    fig["own_balance_only"] = {k: own["all"][k] for k in ("short_found", "short_total", "honest_flagged",
                                                          "honest_total")}
    fig["seed"] = cfg.seed
    fig["profile"] = a.profile
    fig["workdir"] = work
    fig["seconds"] = {"generate": gen["seconds"], "import": t_aud - t_imp, "audit": t_done - t_aud,
                      "total": time.time() - t_start}
    print(f"workdir {work}; generate {gen['seconds']:.1f} s, import {t_aud - t_imp:.1f} s, "
          f"audit {t_done - t_aud:.1f} s")
    print_report(fig, truth, a.profile)
    passed = fig["pass"]
    if a.gate:
        gate = score(truth, audit, a.gate)
        fig["gate"] = {"profile": a.gate, "checks": gate["checks"], "pass": gate["pass"]}
        print(f"gate: profile {a.gate} (the exit status)")
        for c in gate["checks"]:
            print(f"  {'PASS' if c['pass'] else 'FAIL'}  {c['check']:52s} {c['value']}")
        print(f"{'PASS' if gate['pass'] else 'FAIL'} (gate {a.gate})")
        passed = gate["pass"]
    o = fig["own_balance_only"]
    print(f"judged on their own balances only (audit --own-balance-only): short fills found "
          f"{fmt_pct(o['short_found'], o['short_total'])}, honest fills flagged "
          f"{fmt_pct(o['honest_flagged'], o['honest_total'])}")
    if a.json_out:
        with open(a.json_out, "w") as fh:
            json.dump(fig, fh, indent=1)
    if a.workdir is None and not a.keep:
        shutil.rmtree(work, ignore_errors=True)
    print(f"seed {cfg.seed}")
    return 0 if passed else 1


if __name__ == "__main__":
    sys.exit(main())
