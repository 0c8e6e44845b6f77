#!/usr/bin/env bash
# Benchmark: importing about a million readings into a PostgreSQL ledger with `cryoledger import`
# (every row checked, duplicates refused, a chain link each, one transaction), against a baseline
# measured in the same run: PostgreSQL's COPY of the very rows the import stored into a table with
# the same columns and indexes (no checks, no history). The same files imported into SQLite are
# timed too.
#
#   PG_URL=postgres://USER@HOST/EMPTY_DB tools/bench_pg_import.sh [TANKS] [WORKDIR]
#
# TANKS (default 2,700) simulated tanks with a year of readings each (about 380 a tank). Needs: cargo,
# psql, GNU time (/usr/bin/time); PG_URL must name an empty database.
set -euo pipefail
TANKS="${1:-2700}"
WORK="${2:-$(mktemp -d)}"
: "${PG_URL:?set PG_URL to an empty PostgreSQL database}"
ROOT="$(cd "$(dirname "$0")/.." && pwd)"
TARGET="${CARGO_TARGET_DIR:-$ROOT/target}"
cd "$ROOT"
cargo build --release --bin cryoledger
cargo build --release -p simulate --example simulate_fleet
BIN="$TARGET/release/cryoledger"
SIM="$TARGET/release/examples/simulate_fleet"
mkdir -p "$WORK"
rm -f "$WORK/lite.db" "$WORK/lite.db-wal" "$WORK/lite.db-shm" "$WORK/readings.copy"

measure() { # label, command...
  local label="$1"; shift
  /usr/bin/time -f "%e %M" -o "$WORK/time.txt" "$@"
  read -r secs kb < "$WORK/time.txt"
  printf '%-14s %8.1f s  peak %7.0f MB\n' "$label" "$secs" "$((kb / 1024))" >&2
  LAST_SECS="$secs"
}

"$SIM" --tanks "$TANKS" --days 365 --seed 11 --fill-interval 30,45 --out "$WORK" > /dev/null
echo "files: $(($(wc -l < "$WORK/readings.csv") - 1)) readings, $(($(wc -l < "$WORK/deliveries.csv") - 1)) deliveries, $TANKS tanks"
ARGS=(--tanks "$WORK/tanks.csv" --readings "$WORK/readings.csv" --deliveries "$WORK/deliveries.csv")
measure import-sqlite "$BIN" import --db "$WORK/lite.db" "${ARGS[@]}"
measure import-pg "$BIN" import --db "$PG_URL" "${ARGS[@]}"
ours="$LAST_SECS"
psql -q "$PG_URL" -c "\\copy (SELECT * FROM readings ORDER BY id) TO '$WORK/readings.copy'"
psql -q "$PG_URL" -c "CREATE TABLE readings_baseline (LIKE readings INCLUDING ALL)"
measure copy-baseline psql -q "$PG_URL" -c "\\copy readings_baseline FROM '$WORK/readings.copy'"
psql -q "$PG_URL" -c "DROP TABLE readings_baseline"
awk -v a="$ours" -v b="$LAST_SECS" \
  'BEGIN { printf "import into PostgreSQL / COPY of the same rows, same run: %.1f\n", a / b }'
