"""Invented forecast files and a small regime model for the `isohypse classify`
tests and benchmark, and the import of the numpy reference (bench/classify_reference.py)."""
import datetime
import json
import os
import sys

import cftime
import netCDF4
import numpy as np

from common import BIN, SOURCE, check, run
from derive_data import derive, planted_heights, write_config, write_heights

sys.path.insert(0, os.path.join(SOURCE, "bench"))
import classify_reference as reference  # noqa: E402  (the independent numpy reference)

DOMAIN = "20,80,170,-40"
# Few partitions and surrogates: the model only has to exist.
QUICK = {"regimes": {"classifiability_runs": 5, "surrogates": 5}}


def write_forecast(path, heights, lat, lon, init, calendar="noleap", geopotential=True, lat_descending=True,
                   times=None, variable=None, units=None, standard_name=None, realization=None, fill=None,
                   compress=False):
    """One initialisation: heights (members, leads, lat, lon) in metres on the
    given axes (lat ascending), daily steps from `init` (y, m, d) in
    `calendar`, stored as ECMWF-style geopotential (m2 s-2) or as heights.
    realization: write one member without a member dimension and this number
    in a scalar `realization` variable. times: day offsets to write instead of
    0..leads-1. NaN becomes the fill value `fill`."""
    z = np.asarray(heights, np.float64) * (9.80665 if geopotential else 1.0)
    lat = np.asarray(lat, float)
    if lat_descending:
        lat, z = lat[::-1], z[:, :, ::-1, :]
    n_t = z.shape[1]
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        dims = ("time", "latitude", "longitude")
        if realization is None:
            ds.createDimension("number", z.shape[0])
            dims = ("number",) + dims
        ds.createDimension("time", n_t)
        ds.createDimension("latitude", len(lat))
        ds.createDimension("longitude", len(lon))
        if realization is None:
            nv = ds.createVariable("number", "i4", ("number",))
            nv.long_name = "ensemble member numerical id"
            nv[:] = np.arange(z.shape[0])
        else:
            rv = ds.createVariable("realization", "i4", ())
            rv.standard_name = "realization"
            rv.assignValue(realization)
        t = ds.createVariable("time", "f8", ("time",))
        t.units = "hours since %04d-%02d-%02d 00:00:00" % tuple(init)
        t.calendar = calendar
        t[:] = 24.0 * (np.arange(n_t) if times is None else np.asarray(times, float))
        la = ds.createVariable("latitude", "f4", ("latitude",))
        la.units = "degrees_north"
        la[:] = lat
        lo = ds.createVariable("longitude", "f4", ("longitude",))
        lo.units = "degrees_east"
        lo[:] = lon
        name = variable or ("z" if geopotential else "gh")
        v = ds.createVariable(name, "f4", dims, zlib=compress, complevel=1, fill_value=fill)
        v.units = units or ("m2 s-2" if geopotential else "m")
        v.standard_name = standard_name or ("geopotential" if geopotential else "geopotential_height")
        data = z[0] if realization is not None else z
        v[:] = np.ma.masked_invalid(data) if fill is not None else data


def small_model(folder, lat, lon, extra=None, years=6, seed=11):
    """Derives a k = 4 regime model from invented reanalysis on (lat, lon)
    (derive_data.planted_heights: four planted waves). Returns its path, or
    None after recording a failed check."""
    rean = os.path.join(folder, "reanalysis.nc")
    first = datetime.date(2010, 1, 1)
    n = (datetime.date(2010 + years, 1, 1) - first).days
    write_heights(rean, planted_heights(lat, lon, first, n, [120, 90, 70, 50], seed), lat, lon, first)
    cfg = dict(QUICK)
    cfg.update(extra or {})
    out = os.path.join(folder, "model.nc")
    r = derive("--input", rean, "--domain", DOMAIN, "--k", "4", "--out", out,
               "--config", write_config(folder, cfg, "derive-classify.json"))
    check(r.returncode == 0, "derive a small k=4 model for the classify tests" + ("" if r.returncode == 0 else r.stderr[-300:]))
    return out if r.returncode == 0 else None


def planted_forecast(model, init, calendar, members, leads, rng, amp=(0.4, 1.6), noise=25.0, quiet=0.15):
    """Heights (members, leads, lat, lon): the model's climatology on the
    model-calendar valid dates plus, on each day, one of the model's regime
    patterns times a random amplitude (or none, with probability `quiet`) and
    white noise, so every state, no regime included, turns up."""
    valid = [cftime.datetime(*init, calendar=calendar) + datetime.timedelta(days=d) for d in range(leads)]
    clim = model.climatology(valid).reshape(leads, model.lat.size, model.lon.size)
    h = np.empty((members, leads, model.lat.size, model.lon.size))
    for m in range(members):
        for d in range(leads):
            a = 0.0 if rng.random() < quiet else rng.uniform(*amp)
            pattern = model.patterns[rng.integers(model.k)]
            h[m, d] = clim[d] + a * pattern + rng.normal(0.0, noise, pattern.shape)
    return h


def classify(*args):
    return run([BIN, "classify", *args])


def classify_and_validate(what, out, validator, *args):
    """Runs classify with args (which write the guidance to out); checks it exits 0 and that the guidance
    validates against config/guidance.schema.json (validator). Returns (guidance or None when classify failed,
    the finished process)."""
    r = classify(*args)
    check(r.returncode == 0, f"{what}: classify exits 0 ({r.stderr.strip()[-400:]})")
    if r.returncode != 0:
        return None, r
    with open(out) as f:
        g = json.load(f)
    errors = sorted(validator.iter_errors(g), key=str)
    check(not errors, f"{what}: guidance validates against config/guidance.schema.json"
          + (f" (first error: {errors[0].message} at {list(errors[0].absolute_path)})" if errors else ""))
    return g, r
