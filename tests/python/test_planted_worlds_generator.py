"""The planted worlds of isohypse-demo-world (--regimes 3/4/5, --noise-only,
--size tiny, --step), read back with netCDF4-python and checked with numpy.

Checks:
  - --size tiny, seed 8, with 3, 4 and 5 regimes: truth.json records N, the
    labels are 0..N-1 on November-March days and -1 otherwise, the planted
    chain's stationary distribution (numpy's eigenvector of the transposed
    matrix for eigenvalue 1) equals truth.json's and the labels' frequencies
    match it within 4 standard errors (the standard error of a share of
    Markov-dependent days inflated by (1 + rho) / (1 - rho), rho = (p_ii - pi_i)
    / (1 - pi_i) the lag-1 autocorrelation of the regime's indicator: the
    AR(1) variance inflation, common practice for a persistent series); the maximum-likelihood self-transitions (Anderson & Goodman 1957,
    "Statistical inference about Markov chains", Ann. Math. Statist. 28,
    89-110) match the planted diagonal within 0.06;
  - the planted patterns are in the data: the nearest planted pattern of each
    cold-season anomaly matches the label on >= 70 % of days; N = 3 plants
    the first three of the four regimes with their shapes; N = 5 plants the
    four and a fifth whose pattern correlation with each of them is within
    -0.6..0.6 and whose peak is within the four's range (in the N = 4 world)
    +- 10 m; no two patterns of any world correlate beyond +-0.7 and every
    peak is 120-200 m (three zero-mean patterns are necessarily more
    anticorrelated and one of them weaker: peaks 134-167 m);
  - the noise-only world has no regime in its truth (n_regimes 0, every label
    -1, no pattern variable) and is the N = 4 world without its regimes: the
    difference of the two reanalyses equals the planted pattern of the day's
    label on cold-season days (same climatology, same red noise);
  - the default is today's world: --regimes 4 given or not gives identical
    files, and --size small at seed 8 gives the same data (sha256 of the z
    values of two reanalysis years and of labels.csv) as the generator before
    these options (values recorded from that generator on 2026-12-02), and
    the same forecasts, reforecasts, analysis and member tables as the
    generator before the no-skill system (recorded from commit 079445d).
"""
import datetime
import hashlib
import json
import os
import shutil
import subprocess
import sys

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import netCDF4  # noqa: E402
import numpy as np  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch  # noqa: E402

GEN = os.path.join(os.environ.get("ISOHYPSE_BUILD_DIR", ""), "isohypse-demo-world")
SEED = "8"
# Recorded from the generator before --regimes existed (commit ae83a00, --size small --seed 8).
TODAY_SHA256 = {
    "reanalysis/hgt500_2013.nc:z": "f4158ea7fd0652c2f297a1bc00575a067ac5efe92e585dd92d046352a7c34528",
    "reanalysis/hgt500_2020.nc:z": "9603c37b3caa3c17223348a417a72056ccee56b1353e4122619e791db52cd8af",
    "truth/labels.csv": "f14aaffde96980467c59dc8cb3609296bc71ab1f74f94f9924600ba772972ffa",
}
# Recorded from the generator before the no-skill system existed (commit 079445d, --size small --seed 8): the
# skilful system's runs, the analysis and the member tables must not move when another system is added.
BEFORE_NOSKILL_SHA256 = {
    "forecasts/fc_20251201.nc:gh": "f9a873a597172c2018a712a5aef66501b0b92f5de9ad55d02cc51f90c9f61c33",
    "forecasts/fc_20251220.nc:gh": "5f721687294fe05ce5cf137709cb39c3094a04661434cf208c9b0297f99143bf",
    "reforecasts/rf_20150101.nc:gh": "c505301cd85069d50843d7bb06220679fe858791c7b8ae9a24f6e9cb265431a9",
    "reforecasts/rf_20201229.nc:gh": "3b13a347d5d45512d868fe4f3bf4ccb6c0708bd43426588e97574e11078d788e",
    "analysis/hgt_levels_2025-2026.nc:hgt": "2c0f7d4df7a1d322058e6a2dd2c62c73281a92849395e68ffb9493a031e6316e",
    "truth/forecast_members.csv": "f012bdcd314b8fc56e857710b16ab21a2cb76917fc7d1ac721186ce24d85084f",
    "truth/reforecast_members.csv": "dde825a478ec5808459887c25b945a80518c9582ee0453c348dee234718aefd6",
}


