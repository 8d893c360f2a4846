"""derive and inspect on GRIB reanalysis (issue 14).

The small invented world's reanalysis (8 years of daily 500 hPa geopotential, NetCDF, standard calendar) is
written again as GRIB with Debian's python3-eccodes (ECMWF; WMO FM 92 GRIB editions 1 and 2, simple packing):
The record's missing values (fill values in the NetCDF files) become missing points in the GRIB bitmap.
- A: GRIB 2, geopotential (paramId 129, m2 s-2), 24 bits, one file per year, rows north to south, two
  unrelated isobaric levels (850 and 250 hPa) beside 500 hPa;
- B: GRIB 1, geopotential height (paramId 156, gpm), 16 bits, 12-hourly (each day's field at 00 and 12 UTC),
  every year in one file, the messages shuffled, rows south to north: derive needs --daily-mean.
Checks:
- derive on A and on B gives the regime model of the NetCDF record: the same k, centroid patterns correlating
  >= 0.9999 after matching (the issue's criterion), frequencies within 0.01, and the same labels on >= 99 % of
  the days;
- inspect describes A and B (text and --json) as eccodes reads them: edition, parameter, levels, grid size and
  scanning, one member, message count, first and last valid time, 12-hourly steps, packing and bits;
- refusals, each naming the file, with a non-zero exit and no model written: B without --daily-mean (several
  steps a day), a record mixing GRIB and NetCDF files, a GRIB file with no 500 hPa message, a truncated file.
"""
import glob
import json
import os
import random

import eccodes as ec
import netCDF4
import numpy as np

from common import BIN, BUILD, check, finish, run, scratch
from grib_data import set_regular_grid

G0 = 9.80665
MISSING = 9999.0e10  # the value that marks a missing point when writing (ecCodes' bitmap)
tmp = scratch()
world = os.path.join(tmp, "world")
r = run([os.path.join(BUILD, "isohypse-demo-world"), "--out", world, "--size", "small"])
assert r.returncode == 0, r.stderr
years = sorted(glob.glob(f"{world}/reanalysis/*.nc"))
cfg = os.path.join(tmp, "derive.json")
json.dump({"regimes": {"classifiability_runs": 4, "surrogates": 4, "restarts": 20}}, open(cfg, "w"))


def read_year(path):
    with netCDF4.Dataset(path) as ds:
        z = np.ma.filled(ds["z"][:].astype(np.float64), np.nan)  # (time, lat, lon), m2 s-2; NaN where missing
        t = ds["time"]
        dates = netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard"))
        return z, dates, np.asarray(ds["latitude"][:], float), np.asarray(ds["longitude"][:], float)


def message(sample, values, lat, lon, date, hour, param, level, bits):
    """One GRIB message of `values` (lat, lon) on the rows of `lat` as given."""
    h = ec.codes_grib_new_from_samples(sample)
    set_regular_grid(h, lat, lon)
    ec.codes_set(h, "paramId", param)
    ec.codes_set(h, "typeOfLevel", "isobaricInhPa")
    ec.codes_set(h, "level", level)
    ec.codes_set(h, "dataDate", int(f"{date.year:04d}{date.month:02d}{date.day:02d}"))
    ec.codes_set(h, "dataTime", hour * 100)
    ec.codes_set(h, "bitsPerValue", bits)
    values = values.ravel()
    if np.isnan(values).any():  # the missing values of the NetCDF record as missing in the GRIB bitmap
        ec.codes_set(h, "missingValue", MISSING)
        ec.codes_set(h, "bitmapPresent", 1)
        values = np.where(np.isnan(values), MISSING, values)
    ec.codes_set_values(h, values)
    blob = ec.codes_get_message(h)
    ec.codes_release(h)
    return blob


def write(path, blobs):
    with open(path, "wb") as f:
        for b in blobs:
            f.write(b)


