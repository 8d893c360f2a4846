"""Invented daily 500 hPa height files and small helpers for the `isohypse derive` tests.

The data plant a known structure (a seasonal cycle plus patterns with decaying
amplitudes), so the tests can say what derive must find in them."""
import datetime
import json
import os

import netCDF4
import numpy as np

from common import BIN, run


def write_heights(path, values, lat, lon, first_day, fill_value=None):
    """values (n_days, n_lat, n_lon) in metres, one value per day from first_day
    (standard calendar). NaN is written as fill_value when one is given."""
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        ds.createDimension("time", values.shape[0])
        ds.createDimension("lat", len(lat))
        ds.createDimension("lon", len(lon))
        t = ds.createVariable("time", "f8", ("time",))
        t.units = f"days since {first_day.isoformat()} 00:00:00"
        t.calendar = "standard"
        la = ds.createVariable("lat", "f4", ("lat",))
        la.units = "degrees_north"
        lo = ds.createVariable("lon", "f4", ("lon",))
        lo.units = "degrees_east"
        z = ds.createVariable("hgt", "f4", ("time", "lat", "lon"), fill_value=fill_value)
        z.units = "m"
        z.standard_name = "geopotential_height"
        t[:] = np.arange(values.shape[0])
        la[:] = lat
        lo[:] = lon
        z[:] = np.ma.masked_invalid(values) if fill_value is not None else values


def dates_from(first_day, n):
    return [first_day + datetime.timedelta(days=i) for i in range(n)]


def planted_heights(lat, lon, first_day, n_days, amplitudes, seed, noise=5.0):
    """5500 m + a seasonal cycle + sum_k a_k(t) pattern_k + white noise, where
    a_k is an AR(1) series (lag-1 r = 0.8) of standard deviation amplitudes[k]
    and the patterns are smooth, mutually different waves."""
    rng = np.random.default_rng(seed)
    la, lo = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    doy = np.array([d.timetuple().tm_yday for d in dates_from(first_day, n_days)], dtype=float)
    season = 80.0 * np.cos(2 * np.pi * (doy - 15) / 365.25)[:, None, None] * np.sin(la)[None]
    h = 5500.0 - 300.0 * np.sin(la)[None] ** 2 + season
    for k, amp in enumerate(amplitudes):
        pattern = np.cos((k % 3 + 1) * lo + 0.7 * k) * np.sin((k // 3 + 1) * 2 * la + 0.3 * k)
        a = np.zeros(n_days)
        e = rng.normal(0, amp * np.sqrt(1 - 0.8**2), n_days)
        a[0] = rng.normal(0, amp)
        for t in range(1, n_days):
            a[t] = 0.8 * a[t - 1] + e[t]
        h = h + a[:, None, None] * pattern[None]
    return h + rng.normal(0, noise, h.shape)


def write_config(folder, doc, name="derive.json"):
    path = os.path.join(folder, name)
    with open(path, "w") as f:
        json.dump(doc, f)
    return path


# Few partitions keep the classifiability table fast; the tests check the
# pipeline, not the index's sampling accuracy. k = auto over 2..8 at 0.9
# needs at least 69 surrogates (Holm's correction); most k stop early.
FAST = {"regimes": {"classifiability_runs": 10, "surrogates": 70, "restarts": 20}}


def derive(*args):
    return run([BIN, "derive", *args])
