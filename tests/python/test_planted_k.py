"""Planted worlds: does `isohypse derive --k auto` find the planted number of
regimes? (issue 11, "Checks outside the project").

Run by ctest (py.test_planted_k); by hand after a build:

    ISOHYPSE_BUILD_DIR=build /usr/bin/python3 tests/python/test_planted_k.py

For each world (isohypse-demo-world --size tiny: reanalysis 2011-2020 over the
sector 20N-80N, 170E-40W and its planted truth; seed 8) with 3, 4 and 5
planted regimes at 5 and 2.5 degrees, and a noise-only world at 5 degrees, it
runs `derive --k auto` with few runs and surrogates and prints a table: the
chosen k, the k the table marks significant, the agreement of the derived
labels with the planted ones on in-season days, as the adjusted Rand index
(Hubert and Arabie 1985, "Comparing partitions", J. Classification 2, 193-218;
scikit-learn's adjusted_rand_score) and as the share of days matched under the
best one-to-one relabelling (Hungarian assignment, Kuhn 1955; scipy's
linear_sum_assignment), with no-regime days counted as mismatches.

Assertions are what the issue asks:
  - a world with N planted regimes: the chosen k is N, and the kept partition
    (the least inertia of the final restarts) and the partition of the
    classifiability runs that agrees best with the others (Michelangeli et
    al. 1995) give the same regimes (partition similarity A >= 0.99);
  - the noise-only world: no k is significant and `--k auto` refuses (a
    non-zero exit code, no model written, a message that no regime structure
    is significant).
The whole run takes well under 2 minutes on 2 cores (timed and printed).
"""
import json
import os
import shutil
import subprocess
import sys
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import netCDF4  # noqa: E402
import numpy as np  # noqa: E402
from scipy.optimize import linear_sum_assignment  # noqa: E402
from sklearn.metrics import adjusted_rand_score  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch  # noqa: E402

BUILD = os.environ.get("ISOHYPSE_BUILD_DIR", "build")
GEN = os.path.join(BUILD, "isohypse-demo-world")
BIN = os.environ.get("ISOHYPSE_BIN", "") or os.path.join(BUILD, "isohypse")
SEED = "8"

# Few runs: the point is the rule, not the precision of the table; k from 2
# to 7 brackets every planted count. 6 values of k at 0.9 need at least 59
# surrogates (Holm's correction); 100 as the default, most k stop early.
CONFIG = {
    "domain": "20,80,170,-40",
    "months": [11, 12, 1, 2, 3],
    "climatology": {"harmonics": 3, "detrend": False},
    "eof": {"count": 0, "variance_fraction": 0.8, "max_count": 30, "method": "auto"},
    "regimes": {"k": "auto", "k_min": 2, "k_max": 7, "restarts": 20, "classifiability_runs": 10,
                "surrogates": 100, "significance": 0.9, "names": []},
    "no_regime_threshold": 0.25,
    "seed": 20261202,
    "threads": 2,
}

WORLDS = [  # (name, generator flags, planted k or None for noise only)
    ("3 regimes, 5 deg", ["--regimes", "3"], 3),
    ("4 regimes, 5 deg", ["--regimes", "4"], 4),
    ("5 regimes, 5 deg", ["--regimes", "5"], 5),
    ("3 regimes, 2.5 deg", ["--regimes", "3", "--step", "2.5"], 3),
    ("4 regimes, 2.5 deg", ["--regimes", "4", "--step", "2.5"], 4),
    ("5 regimes, 2.5 deg", ["--regimes", "5", "--step", "2.5"], 5),
    ("noise only, 5 deg", ["--noise-only"], None),
]


def run(args):
    return subprocess.run(args, capture_output=True, text=True)


def planted_labels(folder):
    labels = {}
    with open(os.path.join(folder, "truth", "labels.csv")) as f:
        next(f)
        for line in f:
            d, r = line.strip().split(",")
            labels[d] = int(r)
    return labels


def model_labels(path):
    with netCDF4.Dataset(path) as ds:
        t = ds["time"]
        dates = netCDF4.num2date(t[:], t.units, calendar=getattr(t, "calendar", "standard"))
        lab = np.asarray(ds["label"][:])
        ins = np.asarray(ds["in_season"][:]).astype(bool)
    return {f"{d.year:04d}-{d.month:02d}-{d.day:02d}": int(x) for d, x, i in zip(dates, lab, ins) if i}


def agreement(derived, planted):
    days = [d for d in derived if planted.get(d, -1) >= 0]
    a = np.array([derived[d] for d in days])
    b = np.array([planted[d] for d in days])
    ari = adjusted_rand_score(b, a)
    k = max(a.max(), b.max()) + 1
    counts = np.zeros((k, k))
    for x, y in zip(a, b):
        if x >= 0:
            counts[x, y] += 1
    rows, cols = linear_sum_assignment(-counts)
    return ari, counts[rows, cols].sum() / len(days), np.mean(a < 0), len(days)