# A: GRIB 2, z, 24 bits, one file per year, with 850 and 250 hPa messages beside 500 hPa
os.makedirs(os.path.join(tmp, "a"))
b_blobs = []
for path in years:
    z, dates, lat, lon = read_year(path)
    blobs = []
    for i, d in enumerate(dates):
        blobs.append(message("regular_ll_pl_grib2", z[i], lat, lon, d, 0, 129, 500, 24))
        if i % 50 == 0:
            blobs.append(message("regular_ll_pl_grib2", z[i] * 0.3, lat, lon, d, 0, 129, 850, 24))
            blobs.append(message("regular_ll_pl_grib2", z[i] * 2.1, lat, lon, d, 0, 129, 250, 24))
        for hour in (0, 12):
            b_blobs.append(message("regular_ll_pl_grib1", z[i][::-1] / G0, lat[::-1], lon, d, hour, 156, 500, 16))
    write(os.path.join(tmp, "a", os.path.basename(path).replace(".nc", ".grib2")), blobs)
random.Random(14).shuffle(b_blobs)
os.makedirs(os.path.join(tmp, "b"))
write(os.path.join(tmp, "b", "hgt500_12h.grib1"), b_blobs)
a_files = sorted(glob.glob(os.path.join(tmp, "a", "*.grib2")))
b_file = os.path.join(tmp, "b", "hgt500_12h.grib1")


def derive(name, inputs, *extra):
    out = os.path.join(tmp, name + ".nc")
    r = run([BIN, "derive", "--config", cfg, "--input", *inputs, "--domain", "20,80,170,-40", "--k", "4",
             "--threads", "2", "--out", out, *extra])
    return r, out


def model(path):
    with netCDF4.Dataset(path) as ds:
        return (np.asarray(ds["pattern"][:]), np.asarray(ds["frequency"][:]), np.asarray(ds["label"][:]),
                np.asarray(ds["time"][:]))


def missing_line(r):
    return next((l for l in (r.stdout + r.stderr).splitlines() if "missing values" in l), "")


r, ref_path = derive("netcdf", years)
assert r.returncode == 0, r.stderr
ref_missing = missing_line(r)
ref = model(ref_path)
for name, inputs, extra in (("grib2_z_24bit_per_year", a_files, ()),
                            ("grib1_gh_16bit_12h_shuffled", [b_file], ("--daily-mean",))):
    r, out = derive(name, inputs, *extra)
    check(r.returncode == 0, f"{name}: derive reads the GRIB copy ({r.stderr.strip()[-300:]})")
    if r.returncode != 0:
        continue
    check(ref_missing != "" and missing_line(r) == ref_missing,
          f"{name}: the bitmap's missing points are the record's missing values ('{missing_line(r)}')")
    pat, freq, lab, days = model(out)
    check(pat.shape == ref[0].shape, f"{name}: k = {len(pat)} regimes as from NetCDF ({len(ref[0])})")
    if pat.shape != ref[0].shape:
        continue
    flat = lambda a: a.reshape(len(a), -1)
    c = np.corrcoef(flat(pat), flat(ref[0]))[: len(pat), len(pat):]
    match = c.argmax(axis=1)
    best = c.max(axis=1)
    check(sorted(match) == list(range(len(pat))) and best.min() >= 0.9999,
          f"{name}: each centroid pattern matches one NetCDF pattern (min correlation {best.min():.6f} >= 0.9999)")
    check(np.abs(freq - ref[1][match]).max() <= 0.01,
          f"{name}: frequencies within 0.01 (max difference {np.abs(freq - ref[1][match]).max():.4f})")
    same_days = np.array_equal(days, ref[3])
    relabel = np.array([list(match).index(l) if l >= 0 else -1 for l in ref[2]])
    agree = float(np.mean(lab == relabel)) if same_days else 0.0
    check(same_days and agree >= 0.99, f"{name}: the same {len(days)} days, labels agree on {agree:.4f} >= 0.99")


# inspect
def inspect_json(path):
    r = run([BIN, "inspect", "--json", path])
    return r, (json.loads(r.stdout) if r.returncode == 0 else None)


def keys_of(path, *names):
    """Every message's keys, as eccodes reads them."""
    rows = []
    with open(path, "rb") as f:
        while (h := ec.codes_grib_new_from_file(f)) is not None:
            rows.append({k: ec.codes_get(h, k) for k in names})
            ec.codes_release(h)
    return rows


