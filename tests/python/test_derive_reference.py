"""`isohypse derive` against independent references (issue 3).

1. EOFs of an invented daily record: the data preparation is redone in numpy
   from the model's own climatology coefficients (basis of
   include/isohypse/climatology.hpp), sqrt(cos lat) weights (common practice,
   METHODS.md sec. 1) and the season; numpy.linalg.svd of the centred,
   weighted anomalies (EOFs = right singular vectors, explained fraction
   s_k^2 / sum s^2: METHODS.md sec. 2) must give the model's explained
   fractions (1e-6) and EOFs up to sign (|corr| > 0.9999).
2. Real data: the 20 February 500 hPa monthly means 1958-1977 in Debian's
   libncarg-data (/usr/share/ncarg/data/cdf/hgt.nc, NCAR Command Language
   example data). The reader must return the values netCDF4-python reads
   (Unidata netCDF4-python, masked and auto-scaled read), and the library's
   EOF step (tests/tools/numerics_tool) must agree with numpy.linalg.svd.
3. Determinism: one seed gives identical labels and centroids whatever the
   thread count (project rule, ../shared/STYLE.md item 6).
1b. Labels (issue 11): every day's stored correlation is numpy's full-field,
   area-weighted uncentred correlation with its nearest centroid's pattern
   E c, labels follow the threshold, the patterns are composites without
   no-regime days, and a copy marked format version 1 keeps the EOF-space
   rule (inspect says which).
4. The model file is NetCDF-4 (HDF5 underneath: h5py opens it, netCDF4-python
   too), carries its format version and a provenance with the inputs (sizes),
   the seed and the tool version.
"""
import datetime
import json
import os
import shutil

import h5py
import netCDF4
import numpy as np

from common import BIN, TOOLS, check, finish, run, scratch, tool
from derive_data import FAST, dates_from, derive, planted_heights, write_config, write_heights

tmp = scratch()


def corr(a, b):
    return float(np.corrcoef(np.ravel(a), np.ravel(b))[0, 1])


def compare_eofs(ours, reference, what):
    """ours, reference: (n_eof, n_space); EOF signs are arbitrary (METHODS.md sec. 2)."""
    for k in range(len(ours)):
        c = abs(corr(ours[k], reference[k]))
        check(c > 0.9999, f"{what}: EOF {k + 1} equals numpy's up to sign (|corr| = {c:.8f})")


# ---------------------------------------------------------------- 1. invented record
lat = np.arange(80.0, 19.0, -10.0)          # descending, as many reanalyses store it
lon = np.arange(0.0, 360.0, 30.0)
first = datetime.date(2000, 1, 1)
n_days = 4 * 365 + 1                         # 2000-2003, with the leap day of 2000
heights = planted_heights(lat, lon, first, n_days, amplitudes=[120, 80, 50, 30, 20, 12], seed=11)
src = os.path.join(tmp, "hgt500_2000-2003.nc")
write_heights(src, heights, lat, lon, first)
N_EOF, SEED = 4, 4242
cfg = write_config(tmp, {**FAST, "eof": {"count": N_EOF, "method": "exact"}})
models = {}
for threads in (1, 2):
    out = os.path.join(tmp, f"model_t{threads}.nc")
    r = derive("--out", out, "--config", cfg, "--input", src, "--k", "2", "--seed", str(SEED),
               "--threads", str(threads))
    check(r.returncode == 0, f"derive --threads {threads} exits 0" + (f": {r.stderr.strip()[-300:]}" if r.returncode else ""))
    models[threads] = out
if r.returncode != 0:
    finish()

with netCDF4.Dataset(models[1]) as m:
    get = lambda name: np.asarray(m[name][:], dtype=np.float64)
    mlat, mlon = get("lat"), get("lon")
    coef = get("climatology_coefficient")           # (coef, lat, lon)
    eof_mean = get("eof_mean").ravel()
    eofs = get("eof").reshape(m.dimensions["eof"].size, -1)
    explained, eigen = get("explained_fraction"), get("eigenvalue")
    weight = get("weight").ravel()
    months = [int(x) for x in m.getncattr("season_months")]

check(np.allclose(mlat, np.sort(lat)) and np.allclose(mlon, lon), "model grid: latitudes ascending, longitudes as in the file")
with netCDF4.Dataset(src) as ds:                  # the float32 values derive read
    h = np.asarray(ds["hgt"][:], dtype=np.float64)[:, ::-1, :].reshape(n_days, -1)
dates = dates_from(first, n_days)
w = np.sqrt(np.cos(np.deg2rad(np.repeat(mlat, len(mlon)))))
check(np.allclose(weight, w, atol=1e-12), "stored weights are sqrt(cos lat) (60N -> 0.70710678, METHODS.md sec. 1)")

