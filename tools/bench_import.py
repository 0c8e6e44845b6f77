#!/usr/bin/env python3
"""Import benchmark: 1,000,000 readings from CSV through `cryoledger import`, beside a baseline measured
in the same run: Python's sqlite3 `executemany` inserting the same rows (same parsing of times and units,
same table from migrations/, same unique index) in one transaction.

Usage: python3 tools/bench_import.py [--rows N] [--bin target/release/cryoledger]
Prints rows/s for both, their ratio, and the importer's peak resident memory.
"""
import argparse
import csv
import os
import resource
import sqlite3
import subprocess
import sys
import tempfile
import time
from datetime import datetime

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
INCH_WATER_PA = 249.08891  # conventional inch of water (NIST SP 811)
BAR_PA = 1e5


def write_inputs(folder, rows, tanks):
    tanks_csv = os.path.join(folder, "tanks.csv")
    with open(tanks_csv, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["site", "tank", "fluid", "orientation", "diameter_m", "length_m", "heads", "line_temperature_c"])
        for t in range(tanks):
            w.writerow([f"Bench Site {t // 4}", f"B-{t:04d}", "nitrogen", "vertical", "2.4", "6.0", "ellipsoidal", "15"])
    readings_csv = os.path.join(folder, "readings.csv")
    per_tank = rows // tanks
    t0 = 1_767_225_600  # 2026-01-01T00:00:00Z
    with open(readings_csv, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["tank", "time", "dp", "dp_unit", "pressure", "pressure_unit"])
        for t in range(tanks):
            name = f"B-{t:04d}"
            for i in range(per_tank):
                s = t0 + i * 3600
                stamp = time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime(s))
                w.writerow([name, stamp, f"{40 + (i * 7919 % 1600) / 10:.1f}", "inH2O", f"{10 + (i % 50) / 10:.1f}", "barg"])
    return tanks_csv, readings_csv, per_tank * tanks


def baseline(folder, tanks_csv, readings_csv):
    """Python sqlite3: the same table and index, the same rows, one transaction, executemany."""
    db = os.path.join(folder, "baseline.db")
    con = sqlite3.connect(db)
    con.execute("PRAGMA journal_mode=WAL")
    con.execute("PRAGMA synchronous=NORMAL")
    con.execute("PRAGMA foreign_keys=ON")
    with open(os.path.join(ROOT, "migrations", "0001_initial.sql")) as f:
        con.executescript(f.read())
    con.execute("INSERT INTO sites (name) VALUES ('Bench')")
    ids = {}
    with open(tanks_csv) as f:
        for row in csv.DictReader(f):
            cur = con.execute(
                "INSERT INTO tanks (site_id, name, fluid, orientation, diameter_m, length_m, heads, "
                "line_temperature_c, line_temperature_k) VALUES (1, ?, ?, ?, ?, ?, ?, ?, ?)",
                (row["tank"], row["fluid"], row["orientation"], float(row["diameter_m"]), float(row["length_m"]),
                 row["heads"], float(row["line_temperature_c"]), float(row["line_temperature_c"]) + 273.15))
            ids[row["tank"]] = cur.lastrowid
    con.commit()

    def rows():
        with open(readings_csv, newline="") as f:
            r = csv.reader(f)
            next(r)
            for tank, stamp, dp, dp_unit, p, p_unit in r:
                ms = int(datetime.fromisoformat(stamp).timestamp() * 1000)
                dpv, pv = float(dp), float(p)
                yield (ids[tank], stamp, ms, dpv, dp_unit, dpv * INCH_WATER_PA, pv, p_unit, pv * BAR_PA)

    start = time.perf_counter()
    with con:
        con.executemany(
            "INSERT INTO readings (tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, pressure_value, "
            "pressure_unit, pressure_pa) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)", rows())
    con.close()  # as the importer's time includes closing the database (its final WAL checkpoint)
    elapsed = time.perf_counter() - start
    n = sqlite3.connect(db).execute("SELECT COUNT(*) FROM readings").fetchone()[0]
    return n, elapsed


def ours(folder, binary, tanks_csv, readings_csv):
    db = os.path.join(folder, "ours.db")
    subprocess.run([binary, "import", "--db", db, "--tanks", tanks_csv], check=True, stdout=subprocess.DEVNULL)
    start = time.perf_counter()
    subprocess.run([binary, "import", "--db", db, "--readings", readings_csv], check=True, stdout=subprocess.DEVNULL)
    elapsed = time.perf_counter() - start
    peak_kib = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    n = sqlite3.connect(db).execute("SELECT COUNT(*) FROM readings").fetchone()[0]
    return n, elapsed, peak_kib


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=1_000_000)
    ap.add_argument("--tanks", type=int, default=100)
    ap.add_argument("--bin", default=os.path.join(ROOT, "target", "release", "cryoledger"))
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        tanks_csv, readings_csv, rows = write_inputs(folder, a.rows, a.tanks)
        size_mb = os.path.getsize(readings_csv) / 1e6
        n_ours, t_ours, peak_kib = ours(folder, a.bin, tanks_csv, readings_csv)
        n_base, t_base = baseline(folder, tanks_csv, readings_csv)
    if n_ours != rows or n_base != rows:
        sys.exit(f"row counts differ: ours {n_ours}, baseline {n_base}, expected {rows}")
    print(f"readings file: {rows} rows, {size_mb:.1f} MB")
    print(f"| importer | rows/s | time |")
    print(f"|---|---|---|")
    print(f"| cryoledger import | {rows / t_ours:,.0f} | {t_ours:.2f} s |")
    print(f"| Python sqlite3 executemany (baseline) | {rows / t_base:,.0f} | {t_base:.2f} s |")
    print(f"ratio (ours / baseline): {t_base / t_ours:.2f}x; importer peak memory {peak_kib / 1024:.0f} MiB")


if __name__ == "__main__":
    main()
