#!/usr/bin/python3
"""How a regime model's labels agree with a planted demo world's truth
(issue 11, the no-regime rule; results in bench/README.md, "no-regime rule
(issue 11)").

  no_regime_agreement.py --truth WORLD/truth MODEL.nc [MODEL.nc ...]

For each model (derived from WORLD/reanalysis), over the in-season days of
its record that have a planted label (truth/labels.csv, 0..N-1):
  - no regime: the share of those days the model labels "no regime";
  - agreement: the share whose label is the planted regime, after matching
    each planted regime to one model regime by the cos(lat)-weighted centred
    pattern correlation of the planted pattern (truth/patterns.nc) with the
    model's pattern (the assignment of largest total correlation,
    scipy.optimize.linear_sum_assignment); no-regime days never agree;
  - labelled right: of the days the model gives a regime, the share whose
    regime is the planted one (what flagging the no-regime days buys);
  - ARI: the adjusted Rand index (Hubert & Arabie 1985, "Comparing
    partitions", J. Classification 2, 193-218; sklearn.metrics) of the
    model's labels, no regime as a class of its own, with the planted ones.
Prints one row per model: rule, threshold, k, days, no regime, agreement,
labelled right, ARI.
"""
import argparse
import csv

import netCDF4
import numpy as np
from scipy.optimize import linear_sum_assignment
from sklearn.metrics import adjusted_rand_score


def planted_labels(truth):
    with open(f"{truth}/labels.csv") as f:
        return {row["date"]: int(row["regime"]) for row in csv.DictReader(f)}


def planted_patterns(truth):
    with netCDF4.Dataset(f"{truth}/patterns.nc") as ds:
        return (np.asarray(ds["latitude"][:], float), np.asarray(ds["longitude"][:], float),
                np.asarray(ds["pattern"][:], float))


def pattern_correlation(a, b, coslat):
    a, b = a - np.average(a, weights=coslat), b - np.average(b, weights=coslat)
    return np.sum(coslat * a * b) / np.sqrt(np.sum(coslat * a * a) * np.sum(coslat * b * b))


def model_record(path):
    with netCDF4.Dataset(path) as ds:
        version = int(np.ravel(ds.getncattr("isohypse_format_version"))[0])
        rule = ds.getncattr("no_regime_correlation") if version >= 2 else "eof_space (version 1)"
        t = ds["time"]
        dates = [d.strftime("%Y-%m-%d") for d in netCDF4.num2date(t[:], t.units, t.calendar)]
        return {"rule": rule, "threshold": float(ds.getncattr("no_regime_threshold")), "dates": dates,
                "labels": np.asarray(ds["label"][:], int), "in_season": np.asarray(ds["in_season"][:]) != 0,
                "lat": np.asarray(ds["lat"][:], float), "lon": np.asarray(ds["lon"][:], float),
                "patterns": np.asarray(ds["pattern"][:], float)}


def match(model, truth):
    """planted regime -> model regime, by pattern correlation on the model's points."""
    tlat, tlon, tpat = planted_patterns(truth)
    rows = [int(np.argmin(np.abs(tlat - la))) for la in model["lat"]]
    cols = [int(np.argmin(np.abs((tlon - lo + 180) % 360 - 180))) for lo in model["lon"]]
    sub = tpat[:, rows][:, :, cols]
    coslat = np.cos(np.deg2rad(model["lat"]))[:, None] * np.ones(len(model["lon"]))
    R = np.array([[pattern_correlation(p, m, coslat) for m in model["patterns"]] for p in sub])
    planted, ours = linear_sum_assignment(-R)
    return dict(zip(planted.tolist(), ours.tolist())), R


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--truth", required=True)
    ap.add_argument("models", nargs="+")
    a = ap.parse_args()
    truth = planted_labels(a.truth)
    print(f"{'model':40s} {'rule':26s} {'thr':>5s} {'k':>2s} {'days':>5s} {'no regime':>9s} {'agreement':>9s} {'labelled right':>14s} {'ARI':>6s}")
    for path in a.models:
        m = model_record(path)
        mapping, R = match(m, a.truth)
        k = len(m["patterns"])
        ours, planted = [], []
        for d, lab, ins in zip(m["dates"], m["labels"], m["in_season"]):
            p = truth.get(d, -1)
            if ins and p >= 0:
                ours.append(lab)
                planted.append(p)
        ours, planted = np.array(ours), np.array(planted)
        want = np.array([mapping.get(p, -2) for p in planted])
        share_none = float(np.mean(ours < 0))
        agree = float(np.mean(ours == want))
        right = float(np.mean((ours == want)[ours >= 0]))
        ari = adjusted_rand_score(planted, np.where(ours < 0, k, ours))
        print(f"{path[-40:]:40s} {m['rule']:26s} {m['threshold']:5.2f} {k:2d} {len(ours):5d} {share_none:9.1%} "
              f"{agree:9.1%} {right:14.1%} {ari:6.3f}   matched pattern correlations "
              f"{[round(float(R[p, q]), 2) for p, q in sorted(mapping.items())]}")


if __name__ == "__main__":
    main()
