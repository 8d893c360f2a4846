#!/usr/bin/python3
"""Compares two `isohypse derive` runs of the same record (before and after a
change that should not move the result in substance): prints the
classifiability tables side by side, the chosen k, the regimes' summary rows,
the largest difference of the final centroids, patterns and labels, and the
classifiability and read times from provenance.timings_s.

Usage: bench/compare-derive-runs.py BEFORE.nc BEFORE.json AFTER.nc AFTER.json
(the model files and the --summary JSON files of the two runs).
"""
import json
import sys

import netCDF4
import numpy as np


def load(model, summary):
    with open(summary) as f:
        s = json.load(f)
    with netCDF4.Dataset(model) as ds:
        v = {name: np.array(ds[name][:]) for name in ("centroid", "pattern", "label")}
        prov = json.loads(ds.getncattr("provenance"))
    return s, v, prov["timings_s"]


def main():
    if len(sys.argv) != 5:
        sys.exit(__doc__)
    (sa, va, ta), (sb, vb, tb) = load(*sys.argv[1:3]), load(*sys.argv[3:5])
    print(" k   index before  index after  diff      level before  level after  diff      significant")
    for ra, rb in zip(sa["regime_count_table"], sb["regime_count_table"]):
        print(f"{ra['k']:2d}   {ra['classifiability']:.6f}      {rb['classifiability']:.6f}    "
              f"{rb['classifiability'] - ra['classifiability']:+.1e}  {ra['surrogate_level']:.6f}      "
              f"{rb['surrogate_level']:.6f}    {rb['surrogate_level'] - ra['surrogate_level']:+.1e}  "
              f"{ra['significant']} / {rb['significant']}")
    print(f"chosen k: {sa['k']} / {sb['k']}")
    same_rows = sa["regimes"] == sb["regimes"]
    print(f"regime rows (id, name, frequency, runs) identical: {same_rows}")
    if va["centroid"].shape == vb["centroid"].shape:
        for name in ("centroid", "pattern"):
            print(f"max |{name} difference|: {np.max(np.abs(va[name] - vb[name])):.3e}")
        print(f"labels differing: {int(np.sum(va['label'] != vb['label']))} of {va['label'].size}")
    for stage in ("read", "classifiability"):
        print(f"{stage}: {ta[stage]:.3f} s / {tb[stage]:.3f} s")
    print(f"classifiability / read: {ta['classifiability'] / ta['read']:.1f} / "
          f"{tb['classifiability'] / tb['read']:.1f}; speed-up {ta['classifiability'] / tb['classifiability']:.2f}")


if __name__ == "__main__":
    main()
