#!/usr/bin/env bash
# Benchmark: a simulated fleet of N tanks (default 10 000) with a year of daily readings and fills,
# imported with `cryoledger import` and audited with `cryoledger audit`; prints wall time and peak
# memory (GNU time's maximum resident set size) of each step.
#
#   tools/bench_audit.sh [TANKS] [WORKDIR]
#
# With PG_URL set to an empty PostgreSQL database (postgres://USER@HOST/DB), the ledger is also copied
# there (`cryoledger copy`) and audited from it; both audits' JSON must be identical, and the time
# from PostgreSQL is printed as a ratio of the time from SQLite measured in the same run.
#
# Needs: cargo, GNU time (/usr/bin/time). Uses $CARGO_TARGET_DIR when set (default target/).
set -euo pipefail
TANKS="${1:-10000}"
WORK="${2:-$(mktemp -d)}"
ROOT="$(cd "$(dirname "$0")/.." && pwd)"
TARGET="${CARGO_TARGET_DIR:-$ROOT/target}"
cd "$ROOT"
cargo build --release --bin cryoledger
cargo build --release -p simulate --example simulate_fleet
BIN="$TARGET/release/cryoledger"
SIM="$TARGET/release/examples/simulate_fleet"
mkdir -p "$WORK"
rm -f "$WORK/bench.db" "$WORK/bench.db-wal" "$WORK/bench.db-shm"

measure() { # label, command...
  local label="$1"; shift
  /usr/bin/time -f "%e %M" -o "$WORK/time.txt" "$@"
  read -r secs kb < "$WORK/time.txt"
  printf '%-10s %8.1f s  peak %7.0f MB\n' "$label" "$secs" "$((kb / 1024))" >&2
  LAST_SECS="$secs"
}

echo "fleet: $TANKS tanks, 365 days, fills every 30-45 days; work dir $WORK"
measure simulate "$SIM" --tanks "$TANKS" --days 365 --seed 7 --fill-interval 30,45 \
  --short 0,0.03 --drift 5,-0.04 --out "$WORK"
echo "files: $(($(wc -l < "$WORK/readings.csv") - 1)) readings, $(($(wc -l < "$WORK/deliveries.csv") - 1)) deliveries"
measure import "$BIN" import --db "$WORK/bench.db" --tanks "$WORK/tanks.csv" \
  --readings "$WORK/readings.csv" --deliveries "$WORK/deliveries.csv"
measure audit "$BIN" audit --db "$WORK/bench.db" --format json > "$WORK/audit.json"
echo "audit JSON: $(du -h "$WORK/audit.json" | cut -f1)"
if [ -n "${PG_URL:-}" ]; then
  lite_secs="$LAST_SECS"
  measure copy "$BIN" copy --from "$WORK/bench.db" --to "$PG_URL"
  measure audit-pg "$BIN" audit --db "$PG_URL" --format json > "$WORK/audit-pg.json"
  cmp "$WORK/audit.json" "$WORK/audit-pg.json"
  echo "the audit JSON from PostgreSQL is identical to SQLite's"
  awk -v a="$LAST_SECS" -v b="$lite_secs" \
    'BEGIN { printf "audit from PostgreSQL / from SQLite, same run: %.2f\n", a / b }'
fi
