#!/usr/bin/env bash
# Runs every stage that exists on the synthetic demo world. Called by
# `./setup.sh demo` after the build; safe to run again (the world is
# generated only when absent).
set -euo pipefail
cd "$(dirname "$0")/.."
BIN=build/isohypse
DATA=demo/data
OUT=${ISOHYPSE_DEMO_OUT:-out}
mkdir -p "$OUT"

if [[ ! -f "$DATA/truth/truth.json" || ! -d "$DATA/reforecasts_noskill" || ! -d "$DATA/reforecasts_grib" ]]; then
  echo "== generating the synthetic demo world in $DATA/ (invented data, no real place or organisation)"
  build/isohypse-demo-world --out "$DATA" --size full
fi

echo
echo "== isohypse inspect: what the files hold"
"$BIN" inspect "$DATA/reanalysis/hgt500_199[35].nc" "$DATA/analysis/"*.nc "$DATA/forecasts/fc_20251201.nc"

echo
echo "== isohypse derive: the regimes of 30 cold seasons"
"$BIN" derive --config config/derive-example.json --out "$OUT/regimes.nc" --summary "$OUT/regimes-summary.json" |
  tee "$OUT/derive.log"

echo
echo "== the same reanalysis as GRIB 2 (reanalysis_grib/: one message a day, geopotential, CCSDS packing at 16 bits)"
"$BIN" inspect "$DATA/reanalysis_grib/hgt500_1995.grib2"
echo "   derive on the GRIB copy (same settings; its log in $OUT/derive-grib.log):"
"$BIN" derive --config config/derive-example.json --input "$DATA/reanalysis_grib/*.grib2" \
  --out "$OUT/regimes-grib.nc" --summary "$OUT/regimes-grib-summary.json" >"$OUT/derive-grib.log" 2>&1
regime_table() { sed -n '/^id   frequency/,/^$/p' "$1"; }
if [[ "$(regime_table "$OUT/derive.log")" == "$(regime_table "$OUT/derive-grib.log")" ]]; then
  echo "   the same regimes, frequencies, persistence and names as from the NetCDF files:"
  regime_table "$OUT/derive-grib.log" | sed 's/^/   /'
else
  echo "   the regimes from GRIB differ from those from NetCDF:" >&2
  diff <(regime_table "$OUT/derive.log") <(regime_table "$OUT/derive-grib.log") >&2
  exit 1
fi

echo
echo "== isohypse calibrate: how far to trust the raw probabilities, learnt from the reforecasts of 2001-2020"
echo "   (cross-validated: each season year scored by a fit made without it; --method auto keeps, per window, the"
echo "   better of the blend with climatology and the logistic regression)"
"$BIN" calibrate --model "$OUT/regimes.nc" --reforecasts "$DATA/reforecasts/*.nc" --lag 4 --weights exp:3 \
  --method auto --out "$OUT/calibration.nc"
echo
echo "== the same for the demo's no-skill system (its members leave the truth at once): calibrated = climatology"
"$BIN" calibrate --model "$OUT/regimes.nc" --reforecasts "$DATA/reforecasts_noskill/*.nc" --lag 4 --weights exp:3 \
  --method auto --out "$OUT/calibration-noskill.nc" --cases "$OUT/calibration-noskill-cases.csv"

echo
echo "== isohypse classify: this morning's guidance (issue date 2026-01-15, the latest 4 initialisations, calibrated)"
"$BIN" classify --model "$OUT/regimes.nc" --forecasts "$DATA/forecasts/*.nc" --reforecasts "$DATA/reforecasts/*.nc" \
  --analysis "$DATA/analysis/*.nc" --lag 4 --weights exp:3 --issue-date 2026-01-15 \
  --calibration "$OUT/calibration.nc" --csv "$OUT/csv" --out "$OUT/guidance-2026-01-15.json"

echo
echo "== the same forecasts in a lead layout (z(time=1, step, member, y, x) in m2 s-2, the step in hours,"
echo "   valid_time(step)) and in GRIB 2 (one message per member and lead, 24 bits), the GRIB set with its"
echo "   reforecasts in GRIB 2 too (one file per day of the year holding every year's runs, CCSDS at 16 bits):"
echo "   classify reads them all, and the raw probabilities equal those from the forecasts/ layout"
echo "   (the drift from the reforecasts within 3 days of the year, which reforecasts_grib/ holds)"
"$BIN" inspect "$DATA/forecasts_steps/fc_20260115.nc" "$DATA/forecasts_grib/fc_20260115.grib2" \
  "$DATA/reforecasts_grib/rf_0115.grib2"