def derive(folder, name):
    cfg = dict(CONFIG, inputs=[os.path.join(folder, "reanalysis", "hgt500_*.nc")])
    cfg_path = os.path.join(folder, "derive.json")
    with open(cfg_path, "w") as f:
        json.dump(cfg, f)
    model, summary = os.path.join(folder, "model.nc"), os.path.join(folder, "summary.json")
    t0 = time.time()
    r = run([BIN, "derive", "--config", cfg_path, "--out", model, "--summary", summary])
    return r, model, summary, time.time() - t0


def one_world(root, name, flags, planted_k):
    folder = os.path.join(root, name.replace(" ", "_").replace(",", ""))
    g = run([GEN, "--out", folder, "--size", "tiny", "--seed", SEED, "--jobs", "2", *flags])
    check(g.returncode == 0, f"{name}: isohypse-demo-world {' '.join(flags)} exits 0"
          + (f": {g.stderr[-300:]}" if g.returncode else ""))
    if g.returncode:
        return None
    r, model, summary, secs = derive(folder, name)
    row = {"name": name, "planted": planted_k, "secs": secs, "exit": r.returncode}
    if r.returncode == 0:
        with open(summary) as f:
            s = json.load(f)
        row["k"] = s["k"]
        row["significant"] = [e["k"] for e in s["regime_count_table"] if e["significant"]]
        row["table"] = s["regime_count_table"]
        row["n_eofs"] = len(s["eofs"])
        row["partition_agreement"] = s.get("partition_agreement")
        if planted_k is not None:
            row["ari"], row["match"], row["none"], row["days"] = agreement(model_labels(model), planted_labels(folder))
    else:
        errors = [line for line in r.stderr.splitlines() if "error" in line]
        row["message"] = errors[-1] if errors else r.stderr.strip()[-300:]
        row["model_left"] = os.path.exists(model)
    return row


def report(rows):
    print("\n  world                 planted  chosen  significant k     EOFs  ARI    matched  no-regime  derive s")
    for w in rows:
        if w is None:
            continue
        chosen = w.get("k", f"exit {w['exit']}")
        sig = ",".join(map(str, w.get("significant", []))) or "-"
        extra = (f"{w['ari']:.3f}  {100 * w['match']:5.1f} %  {100 * w['none']:5.1f} %" if "ari" in w
                 else " " * 29)
        print(f"  {w['name']:<21} {str(w['planted'] or 'none'):>7}  {str(chosen):>6}  {sig:<16} "
              f"{str(w.get('n_eofs', '-')):>5}  {extra}  {w['secs']:6.1f}")
    for w in rows:
        if w and "table" in w:
            print(f"\n  {w['name']}: k table (k, classifiability, surrogate level, variance ratio, "
                  "surrogates, p index, p ratio, Holm level, significant)")
            for e in w["table"]:
                print(f"    {e['k']}  {e['classifiability']:.3f}  {e['surrogate_level']:.3f}  "
                      f"{e['variance_ratio']:.3f}  {e['surrogates']:3d}  {e['p_classifiability']:.3f}  "
                      f"{e['p_variance_ratio']:.3f}  {e['holm_level']:.4f}  {'yes' if e['significant'] else 'no'}")
    print()


def main():
    t0 = time.time()
    root = scratch()
    try:
        rows = [one_world(root, *w) for w in WORLDS]
        report(rows)
        for w in rows:
            if w is None:
                continue
            if w["planted"] is not None:
                check(w["exit"] == 0 and w.get("k") == w["planted"],
                      f"{w['name']}: derive --k auto chose k = {w.get('k', 'exit ' + str(w['exit']))}, "
                      f"planted {w['planted']}")
                a = w.get("partition_agreement")
                check(a is not None and a >= 0.99,
                      f"{w['name']}: the kept partition (least inertia) and the classifiability runs' most "
                      f"agreeing one give the same regimes (A = {a})")
            else:
                check(w["exit"] != 0 and not w.get("model_left", True)
                      and "significant" in w.get("message", ""),
                      f"{w['name']}: derive --k auto refuses (exit {w['exit']}; significant k: "
                      f"{w.get('significant', 'none')}; message: {w.get('message', '')[:160]!r})")
        secs = time.time() - t0
        check(secs < 120, f"all {len(WORLDS)} worlds generated and derived in {secs:.0f} s (< 120 s)")
    finally:
        shutil.rmtree(root, ignore_errors=True)
    finish()


if __name__ == "__main__":
    main()