def generate(folder, *flags):
    r = subprocess.run([GEN, "--out", folder, "--seed", SEED, "--jobs", "2", *flags], capture_output=True, text=True)
    check(r.returncode == 0,
          f"isohypse-demo-world {' '.join(flags)} exits 0" + (f": {r.stderr[-300:]}" if r.returncode else ""))
    if r.returncode:
        finish()
    with open(os.path.join(folder, "truth", "truth.json")) as f:
        return json.load(f)


def read_labels(folder):
    dates, lab = [], []
    with open(os.path.join(folder, "truth", "labels.csv")) as f:
        next(f)
        for line in f:
            d, r = line.strip().split(",")
            dates.append(d)
            lab.append(int(r))
    return dates, np.array(lab)


def read_reanalysis(folder):
    """Heights (m) of every reanalysis file, sector ascending latitude, and their dates."""
    hs, dates = [], []
    for name in sorted(os.listdir(os.path.join(folder, "reanalysis"))):
        with netCDF4.Dataset(os.path.join(folder, "reanalysis", name)) as ds:
            z = np.ma.filled(ds["z"][:].astype(float), np.nan) / 9.80665
            lat = np.asarray(ds["latitude"][:])
            t = ds["time"]
            for d in netCDF4.num2date(t[:], t.units, calendar=t.calendar):
                dates.append(f"{d.year:04d}-{d.month:02d}-{d.day:02d}")
            order = np.argsort(lat)
            hs.append(z[:, order, :])
            lat = lat[order]
            lon = np.asarray(ds["longitude"][:])
    return np.concatenate(hs), dates, lat, lon


def read_patterns(folder):
    with netCDF4.Dataset(os.path.join(folder, "truth", "patterns.nc")) as ds:
        return np.asarray(ds["pattern"][:]) if "pattern" in ds.variables else None


def stationary(m):
    w, v = np.linalg.eig(np.asarray(m).T)
    p = np.real(v[:, np.argmin(np.abs(w - 1))])
    return p / p.sum()


def anomalies(h, dates):
    """Departures from a per-point fit of mean, trend and 3 annual harmonics (as in test_demo_world.py)."""
    n = len(dates)
    x = h.reshape(n, -1)
    x = np.where(np.isnan(x), np.nanmean(x, axis=0), x)
    t = np.array([(datetime.date.fromisoformat(d) - datetime.date(2000, 1, 1)).days for d in dates], float)
    w = 2 * np.pi * t / 365.2425
    a = np.column_stack([np.ones(n), t / 3652.4] + [f(k * w) for k in (1, 2, 3) for f in (np.cos, np.sin)])
    coef, *_ = np.linalg.lstsq(a, x, rcond=None)
    return x - a @ coef


