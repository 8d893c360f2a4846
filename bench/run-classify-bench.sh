#!/usr/bin/env bash
# The classify benchmark (issue 4; see bench/README.md, "classify"): isohypse
# classify against the same steps written with numpy/netCDF4, on 4
# initialisations x 51 members x 46 lead days on a 1-degree grid over 15-85N,
# 165E-35W (the regime domain 20-80N, 170E-40W with a margin), float32
# NetCDF-4, classified onto a k = 4 model derived from the demo world's bench
# reanalysis (30 years at 1 degree).
#   bench/run-classify-bench.sh [DIR]   (default DIR /tmp/isohypse-classify-bench)
# BUILD=folder picks the build (default build/, configured and built if the
# binaries are missing). The world, the model and the forecasts are kept in
# DIR and reused by later runs. Run it on an otherwise idle machine.
set -euo pipefail
cd "$(dirname "$0")/.."
DIR=${1:-/tmp/isohypse-classify-bench}
BUILD=${BUILD:-build}
PY=/usr/bin/python3  # the Python with numpy, netCDF4 and cftime

source bench/common.sh
R=$DIR/results
mkdir -p "$R"

source bench/classify_bench_data.sh
classify_bench_data "$DIR"
du -sh "$DIR/forecasts"

echo "== isohypse classify ($(nproc) cores)"
timed isohypse "$BUILD/isohypse" classify --model "$DIR/model.nc" --forecasts "$DIR/forecasts/fc_*.nc" --quiet \
  --timings --out "$R/guidance.json" 2>"$R/timings.txt"
cat "$R/timings.txt"
echo "== isohypse classify --members (for the comparison; not in the table)"
timed members "$BUILD/isohypse" classify --model "$DIR/model.nc" --forecasts "$DIR/forecasts/fc_*.nc" --quiet \
  --members --out "$R/guidance_members.json"
echo "   $(seconds "$(field "$R/members.time" "Elapsed (wall clock)")") s, $(field "$R/members.time" "Maximum resident set size") KB"
echo "== numpy/netCDF4 reference"
timed reference "$PY" bench/classify_reference.py run --model "$DIR/model.nc" --forecasts "$DIR/forecasts/fc_*.nc" \
  --out "$R/reference.npz"

"$PY" bench/classify_reference.py compare --guidance "$R/guidance_members.json" --ref "$R/reference.npz" \
  --iso-wall "$(seconds "$(field "$R/isohypse.time" "Elapsed (wall clock)")")" \
  --iso-cpu "$(cpu "$R/isohypse.time")" --iso-rss "$(field "$R/isohypse.time" "Maximum resident set size")" \
  --ref-wall "$(seconds "$(field "$R/reference.time" "Elapsed (wall clock)")")" \
  --ref-cpu "$(cpu "$R/reference.time")" --ref-rss "$(field "$R/reference.time" "Maximum resident set size")" | tee "$R/table.txt"
