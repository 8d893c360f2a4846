"""The GRIB index and decoder against Debian's python3-eccodes (ECMWF's Python
interface to the same ecCodes library, the reference decoder for every GRIB
packing) and against what the fixtures planted.

Fixtures are written here with python3-eccodes from its own samples:
- an ensemble in two files, messages shuffled: GRIB 2 (regular_ll_pl_grib2,
  Product Definition Template 4.1, perturbation numbers, typeOfProcessedData
  3 control / 4 perturbed) and GRIB 1 (the GRIB1 sample, MARS local
  definition 1: type cf/pf, number), geopotential and geopotential height,
  two initialisations, steps in hours, minutes (GRIB 2 Code table 4.4 unit 0)
  and days (unit 2), a GRIB 1 step range (its end is the lead), 16- and
  24-bit simple packing, one field with a bitmap of missing points;
- the same area scanned south to north and east to west, and column by column
  (WMO Manual on Codes, FM 92 GRIB edition 2, Flag table 3.4: bits 1-3);
- a regular Gaussian grid (regular_gg_pl_grib1), its latitudes checked
  against ecCodes' own geo-iterator;
- bad input: reduced Gaussian, a truncated file, a duplicated message,
  temperature only, no 500 hPa level, mixed grids.

Checks: the index's metadata against the planted values; its latitudes and
longitudes against python3-eccodes' per-point `latitudes`/`longitudes` (the
geo-iterator); the decoded values (metres) against python3-eccodes' decode
of the same message (divided by g0 = 9.80665 for geopotential) to float
precision, and against the written values to the packing precision
(half a step of (max - min) / 2**bitsPerValue, WMO FM 92 simple packing).
"""
import json
import os
import random

import eccodes as ec
import numpy as np

from common import TOOLS, check, finish, run, scratch

G0 = 9.80665
tmp = scratch()
rng = np.random.default_rng(14)
TOOL = os.path.join(TOOLS, "grib_tool")

AREA = {"Ni": 15, "Nj": 13, "latitudeOfFirstGridPointInDegrees": 80.0, "latitudeOfLastGridPointInDegrees": 20.0,
        "longitudeOfFirstGridPointInDegrees": 330.0, "longitudeOfLastGridPointInDegrees": 40.0,
        "iDirectionIncrementInDegrees": 5.0, "jDirectionIncrementInDegrees": 5.0}


def grib_tool(*args):
    r = run([TOOL, *args])
    return r.returncode, (json.loads(r.stdout) if r.returncode == 0 else None), r.stderr.strip()


def set_grid(h, area, scan=None):
    for k, v in area.items():
        ec.codes_set(h, k, v)
    for k, v in (scan or {}).items():
        ec.codes_set(h, k, v)


def field(n, metres, param):
    """A smooth height field plus noise, in the parameter's units."""
    x = metres + 200.0 * np.sin(np.linspace(0, 3, n)) + rng.normal(0, 20, n)
    return x * G0 if param == 129 else x