# Climatology basis (include/isohypse/climatology.hpp): 1, cos/sin(2 pi n f),
# f = (day_of_year - 1) / days_in_year, n = 1..3.
H = (coef.shape[0] - 1) // 2
f = np.array([(d.timetuple().tm_yday - 1) / (366 if d.year % 4 == 0 else 365) for d in dates])
B = np.column_stack([np.ones(n_days)] + [fn(2 * np.pi * n * f) for n in range(1, H + 1) for fn in (np.cos, np.sin)])
C = coef.reshape(coef.shape[0], -1)                # (coef, point)
lsq = np.linalg.lstsq(B, h, rcond=None)[0]
d_coef = np.abs(lsq - C).max()
check(d_coef < 1e-3, f"climatology coefficients equal numpy.linalg.lstsq's least-squares fit (max diff {d_coef:.2e} m)")

season = np.array([d.month in months for d in dates])
X = ((h - B @ C) * w)[season]                      # (day, point): weighted in-season anomalies
d_mean = np.abs(X.mean(axis=0) - eof_mean).max()
check(d_mean < 1e-3, f"eof_mean equals the time mean of the weighted in-season anomalies ({season.sum()} days, max diff {d_mean:.2e} m)")
_, s, vt = np.linalg.svd(X - eof_mean, full_matrices=False)
frac = s**2 / np.sum(s**2)
d_frac = np.abs(frac[:N_EOF] - explained).max()
print("explained fractions  model:", np.round(explained, 8), " numpy:", np.round(frac[:N_EOF], 8))
check(d_frac < 1e-6, f"explained fractions equal numpy.linalg.svd's within 1e-6 (max diff {d_frac:.2e})")
lam = s[:N_EOF] ** 2 / (season.sum() - 1)
check(np.allclose(eigen, lam, rtol=1e-5), f"eigenvalues = s^2 / (n - 1) (model {np.round(eigen, 2)}, numpy {np.round(lam, 2)})")
compare_eofs(eofs, vt[:N_EOF], "invented record")
largest = [e[np.argmax(np.abs(e))] for e in eofs]
check(all(x > 0 for x in largest), "each EOF's largest loading is positive (the sign convention of eof.hpp)")

# ---------------------------------------------------------------- 1b. labels and the no-regime rule (issue 11)
# Every day of the record: y = w x' - m over the grid (x' the anomaly from the
# stored climatology), its components on the stored EOFs, the nearest stored
# centroid, and the area-weighted uncentred correlation of y with that
# regime's pattern E c over the full field, (y . E c) / (|y| |E c|), not in
# the truncated EOF space. Composites: the mean anomaly of each regime's
# in-season days, no-regime days left out.
with netCDF4.Dataset(models[1]) as m:
    centroids = np.asarray(m["centroid"][:], dtype=np.float64)            # (regime, eof)
    stored_cor = np.asarray(m["correlation"][:], dtype=np.float64)
    stored_lab = np.asarray(m["label"][:], dtype=int)
    stored_pat = np.asarray(m["pattern"][:], dtype=np.float64).reshape(len(centroids), -1)
    threshold = float(m.getncattr("no_regime_threshold"))
    rule = m.getncattr("no_regime_correlation")
    version = int(np.ravel(m.getncattr("isohypse_format_version"))[0])
check(version == 2 and rule == "full_field_area_weighted",
      f"the model is format version 2 with no_regime_correlation = full_field_area_weighted ({version}, {rule})")
anom = h - B @ C                                   # (day, point), metres
Y = anom * w - eof_mean
pcs = Y @ eofs.T
d2 = ((pcs[:, None, :] - centroids[None, :, :]) ** 2).sum(axis=2)
nearest = d2.argmin(axis=1)
pattern = centroids[nearest] @ eofs                # E c of each day's nearest regime, on the grid
full = (Y * pattern).sum(axis=1) / (np.linalg.norm(Y, axis=1) * np.linalg.norm(pattern, axis=1))
in_eofs = (pcs * centroids[nearest]).sum(axis=1) / (np.linalg.norm(pcs, axis=1) * np.linalg.norm(centroids[nearest], axis=1))
want = np.where(full >= threshold, nearest, -1)
d_cor = np.abs(stored_cor - full).max()
check(d_cor < 1e-5, f"stored correlations are numpy's full-field area-weighted correlations (max diff {d_cor:.1e})")
gain = np.abs(in_eofs) - np.abs(full)
check(gain.min() > -1e-9 and gain.max() > 0.1, f"the truncation shows: no day's full-field correlation exceeds its "
      f"EOF-space one in size (EOF space larger by {gain.min():.3f} to {gain.max():.3f}, mean {gain.mean():.3f})")
