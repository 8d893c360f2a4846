#!/usr/bin/env bash
# The calibrate benchmark (issue 13; see bench/README.md, "calibrate"):
# `isohypse calibrate` against the same steps written with numpy, netCDF4 and
# scikit-learn (bench/calibrate_reference.py), on the demo world's reforecasts
# (680 initialisations x 4 members x 46 lead days, 2001-2020, on a 2-degree
# grid) with the demo's regime model, lag 4, weights exp:3.
#   bench/run-calibrate-bench.sh [DIR]   (default DIR /tmp/isohypse-calibrate-bench)
# DEMO_DATA=folder (default demo/data) and MODEL=file (default out/regimes.nc)
# name a built demo (`./setup.sh demo`); BUILD=folder picks the build (default
# build/, configured and built if the binaries are missing). isohypse runs
# three times (the blend, --method logistic, --method auto); the reference
# labels once and fits both (`--method both`): the table sets the blend
# against the reference without its logistic fit, and auto (both fits)
# against the whole reference. Run it on an otherwise idle machine.
set -euo pipefail
cd "$(dirname "$0")/.."
DIR=${1:-/tmp/isohypse-calibrate-bench}
BUILD=${BUILD:-build}
DEMO_DATA=${DEMO_DATA:-demo/data}
MODEL=${MODEL:-out/regimes.nc}
PY=/usr/bin/python3  # the Python with numpy, netCDF4 and scikit-learn

if [[ ! -f "$MODEL" ]] || ! compgen -G "$DEMO_DATA/reforecasts/*.nc" >/dev/null; then
  echo "run-calibrate-bench: no demo model ($MODEL) or reforecasts ($DEMO_DATA/reforecasts/*.nc); build the demo" \
    "with ./setup.sh demo, or name one with DEMO_DATA=... MODEL=..." >&2
  exit 2
fi
source bench/common.sh
R=$DIR/results
mkdir -p "$R"
REFORECASTS="$DEMO_DATA/reforecasts/*.nc"
echo "== $(compgen -G "$REFORECASTS" | wc -l) reforecast files, $(du -shL "$DEMO_DATA/reforecasts" | cut -f1);" \
  "read once so that both sides read them from the page cache"
cat $REFORECASTS >/dev/null

echo "== isohypse calibrate ($(nproc) cores)"
timed isohypse "$BUILD/isohypse" calibrate --model "$MODEL" --reforecasts "$REFORECASTS" --lag 4 --weights exp:3 \
  --out "$R/calibration.nc" --timings >"$R/isohypse.out" 2>"$R/timings.txt"
cat "$R/isohypse.out" "$R/timings.txt"
echo "== isohypse calibrate --method logistic (compared, not timed in the table)"
timed logistic "$BUILD/isohypse" calibrate --model "$MODEL" --reforecasts "$REFORECASTS" --lag 4 --weights exp:3 \
  --method logistic --out "$R/calibration_logistic.nc" --timings >"$R/logistic.out" 2>"$R/timings_logistic.txt"
cat "$R/logistic.out" "$R/timings_logistic.txt"

echo "== isohypse calibrate --method auto (both fits, as the demo runs it; compared with the reference's both)"
timed auto "$BUILD/isohypse" calibrate --model "$MODEL" --reforecasts "$REFORECASTS" --lag 4 --weights exp:3 \
  --method auto --out "$R/calibration_auto.nc" --timings >"$R/auto.out" 2>"$R/timings_auto.txt"
cat "$R/auto.out" "$R/timings_auto.txt"

echo "== numpy/netCDF4/scikit-learn reference (both methods)"
timed reference "$PY" bench/calibrate_reference.py run --model "$MODEL" --reforecasts "$REFORECASTS" --lag 4 \
  --weights exp:3 --method both --out "$R/reference.json" | tee "$R/reference.out"

echo "== agreement"
status=0
"$PY" bench/calibrate_reference.py compare --calibration "$R/calibration.nc" --ref "$R/reference.json" \
  | tee "$R/compare_blend.txt" || status=1
"$PY" bench/calibrate_reference.py compare --calibration "$R/calibration_logistic.nc" --ref "$R/reference.json" \
  | tee "$R/compare_logistic.txt" || status=1
echo "== time and memory"
"$PY" bench/calibrate_reference.py times --iso-time "$R/isohypse.time" --ref-time "$R/reference.time" \
  --iso-timings "$R/timings.txt" --ref "$R/reference.json" --auto-time "$R/auto.time" | tee "$R/table.txt"
echo "   isohypse --method logistic: $(seconds "$(field "$R/logistic.time" "Elapsed (wall clock)")") s wall," \
  "$(cpu "$R/logistic.time") s CPU, $(($(field "$R/logistic.time" "Maximum resident set size") / 1024)) MB"
exit $status