def message(spec):
    """One message as bytes, and the values written (storage order, NaN where missing)."""
    h = ec.codes_grib_new_from_samples("regular_ll_pl_grib2" if spec["edition"] == 2 else "GRIB1")
    set_grid(h, spec.get("area", AREA), spec.get("scan"))
    if spec["edition"] == 2:
        ec.codes_set(h, "productDefinitionTemplateNumber", 1)
        ec.codes_set(h, "typeOfProcessedData", 3 if spec["member"] == 0 else 4)
        ec.codes_set(h, "perturbationNumber", spec["member"])
        ec.codes_set(h, "numberOfForecastsInEnsemble", 51)
    else:
        ec.codes_set(h, "type", "cf" if spec["member"] == 0 else "pf")
        ec.codes_set(h, "number", spec["member"])
    ec.codes_set(h, "paramId", spec["param"])
    ec.codes_set(h, "typeOfLevel", spec.get("typeOfLevel", "isobaricInhPa"))
    ec.codes_set(h, "level", spec.get("level", 500))
    ec.codes_set(h, "dataDate", spec["date"])
    ec.codes_set(h, "dataTime", spec["time"])
    step = spec["step"]  # (value, unit code, step range start or None)
    if step[2] is not None:
        ec.codes_set(h, "stepType", "avg")
        ec.codes_set(h, "stepUnits", step[1])
        ec.codes_set(h, "stepRange", f"{step[2]}-{step[0]}")
    elif spec["edition"] == 2:
        ec.codes_set(h, "indicatorOfUnitOfTimeRange", step[1])
        ec.codes_set(h, "forecastTime", step[0])
    else:
        ec.codes_set(h, "unitOfTimeRange", step[1])
        ec.codes_set(h, "P1", step[0])
    ec.codes_set(h, "bitsPerValue", spec["bits"])
    n = ec.codes_get(h, "Ni") * ec.codes_get(h, "Nj")  # the samples' numberOfDataPoints is not updated yet
    values = field(n, 5500.0, spec["param"])
    if spec.get("missing"):
        ec.codes_set(h, "bitmapPresent", 1)
        ec.codes_set(h, "missingValue", 9999.0)
        values[spec["missing"]] = 9999.0
    ec.codes_set_values(h, values)
    data = ec.codes_get_message(h)
    ec.codes_release(h)
    written = values.copy()
    if spec.get("missing"):
        written[spec["missing"]] = np.nan
    return data, written


def write(path, blobs):
    with open(path, "wb") as f:
        for b in blobs:
            f.write(b)


def reference(path, offset):
    """python3-eccodes' view of the message at `offset` of `path`."""
    with open(path, "rb") as f:
        f.seek(offset)
        h = ec.codes_grib_new_from_file(f)
    try:
        vals = ec.codes_get_values(h).astype(np.float64)
        out = {k: ec.codes_get(h, k) for k in ("edition", "shortName", "paramId", "bitsPerValue", "packingType",
                                               "Ni", "Nj", "binaryScaleFactor", "decimalScaleFactor")}
        out["missing_ok"] = True
        if ec.codes_get(h, "bitmapPresent"):
            # ecCodes puts missingValue where the bitmap says missing; their count is numberOfMissing
            gone = vals == ec.codes_get(h, "missingValue")
            out["missing_ok"] = int(gone.sum()) == ec.codes_get(h, "numberOfMissing") > 0
            vals[gone] = np.nan
        out["values"] = vals
        out["lats"] = np.asarray(ec.codes_get_array(h, "latitudes"))
        out["lons"] = np.asarray(ec.codes_get_array(h, "longitudes"))
        out["number"] = ec.codes_get(h, "number") if ec.codes_is_defined(h, "number") else 0
        return out
    finally:
        ec.codes_release(h)


def lat_major_from_reference(ref, grid):
    """The reference's (lat, lon, value) points placed at isohypse's (j, i) by coordinates."""
    lat = np.asarray(grid["latitudes"])
    lon = np.asarray(grid["longitudes"])
    out = np.full(len(lat) * len(lon), np.inf)
    for la, lo, v in zip(ref["lats"], ref["lons"], ref["values"]):
        j = int(np.argmin(np.abs(lat - la)))
        i = int(np.argmin(np.abs(np.mod(lon - lo + 180.0, 360.0) - 180.0)))
        if abs(lat[j] - la) < 1e-3 and abs(np.mod(lon[i] - lo + 180.0, 360.0) - 180.0) < 1e-3:
            out[j * len(lon) + i] = v
    return out