srt = np.sort(d2, axis=1)
clear = (np.abs(full - threshold) > 1e-5) & (srt[:, 1] - srt[:, 0] > 1e-6 * srt[:, 1])
check(np.array_equal(stored_lab[clear], want[clear]) and clear.sum() >= n_days - 5,
      f"stored labels are numpy's on all {clear.sum()} clear days of {n_days} "
      f"({(want[season] < 0).mean():.1%} of in-season days no regime; EOF-space rule: {(in_eofs[season] < threshold).mean():.1%})")
check(((want[season] < 0).sum() > 0), "the invented record has no-regime days in season, so the composites below test their exclusion")
composite = np.array([anom[season & (stored_lab == j)].mean(axis=0) for j in range(len(centroids))])
d_pat = np.abs(composite - stored_pat).max()
check(d_pat < 1e-3, f"patterns are the composites of each regime's in-season days without no-regime days (max diff {d_pat:.1e} m)")
with_none = np.array([anom[season & (nearest == j)].mean(axis=0) for j in range(len(centroids))])
check(np.abs(with_none - stored_pat).max() > 1e-2, "and differ from composites that would keep the no-regime days")

# A copy marked format version 1 keeps the EOF-space rule, and inspect says so.
v1 = os.path.join(tmp, "model_v1.nc")
shutil.copy(models[1], v1)
with netCDF4.Dataset(v1, "a") as m:
    m.setncattr("isohypse_format_version", np.int32(1))
    m.delncattr("no_regime_correlation")
r1, r2, rt = run([BIN, "inspect", "--json", v1]), run([BIN, "inspect", "--json", models[1]]), run([BIN, "inspect", v1])
ok = r1.returncode == 0 and r2.returncode == 0
check(ok and json.loads(r1.stdout).get("no_regime_correlation") == "eof_space"
      and json.loads(r2.stdout).get("no_regime_correlation") == "full_field_area_weighted",
      f"inspect --json shows the rule: eof_space for the version 1 copy, full_field_area_weighted for the model")
check(rt.returncode == 0 and "in EOF space, the rule of format version 1 models" in rt.stdout,
      "inspect's text says a version 1 model keeps the EOF-space rule")

# ---------------------------------------------------------------- 3. determinism
def content(path):
    with netCDF4.Dataset(path) as m:
        return {v: np.asarray(m[v][:]) for v in ("label", "centroid", "pattern", "eof", "correlation")}, m.getncattr("regime_count_table")


(a, table_a), (b, table_b) = content(models[1]), content(models[2])
for v in a:
    check(np.array_equal(a[v], b[v]), f"seed {SEED}: '{v}' identical with --threads 1 and --threads 2")
check(table_a == table_b, f"seed {SEED}: classifiability table identical with 1 and 2 threads ({table_a})")

# ---------------------------------------------------------------- 4. the file
with h5py.File(models[1], "r") as f5:             # NetCDF-4 is HDF5 underneath
    check(all(v in f5 for v in ("eof", "centroid", "pattern", "label", "transition")),
          "h5py opens the model and finds its variables")
    check(f5["eof"].shape == (N_EOF, len(lat), len(lon)), f"eof dataset is (eof, lat, lon) = {f5['eof'].shape}")
with netCDF4.Dataset(models[1]) as m:
    check(m.data_model == "NETCDF4", f"netCDF4-python opens it as {m.data_model}")
    version = int(np.ravel(m.getncattr("isohypse_format_version"))[0])
    check(version >= 1, f"isohypse_format_version = {version}")
    prov = json.loads(m.getncattr("provenance"))
    config = json.loads(m.getncattr("config"))
tool_version = run([BIN, "--version"]).stdout.split()[-1]
check(prov.get("version") == tool_version, f"provenance names the tool version ({prov.get('version')} vs --version {tool_version})")
check(prov.get("seed") == SEED and config.get("seed") == SEED, f"provenance and config hold the seed ({prov.get('seed')})")
inputs = prov.get("inputs", [])
check(len(inputs) == 1 and inputs[0].get("path") == os.path.abspath(src)
      and inputs[0].get("bytes") == os.path.getsize(src),
      f"provenance lists the input with its size ({inputs})")

# ---------------------------------------------------------------- 5. a point with missing days
# Its climatology is the least-squares fit over its valid days alone (numpy.linalg.lstsq);
# the other points keep the fit over every day.
holed = heights.copy()
pi, pj = 2, 5                                     # file row 2 (60N), column 5 (150E)
holed[100:140, pi, pj] = np.nan
holed[700:705, pi, pj] = np.nan
src_holed = os.path.join(tmp, "hgt500_holed.nc")
write_heights(src_holed, holed, lat, lon, first, fill_value=-9999.0)
out_holed = os.path.join(tmp, "model_holed.nc")
r = derive("--out", out_holed, "--config", cfg, "--input", src_holed, "--k", "2", "--seed", str(SEED))
check(r.returncode == 0 and "missing values" in r.stdout + r.stderr,
      "derive accepts a record with 45 missing days at one point and says so" + (f": {r.stderr.strip()[-300:]}" if r.returncode else ""))
