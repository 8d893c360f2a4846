"""`isohypse derive` refuses bad input cleanly (issue 3).

Each case must end with a non-zero exit, one clear error line naming the
file or the setting at fault, and nothing written: no model, no summary and
no temporary file in the output folder. Invented data (derive_data.py); the
expected messages are the project's own contract (derive.hpp, field.hpp)."""
import datetime
import os
import re

import numpy as np

from common import check, finish, scratch
from derive_data import FAST, derive, planted_heights, write_config, write_heights

tmp = scratch()
lat = np.arange(20.0, 81.0, 10.0)
lon = np.arange(0.0, 360.0, 30.0)
first = datetime.date(2001, 1, 1)
heights = planted_heights(lat, lon, first, 365, amplitudes=[100, 60, 30], seed=3)
year = os.path.join(tmp, "hgt500_2001.nc")
write_heights(year, heights, lat, lon, first)
holes = heights.copy()
holes[:, lat >= 60, :] = np.nan                  # nothing north of 60N, ever
gappy = os.path.join(tmp, "hgt500_2001_no_arctic.nc")
write_heights(gappy, holes, lat, lon, first, fill_value=-9999.0)
# Axes are known by the CF rules, never by a dimension's name (project rule): a latitude named 'lat' whose
# coordinate lost its units is refused, naming the file and what was looked for; a time named 'time' without
# units is refused too.
import netCDF4  # noqa: E402
no_lat_units = os.path.join(tmp, "hgt500_2001_lat_without_units.nc")
write_heights(no_lat_units, heights, lat, lon, first)
with netCDF4.Dataset(no_lat_units, "a") as ds:
    ds["lat"].delncattr("units")
no_time_units = os.path.join(tmp, "hgt500_2001_time_without_units.nc")
write_heights(no_time_units, heights, lat, lon, first)
with netCDF4.Dataset(no_time_units, "a") as ds:
    ds["time"].delncattr("units")
    ds["time"].delncattr("calendar")
fast = write_config(tmp, FAST)
misspelt = write_config(tmp, {"regimes": {"classifiabilty_runs": 10}}, "misspelt.json")
many_eofs = write_config(tmp, {**FAST, "eof": {"count": 40}}, "many_eofs.json")
negative_seed = write_config(tmp, {**FAST, "seed": -5}, "negative_seed.json")
level_zero = write_config(tmp, {**FAST, "level_hpa": 0}, "level_zero.json")

# name, arguments, words the message must hold (case-insensitive)
cases = [
    ("a February season (28 days) for 40 EOFs", ["--input", year, "--config", many_eofs, "--months", "2"], ["40", "28"]),
    ("k = 20 for 28 in-season days", ["--input", year, "--config", fast, "--months", "2", "--k", "20"],
     ["k = 20", "28"]),
    ("a misspelt config key", ["--input", year, "--config", misspelt],
     ["misspelt.json", "classifiabilty_runs", "valid keys", "classifiability_runs", "surrogates"]),
    ("an all-missing domain", ["--input", gappy, "--config", fast, "--domain", "60,80,0,360"],
     [os.path.basename(gappy), "missing"]),
    ("a domain outside the grid", ["--input", year, "--config", fast, "--domain", "-60,-30,0,360"],
     [os.path.basename(year), "-60"]),
    ("a latitude coordinate without units", ["--input", no_lat_units, "--config", fast],
     [os.path.basename(no_lat_units), "latitude", "degrees_north"]),
    ("a time coordinate without units", ["--input", no_time_units, "--config", fast],
     [os.path.basename(no_time_units), "'time'", "since"]),
    ("--months 13", ["--input", year, "--config", fast, "--months", "13"], ["--months", "13"]),
    # Flags that were once ignored when out of range, now checked with the
    # config's own settings (DeriveConfig::validate).
    ("--level -5", ["--input", year, "--config", fast, "--level", "-5"], ["--level", "-5"]),
    ("--threads -1", ["--input", year, "--config", fast, "--threads", "-1"], ["--threads"]),
    ("--seed -5", ["--input", year, "--config", fast, "--seed=-5"], ["--seed", "-5"]),
    ("a negative seed in the config", ["--input", year, "--config", negative_seed], ["negative_seed.json", "seed", "-5"]),
    ("level_hpa 0 in the config", ["--input", year, "--config", level_zero], ["level_hpa", "0"]),
]

# Progress and log lines derive may print before failing.
CHATTER = re.compile(r"^(isohypse derive: \w+\.\.\.|(trace|debug|info|warning): )")

for n, (name, args, words) in enumerate(cases):
    out_dir = os.path.join(tmp, f"out{n}")
    os.mkdir(out_dir)
    r = derive("--out", os.path.join(out_dir, "model.nc"), "--summary", os.path.join(out_dir, "summary.json"), *args)
    errors = [l for l in r.stderr.splitlines() if l.strip() and not CHATTER.match(l)]
    message = errors[0] if errors else ""
    print(f"{name}: exit {r.returncode}: {message}")
    check(r.returncode != 0, f"{name}: non-zero exit ({r.returncode})")
    check(len(errors) == 1 and message.startswith("isohypse: error: "), f"{name}: one error line ({len(errors)} lines)")
    missing = [w for w in words if w.lower() not in message.lower()]
    check(not missing, f"{name}: the message names {words}" + (f" (missing {missing})" if missing else ""))
    left = os.listdir(out_dir)
    check(not left, f"{name}: nothing left in the output folder ({left})")
finish()
