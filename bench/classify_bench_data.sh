# The classify benchmarks' data (sourced by bench/run-classify-bench.sh and
# bench/run-grib-bench.sh, from the project root, after bench/common.sh):
# the demo world's bench reanalysis, a k = 4 model derived from it, and 4
# initialisations x 51 members x 46 lead days as NetCDF-4 in DIR/forecasts
# (see bench/README.md, "classify"). What an earlier run left in DIR is reused.

classify_bench_data() {  # classify_bench_data DIR
  local DIR=$1
  mkdir -p "$DIR/forecasts"
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
}
