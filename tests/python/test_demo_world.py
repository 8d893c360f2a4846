"""The demo world generator (isohypse-demo-world --size small), read back with
netCDF4-python and cftime (the independent readers).

Checks:
  - conventions as promised per file kind: formats, packing attributes
    (CF 1.8 sect. 8.1: value = packed * scale_factor + add_offset, _FillValue
    in packed units), descending / ascending latitudes, longitude ranges,
    calendars (CF sect. 4.4; noleap model days), levels, dimensions;
  - planted realities of the reanalysis: the missing days and fill values
    listed in truth.json are exactly the file's;
  - heights within 4,700-6,100 m (common practice: 500 hPa heights lie near
    4.7-6.0 km) and falling poleward;
  - truth/patterns.nc equals the Gaussian centres of truth.json rebuilt here;
  - the planted labels: the nearest planted pattern (pattern correlation) of
    each cold-season day's sector anomaly matches truth/labels.csv on most
    days, EOF + k-means (numpy SVD, scikit-learn KMeans) recovers them up to
    a relabelling, and the labels' self-transition frequencies match the
    planted Markov matrix (maximum-likelihood estimate, Anderson & Goodman
    1957, Ann. Math. Statist. 28, 89-110);
  - forecasts and reforecasts at lead 0 equal the truth (analysis, resp.
    reanalysis) and diverge with lead, their planted regimes agreeing less
    with the truth as the lead grows, and their mean error at long leads
    resembling the planted drift pattern;
  - the same seed gives byte-identical data values (and --jobs 1 vs 2 do).
"""
import csv
import datetime
import filecmp
import glob
import itertools
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

# One thread each for numpy/scikit-learn (and the generator's BLAS): the test
# machine is shared, and oversubscribed threads only spin.
os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import cftime  # noqa: E402
import netCDF4  # noqa: E402
import numpy as np  # noqa: E402
from sklearn.cluster import KMeans  # noqa: E402

GEN = os.path.join(os.environ.get("ISOHYPSE_BUILD_DIR", ""), "isohypse-demo-world")
G0 = 9.80665  # standard gravity (WMO), m s-2
SEED = "8"
failures = []


def check(cond, what):
    print(("ok   " if cond else "FAIL ") + what, flush=True)
    if not cond:
        failures.append(what)


def generate(folder, jobs):
    t0 = time.time()
    r = subprocess.run([GEN, "--out", folder, "--size", "small", "--seed", SEED, "--jobs", str(jobs)],
                       capture_output=True, text=True)
    check(r.returncode == 0, f"isohypse-demo-world --size small --jobs {jobs} exits 0 in {time.time() - t0:.1f} s"
          + (f": {r.stderr[-400:]}" if r.returncode else ""))
    if r.returncode:
        sys.exit(1)
    print(r.stdout)


def iso(d):
    return f"{d.year:04d}-{d.month:02d}-{d.day:02d}"


def sector_lon_index(lon):
    """Indices of longitudes 170..320 (degrees east, any representative), in eastward order."""
    east = np.mod(lon, 360.0)
    idx = np.where((east >= 170 - 1e-6) & (east <= 320 + 1e-6))[0]
    return idx[np.argsort(east[idx])]


def gaussian_pattern(centres, lat, lon):
    """truth.json's shape: sum of amplitude * exp(-0.5 (d / radius)^2), d great-circle degrees."""
    la, lo = np.meshgrid(np.deg2rad(lat), np.deg2rad(lon), indexing="ij")
    out = np.zeros(la.shape)
    for c in centres:
        cl, cn = np.deg2rad(c["lat"]), np.deg2rad(c["lon"])
        cosd = np.sin(la) * np.sin(cl) + np.cos(la) * np.cos(cl) * np.cos(lo - cn)
        d = np.rad2deg(np.arccos(np.clip(cosd, -1, 1)))
        out += c["amplitude_m"] * np.exp(-0.5 * (d / c["radius_deg"]) ** 2)
    return out


def read_labels(path):
    with open(path) as f:
        return {row["date"]: int(row["regime"]) for row in csv.DictReader(f)}