def compare_decoded(out, specs_by_key, label):
    """Every decoded message against python3-eccodes and against the written values."""
    grid = out["grid"]
    worst_ref = worst_written = 0.0
    coords_ok = nan_ok = placed_ok = True
    for m in out["messages"]:
        ref = reference(m["path"], m["offset"])
        mine = np.array([np.nan if v is None else v for v in m["values"]])
        expected = lat_major_from_reference(ref, grid)
        placed_ok &= bool(np.all(np.isfinite(expected) | np.isnan(expected)))  # every point found once
        expected = expected * m["to_metres"]
        nan_ok &= ref["missing_ok"] and bool(np.array_equal(np.isnan(mine), np.isnan(expected)))
        ok = ~np.isnan(mine)
        scale = max(1.0, float(np.nanmax(np.abs(expected))))
        worst_ref = max(worst_ref, float(np.max(np.abs(mine[ok] - expected[ok]))) / scale)
        _, written = specs_by_key[(m["path"], m["offset"])]
        w_lat_major = lat_major_from_reference(dict(ref, values=written), grid) * m["to_metres"]
        # simple packing Y = (R + X 2^E) / 10^D: half a step 2^E 10^-D, plus half a float32 ulp of the output
        half_step = 0.5 * 2.0 ** ref["binaryScaleFactor"] / 10.0 ** ref["decimalScaleFactor"] * m["to_metres"]
        tol = half_step + 0.5 * float(np.spacing(np.float32(np.nanmax(np.abs(w_lat_major)))))
        worst_written = max(worst_written, float(np.nanmax(np.abs(mine - w_lat_major))) / tol)
        coords_ok &= len(ref["lats"]) == grid["ni"] * grid["nj"]
    check(placed_ok and coords_ok, f"{label}: every python3-eccodes point (geo-iterator) falls on one index grid point")
    check(nan_ok, f"{label}: missing points (bitmap) are NaN exactly where python3-eccodes marks them missing "
                     "(its missingValue, as many as numberOfMissing)")
    check(worst_ref < 2e-7, f"{label}: decoded metres equal python3-eccodes' decode to float precision "
                            f"(worst relative {worst_ref:.1e})")
    check(worst_written <= 1.0 + 1e-6, f"{label}: decoded metres within half a packing step (2^E 10^-D, "
                                       f"WMO FM 92 simple packing) and float rounding of the written values "
                                       f"(worst {worst_written:.3f} of that bound)")


# ---------------------------------------------------------------- the ensemble
specs = []
for date, time in ((20240101, 0), (20240102, 1200)):
    for member in (0, 1, 2):
        for lead, step in ((0, (0, 1, None)), (24, (24, 1, None)), (48, (2880, 0, None)), (72, (3, 2, None))):
            specs.append({"edition": 2, "param": 129 if member != 2 else 156, "member": member, "date": date,
                          "time": time, "step": step, "lead": lead, "bits": 16 if member == 1 else 24})
# GRIB 1 messages of a fourth member, one a step range (its end, 120 h, is the lead)
for lead, step in ((96, (96, 1, None)), (120, (120, 1, 96))):
    specs.append({"edition": 1, "param": 129, "member": 3, "date": 20240101, "time": 0, "step": step,
                  "lead": lead, "bits": 16})
