"""Plausibility of values, times and coordinates (issue 15, item 6).

Invented records (derive_data.planted_heights, about 5,000-5,800 m), written with netCDF4-python, then damaged:
- one value of 1e30 m inside the domain: read as missing and counted (derive warns of 1 missing value, the
  model's patterns stay within a few hundred metres);
- geopotential (m2 s-2) labelled as metres: every value lies outside the plausible 500 hPa heights, refused;
- heights of the 850 hPa level labelled 500 hPa (about 1,000-1,700 m, below the 500 hPa range): refused too;
- a time value of 1e300 hours: refused as outside the years 1-9999 (it once overflowed the day arithmetic);
- a latitude of 95: refused.
The plausible range at 500 hPa, 4,014-6,522 m, is the ICAO standard atmosphere's 5,574 m (ICAO 1993, Manual of the
ICAO Standard Atmosphere, Doc 7488; the value here from memory: 5,574 m at 500 hPa) less 28 % and plus 17 %, the
common-practice range of about 4,000-6,500 m. Each refusal: exit 3, one message naming the file, no model; inspect
on every damaged file ends without a signal."""
import datetime
import os

import netCDF4
import numpy as np

from common import BIN, check, finish, run, scratch
from derive_data import FAST, planted_heights, write_config, write_heights

tmp = scratch()
lat = np.arange(20.0, 81.0, 10.0)
lon = np.arange(0.0, 360.0, 30.0)
first = datetime.date(2001, 1, 1)
heights = planted_heights(lat, lon, first, 365, amplitudes=[100, 60, 30], seed=5)
fast = write_config(tmp, FAST)


def variant(name, values=None, edit=None):
    path = os.path.join(tmp, name + ".nc")
    write_heights(path, heights if values is None else values, lat, lon, first)
    if edit:
        with netCDF4.Dataset(path, "a") as ds:
            edit(ds)
    return path


def derive(path):
    out = os.path.join(tmp, os.path.basename(path) + ".model.nc")
    r = run([BIN, "derive", "--config", fast, "--input", path, "--domain", "20,80,0,330", "--k", "2", "--out", out])
    return r, out


one_spike = heights.copy()
one_spike[40, 3, 5] = 1e30
spiked = variant("one_value_1e30", one_spike)
r, out = derive(spiked)
said = [l for l in (r.stdout + r.stderr).splitlines() if "missing value" in l]
check(r.returncode == 0 and len(said) == 1 and said[0].startswith("warning: 1 missing value"),
      f"a single 1e30 m is read as one missing value (exit {r.returncode}): {said}")
if r.returncode == 0:
    with netCDF4.Dataset(out) as ds:
        worst = float(np.nanmax(np.abs(ds["pattern"][:])))
    check(worst < 500, f"and the regime patterns stay plausible (largest |anomaly| {worst:.0f} m)")

refusals = [
    ("geopotential labelled as metres", variant("geopotential_as_metres", heights * 9.80665),
     ["plausible heights of 500 hPa", "4014 to 6522 m", "wrong units"]),
    ("850 hPa heights labelled 500 hPa", variant("heights_of_850", heights - 4000.0), ["plausible heights"]),
    ("a time value of 1e300", variant("time_1e300", edit=lambda ds: ds["time"].__setitem__(100, 1e300)),
     ["1e+300", "years 1-9999"]),
    ("a latitude of 95", variant("latitude_95", edit=lambda ds: ds["lat"].__setitem__(len(lat) - 1, 95.0)),
     ["latitude 95", "-90..90"]),
]
for name, path, words in refusals:
    r, out = derive(path)
    lines = [l for l in r.stderr.splitlines() if l.startswith("isohypse: error")]
    message = lines[0] if lines else r.stderr[-300:]
    check(r.returncode == 3 and path in message and all(w in message for w in words) and not os.path.exists(out),
          f"{name}: refused (exit {r.returncode}), naming the file and {words}, no model: {message}")
for path in [spiked] + [p for _, p, _ in refusals]:
    r = run([BIN, "inspect", path])
    check(r.returncode >= 0 and r.returncode in (0, 3), f"inspect {os.path.basename(path)}: exit {r.returncode}, "
          "no signal")
finish()
