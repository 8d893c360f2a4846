"""`isohypse classify` refuses unusable input (issue 4): a forecast grid that
misses part of the domain, a temperature variable instead of heights, missing
lead days, a member number used twice, missing values in a member, forecasts
in two calendars, a regime model of another format version, reforecasts on
another grid than the forecasts; flags out of range or unreadable (issue
10: --windows 5-2, --weights bogus, --issue-date 2026-13-01, --lag -2,
--reforecast-window 70, --lead-smoothing 16, --threads -1; refused with exit
code 2 and a message naming the flag). Each must end with a non-zero exit, a
message naming the offending file, and no output (neither the guidance JSON
nor the CSV files, nor a temporary file left behind). Every defect is first
shown harmless in its correct form (the same files without the defect run),
so a refusal cannot come from something else. Invented data: the defects are
planted."""
import os
import shutil

import netCDF4
import numpy as np

from common import check, finish, scratch
from classify_data import classify, planted_forecast, reference, small_model, write_forecast

tmp = scratch()
lat = np.arange(20.0, 80.1, 5.0)
lon = np.arange(170.0, 320.1, 5.0)
rng = np.random.default_rng(7)
INIT = (2025, 12, 1)


def expect(what, files, must_name, model=None, extra=(), exit_code=None):
    """Runs classify on `files` (its own output folder) and checks the outcome.
    must_name: the file (or flag) the message has to name, or None for a run that must succeed.
    exit_code: the exit code a refusal must have (any non-zero when None)."""
    out_dir = os.path.join(tmp, "out_" + what.replace(" ", "_"))
    os.makedirs(out_dir)
    out = os.path.join(out_dir, "guidance.json")
    r = classify("--model", model or model_path, "--forecasts", *files, "--csv", os.path.join(out_dir, "csv"),
                 "--out", out, *extra)
    message = r.stderr.strip().replace("\n", " | ")
    if must_name is None:
        check(r.returncode == 0 and os.path.exists(out), f"{what}: accepted (exit {r.returncode}) {message[-300:]}")
        return
    check(r.returncode != 0 if exit_code is None else r.returncode == exit_code,
          f"{what}: refused with exit code {r.returncode}" + ("" if exit_code is None else f" (expected {exit_code})"))
    if exit_code == 2:
        check(r.stderr.startswith("isohypse: error: "), f"{what}: an isohypse input error, not a usage message: {message[-200:]}")
    check(must_name in r.stderr, f"{what}: the message names {os.path.basename(must_name)}: {message[-400:]}")
    left = sorted(os.listdir(out_dir))
    check(not left, f"{what}: no output written (folder holds {left})")


def good(name, init=INIT, calendar="noleap", leads=12, **kw):
    path = os.path.join(tmp, name)
    write_forecast(path, planted_forecast(model, init, calendar, 2, leads, rng), lat, lon, init, calendar, **kw)
    return path


model_path = small_model(tmp, lat, lon)
if not model_path:
    finish()
model = reference.Model(model_path)
base = good("fc_20251201.nc")
expect("correct forecast", [base], None)

# The grid misses 20-28N of the domain.
h = planted_forecast(model, INIT, "noleap", 2, 12, rng)
short = os.path.join(tmp, "fc_short_grid.nc")
write_forecast(short, h[:, :, lat >= 30], lat[lat >= 30], lon, INIT)
expect("grid missing part of the domain", [short], short)

# Temperature in K only: no height variable.
temp = os.path.join(tmp, "fc_temperature.nc")
write_forecast(temp, 250.0 + rng.normal(0, 5, h.shape), lat, lon, INIT, geopotential=False, variable="t",
               units="K", standard_name="air_temperature")
expect("temperature in K instead of heights", [temp], temp)

# Lead day 5 missing.
gap = os.path.join(tmp, "fc_gap.nc")
write_forecast(gap, np.delete(h, 5, axis=1), lat, lon, INIT, times=[d for d in range(12) if d != 5])
expect("lead day 5 missing", [gap], gap)

# Per-member files: realizations 1 and 2 are fine, 1 twice is a duplicate.
one = good("fc_member1.nc", realization=1)
two = good("fc_member2.nc", realization=2)
expect("per-member files with realizations 1 and 2", [one, two], None)
dup = good("fc_member1_again.nc", realization=1)
expect("two per-member files with realization 1", [one, dup], dup)

# Missing values in member 1 on lead day 3 (written as _FillValue).
holes = planted_forecast(model, INIT, "noleap", 2, 12, rng)
holes[1, 3, 4, 7] = np.nan
hole_path = os.path.join(tmp, "fc_holes.nc")
write_forecast(hole_path, holes, lat, lon, INIT, fill=-9.0e33)
expect("missing values in a member", [hole_path], hole_path)

# Two calendars among the forecasts.
other_cal = good("fc_20251202_360.nc", init=(2025, 12, 2), calendar="360_day")
expect("forecasts in the noleap and 360_day calendars", [base, other_cal], other_cal)

# A regime model of another format version.
future = os.path.join(tmp, "model_v3.nc")
shutil.copy(model_path, future)
with netCDF4.Dataset(future, "a") as ds:
    ds.setncattr("isohypse_format_version", np.int32(3))
expect("regime model of format version 3", [base], future, model=future)

# A version 2 model whose no-regime rule is not one isohypse knows.
odd_rule = os.path.join(tmp, "model_odd_rule.nc")
shutil.copy(model_path, odd_rule)
with netCDF4.Dataset(odd_rule, "a") as ds:
    ds.setncattr("no_regime_correlation", "centred")
expect("regime model with an unknown no_regime_correlation", [base], odd_rule, model=odd_rule, exit_code=3)

# Reforecasts: on the forecasts' grid they are used; on a 2.5-degree grid refused.
rf_dir = os.path.join(tmp, "rf_same")
os.makedirs(rf_dir)
for year in (2018, 2019):
    good(os.path.join("rf_same", f"rf_{year}1201.nc"), init=(year, 12, 1), leads=20)
expect("reforecasts on the forecast grid", [base], None, extra=("--reforecasts", os.path.join(rf_dir, "*.nc")))
fine_lat, fine_lon = np.arange(20.0, 80.1, 2.5), np.arange(170.0, 320.1, 2.5)
rf_fine = os.path.join(tmp, "rf_20191201_fine.nc")
fine = 5500.0 + rng.normal(0.0, 50.0, (2, 20, fine_lat.size, fine_lon.size))
write_forecast(rf_fine, fine, fine_lat, fine_lon, (2019, 12, 1))
expect("reforecasts on another grid", [base], rf_fine, extra=("--reforecasts", rf_fine))

# Flags: each correct value runs, each bad one is refused naming the flag (the
# first three are parsed inside CLI11's option callbacks, the rest checked by
# ClassifyConfig::validate).
expect("flags in range", [base], None, extra=("--windows", "2-5", "--weights", "exp:2", "--issue-date", "2025-12-03",
                                              "--lag", "1", "--reforecast-window", "60", "--lead-smoothing", "15",
                                              "--threads", "1"))
for flag, value in (("--windows", "5-2"), ("--weights", "bogus"), ("--issue-date", "2026-13-01"), ("--lag", "-2"),
                    ("--reforecast-window", "70"), ("--lead-smoothing", "16"), ("--threads", "-1")):
    expect(f"{flag} {value}", [base], flag, extra=(f"{flag}={value}",), exit_code=2)
finish()
