#!/usr/bin/env bash
# The classifiability stage of `isohypse derive` before and after (issue 11):
#   bench/run-classifiability-bench.sh BEFORE_BIN AFTER_BIN [DIR]
# On three records: the demo world's reanalysis (demo/data, 30 winters at
# 2.5 degrees), the bench world (isohypse-demo-world --size bench: 30 winters
# at 1 degree, 4 planted regimes) and the same with small-scale noise
# (--small-noise 100: 20+ EOFs for 80 % of the variance), generated into DIR
# (default /tmp/isohypse-classifiability-bench) when absent. Runs, in turn
# for each record:
#   before  BEFORE_BIN, k = auto, 30 runs, 30 surrogates (its settings);
#   after   AFTER_BIN at the same settings (k fixed at 4 so that 30
#           surrogates are allowed, stop_early false: the same 7 x 31 x 30
#           k-means runs);
#   default AFTER_BIN at its defaults (k = auto, 100 surrogates, stopping
#           early).
# Each line gives the stage times from the model's provenance.timings_s, the
# classifiability stage as a multiple of the reading time, and the chosen k.
# BEFORE_BIN must accept the config of its time (no regimes.stop_early key).
set -euo pipefail
BEFORE=${1:?BEFORE_BIN}
AFTER=${2:?AFTER_BIN}
DIR=${3:-/tmp/isohypse-classifiability-bench}
HERE=$(cd "$(dirname "$0")/.." && pwd)
GEN=${GEN:-$HERE/build/isohypse-demo-world}
mkdir -p "$DIR"
[ -d "$DIR/bench/reanalysis" ] || "$GEN" --out "$DIR/bench" --size bench --jobs 2 >/dev/null
[ -d "$DIR/bench21/reanalysis" ] || "$GEN" --out "$DIR/bench21" --size bench --small-noise 100 --jobs 2 >/dev/null

config() {  # config FILE INPUT_GLOB REGIMES_JSON
  cat >"$1" <<EOF
{"inputs": ["$2"], "domain": "20,80,170,-40", "months": [11, 12, 1, 2, 3],
 "eof": {"count": 0, "variance_fraction": 0.8, "max_count": 60, "method": "auto"},
 "regimes": $3, "threads": 0}
EOF
}

run() {  # run LABEL BIN CONFIG RECORD
  local out="$DIR/$4-$1"
  "$2" derive --config "$3" --out "$out.nc" --summary "$out.json" >"$out.log" 2>&1 || {
    echo "$4 $1: derive failed, see $out.log"; return; }
  /usr/bin/python3 - "$out.json" "$4" "$1" <<'EOF'
import json, sys
s = json.load(open(sys.argv[1]))
t = s["provenance"]["timings_s"]
print(f"{sys.argv[2]:<8} {sys.argv[3]:<8} EOFs {len(s['eofs']):3d}  read {t['read']:6.2f} s  "
      f"classifiability {t['classifiability']:7.2f} s  = {t['classifiability'] / t['read']:5.1f} x read  "
      f"eof {t['eof']:5.2f} s  kmeans {t['kmeans']:5.2f} s  k = {s['k']}")
EOF
}

for record in demo bench bench21; do
  case $record in
    demo) glob="$HERE/demo/data/reanalysis/hgt500_*.nc" ;;
    *) glob="$DIR/$record/reanalysis/hgt500_*.nc" ;;
  esac
  config "$DIR/before.json" "$glob" '{"k": "auto", "classifiability_runs": 30, "surrogates": 30}'
  config "$DIR/after.json" "$glob" '{"k": 4, "classifiability_runs": 30, "surrogates": 30, "stop_early": false}'
  config "$DIR/default.json" "$glob" '{"k": "auto"}'
  run before "$BEFORE" "$DIR/before.json" $record
  run after "$AFTER" "$DIR/after.json" $record
  run default "$AFTER" "$DIR/default.json" $record
done
