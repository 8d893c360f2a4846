#!/usr/bin/env bash
# Runs every stage that exists on the synthetic demo world. Called by
# `./setup.sh demo` after the build; safe to run again (the world is
# generated only when absent).
set -euo pipefail
cd "$(dirname "$0")/.."
BIN=build/isohypse
DATA=demo/data
OUT=out
mkdir -p "$OUT"

if [[ ! -f "$DATA/truth/truth.json" ]]; then
  echo "== generating the synthetic demo world in $DATA/ (invented data, no real place or organisation)"
  build/isohypse-demo-world --out "$DATA" --size full
fi

echo
echo "== isohypse inspect: what the files hold"
"$BIN" inspect "$DATA/reanalysis/hgt500_1991.nc" "$DATA/analysis/"*.nc "$DATA/forecasts/fc_20251201.nc"

echo
echo "== isohypse derive: the regimes of 30 cold seasons"
"$BIN" derive --config config/derive-example.json --out "$OUT/regimes.nc" --summary "$OUT/regimes-summary.json"

echo
echo "== done. Outputs:"
echo "   $OUT/regimes.nc               the regime model (NetCDF-4; open with ncdump -h, h5py or xarray)"
echo "   $OUT/regimes-summary.json     the summary table as JSON"
echo "Regime guidance supports, and never replaces, official warnings and the judgement of licensed forecasters."
