#!/usr/bin/env bash
# Benchmark: a simulated fleet of N tanks (default 10 000) with a year of daily readings and fills,
# imported with `cryoledger import` and audited with `cryoledger audit`; prints wall time and peak
# memory (GNU time's maximum resident set size) of each step.
#
#   tools/bench_audit.sh [TANKS] [WORKDIR]
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
}

echo "fleet: $TANKS tanks, 365 days, fills every 30-45 days; work dir $WORK"
measure simulate "$SIM" --tanks "$TANKS" --days 365 --seed 7 --fill-interval 30,45 \
  --short 0,0.03 --drift 5,-0.04 --out "$WORK"
echo "files: $(($(wc -l < "$WORK/readings.csv") - 1)) readings, $(($(wc -l < "$WORK/deliveries.csv") - 1)) deliveries"
measure import "$BIN" import --db "$WORK/bench.db" --tanks "$WORK/tanks.csv" \
  --readings "$WORK/readings.csv" --deliveries "$WORK/deliveries.csv"
measure audit "$BIN" audit --db "$WORK/bench.db" --format json > "$WORK/audit.json"
echo "audit JSON: $(du -h "$WORK/audit.json" | cut -f1)"
