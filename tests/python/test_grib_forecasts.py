"""classify on GRIB 2 forecasts (issue 14): the small invented world's forecasts (NetCDF, noleap calendar, the
demo layout) written again as GRIB 2 messages with Debian's python3-eccodes (ECMWF; simple packing, WMO FM 92
GRIB edition 2, product definition template 4.1 for ensemble members: one message per member and lead, the
control member 0 included, in shuffled order over two files), then classified with the same regime model:
- at 24 bits the daily probabilities equal those from the NetCDF files within 1e-6; at 16 bits within one member's
  weight per valid date (packing may move a member across a regime boundary);
- the messages as geopotential (m2 s-2, divided by 9.80665) and with rows scanned south to north give the same;
- a missing member message is refused, naming the member and the lead.
The forecasts stay on their noleap dates: the test initialisations lie in December, before any 29 February."""
import datetime
import glob
import json
import os
import random

import eccodes as ec
import netCDF4
import numpy as np

from common import BIN, check, finish, run, scratch
from daily_season import small_world_model
from grib_data import set_regular_grid

G0 = 9.80665
tmp = scratch()
world, _, model = small_world_model(tmp)
originals = sorted(glob.glob(f"{world}/forecasts/*.nc"))[:3]


def messages(path, bits, geopotential=False, south_to_north=False):
    """One GRIB 2 message per member and lead of a NetCDF forecast."""
    with netCDF4.Dataset(path) as ds:
        var = next(v for v in ds.variables.values() if v.ndim == 4)
        values = np.asarray(var[:], np.float64)  # (number, time, lat, lon), metres
        tv = ds["time"]
        d0 = netCDF4.num2date(tv[0], tv.units, tv.calendar)
        lat, lon = np.asarray(ds["latitude"][:], float), np.asarray(ds["longitude"][:], float)
    out = []
    for m in range(values.shape[0]):
        for lead in range(values.shape[1]):
            h = ec.codes_grib_new_from_samples("regular_ll_pl_grib2")
            rows = values[m, lead]  # latitudes ascending in the file
            lats = lat
            if not south_to_north:
                rows, lats = rows[::-1], lat[::-1]
            set_regular_grid(h, lats, lon)
            ec.codes_set(h, "productDefinitionTemplateNumber", 1)
            ec.codes_set(h, "typeOfProcessedData", 3 if m == 0 else 4)
            ec.codes_set(h, "perturbationNumber", m)
            ec.codes_set(h, "numberOfForecastsInEnsemble", values.shape[0])
            ec.codes_set(h, "paramId", 129 if geopotential else 156)
            ec.codes_set(h, "typeOfLevel", "isobaricInhPa")
            ec.codes_set(h, "level", 500)
            ec.codes_set(h, "dataDate", int(f"{d0.year:04d}{d0.month:02d}{d0.day:02d}"))
            ec.codes_set(h, "dataTime", 0)
            ec.codes_set(h, "indicatorOfUnitOfTimeRange", 1)
            ec.codes_set(h, "forecastTime", 24 * lead)
            ec.codes_set(h, "bitsPerValue", bits)
            ec.codes_set_values(h, (rows * (G0 if geopotential else 1.0)).ravel())
            out.append(((m, lead), ec.codes_get_message(h)))
            ec.codes_release(h)
    return out


def write_set(name, bits, drop=None, **kw):
    """The originals as GRIB 2, shuffled over two files; drop=(file index, member, lead) leaves one out."""
    blobs = []
    for i, path in enumerate(originals):
        blobs += [b for key, b in messages(path, bits, **kw) if drop is None or (i, *key) != drop]
    random.Random(14).shuffle(blobs)
    folder = os.path.join(tmp, name)
    os.makedirs(folder)
    half = len(blobs) // 2
    for part, chunk in (("a", blobs[:half]), ("b", blobs[half:])):
        with open(os.path.join(folder, f"fc_{part}.grib2"), "wb") as f:
            for b in chunk:
                f.write(b)
    return sorted(glob.glob(os.path.join(folder, "*.grib2")))


def classify(files, name):
    out = os.path.join(tmp, name + ".json")
    r = run([BIN, "classify", "--quiet", "--model", model, "--forecasts", *files, "--lag", "3", "--out", out])
    return r, (json.load(open(out)) if r.returncode == 0 else None)


def probabilities(g):
    return np.array([[d["probabilities"][s] for s in sorted(d["probabilities"])] for d in g["daily"]])


r, g0 = classify(originals, "netcdf")
assert r.returncode == 0, r.stderr
p0 = probabilities(g0)
members = g0["daily"][0]["members"]
for name, bits, kw, tol in (("grib24", 24, {}, 1e-6),
                            ("grib24_z_south_north", 24, {"geopotential": True, "south_to_north": True}, 1e-6),
                            ("grib16", 16, {}, None)):
    files = write_set(name, bits, **kw)
    r, g = classify(files, name)
    check(r.returncode == 0, f"{name}: classify reads {len(files)} GRIB 2 files ({r.stderr.strip()[-300:]})")
    if g is None:
        continue
    p = probabilities(g)
    same_dates = [d["valid_date"] for d in g["daily"]] == [d["valid_date"] for d in g0["daily"]]
    diff = np.abs(p - p0).max() if p.shape == p0.shape else float("inf")
    if tol is not None:
        check(same_dates and diff <= tol, f"{name}: the {len(p)} daily probabilities equal the NetCDF files' "
              f"(max difference {diff:.1e}, tolerance {tol:g})")
    else:
        weight = max(1.0 / d["members"] for d in g["daily"])
        check(same_dates and diff <= weight + 1e-9, f"{name}: within one member's weight ({weight:.3f}) of the "
              f"NetCDF files' probabilities (max difference {diff:.3f})")

files = write_set("missing", 24, drop=(1, 2, 5))
r, _ = classify(files, "missing")
check(r.returncode != 0 and "member 2" in r.stderr and "lead 120 h" in r.stderr,
      f"a member's missing message is refused by name: {r.stderr.strip()[-220:]}")
finish()