if r.returncode == 0:
    with netCDF4.Dataset(out_holed) as m:
        C2 = np.asarray(m["climatology_coefficient"][:], dtype=np.float64).reshape(coef.shape[0], -1)
    with netCDF4.Dataset(src_holed) as ds:
        h2 = np.ma.filled(ds["hgt"][:].astype(np.float64), np.nan)[:, ::-1, :].reshape(n_days, -1)
    p = (len(lat) - 1 - pi) * len(lon) + pj          # the model's point index (latitudes ascending)
    ok = np.isfinite(h2[:, p])
    want = np.linalg.lstsq(B[ok], h2[ok, p], rcond=None)[0]
    d_hole = np.abs(C2[:, p] - want).max()
    check(ok.sum() == n_days - 45 and d_hole < 1e-3,
          f"the holed point's coefficients equal lstsq over its {ok.sum()} valid days (max diff {d_hole:.2e} m)")
    others = np.delete(np.arange(h2.shape[1]), p)
    d_rest = np.abs(C2[:, others] - np.linalg.lstsq(B, h2[:, others], rcond=None)[0]).max()
    check(d_rest < 1e-3, f"the other points' coefficients are the full fit (max diff {d_rest:.2e} m)")

# ---------------------------------------------------------------- 2. real data
HGT = "/usr/share/ncarg/data/cdf/hgt.nc"
if not os.path.exists(HGT):
    check(False, f"{HGT} is missing: install Debian's libncarg-data")
    finish()
with netCDF4.Dataset(HGT) as ds:
    z = np.ma.filled(ds["HGT"][:].astype(np.float64), np.nan)      # masked at _FillValue -999
    rlat, rlon = np.asarray(ds["lat"][:], float), np.asarray(ds["lon"][:], float)
    months_since = np.asarray(ds["time"][:])                        # "months since 1958-1-1"
keep = np.where(rlat >= 20 - 1e-6)[0]
keep = keep[np.argsort(rlat[keep])]
z = z[:, keep, :]
glat = rlat[keep]

# The reader: "months since" taken as calendar months (METHODS.md sec. 1).
got = tool("read_tool", "--domain", "20,90,0,360", HGT)
expect_dates = [f"{1958 + int(n) // 12:04d}-{int(n) % 12 + 1:02d}-01" for n in months_since]
check(got["dates"] == expect_dates, f"read_tool dates: months since 1958-01-01 as calendar months ({got['dates'][:3]}...)")
check(np.allclose(got["lat"], glat) and np.allclose(got["lon"], rlon), f"read_tool grid: {len(got['lat'])} x {len(got['lon'])}, lat ascending")
vals = np.array([np.nan if x is None else x for x in got["values"]], dtype=np.float64).reshape(z.shape)
check(np.array_equal(np.isnan(vals), np.isnan(z)), f"read_tool: missing values where netCDF4 masks them ({int(np.isnan(z).sum())})")
d_read = np.nanmax(np.abs(vals - z))
check(d_read < 1e-3, f"read_tool values equal netCDF4-python's within 1e-3 m (max diff {d_read:.2e})")

feb = np.array([int(n) % 12 == 1 for n in months_since])
Z = z[feb].reshape(feb.sum(), -1)
check(feb.sum() == 20 and not np.isnan(Z).any(), f"{feb.sum()} complete February fields over 20N-90N")
wr = np.sqrt(np.clip(np.cos(np.deg2rad(np.repeat(glat, len(rlon)))), 0, None))
A = (Z - Z.mean(axis=0)) * wr                     # (time, point)
xfile = os.path.join(tmp, "february.f64")
np.ascontiguousarray(A.T).tofile(xfile)           # numerics_tool wants n_space x n_time
NR = 5
res = tool("numerics_tool", "eof", f"{xfile}@{A.shape[1]}x{A.shape[0]}", "--method", "exact", "--count", str(NR))
_, s, vt = np.linalg.svd(A, full_matrices=False)
frac = s**2 / np.sum(s**2)
print("hgt.nc February explained  isohypse:", np.round(res["explained"], 8), " numpy:", np.round(frac[:NR], 8))
d_frac = np.abs(np.array(res["explained"]) - frac[:NR]).max()
check(d_frac < 1e-6, f"hgt.nc Februaries: explained fractions equal numpy.linalg.svd's within 1e-6 (max diff {d_frac:.2e})")
compare_eofs(np.array(res["eofs"]).T, vt[:NR], "hgt.nc Februaries")
finish()
