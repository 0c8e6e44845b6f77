#!/usr/bin/env bash
# Renders the three kinds of report from the fictional demo fleet to PNG and PDF with headless
# Chromium (Debian's `chromium` package), on A4 and on Letter, so they can be looked at and printed:
#   target/reports/{fill,vehicle,statement}.html        the reports as written
#   target/reports/*-{a4,letter}.pdf                    printed on each paper size
#   assets/reports/{fill,vehicle,statement}.png         the first screenful, for the README
# The demo's dates are kept fixed (`demo --keep-dates`), so the pictures are the same on any day.
# Usage: tools/render_reports.sh      (installs chromium with apt-get when it is missing and you are root)
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v chromium > /dev/null; then
  if [[ $(id -u) == 0 ]]; then
    DEBIAN_FRONTEND=noninteractive apt-get install -y -q chromium > /dev/null
  else
    echo "chromium is not installed: sudo apt-get install chromium" >&2
    exit 1
  fi
fi
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
cargo build -q -p cryoledger
bin=$CARGO_TARGET_DIR/debug/cryoledger
out=$CARGO_TARGET_DIR/reports
rm -rf "$out"
mkdir -p "$out" assets/reports
db=$out/demo.db
"$bin" demo --db "$db" --keep-dates > /dev/null
# the planted short vehicle's worst fill, the vehicle itself, and the year of the tank it served most
ticket=$("$bin" audit --db "$db" --format json | python3 -c '
import json, sys
fills = json.load(sys.stdin)["fills"]
short = [f for f in fills if f["verdict"] == "short"]
print(max(short, key=lambda f: f["residual_percent"])["ticket"])')
vehicle=$("$bin" audit --db "$db" --format json | python3 -c '
import json, sys
v = [v for v in json.load(sys.stdin)["vehicles"] if v["status"] == "biased"]
print(min(v, key=lambda v: v["bias_percent"])["vehicle"])')
tank=$("$bin" audit --db "$db" --format json | python3 -c '
import json, sys
fills = json.load(sys.stdin)["fills"]
short = {}
for f in fills:
    if f["verdict"] == "short":
        short[f["tank"]] = short.get(f["tank"], 0) + 1
print(max(sorted(short), key=lambda t: short[t]))')
"$bin" report fill --db "$db" --ticket "$ticket" --out "$out/fill.html"
"$bin" report vehicle --db "$db" --vehicle "$vehicle" --out "$out/vehicle.html"
"$bin" report statement --db "$db" --tank "$tank" --from 2026-01-01 --to 2027-01-01 --out "$out/statement.html"
chrome() {
  chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --user-data-dir="$out/profile" --hide-scrollbars "$@" 2> /dev/null
}
for name in fill vehicle statement; do
  for paper in A4 Letter; do
    lower=${paper,,}
    # the same document with the paper size named, as a user's print dialog would choose it
    sed "s|<style>|<style>@page { size: $paper; }|" "$out/$name.html" > "$out/$name-$lower.html"
    chrome --no-pdf-header-footer --print-to-pdf="$out/$name-$lower.pdf" "file://$PWD/$out/$name-$lower.html"
  done
  chrome --window-size=900,1300 --screenshot="assets/reports/$name.png" "file://$PWD/$out/$name.html"
done
ls -l "$out"/*.pdf assets/reports/*.png
