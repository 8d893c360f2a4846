#!/usr/bin/env bash
# The GRIB classify benchmark (issue 14; see bench/README.md, "classify from
# GRIB (issue 14)"): the classify benchmark's 4 initialisations x 51 members x
# 46 lead days at 1 degree (bench/classify_bench_data.sh, the same data as
# bench/run-classify-bench.sh) written again as GRIB 2 with python3-eccodes
# (grid_simple, 16 bits per value, one file per initialisation, one message
# per member and lead: bench/write_grib_forecasts.py), then timed with
# /usr/bin/time -v:
#   (a) isohypse classify on the GRIB files,
#   (b) isohypse classify on the NetCDF files,
#   (c) the same steps with python3-eccodes and numpy (bench/classify_grib_reference.py).
# isohypse's own timings (--timings) show the share of reading and decoding.
# The answers are compared: (a) against (c) label by label, (a) against (b)
# within one member's weight per valid date.
#   bench/run-grib-bench.sh [DIR]   (default DIR /tmp/isohypse-classify-bench)
# BUILD=folder picks the build (default build/). What an earlier run left in
# DIR (world, model, NetCDF and GRIB forecasts) is reused.
set -euo pipefail
cd "$(dirname "$0")/.."
DIR=${1:-/tmp/isohypse-classify-bench}
BUILD=${BUILD:-build}
PY=/usr/bin/python3  # the Python with numpy, netCDF4, cftime and eccodes

source bench/common.sh
R=$DIR/results_grib
mkdir -p "$R"
source bench/classify_bench_data.sh
classify_bench_data "$DIR"
if [[ $(compgen -G "$DIR/forecasts_grib/fc_*.grib2" | wc -l) -ne 4 ]]; then
  echo "== writing the same forecasts as GRIB 2 (python3-eccodes, grid_simple, 16 bits)"
  "$PY" bench/write_grib_forecasts.py --netcdf "$DIR/forecasts/fc_*.nc" --out "$DIR/forecasts_grib" --bits 16
fi
du -sh "$DIR/forecasts" "$DIR/forecasts_grib"
cat "$DIR"/forecasts/fc_*.nc "$DIR"/forecasts_grib/fc_*.grib2 "$DIR/model.nc" >/dev/null  # all in the page cache

echo "== load before: $(cut -d' ' -f1-3 /proc/loadavg) ($(nproc) cores)"
echo "== (a) isohypse classify, GRIB"
timed grib "$BUILD/isohypse" classify --model "$DIR/model.nc" --forecasts "$DIR/forecasts_grib/fc_*.grib2" --quiet \
  --timings --out "$R/guidance_grib.json" 2>"$R/timings_grib.txt"
cat "$R/timings_grib.txt"
echo "== (b) isohypse classify, NetCDF"
timed netcdf "$BUILD/isohypse" classify --model "$DIR/model.nc" --forecasts "$DIR/forecasts/fc_*.nc" --quiet \
  --timings --out "$R/guidance_netcdf.json" 2>"$R/timings_netcdf.txt"
cat "$R/timings_netcdf.txt"
echo "== (c) python3-eccodes + numpy"
timed reference "$PY" bench/classify_grib_reference.py run --model "$DIR/model.nc" \
  --forecasts "$DIR/forecasts_grib/fc_*.grib2" --out "$R/reference.npz"
echo "== isohypse classify, GRIB, --members (for the comparison; not in the table)"
"$BUILD/isohypse" classify --model "$DIR/model.nc" --forecasts "$DIR/forecasts_grib/fc_*.grib2" --quiet \
  --members --out "$R/guidance_grib_members.json"
echo "== load after: $(cut -d' ' -f1-3 /proc/loadavg)"

"$PY" bench/classify_grib_reference.py compare --guidance-grib "$R/guidance_grib_members.json" \
  --guidance-netcdf "$R/guidance_netcdf.json" --ref "$R/reference.npz" \
  --time-grib "$R/grib.time" --time-netcdf "$R/netcdf.time" --time-ref "$R/reference.time" | tee "$R/table.txt"
