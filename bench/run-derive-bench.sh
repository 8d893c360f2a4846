#!/usr/bin/env bash
# The derive benchmark (issue 3; see bench/README.md): isohypse derive against
# the same steps written with numpy/scikit-learn, on the demo world's 30 cold
# seasons at 1 degree over 20-80N, 170E-40W.
#   bench/run-derive-bench.sh [DIR]   (default DIR /tmp/isohypse-bench)
# BUILD=folder picks the build (default build/, configured and built if the
# binaries are missing). REUSE_REFERENCE=1 keeps the reference's results of an
# earlier run (it takes most of the time). Run it on an otherwise idle machine.
set -euo pipefail
cd "$(dirname "$0")/.."
DIR=${1:-/tmp/isohypse-bench}
BUILD=${BUILD:-build}
PY=/usr/bin/python3  # the Python with numpy, netCDF4 and scikit-learn

source bench/common.sh
if ! compgen -G "$DIR/reanalysis/hgt500_*.nc" >/dev/null; then
  echo "== generating the benchmark world in $DIR"
  "$BUILD/isohypse-demo-world" --out "$DIR" --size bench
fi
mkdir -p "$DIR/results"
R=$DIR/results

echo "== isohypse derive ($(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg))"
timed isohypse "$BUILD/isohypse" --log-level debug derive --input "$DIR/reanalysis/*.nc" --domain 20,80,170,-40 \
  --k auto --out "$R/model.nc" --summary "$R/summary.json" >"$R/isohypse.out" 2>"$R/isohypse.err"
grep -hE "stage .* took" "$R/isohypse.out" "$R/isohypse.err" || true

if [[ "${REUSE_REFERENCE:-0}" == 1 && -f "$R/reference.npz" && -f "$R/reference.time" ]]; then
  echo "== numpy/netCDF4/scikit-learn reference: reusing $R/reference.npz (REUSE_REFERENCE=1)"
else
  echo "== numpy/netCDF4/scikit-learn reference"
  timed reference "$PY" bench/derive_reference.py run --input "$DIR/reanalysis/*.nc" --out "$R/reference.npz" \
    2>"$R/reference.err"
fi
grep -E "reference: (read|climatology|eof|classifiability|kmeans|labels) " "$R/reference.err" || true

"$PY" bench/derive_reference.py compare --model "$R/model.nc" --ref "$R/reference.npz" \
  --iso-wall "$(seconds "$(field "$R/isohypse.time" "Elapsed (wall clock)")")" \
  --iso-cpu "$(cpu "$R/isohypse.time")" --ref-cpu "$(cpu "$R/reference.time")" \
  --iso-rss "$(field "$R/isohypse.time" "Maximum resident set size")" \
  --ref-wall "$(seconds "$(field "$R/reference.time" "Elapsed (wall clock)")")" \
  --ref-rss "$(field "$R/reference.time" "Maximum resident set size")" | tee "$R/table.txt"