r, j = inspect_json(a_files[0])
check(r.returncode == 0, f"inspect --json describes a GRIB 2 file ({r.stderr.strip()[-200:]})")
if j is not None:
    d = j[0] if isinstance(j, list) else j
    rows = keys_of(a_files[0], "edition", "shortName", "level", "Ni", "Nj", "bitsPerValue", "packingType",
                   "validityDate", "jScansPositively")
    at500 = [x for x in rows if x["level"] == 500]
    check(d.get("editions") == [2] and [p["short_name"] for p in d.get("parameters", [])] == ["z"],
          f"inspect: edition 2, parameter z ({d.get('editions')}, {d.get('parameters')})")
    check(d.get("levels_hpa") == [250, 500, 850] and d.get("messages") == len(rows),
          f"inspect: levels 250, 500, 850 hPa and {len(rows)} messages ({d.get('levels_hpa')}, {d.get('messages')})")
    g = d.get("grid", {})
    check((g.get("ni"), g.get("nj"), g.get("scanning", {}).get("j_scans_positively")) ==
          (rows[0]["Ni"], rows[0]["Nj"], bool(rows[0]["jScansPositively"])),
          f"inspect: grid {g.get('ni')} x {g.get('nj')}, scanning southward, as eccodes reads it")
    first, last = str(at500[0]["validityDate"]), str(at500[-1]["validityDate"])
    v = d.get("valid_times", {})
    check(v.get("count") == len(at500) and v.get("first", "").startswith(f"{first[:4]}-{first[4:6]}-{first[6:]}")
          and v.get("last", "").startswith(f"{last[:4]}-{last[4:6]}-{last[6:]}"),
          f"inspect: {len(at500)} valid times {v.get('first')} .. {v.get('last')} (eccodes: {first} .. {last})")
    check(d.get("members") == [0] and d.get("packing") == [{"type": rows[0]["packingType"], "bits_per_value": 24,
                                                              "messages": len(rows)}],
          f"inspect: one member, {rows[0]['packingType']} at 24 bits ({d.get('packing')})")
r, j = inspect_json(b_file)
if r.returncode == 0:
    d = j[0] if isinstance(j, list) else j
    check(d.get("editions") == [1] and d.get("valid_times", {}).get("per_day") == 2
          and [p["short_name"] for p in d["parameters"]] == ["gh"],
          f"inspect: GRIB 1, gh, two valid times a day ({d.get('editions')}, {d.get('valid_times')})")
else:
    check(False, f"inspect --json describes a GRIB 1 file ({r.stderr.strip()[-200:]})")
r = run([BIN, "inspect", a_files[0]])
check(r.returncode == 0 and "GRIB, edition 2" in r.stdout and "500 hPa" in r.stdout and "24 bits" in r.stdout,
      f"inspect's text names the edition, level and packing:\n{r.stdout}")


# refusals
def refused(label, inputs, *words, extra=()):
    r, out = derive("refused", inputs, *extra)
    text = r.stderr + r.stdout
    ok = r.returncode != 0 and all(w in text for w in words) and not os.path.exists(out)
    check(ok, f"refused: {label} (exit {r.returncode}, no model; says {' / '.join(words)}): {r.stderr.strip()[-300:]}")


refused("12-hourly GRIB without --daily-mean", [b_file], b_file, "--daily-mean")
refused("GRIB and NetCDF files mixed", [a_files[0], years[1]], a_files[0], years[1])
no500 = os.path.join(tmp, "z850.grib2")
z, dates, lat, lon = read_year(years[0])
write(no500, [message("regular_ll_pl_grib2", z[i] * 0.3, lat, lon, dates[i], 0, 129, 850, 16) for i in range(5)])
refused("no 500 hPa message", [no500], no500, "500 hPa", "850")
whole = open(a_files[1], "rb").read()
trunc = os.path.join(tmp, "truncated.grib2")
open(trunc, "wb").write(whole[: len(whole) - 777])
refused("a truncated file", [a_files[0], trunc], trunc)

finish()
