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
mkdir -p "$R" "$DIR/forecasts"

if ! compgen -G "$DIR/world/reanalysis/hgt500_*.nc" >/dev/null; then
  echo "== generating the benchmark world in $DIR/world"
  "$BUILD/isohypse-demo-world" --out "$DIR/world" --size bench
fi
if [[ ! -f "$DIR/model.nc" ]]; then
  echo "== deriving a k = 4 regime model (few classifiability runs: the model only has to exist)"
  echo '{"regimes": {"classifiability_runs": 5, "surrogates": 5}}' >"$DIR/derive.json"
  "$BUILD/isohypse" derive --input "$DIR/world/reanalysis/*.nc" --domain 20,80,170,-40 --k 4 \
    --config "$DIR/derive.json" --out "$DIR/model.nc" >"$R/derive.out"
fi
if [[ $(compgen -G "$DIR/forecasts/fc_*.nc" | wc -l) -ne 4 ]]; then
  echo "== writing 4 initialisations x 51 members x 46 leads (netCDF4-python, float32, NetCDF-4)"
  ISOHYPSE_SOURCE_DIR=$PWD PYTHONPATH=tests/python "$PY" - "$DIR" <<'EOF'
import os, sys
import numpy as np
from classify_data import planted_forecast, reference, write_forecast

folder = sys.argv[1]
model = reference.Model(os.path.join(folder, "model.nc"))
lat, lon = np.arange(15.0, 85.1, 1.0), np.arange(165.0, 325.1, 1.0)
# The model's points are nodes of this grid; the margin repeats the edge values.
pad = ((0, 0), (0, 0), (int(model.lat[0] - lat[0]), int(lat[-1] - model.lat[-1])),
       (int(model.lon[0] - lon[0]), int(lon[-1] - model.lon[-1])))
rng = np.random.default_rng(2025)
for day in (1, 2, 3, 4):
    init = (2025, 12, day)
    h = np.pad(planted_forecast(model, init, "noleap", 51, 46, rng), pad, mode="edge")
    write_forecast(os.path.join(folder, "forecasts", "fc_%04d%02d%02d.nc" % init), h, lat, lon, init, "noleap")
    print(f"  fc_2025120{day}.nc: {h.shape}", flush=True)
EOF
fi
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