def check_chain(name, n, truth, dates, lab):
    months = np.array([int(d[5:7]) for d in dates])
    cold = (months >= 11) | (months <= 3)
    check(truth["n_regimes"] == n and truth["world"]["n_regimes"] == n and len(truth["world"]["regimes"]) == n,
          f"{name}: truth.json records {n} regimes")
    check(np.all(lab[cold] >= 0) and np.all(lab[cold] < n) and np.all(lab[~cold] == -1),
          f"{name}: labels 0..{n - 1} on Nov-Mar days, -1 otherwise")
    m = np.array(truth["world"]["markov"]["matrix"])
    pi = stationary(m)
    check(m.shape == (n, n) and np.allclose(m.sum(axis=1), 1)
          and np.allclose(pi, truth["world"]["stationary"], atol=1e-9),
          f"{name}: numpy's stationary distribution {np.round(pi, 3)} equals truth.json's")
    seq = lab[cold]
    freq = np.array([np.mean(seq == r) for r in range(n)])
    rho = (np.diag(m) - pi) / (1 - pi)  # lag-1 autocorrelation of the regime's indicator
    se = np.sqrt(pi * (1 - pi) / len(seq) * (1 + rho) / (1 - rho))
    check(np.all(np.abs(freq - pi) < 4 * se), f"{name}: label frequencies {np.round(freq, 3)} match the stationary "
          f"{np.round(pi, 3)} within 4 standard errors {np.round(4 * se, 3)} ({len(seq)} days)")
    counts = np.zeros((n, n))
    for i in range(1, len(lab)):
        if lab[i - 1] >= 0 and lab[i] >= 0:
            counts[lab[i - 1], lab[i]] += 1
    est = np.diag(counts) / counts.sum(axis=1)
    check(np.all(np.abs(est - np.diag(m)) < 0.06),
          f"{name}: self-transitions {np.round(est, 3)} match the planted {np.diag(m)} within 0.06")


def check_patterns_in_data(name, folder, dates, lab):
    h, rdates, lat, lon = read_reanalysis(folder)
    pat = read_patterns(folder)
    lab_by_date = dict(zip(dates, lab))
    rl = np.array([lab_by_date[d] for d in rdates])
    cold = rl >= 0
    a = anomalies(h, rdates)[cold]
    a = a - a.mean(axis=1, keepdims=True)
    p = pat.reshape(len(pat), -1)
    p = p - p.mean(axis=1, keepdims=True)
    corr = (a @ p.T) / np.linalg.norm(a, axis=1)[:, None] / np.linalg.norm(p, axis=1)[None, :]
    hit = np.mean(np.argmax(corr, axis=1) == rl[cold])
    check(hit >= 0.7, f"{name}: the nearest planted pattern matches the label on {100 * hit:.1f} % of "
          f"{cold.sum()} cold-season days (>= 70 %)")
    return h, rdates


def main():
    root = scratch()
    try:
        worlds = {}
        for n in (3, 4, 5):
            folder = os.path.join(root, f"n{n}")
            truth = generate(folder, "--size", "tiny", "--regimes", str(n))
            dates, lab = read_labels(folder)
            check_chain(f"N={n}", n, truth, dates, lab)
            h, rdates = check_patterns_in_data(f"N={n}", folder, dates, lab)
            worlds[n] = (folder, truth, dates, lab, h, rdates)
        check_shapes(worlds)
        check_noise_only(root, worlds[4])
        check_default(root)
    finally:
        shutil.rmtree(root, ignore_errors=True)
    finish()


def pattern_stats(folder, n):
    """Cos-latitude-weighted pattern correlations (n x n) and peaks (m) of truth/patterns.nc."""
    pat = read_patterns(folder)
    lat = np.linspace(20, 80, pat.shape[1])
    w = np.repeat(np.cos(np.deg2rad(lat)), pat.shape[2])
    p = pat.reshape(n, -1)
    c = (p * w) @ p.T / np.sqrt(np.outer(np.sum(w * p * p, 1), np.sum(w * p * p, 1)))
    return c, np.abs(p).max(axis=1)