def main():
    if not os.path.exists(GEN):
        print(f"FAIL generator not built: {GEN}")
        sys.exit(1)
    tmp = tempfile.mkdtemp(prefix="isohypse-demo-test-")
    try:
        w1, w2 = os.path.join(tmp, "a"), os.path.join(tmp, "b")
        generate(w1, 1)
        generate(w2, 2)
        with open(os.path.join(w1, "truth", "truth.json")) as f:
            truth = json.load(f)
        labels = read_labels(os.path.join(w1, "truth", "labels.csv"))
        check_files_listed(w1, truth)
        rean = check_reanalysis(w1, truth)
        check_grib_copies(w1, truth)
        ana = check_analysis(w1)
        patterns = check_patterns(w1, truth, rean)
        check_labels(rean, patterns, labels, truth)
        check_model_runs(w1, truth, labels, rean, ana, patterns)
        check_identical(w1, w2)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"{len(failures)} failed" if failures else "all checks passed")
    sys.exit(1 if failures else 0)


def check_files_listed(world, truth):
    listed = set()
    for key in ("reanalysis", "reanalysis_grib", "analysis", "forecasts", "forecasts_steps", "forecasts_grib",
                "reforecasts", "reforecasts_grib", "forecasts_noskill", "reforecasts_noskill"):
        listed |= set(truth[key]["files"])
    listed |= set(truth["truth_files"])
    found = {os.path.relpath(p, world) for p in glob.glob(os.path.join(world, "*", "*"))}
    check(listed == found, f"truth.json lists exactly the {len(found)} files written")
    check(len(truth["reanalysis"]["files"]) == 8 and len(truth["forecasts"]["files"]) == 20,
          "small: 8 reanalysis years, 20 forecast initialisations")
    grib = [os.path.basename(f).replace(".grib2", ".nc") for f in truth["forecasts_grib"]["files"]]
    steps = [os.path.basename(f) for f in truth["forecasts_steps"]["files"]]
    check(sorted(grib) == sorted(steps), "the GRIB 2 set holds the lead layout's 4 initialisations")
    check(len(steps) == 4 and set(steps) <= {os.path.basename(f) for f in truth["forecasts"]["files"]},
          f"the lead layout holds 4 of the forecasts' initialisations again ({', '.join(steps)})")


def grib_messages(path, *keys):
    """Every message of a GRIB file as eccodes (Debian's python3-eccodes) decodes it: its keys, its values
    (NaN where the bitmap says missing) and half its packing step, 2^E / 10^D / 2 (WMO FM 92 simple packing)."""
    import eccodes as ec
    out = []
    with open(path, "rb") as f:
        while (h := ec.codes_grib_new_from_file(f)) is not None:
            v = ec.codes_get_values(h).astype(float)
            if ec.codes_get(h, "bitmapPresent"):
                v[v == ec.codes_get(h, "missingValue")] = np.nan
            half = 2.0 ** ec.codes_get(h, "binaryScaleFactor") / 10.0 ** ec.codes_get(h, "decimalScaleFactor") / 2
            out.append(({k: ec.codes_get(h, k) for k in keys}, v.reshape(ec.codes_get(h, "Nj"), -1), half))
            ec.codes_release(h)
    return out