specs[5]["missing"] = [0, 1, 17, 100]
blobs = [message(s) for s in specs]
order = list(range(len(specs)))
random.Random(14).shuffle(order)
files = [os.path.join(tmp, "ens_a.grib"), os.path.join(tmp, "ens_b.grib")]
by_key = {}
for f, part in zip(files, (order[: len(order) // 2], order[len(order) // 2:])):
    offset = 0
    write(f, [blobs[k][0] for k in part])
    for k in part:
        by_key[(f, offset)] = (specs[k], blobs[k][1])
        offset += len(blobs[k][0])

code, out, err = grib_tool("decode", *files)
check(code == 0, f"the shuffled two-file ensemble is indexed (exit {code}) {err}")
if out:
    msgs = out["messages"]
    check(len(msgs) == len(specs), f"every planted message is indexed ({len(msgs)} of {len(specs)})")
    planted = sorted((s["date"], s["time"], s["member"], s["lead"]) for s in specs)
    found = sorted((int(m["init"][:10].replace("-", "")), int(m["init"][11:13]) * 100, m["member"], m["lead_hours"])
                   for m in msgs)
    check(found == planted, "initialisations (dataDate, dataTime), members and leads (hours, minutes, days, "
                            "a step range's end) are the planted ones")
    check(all(m["level_hpa"] == 500 and m["type_of_level"] == "isobaricInhPa" for m in msgs), "all at 500 hPa")
    keys = [(int(m["init"][:10].replace("-", "")), m["init"][11:], m["member"], m["lead_hours"]) for m in msgs]
    check(keys == sorted(keys), "messages sorted by initialisation, member, lead")
    meta_ok = True
    for m in msgs:
        spec, _ = by_key[(m["path"], m["offset"])]
        ref = reference(m["path"], m["offset"])
        meta_ok &= (m["edition"] == spec["edition"] == ref["edition"] and m["param_id"] == spec["param"] ==
                    ref["paramId"] and m["short_name"] == ref["shortName"] and m["member"] == ref["number"] and
                    m["bits_per_value"] == spec["bits"] == ref["bitsPerValue"] and
                    m["packing"] == ref["packingType"] and
                    m["data_type"] == ("cf" if spec["member"] == 0 else "pf") and
                    abs(m["to_metres"] - (1 / G0 if spec["param"] == 129 else 1.0)) < 1e-15)
    check(meta_ok, "edition, paramId, shortName, member, bitsPerValue, packing, dataType and the metres factor "
                   "(1/g0 for z, 1 for gh) agree with the planted values and python3-eccodes")
    g = out["grid"]
    check(g["type"] == "regular_ll" and g["ni"] == 15 and g["nj"] == 13 and g["latitudes"][0] == 80
          and g["longitudes"][0] == 330 and g["longitudes"][-1] == 400,
          f"grid: regular_ll 15 x 13, rows from 80 N, columns from 330 E eastward to 40 E (as 400): "
          f"{g['latitudes'][0]}, {g['longitudes'][0]} .. {g['longitudes'][-1]}")
    compare_decoded(out, by_key, "ensemble (GRIB 1 and 2, 16 and 24 bits)")

code, out, err = grib_tool("threads", "2", *files)
check(code == 0 and out["identical"], f"decoding on 2 threads gives the serial result bit for bit ({err})")

# ------------------------------------------------------ scanning directions
SCANS = {
    "south to north": {"jScansPositively": 1},
    "east to west": {"iScansNegatively": 1},
    "column by column, south to north": {"jScansPositively": 1, "jPointsAreConsecutive": 1},
}
for label, scan in SCANS.items():
    area = dict(AREA)
    if scan.get("jScansPositively"):
        area["latitudeOfFirstGridPointInDegrees"], area["latitudeOfLastGridPointInDegrees"] = 20.0, 80.0
    if scan.get("iScansNegatively"):
        area["longitudeOfFirstGridPointInDegrees"], area["longitudeOfLastGridPointInDegrees"] = 40.0, 330.0
    spec = {"edition": 2, "param": 156, "member": 0, "date": 20240105, "time": 0, "step": (24, 1, None),
            "lead": 24, "bits": 24, "area": area, "scan": scan}
    path = os.path.join(tmp, "scan_" + label.replace(" ", "_").replace(",", "") + ".grib")
    data, written = message(spec)
    write(path, [data])
    code, out, err = grib_tool("decode", path)
    check(code == 0, f"{label}: indexed (exit {code}) {err}")
    if out:
        g = out["grid"]
        lat_dir = g["latitudes"][-1] > g["latitudes"][0]
        lon_dir = g["longitudes"][-1] > g["longitudes"][0]
        check(lat_dir == bool(scan.get("jScansPositively")) and lon_dir == (not scan.get("iScansNegatively")),
              f"{label}: the index reports rows and columns in storage order "
              f"(lat {g['latitudes'][0]}..{g['latitudes'][-1]}, lon {g['longitudes'][0]}..{g['longitudes'][-1]})")
        compare_decoded(out, {(path, 0): (spec, written)}, label)

# ------------------------------------------------------ regular Gaussian, GRIB 1
h = ec.codes_grib_new_from_samples("regular_gg_pl_grib1")
ec.codes_set(h, "paramId", 129)
ec.codes_set(h, "level", 500)
ec.codes_set(h, "bitsPerValue", 16)
gg_written = field(ec.codes_get(h, "Ni") * ec.codes_get(h, "Nj"), 5600.0, 129)
ec.codes_set_values(h, gg_written)
gg_path = os.path.join(tmp, "gaussian.grib1")
write(gg_path, [ec.codes_get_message(h)])
ec.codes_release(h)
code, out, err = grib_tool("decode", gg_path)
check(code == 0, f"regular Gaussian (GRIB 1, N32): indexed (exit {code}) {err}")
if out:
    g = out["grid"]
    ref = reference(gg_path, 0)
    ref_lats = ref["lats"].reshape(g["nj"], g["ni"])[:, 0]
    check(g["type"] == "regular_gg" and np.max(np.abs(np.array(g["latitudes"]) - ref_lats)) < 1e-9,
          "regular Gaussian: latitudes (ecCodes' distinctLatitudes, north to south) equal the geo-iterator's rows")
    compare_decoded(out, {(gg_path, 0): ({"bits": 16}, gg_written)}, "regular Gaussian")

# ------------------------------------------------------------- bad input
def refused(label, paths, *words, args=()):
    code, _, err = grib_tool("index", *args, *paths)
    named = all(w.lower() in err.lower() for w in words)
    check(code == 3 and named and os.path.basename(paths[-1]) in err,
          f"{label}: refused (exit {code}) naming the file and {words}: {err}")


def one(path, spec=None, sample=None, setter=None):
    if sample:
        h = ec.codes_grib_new_from_samples(sample)
        (setter or (lambda h: None))(h)
        write(path, [ec.codes_get_message(h)])
        ec.codes_release(h)
    else:
        write(path, [message(spec)[0]])
    return path


base = {"edition": 2, "param": 129, "member": 0, "date": 20240101, "time": 0, "step": (0, 1, None), "lead": 0,
        "bits": 16}


def as_z500(h):
    ec.codes_set(h, "paramId", 129)
    ec.codes_set(h, "level", 500)


refused("reduced Gaussian", [one(os.path.join(tmp, "reduced.grib"), sample="reduced_gg_pl_grib2", setter=as_z500)],
        "reduced_gg", "interpolate to a regular grid")
whole = blobs[0][0]
trunc = os.path.join(tmp, "truncated.grib")
write(trunc, [whole, whole[: len(whole) // 2]])
refused("truncated file", [trunc], "truncated or damaged", f"from {len(whole)}")
dup = os.path.join(tmp, "duplicate.grib")
write(dup, [message(base)[0]])
refused("duplicate message across files", [files[0], files[1], dup], "duplicates", "member 0", "lead 0 h")
refused("temperature only", [one(os.path.join(tmp, "temperature.grib"), dict(base, param=130))],
        "no geopotential", "t (paramId 130)")
refused("no 500 hPa level", [one(os.path.join(tmp, "z850.grib"), dict(base, level=850))], "500 hPa", "850")
other = dict(AREA, Ni=8, longitudeOfLastGridPointInDegrees=5.0)
refused("mixed grids", [files[0], one(os.path.join(tmp, "other_grid.grib"), dict(base, area=other))],
        "differs from", "one grid")
code, _, err = grib_tool("index", os.path.join(tmp, "absent.grib"))
check(code == 2 and "no such file" in err, f"a missing file is an input error (exit {code}): {err}")
finish()