def check_shapes(worlds):
    r3 = worlds[3][1]["world"]["regimes"]
    r4 = worlds[4][1]["world"]["regimes"]
    r5 = worlds[5][1]["world"]["regimes"]
    check([r["centres"] for r in r3] == [r["centres"] for r in r4[:3]],
          "N=3 plants the first three of the four regimes: " + "; ".join(r["name"] for r in r3))
    check([r["centres"] for r in r5[:4]] == [r["centres"] for r in r4],
          "N=5 plants the four and a fifth: " + r5[4]["name"])
    stats = {n: pattern_stats(worlds[n][0], n) for n in (3, 4, 5)}
    for n, (c, peaks) in stats.items():
        off = c[~np.eye(n, dtype=bool)]
        check(np.all(np.abs(off) < 0.7) and np.all((peaks > 120) & (peaks < 200)),
              f"N={n}: distinct patterns (pattern correlations {off.min():.2f}..{off.max():.2f}, within +-0.7), "
              f"peaks {np.round(peaks)} m within 120-200 m")
    c5, p5 = stats[5]
    p4 = stats[4][1]
    check(np.all(np.abs(c5[4, :4]) < 0.6) and p4.min() - 10 <= p5[4] <= p4.max() + 10,
          f"N=5: the fifth pattern correlates {np.round(c5[4, :4], 2)} with the four (within +-0.6); its peak "
          f"{p5[4]:.0f} m is within the four's {p4.min():.0f}-{p4.max():.0f} m +- 10 m")


def check_noise_only(root, w4):
    folder4, _, dates, lab, h4, rdates = w4
    folder = os.path.join(root, "noise")
    truth = generate(folder, "--size", "tiny", "--noise-only")
    _, lab0 = read_labels(folder)
    check(truth["n_regimes"] == 0 and truth["world"]["noise_only"] and not truth["world"]["regimes"]
          and np.all(lab0 == -1) and read_patterns(folder) is None,
          "noise only: truth.json has no regime, every label is -1, patterns.nc has no pattern")
    h0, rdates0, _, _ = read_reanalysis(folder)
    check(rdates0 == rdates, "noise only: the same reanalysis days as the N=4 world")
    pat = read_patterns(folder4).reshape(4, -1)
    lab_by_date = dict(zip(dates, lab))
    rl = np.array([lab_by_date[d] for d in rdates])
    diff = (h4 - h0).reshape(len(rdates), -1)
    cold = rl >= 0
    err = np.abs(diff[cold] - pat[rl[cold]])
    # Packing (~0.02 m) and the squash of the rare tails beyond 4,850 / 5,950 m allow small departures.
    share = np.mean(np.nanmax(err, axis=1) < 0.5)
    check(share > 0.98, f"noise only: N=4 minus noise-only heights equal the planted pattern of the day's label "
          f"within 0.5 m on {100 * share:.1f} % of cold-season days (> 98 %): same climatology and red noise")


def sha_of(folder, key):
    rel, _, var = key.partition(":")
    path = os.path.join(folder, rel)
    if not var:
        return hashlib.sha256(open(path, "rb").read()).hexdigest()
    with netCDF4.Dataset(path) as ds:
        ds.set_auto_maskandscale(False)
        return hashlib.sha256(np.ascontiguousarray(ds[var][:]).tobytes()).hexdigest()


def check_default(root):
    a, b = os.path.join(root, "default"), os.path.join(root, "explicit")
    generate(a, "--size", "small")
    generate(b, "--size", "small", "--regimes", "4")
    for key, want in TODAY_SHA256.items():
        got = sha_of(a, key)
        check(got == want, f"default world: {key} sha256 {got[:16]} equals the pre-option generator's {want[:16]}")
    for key, want in BEFORE_NOSKILL_SHA256.items():
        got = sha_of(a, key)
        check(got == want, f"default world: {key} sha256 {got[:16]} equals the generator's before the no-skill "
              f"system {want[:16]}")
    same = all(sha_of(a, k) == sha_of(b, k) for k in ("reanalysis/hgt500_2016.nc:z", "forecasts/fc_20251201.nc:gh",
                                                       "truth/labels.csv", "truth/forecast_members.csv"))
    check(same, "--regimes 4 gives the same data as the default")


if __name__ == "__main__":
    main()
