"""`isohypse derive` finds the regimes planted in the small demo world (issue 3).

The demo world (isohypse-demo-world --size small) plants four regime patterns
over 20-80N, 170E-40W and writes the truth: truth/patterns.nc and the daily
regime of every cold-season day (truth/labels.csv). Derive, with k = 4 and
with k chosen automatically, must
  - match every planted pattern one-to-one (Hungarian assignment,
    scipy.optimize.linear_sum_assignment) by a model pattern with a centred,
    cos(lat)-weighted pattern correlation >= 0.9 (centred pattern correlation
    as in Taylor 2001, J. Geophys. Res. 106, 7183-7192, "Summarizing multiple
    aspects of model performance in a single diagram");
  - label >= 85 % of the in-season days as the truth does, after the best
    one-to-one relabelling (again linear_sum_assignment, on the contingency
    table; a day the model calls "no regime" counts as a disagreement);
  - with k: auto, choose k = 4.
The thresholds are the issue's."""
import csv
import hashlib
import json
import os
import time

import cftime
import netCDF4
import numpy as np
from scipy.optimize import linear_sum_assignment

from common import BIN, BUILD, check, finish, run, scratch
from derive_data import FAST, derive, write_config

tmp = scratch()
world = os.path.join(tmp, "world")
t0 = time.time()
r = run([os.path.join(BUILD, "isohypse-demo-world"), "--out", world, "--size", "small"])
check(r.returncode == 0, f"isohypse-demo-world --size small exits 0 in {time.time() - t0:.1f} s" + (f": {r.stderr.strip()[-300:]}" if r.returncode else ""))
if r.returncode != 0:
    finish()

with netCDF4.Dataset(os.path.join(world, "truth", "patterns.nc")) as ds:
    truth_pat = np.asarray(ds["pattern"][:], float)       # (regime, latitude, longitude)
    tlat = np.asarray(ds["latitude"][:], float)
    tlon = np.asarray(ds["longitude"][:], float)
n_true = truth_pat.shape[0]
truth_labels = {}
with open(os.path.join(world, "truth", "labels.csv")) as f:
    for row in csv.DictReader(f):
        truth_labels[row["date"]] = int(row["regime"])


def pattern_correlation(a, b, coslat):
    """Centred correlation over the grid, each point weighted by cos(lat)."""
    w = np.broadcast_to(coslat[:, None], a.shape).ravel()
    a, b = a.ravel() - np.average(a.ravel(), weights=w), b.ravel() - np.average(b.ravel(), weights=w)
    return float(np.sum(w * a * b) / np.sqrt(np.sum(w * a * a) * np.sum(w * b * b)))


def evaluate(model_path, what):
    with netCDF4.Dataset(model_path) as m:
        pat = np.asarray(m["pattern"][:], float)
        mlat, mlon = np.asarray(m["lat"][:], float), np.asarray(m["lon"][:], float)
        labels = np.asarray(m["label"][:], int)
        in_season = np.asarray(m["in_season"][:], int)
        tv = m["time"]
        dates = [d.strftime("%Y-%m-%d") for d in cftime.num2date(tv[:], tv.units, tv.calendar)]
        table = json.loads(m.getncattr("regime_count_table"))
    k = pat.shape[0]
    print(f"{what}: k = {k}; classifiability table:")
    for row in table:
        print(f"    k={row['k']}  index {row['classifiability']:.3f}  surrogate level {row['surrogate_level']:.3f}"
              f"  significant {row['significant']}")

    # Patterns: the model's grid must be the truth's (lat ascending, lon 170..320).
    ti = np.argsort(tlat)
    same_grid = np.allclose(mlat, tlat[ti]) and np.allclose(np.mod(mlon, 360), np.mod(tlon, 360))
    check(same_grid, f"{what}: model grid {len(mlat)} x {len(mlon)} equals the truth's {len(tlat)} x {len(tlon)}")
    if not same_grid:
        return k
    truth = truth_pat[:, ti, :]
    coslat = np.cos(np.deg2rad(mlat))
    R = np.array([[pattern_correlation(truth[i], pat[j], coslat) for j in range(k)] for i in range(n_true)])
    print(f"{what}: pattern correlations (rows planted, columns model):\n{np.round(R, 3)}")
    rows, cols = linear_sum_assignment(-R)
    for i, j in zip(rows, cols):
        check(R[i, j] >= 0.9, f"{what}: planted regime {i} matched by model regime {j} with pattern correlation {R[i, j]:.3f} >= 0.9")
    if len(rows) < n_true:
        check(False, f"{what}: only {k} model regimes for {n_true} planted ones")

    # Labels on the days both call in season.
    pairs = [(truth_labels[d], lab) for d, lab, s in zip(dates, labels, in_season) if s and truth_labels.get(d, -1) >= 0]
    t_lab = np.array([p[0] for p in pairs])
    m_lab = np.array([p[1] for p in pairs])
    table_c = np.zeros((n_true, k), int)
    for a, b in pairs:
        if b >= 0:
            table_c[a, b] += 1
    lr, lc = linear_sum_assignment(-table_c)
    agree = table_c[lr, lc].sum() / len(pairs)
    by_pattern = np.mean([m_lab[n] == dict(zip(rows, cols)).get(t_lab[n], -2) for n in range(len(pairs))])
    print(f"{what}: {len(pairs)} in-season days; contingency (rows planted, columns model):\n{table_c}")
    print(f"{what}: no-regime days {np.mean(m_lab < 0):.3f}; agreement with the pattern matching {by_pattern:.3f}")
    check(agree >= 0.85, f"{what}: in-season labels agree with truth/labels.csv on {100 * agree:.1f} % of days (>= 85 %)")
    return k


cfg = write_config(tmp, FAST)
inputs = os.path.join(world, "reanalysis", "hgt500_*.nc")
for k_arg in ("4", "auto"):
    out = os.path.join(tmp, f"model_k{k_arg}.nc")
    t0 = time.time()
    r = derive("--out", out, "--config", cfg, "--input", inputs, "--domain", "20,80,170,-40", "--k", k_arg)
    check(r.returncode == 0, f"derive --k {k_arg} exits 0 in {time.time() - t0:.1f} s" + (f": {r.stderr.strip()[-300:]}" if r.returncode else ""))
    if r.returncode != 0:
        continue
    k = evaluate(out, f"--k {k_arg}")
    if k_arg == "auto":
        check(k == n_true, f"k: auto chooses {k} regimes; {n_true} were planted")

# inspect on a regime model describes it; its SHA-256 equals Python's hashlib
# (FIPS 180-4, the Secure Hash Standard), the identity guidance provenance cites.
model = os.path.join(tmp, "model_k4.nc")
if os.path.exists(model):
    r = run([BIN, "inspect", model])
    check(r.returncode == 0 and "isohypse regime model, format version 2" in r.stdout and "R4" in r.stdout,
          "inspect describes a regime model: format, regimes")
    r = run([BIN, "inspect", "--json", model])
    j = json.loads(r.stdout) if r.returncode == 0 else {}
    with open(model, "rb") as f:
        digest = hashlib.sha256(f.read()).hexdigest()
    check(j.get("kind") == "regime model" and j.get("k") == 4 and j.get("sha256") == digest,
          f"inspect --json: kind, k = {j.get('k')} and the SHA-256 equal hashlib's ({digest[:12]}...)")
finish()
