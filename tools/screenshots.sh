#!/usr/bin/env bash
# Regenerates the README screenshots (assets/screenshots/*.png) from the real app under a private Xvfb.
# Builds the binary (release; PROFILE=debug for a quicker build), writes the fictional demo fleet with
# `cryoledger demo` (the one a new user's first start writes, its dates moved so its latest readings are
# from today), then opens each page through CRYOLEDGER_OPEN and captures the window with the shared
# `shoot` tool.
# Usage: tools/screenshots.sh [SHOOT]   (SHOOT: path of the shoot tool; default ../shared/tools/shoot)
set -euo pipefail
cd "$(dirname "$0")/.."
shoot=${1:-${SHOOT:-../shared/tools/shoot}}
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-target}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
db=$work/demo.db
profile=${PROFILE:-release}
if [[ $profile == release ]]; then cargo build -q --release -p cryoledger; else cargo build -q -p cryoledger; fi
bin=$CARGO_TARGET_DIR/$profile/cryoledger
# every page shows the demo fleet of `cryoledger demo` (its planted faults: demo-data/README.md)
"$bin" demo --db "$db" > /dev/null
audit_db=$db
# Keep eframe's remembered settings out of the user's data directory.
export XDG_DATA_HOME=$work/data XDG_CONFIG_HOME=$work/config
out=assets/screenshots
mkdir -p "$out"
shot() { # NAME PAGE UNITS [DB] (retried: a private X server occasionally fails to start)
  for _ in 1 2 3; do
    CRYOLEDGER_OPEN=$2 CRYOLEDGER_UNITS=$3 "$shoot" "$out/$1.png" --wait "${WAIT:-4}" --size 1360x860 -- "$bin" --db "${4:-$db}" && return 0
    sleep 1
  done
  return 1
}
shot now tank:ASB-N2-1:now si
shot now-horizontal-us tank:HLL-AR-15:now us
shot now-open-finding tank:BH-CO2-4:now si
shot readings tank:ASB-N2-1:readings:latest si
shot deliveries tank:BH-CO2-4:deliveries si
shot trend tank:ASB-N2-1:trend si
shot trend-oxygen-us tank:EFF-O2-10:trend us
shot setup setup:HLL-AR-15 si
shot help help si
# the audit runs in the background first: give it time
WAIT=10 shot audit-fills audit si "$audit_db"
WAIT=10 shot audit-balance audit:ticket:TK100056 si "$audit_db"
WAIT=10 shot audit-vehicles audit:vehicles:MC-T25 si "$audit_db"
WAIT=10 shot audit-gauges audit:gauges:DSF-AR-7 si "$audit_db"
# the import page checking files with one bad row (a DP typed as text on line 3 of the readings)
imp=$work/import
mkdir -p "$imp"
"$bin" export --db "$audit_db" --what tanks --out "$imp/tanks.csv"
"$bin" export --db "$audit_db" --what readings --out "$imp/readings.csv"
sed -i '3s/,\([0-9.]*\),inH2O,/,1O4.2,inH2O,/' "$imp/readings.csv"
WAIT=6 shot import-check "import:check:$imp" si "$work/empty.db"