def check_grib_copies(world, truth):
    """reanalysis_grib/ holds reanalysis/'s values (within the packing step, the fill values missing);
    reforecasts_grib/ holds, one file per day of the year, the reforecasts of every year initialised within the
    stated window of days of the GRIB forecasts' initialisations, with their values."""
    worst, same_days, same_mask = 0.0, True, True
    for path in sorted(glob.glob(os.path.join(world, "reanalysis", "hgt500_*.nc"))):
        with netCDF4.Dataset(path) as ds:
            z = np.ma.filled(ds["z"][:].astype(float), np.nan)
            t = ds["time"]
            days = [iso(d) for d in cftime.num2date(t[:], t.units, t.calendar)]
        msgs = grib_messages(path.replace("reanalysis", "reanalysis_grib").replace(".nc", ".grib2"), "dataDate",
                             "shortName", "level")
        got = [str(m[0]["dataDate"]) for m in msgs]
        same_days &= got == [d.replace("-", "") for d in days] and all(m[0]["shortName"] == "z" for m in msgs)
        for (keys, v, half), ref in zip(msgs, z):
            same_mask &= np.array_equal(np.isnan(v), np.isnan(ref))
            worst = max(worst, np.nanmax(np.abs(v - ref)) / half)
    check(same_days and same_mask and worst <= 1.0 + 1e-6,
          f"reanalysis_grib/: the NetCDF years' days, fill values as bitmap missing points, values within half the "
          f"packing step (worst {worst:.3f} of it)")
    window = truth["reforecasts_grib"]["window_days"]
    inits = [datetime.date(int(b[3:7]), int(b[7:9]), int(b[9:11]))
             for b in (os.path.basename(f) for f in truth["forecasts_grib"]["files"])]
    near = lambda d: any(abs((datetime.date(i.year, d.month, d.day) - i).days) <= window for i in inits)
    expected = sorted(os.path.basename(f) for f in truth["reforecasts"]["files"]
                      if near(datetime.date(int(f[-11:-7]), int(f[-7:-5]), int(f[-5:-3]))))
    found, worst = [], 0.0
    for path in truth["reforecasts_grib"]["files"]:
        msgs = grib_messages(os.path.join(world, path), "dataDate", "perturbationNumber", "forecastTime")
        found += sorted({f"rf_{m[0]['dataDate']}.nc" for m in msgs})
        first = msgs[0][0]
        with netCDF4.Dataset(os.path.join(world, "reforecasts", f"rf_{first['dataDate']}.nc")) as ds:
            gh = np.asarray(ds["gh"][:], float)  # (number, time, latitude ascending, longitude), metres
        for keys, v, half in msgs:
            if keys["dataDate"] == first["dataDate"]:
                ref = gh[keys["perturbationNumber"], keys["forecastTime"] // 24][::-1]
                worst = max(worst, np.abs(v - ref).max() / half)
    check(sorted(found) == expected and len(expected) > 0,
          f"reforecasts_grib/ holds the {len(expected)} reforecasts within {window} days of the year of the GRIB "
          f"forecasts ({len(found)} found)")
    check(worst <= 1.0 + 1e-6, f"reforecasts_grib/: each file's first year equals its NetCDF reforecast within half "
          f"the packing step (worst {worst:.3f} of it)")


def check_reanalysis(world, truth):
    """Set A: conventions, packing, realities; returns the sector heights and dates."""
    files = sorted(glob.glob(os.path.join(world, "reanalysis", "hgt500_*.nc")))
    heights, dates, ok = [], [], True
    holes = {(h["date"], h["lat"], h["lon"]) for h in truth["reanalysis"]["fill_values"]}
    missing = set(truth["reanalysis"]["missing_days"])
    n_masked, holes_found, covered = 0, set(), True
    for path in files:
        with netCDF4.Dataset(path) as ds:
            z, lat, lon, t = ds["z"], ds["latitude"][:], ds["longitude"][:], ds["time"]
            ok &= ds.data_model == "NETCDF4_CLASSIC"
            ok &= z.dtype == np.int16 and z.dimensions == ("time", "latitude", "longitude")
            ok &= all(a in z.ncattrs() for a in ("scale_factor", "add_offset", "_FillValue"))
            ok &= int(z.getncattr("_FillValue")) == -32767
            ok &= z.standard_name == "geopotential" and z.units == "m**2 s**-2" and "long_name" in z.ncattrs()
            ok &= np.allclose(lat, np.arange(90, -0.1, -5.0)) and np.allclose(lon, np.arange(-180, 180, 5.0))
            ok &= t.units == "hours since 1900-01-01 00:00:00.0" and t.calendar == "gregorian"
            days = cftime.num2date(t[:], t.units, t.calendar)
            ok &= all(d.hour == 0 for d in days) and np.all(np.diff(t[:]) % 24 == 0)
            year = days[0].year
            expected = [cftime.DatetimeGregorian(year, 1, 1) + datetime.timedelta(days=i)
                        for i in range(366 if year % 4 == 0 else 365)]
            expected = [d for d in expected if iso(d) not in missing]
            ok &= [iso(d) for d in days] == [iso(d) for d in expected]
            # Packing covers the range: packed values span nearly all of int16.
            ds.set_auto_maskandscale(False)
            raw = z[:]
            valid = raw[raw != -32767]
            covered &= valid.min() <= -32000 and valid.max() >= 32000
            ds.set_auto_maskandscale(True)
            zz = z[:]
            n_masked += int(np.ma.count_masked(zz))
            for i, j, k in zip(*np.nonzero(np.ma.getmaskarray(zz))):
                holes_found.add((iso(days[i]), float(lat[j]), float(lon[k])))
            la = (lat >= 20) & (lat <= 80)
            heights.append(np.ma.filled(zz[:, la, :][:, :, sector_lon_index(lon)] / G0, np.nan))
            dates += [iso(d) for d in days]
            sector_lat = np.asarray(lat[la])
    check(ok, f"reanalysis: {len(files)} files NetCDF-4 classic, z int16 (time, latitude, longitude) with "
              "scale_factor/add_offset/_FillValue -32767, latitude 90..0 descending, longitude -180..175, "
              "hours since 1900-01-01 gregorian, one 00 UTC step per day except the planted gap")
    check(covered, "reanalysis: scale_factor/add_offset chosen so packed values span -32000..32000 at least")
    check(len(missing) == 3 and not missing & set(dates), f"reanalysis: the 3 missing days {sorted(missing)} are absent")
    check(holes_found == holes and n_masked == len(holes),
          f"reanalysis: {n_masked} values are _FillValue, exactly the {len(holes)} listed in truth.json")
    h = np.concatenate(heights)
    lo, hi = np.nanmin(h), np.nanmax(h)
    check(4700 <= lo and hi <= 6100, f"reanalysis sector heights {lo:.0f}..{hi:.0f} m within 4700..6100 m")
    zonal = np.nanmean(h, axis=(0, 2))
    order = np.argsort(sector_lat)
    check(np.all(np.diff(zonal[order]) < 0),
          "reanalysis: mean sector height falls poleward " + " ".join(f"{v:.0f}" for v in zonal[order]))
    return {"h": h, "dates": dates, "lat": sector_lat, "lon": np.mod(lon[sector_lon_index(lon)], 360.0)}


def check_analysis(world):
    """Set B: levels, orientation, calendar; returns {date: 500 hPa field} with its axes."""
    with netCDF4.Dataset(os.path.join(world, "analysis", "hgt_levels_2025-2026.nc")) as ds:
        hgt, t = ds["hgt"], ds["time"]
        lat, lon, lev = ds["lat"][:], ds["lon"][:], ds["level"][:]
        ok = ds.data_model == "NETCDF3_64BIT_OFFSET" and hgt.dtype == np.float32
        ok &= hgt.dimensions == ("time", "level", "lat", "lon") and hgt.units == "m"
        ok &= hgt.standard_name == "geopotential_height" and ds["level"].units == "hPa"
        ok &= list(lev) == [850, 500, 250]
        ok &= np.allclose(lat, np.arange(-90, 90.1, 5.0)) and np.allclose(lon, np.arange(0, 360, 5.0))
        ok &= t.units == "days since 2025-01-01" and t.calendar == "standard"
        days = [iso(d) for d in cftime.num2date(t[:], t.units, t.calendar)]
        ok &= days[0] == "2025-12-01" and days[-1] == "2026-03-31" and len(days) == 121
        v = np.asarray(hgt[:])
    check(ok, "analysis: 64-bit offset, float hgt (time, level, lat, lon) in m at 850/500/250 hPa, "
              "lat -90..90 ascending, lon 0..355, days since 2025-01-01 standard, 2025-12-01..2026-03-31")
    check(np.all(v[:, 0] < v[:, 1]) and np.all(v[:, 1] < v[:, 2]), "analysis: heights rise from 850 to 500 to 250 hPa")
    nh = (lat >= 20) & (lat <= 80)
    h5 = v[:, 1][:, nh]
    check(4700 <= h5.min() and h5.max() <= 6100, f"analysis 500 hPa heights 20-80N {h5.min():.0f}..{h5.max():.0f} m")
    return {"h500": dict(zip(days, v[:, 1])), "lat": np.asarray(lat), "lon": np.asarray(lon)}


def check_patterns(world, truth, rean):
    with netCDF4.Dataset(os.path.join(world, "truth", "patterns.nc")) as ds:
        lat, lon = np.asarray(ds["latitude"][:]), np.asarray(ds["longitude"][:])
        pat, drift = np.asarray(ds["pattern"][:], float), np.asarray(ds["drift"][:], float)
    ok = np.allclose(lat, np.arange(20, 80.1, 5)) and np.allclose(lon, np.arange(170, 320.1, 5))
    check(ok, "patterns.nc on grid A's sector: latitude 20..80, longitude 170..320")
    shapes = np.array([gaussian_pattern(r["centres"], lat, lon) for r in truth["world"]["regimes"]])
    pi = np.array(truth["world"]["stationary"])
    markov = np.array(truth["world"]["markov"]["matrix"])
    check(np.allclose(pi @ markov, pi) and abs(pi.sum() - 1) < 1e-12,
          f"truth.json stationary distribution {np.round(pi, 3)} is stationary for the Markov matrix")
    rebuilt = shapes - np.tensordot(pi, shapes, axes=1)
    err = max(np.abs(rebuilt - pat).max(), np.abs(gaussian_pattern(truth["world"]["drift"]["centres"], lat, lon) - drift).max())
    check(err < 1e-3, f"patterns.nc equals the truth.json centres rebuilt here, minus their stationary mean "
                      f"(max difference {err:.1e} m)")
    amps = np.abs(pat).max(axis=(1, 2))
    check(np.all((amps >= 120) & (amps <= 200)), f"regime amplitudes {np.round(amps)} m within 120..200 m")
    # Distinct: no two alike (anomalies about a common mean lean negative, about -1/3 on average).
    c = np.corrcoef(pat.reshape(4, -1))[np.triu_indices(4, 1)]
    check(c.max() < 0.3 and c.min() > -0.7, f"planted patterns distinct: correlations {np.round(c, 2)} "
          "within -0.7..0.3")
    # Same point order as the reanalysis sector (its latitudes descend).
    order = [int(np.argmin(np.abs(lat - x))) for x in rean["lat"]]
    return {"flat": pat[:, order, :].reshape(4, -1), "grid": pat, "drift": drift, "lat": lat, "lon": lon}


def anomalies(rean):
    """Sector anomalies: departures from a per-point fit of mean, trend and 3 annual harmonics."""
    n = len(rean["dates"])
    x = rean["h"].reshape(n, -1)
    x = np.where(np.isnan(x), np.nanmean(x, axis=0), x)
    t = np.array([(datetime.date.fromisoformat(d) - datetime.date(2000, 1, 1)).days for d in rean["dates"]], float)
    w = 2 * np.pi * t / 365.2425
    a = np.column_stack([np.ones(n), t / 3652.4] + [f(k * w) for k in (1, 2, 3) for f in (np.cos, np.sin)])
    coef, *_ = np.linalg.lstsq(a, x, rcond=None)
    return x - a @ coef


def check_labels(rean, patterns, labels, truth):
    truth_lab = np.array([labels[d] for d in rean["dates"]])
    cold = truth_lab >= 0
    months = np.array([int(d[5:7]) for d in rean["dates"]])
    check(np.array_equal(cold, (months >= 11) | (months <= 3)), "labels.csv: a regime on Nov-Mar days, -1 otherwise")
    anom = anomalies(rean)[cold]
    lab = truth_lab[cold]
    a = anom - anom.mean(axis=1, keepdims=True)
    p = patterns["flat"] - patterns["flat"].mean(axis=1, keepdims=True)
    corr = (a @ p.T) / np.linalg.norm(a, axis=1)[:, None] / np.linalg.norm(p, axis=1)[None, :]
    nearest = np.mean(np.argmax(corr, axis=1) == lab)
    check(nearest >= 0.7, f"nearest planted pattern matches labels.csv on {100 * nearest:.1f} % of "
                          f"{len(lab)} cold-season days (>= 70 %)")
    # EOF + k-means, as isohypse does it: sqrt(cos lat) weights, 10 EOFs, k = 4.
    wts = np.sqrt(np.cos(np.deg2rad(np.repeat(rean["lat"], len(rean["lon"])))))
    y = anom * wts
    y -= y.mean(axis=0)
    _, _, vt = np.linalg.svd(y, full_matrices=False)
    km = KMeans(n_clusters=4, n_init=10, random_state=0).fit(y @ vt[:10].T)
    match = max(np.mean(np.array(perm)[km.labels_] == lab) for perm in itertools.permutations(range(4)))
    check(0.8 <= match < 0.99, f"EOF + k-means recovers the planted labels on {100 * match:.1f} % of days "
                               "(best relabelling; recoverable, not trivially: 80..99 %)")
    # Persistence: maximum-likelihood self-transitions over consecutive cold-season days.
    days = [datetime.date.fromisoformat(d) for d in sorted(labels)]
    seq = [labels[iso(d)] for d in days]
    counts = np.zeros((4, 4))
    for i in range(1, len(days)):
        if seq[i - 1] >= 0 and seq[i] >= 0 and (days[i] - days[i - 1]).days == 1:
            counts[seq[i - 1], seq[i]] += 1
    est = np.diag(counts) / counts.sum(axis=1)
    planted = np.diag(np.array(truth["world"]["markov"]["matrix"]))
    check(np.all(np.abs(est - planted) < 0.06), f"labels' self-transition frequencies {np.round(est, 3)} "
                                                f"match the planted {planted} within 0.06")


def read_run(path):
    with netCDF4.Dataset(path) as ds:
        gh, t, ref = ds["gh"], ds["time"], ds["forecast_reference_time"]
        init = path[-11:-3]
        units = f"days since {init[:4]}-{init[4:6]}-{init[6:]} 00:00:00"
        ok = ds.data_model == "NETCDF4" and gh.dtype == np.float32 and gh.filters().get("zlib", False)
        ok &= gh.dimensions == ("number", "time", "latitude", "longitude") and gh.units == "m"
        ok &= gh.standard_name == "geopotential_height"
        ok &= t.units == units and t.calendar == "noleap" and np.array_equal(t[:], np.arange(46))
        ok &= ref.standard_name == "forecast_reference_time" and ref.units == units and ref.dimensions == ()
        ok &= float(ref[...]) == 0.0 and ref.calendar == "noleap"
        ok &= np.array_equal(ds["number"][:], np.arange(gh.shape[0]))
        ok &= np.allclose(ds["latitude"][:], np.arange(16, 84.1, 2)) and np.allclose(ds["longitude"][:], np.arange(164, 326.1, 2))
        valid = [iso(d) for d in cftime.num2date(t[:], t.units, t.calendar)]
        return ok, np.asarray(gh[:]), valid


def check_model_runs(world, truth, labels, rean, ana, patterns):
    fc_rows, rf_rows = {}, {}
    for name, rows in (("forecast_members.csv", fc_rows), ("reforecast_members.csv", rf_rows)):
        with open(os.path.join(world, "truth", name)) as f:
            for r in csv.DictReader(f):
                rows.setdefault(r["init_date"], []).append(r)
    flat, flon = np.arange(16, 84.1, 2), np.arange(164, 326.1, 2)
    # Points common to the forecast grid and the 5-degree analysis: 20..80N, 170..320E every 10 degrees.
    clat, clon = np.arange(20, 81, 10), np.arange(170, 321, 10)
    fi = np.ix_([int(np.where(flat == x)[0][0]) for x in clat], [int(np.where(flon == x)[0][0]) for x in clon])
    ai = np.ix_([int(np.where(ana["lat"] == x)[0][0]) for x in clat], [int(np.where(ana["lon"] == x)[0][0]) for x in clon])

    conventions, calendar_ok, lead0, rms, agree, mean_err, ranges = True, True, [], np.zeros(46), np.zeros(46), 0, []
    n = 0
    for path in sorted(glob.glob(os.path.join(world, "forecasts", "fc_*.nc"))):
        ok, gh, valid = read_run(path)
        conventions &= ok and gh.shape == (4, 46, 35, 82)
        ranges.append((gh[:, :, 2:33].min(), gh[:, :, 2:33].max()))
        rows = fc_rows[valid[0]]
        calendar_ok &= [r["valid_date"] for r in rows[:46]] == valid
        truth_f = np.array([ana["h500"][v][ai] for v in valid])
        for m in range(gh.shape[0]):
            diff = gh[m][(slice(None),) + fi] - truth_f
            lead0.append(np.abs(diff[0]).max())
            rms += np.sqrt((diff ** 2).mean(axis=(1, 2)))
            agree += [int(r["regime"]) == labels[r["valid_date"]] for r in rows[46 * m:46 * m + 46]]
            n += 1
    rms, agree = rms / n, agree / n
    check(conventions, f"forecasts: {len(fc_rows)} files NetCDF-4 deflated, float gh (number, time, latitude, longitude) "
                       "4 x 46 x 35 x 82, time 0..45 days since the init, noleap, forecast_reference_time 0")
    check(calendar_ok, "forecast_members.csv valid dates equal the files' noleap valid times")
    lo, hi = min(r[0] for r in ranges), max(r[1] for r in ranges)
    check(4700 <= lo and hi <= 6100, f"forecast heights 20-80N {lo:.0f}..{hi:.0f} m within 4700..6100 m")
    check(max(lead0) <= 0.3, f"every forecast member at lead 0 equals the analysis within 0.3 m (max {max(lead0):.3f} m)")
    # Noise memory 5 days and divergence after ~10 days (truth.json): growth, then saturation.
    check(rms[1] < rms[3] < rms[5] < rms[10] and rms[30:].mean() > 60 and rms[30:].mean() > 0.9 * rms[15],
          f"forecast RMS difference from the truth grows with lead and saturates: " +
          " ".join(f"{rms[l]:.1f}" for l in (0, 1, 3, 5, 10, 15)) + f" m at leads 0 1 3 5 10 15, "
          f"{rms[30:].mean():.1f} m at 30-45")
    check(agree[0] == 1 and agree[1:6].mean() > agree[10:21].mean() > agree[30:].mean() and agree[30:].mean() < 0.55,
          f"planted member regimes agree with the truth on {agree[0]:.2f} of members at lead 0, "
          f"{agree[1:6].mean():.2f} at 1-5, {agree[10:21].mean():.2f} at 10-20, {agree[30:].mean():.2f} at 30-45")
    # Reforecasts: start from the reanalysis of their year; noleap across leap years.
    rf_files = sorted(glob.glob(os.path.join(world, "reforecasts", "rf_*.nc")))
    season = [datetime.date(2025, 12, 1) + datetime.timedelta(days=i) for i in range(62)]
    monthday = {(d.month, d.day) for d in season if d.weekday() in (0, 3)}
    inits = [datetime.date(int(p[-11:-7]), int(p[-7:-5]), int(p[-5:-3])) for p in rf_files]
    check(sorted(inits) == sorted(datetime.date(y, m, d) for y in range(2015, 2021) for m, d in monthday),
          f"reforecasts: {len(inits)} inits, the Mondays and Thursdays of Dec 2025-Jan 2026 in 2015..2020")
    rlat, rlon = rean["lat"], rean["lon"]
    ri = np.ix_([int(np.where(rlat == x)[0][0]) for x in clat], [int(np.where(rlon == x)[0][0]) for x in clon])
    rindex = {d: i for i, d in enumerate(rean["dates"])}
    conventions, lead0, leap_checked = True, [], 0
    err, count = np.zeros((46, len(clat), len(clon))), np.zeros(46)
    late_by_year = {}  # year -> [sum of late-lead errors, count]
    pi_ = [int(np.where(patterns["lat"] == x)[0][0]) for x in clat]
    pk_ = [int(np.where(patterns["lon"] == x)[0][0]) for x in clon]
    anomaly = patterns["grid"][:, pi_][:, :, pk_]  # planted anomaly patterns at the common points
    for path, init in zip(rf_files, inits):
        ok, gh, valid = read_run(path)
        conventions &= ok and gh.shape[:2] == (3, 46)
        expected = cftime.DatetimeNoLeap(init.year, init.month, init.day) + datetime.timedelta(days=45)
        conventions &= valid[45] == iso(expected) and [r["valid_date"] for r in rf_rows[iso(init)][:46]] == valid
        if init.year % 4 == 0 and init.month == 1 and init.day >= 15:
            # Across 29 February: the model's day 45 is one real day later.
            leap_checked += (datetime.date.fromisoformat(valid[45]) - init).days == 46
        rows = rf_rows[iso(init)]
        for lead, v in enumerate(valid):
            if v in rindex and not np.isnan(rean["h"][rindex[v]][ri]).any():
                diff = gh[:, lead][(slice(None),) + fi] - rean["h"][rindex[v]][ri]
                if lead == 0:
                    lead0.append(np.abs(diff).max())
                # Without the planted regimes (truth's and each member's), what
                # remains is the drift plus noise.
                member_regime = [int(rows[46 * m + lead]["regime"]) for m in range(gh.shape[0])]
                if labels[v] >= 0 and min(member_regime) >= 0:
                    e = (diff - anomaly[member_regime] + anomaly[labels[v]]).mean(axis=0)
                    err[lead] += e
                    count[lead] += 1
                    if lead >= 30:
                        acc = late_by_year.setdefault(init.year, [0.0, 0])
                        acc[0], acc[1] = acc[0] + e, acc[1] + 1
    check(conventions, "reforecasts: same conventions as the forecasts, 3 members, noleap valid dates as in "
                       "reforecast_members.csv")
    check(leap_checked >= 2, f"reforecasts across 29 Feb of a leap year skip it (noleap): {leap_checked} inits checked")
    check(len(lead0) > 50 and max(lead0) <= 0.35,
          f"reforecast members at lead 0 equal the reanalysis of their year within 0.35 m on {len(lead0)} inits "
          f"(max {max(lead0):.3f} m)")
    # Drift: the mean error against the reanalysis, planted regimes removed,
    # regressed on the planted drift pattern D, follows 1 - exp(-lead / efold)
    # (truth.json).
    err /= count[:, None, None]
    d = patterns["drift"][np.ix_([int(np.where(patterns["lat"] == x)[0][0]) for x in clat],
                                 [int(np.where(patterns["lon"] == x)[0][0]) for x in clon])].ravel()
    efold = truth["world"]["drift"]["efold_days"]
    slope = np.array([e.ravel() @ d / (d @ d) for e in err])
    planted = 1 - np.exp(-np.arange(46) / efold)
    late_corr = np.corrcoef(err[30:].mean(axis=0).ravel(), d)[0, 1]
    # Sampling error of the late-lead slope from its spread over the 6 years
    # (the truth's own noise does not average out within a winter).
    yearly = np.array([(acc[0] / acc[1]).ravel() @ d / (d @ d) for acc in late_by_year.values()])
    se = yearly.std(ddof=1) / np.sqrt(len(yearly))
    check(abs(slope[0]) < 0.02 and slope[0] < slope[5] < slope[10] < slope[30:].mean(),
          f"reforecast mean error, planted regimes removed, projected on the drift pattern grows with lead: "
          f"{slope[0]:.2f} {slope[5]:.2f} {slope[10]:.2f} {slope[20]:.2f} {slope[30:].mean():.2f} at leads 0, 5, "
          f"10, 20, 30-45 (planted {planted[0]:.2f} {planted[5]:.2f} {planted[10]:.2f} {planted[20]:.2f} "
          f"{planted[30:].mean():.2f})")
    check(se < 0.2 and abs(yearly.mean() - planted[30:].mean()) < 3 * se and late_corr > 0.7,
          f"late-lead drift {yearly.mean():.2f} +- {se:.2f} (standard error over {len(yearly)} years) matches "
          f"the planted {planted[30:].mean():.2f} within 3 standard errors; pattern correlation {late_corr:.2f} > 0.7")


def check_identical(w1, w2):
    """Same seed, --jobs 1 and 2: every data variable equal byte for byte, truth tables equal."""
    files = sorted(os.path.relpath(p, w1) for p in glob.glob(os.path.join(w1, "*", "*.nc")))
    differ = []
    for rel in files:
        if filecmp.cmp(os.path.join(w1, rel), os.path.join(w2, rel), shallow=False):
            continue  # identical files hold identical data; otherwise compare the values
        with netCDF4.Dataset(os.path.join(w1, rel)) as a, netCDF4.Dataset(os.path.join(w2, rel)) as b:
            a.set_auto_maskandscale(False)
            b.set_auto_maskandscale(False)
            for name, var in a.variables.items():
                if np.asarray(var[...]).tobytes() != np.asarray(b[name][...]).tobytes():
                    differ.append(f"{rel}:{name}")
    check(not differ, f"same seed gives byte-identical data in all {len(files)} netCDF files (--jobs 1 vs 2)"
          + (f"; differ: {differ[:5]}" if differ else ""))
    same = all(open(os.path.join(w1, "truth", f), "rb").read() == open(os.path.join(w2, "truth", f), "rb").read()
               for f in ("labels.csv", "forecast_members.csv", "reforecast_members.csv", "forecast_members_noskill.csv",
                         "reforecast_members_noskill.csv", "truth.json"))
    check(same, "same seed gives identical truth tables and truth.json")


if __name__ == "__main__":
    main()