mkdir -p "$OUT/layouts"
for set in forecasts:nc forecasts_steps:nc forecasts_grib:grib2; do
  reforecasts="$DATA/reforecasts/*.nc"
  [[ ${set##*:} == grib2 ]] && reforecasts="$DATA/reforecasts_grib/*.grib2"
  "$BIN" classify --quiet --model "$OUT/regimes.nc" --forecasts "$DATA/${set%%:*}/fc_2026011[2-5].${set##*:}" \
    --reforecasts "$reforecasts" --reforecast-window 3 --lag 4 --weights exp:3 --issue-date 2026-01-15 \
    --csv "$OUT/layouts/${set%%:*}" --out "$OUT/layouts/guidance-${set%%:*}.json"
done
for set in forecasts_steps forecasts_grib; do
  if cmp -s "$OUT/layouts/forecasts/daily.csv" "$OUT/layouts/$set/daily.csv" &&
    cmp -s "$OUT/layouts/forecasts/windows.csv" "$OUT/layouts/$set/windows.csv"; then
    echo "   $set: daily.csv and windows.csv identical to those from forecasts/"
  else
    echo "   $set: the guidance differs from that of forecasts/: see $OUT/layouts/" >&2
    exit 1
  fi
done

echo
echo "== a season of guidance: one issue a day, 2025-12-04 to 2026-02-26, into $OUT/archive/"
echo "   (lag 4: consecutive issues share 3 of their 4 initialisations, as a desk's daily guidance does)"
mkdir -p "$OUT/archive"
season_days() {
  local day=2025-12-04
  while [[ "$day" < 2026-02-27 ]]; do
    echo "$day"
    day=$(date -u -d "$day + 1 day" +%F)
  done
}
issue() {
  "$BIN" classify --quiet --threads 1 --model "$OUT/regimes.nc" --forecasts "$DATA/forecasts/*.nc" \
    --reforecasts "$DATA/reforecasts/*.nc" --calibration "$OUT/calibration.nc" --lag 4 --weights exp:3 \
    --issue-date "$1" --out "$OUT/archive/$1.json"
}
export -f issue
export BIN OUT DATA
season_days | xargs -P "$(nproc)" -I{} bash -c 'issue {}'
echo "   $(ls "$OUT/archive" | wc -l) issues written"

echo "== isohypse verify: the post-mortem of the season"
"$BIN" verify --model "$OUT/regimes.nc" --guidance "$OUT/archive" --observed "$DATA/analysis/*.nc" \
  --out "$OUT/verification.json" --html "$OUT/verification.html"

echo
echo "== done. Outputs:"
echo "   $OUT/regimes.nc                 the regime model (NetCDF-4; open with ncdump -h, h5py or xarray)"
echo "   $OUT/regimes-summary.json       the summary table as JSON"
echo "   $OUT/regimes-grib.nc            the same regimes derived from the GRIB copy of the reanalysis"
echo "   $OUT/guidance-2026-01-15.json   the guidance of 2026-01-15 (schema: config/guidance.schema.json)"
echo "   $OUT/calibration.nc             the calibration (isohypse inspect describes it)"
echo "   $OUT/csv/daily.csv, windows.csv for impact models (calibrated; daily_raw.csv, windows_raw.csv raw)"
echo "   $OUT/archive/                   a season of daily guidance"
echo "   $OUT/verification.json, .html   the post-mortem (open the .html in a browser)"
echo "
To serve the guidance (page and API on http://127.0.0.1:8642/), drop forecasts into an inbox:
   mkdir -p out/inbox && ISOHYPSE_TOKEN=choose-a-secret build/isohypse serve --model $OUT/regimes.nc \\
     --inbox out/inbox --archive out/served --reforecasts '$DATA/reforecasts/*.nc' \\
     --observed '$DATA/analysis/*.nc' --lag 3 --members 8
   cp $DATA/forecasts/fc_2026011*.nc out/inbox/
Regime guidance supports, and never replaces, official warnings and the judgement of licensed forecasters."
