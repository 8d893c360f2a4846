#!/usr/bin/python3
"""`isohypse classify` from GRIB forecasts, written plainly with python3-eccodes
and numpy as a user's notebook would (issue 14; bench/run-grib-bench.sh times
it): every message read with codes_grib_new_from_file, its keys with
codes_get, its values with codes_get_values; the model's points picked from
each field; then the very steps of the NetCDF reference, imported from
bench/classify_reference.py (anomalies, projection, nearest centroid with the
no-regime rule, lagged-ensemble probabilities), so the science is the same.

  classify_grib_reference.py run --model M.nc --forecasts 'DIR/fc_*.grib2' --out ref.npz
  classify_grib_reference.py compare --guidance-grib G.json --guidance-netcdf N.json --ref ref.npz \\
      --time-grib G.time --time-netcdf N.time --time-ref R.time

What the reader takes (what the benchmark's files hold): one file per
initialisation; geopotential (z, divided by g0 = 9.80665) or geopotential
height (gh) at 500 hPa on a regular latitude-longitude grid scanned
eastward, of which the model's points are nodes; one message per member
(`number`, the control 0) and lead (`step`, hours, one a day from 0). GRIB
dates are proleptic Gregorian.

`compare` sets isohypse's guidance from the GRIB files (written with
--members) against this reference (the member labels and the daily
probabilities must agree, as in the NetCDF benchmark) and against isohypse's
guidance from the NetCDF files (16-bit packing may move a member across a
regime boundary: each valid date's probabilities must agree within one
member's weight there), and prints the table of the three timed runs.
"""
import argparse
import glob
import json
import os
import resource
import sys
import time

import cftime
import eccodes as ec
import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import classify_reference as ref  # noqa: E402  (the NetCDF reference: the same steps)
from gnu_time import gnu_time  # noqa: E402


def grid_pick(h, model, path):
    """Indices (rows, columns) of the model's points in the message's grid."""
    ni, nj = ec.codes_get(h, "Ni"), ec.codes_get(h, "Nj")
    if ec.codes_get(h, "gridType") != "regular_ll" or ec.codes_get(h, "iScansNegatively") != 0:
        raise ValueError(f"{path}: expected a regular latitude-longitude grid scanned eastward")
    lats = np.linspace(ec.codes_get(h, "latitudeOfFirstGridPointInDegrees"),
                       ec.codes_get(h, "latitudeOfLastGridPointInDegrees"), nj)
    lon0, lon1 = (ec.codes_get(h, "longitudeOfFirstGridPointInDegrees"),
                  ec.codes_get(h, "longitudeOfLastGridPointInDegrees"))
    lons = np.linspace(lon0, lon1 if lon1 > lon0 else lon1 + 360.0, ni)
    rows = ref.point_index(lats, model.lat, path)
    cols = ref.point_index(lons, model.lon, path, periodic=True)
    return nj, ni, np.ix_(rows, cols)


def read_grib_forecast(path, model):
    """One initialisation's GRIB file -> (init as cftime, heights (members,
    leads, points) on the model's points, metres), as classify_reference's
    read_forecast returns it for a NetCDF file."""
    fields, init, pick = {}, None, None
    with open(path, "rb") as f:
        while True:
            h = ec.codes_grib_new_from_file(f)
            if h is None:
                break
            try:
                name = ec.codes_get(h, "shortName")
                if name not in ("z", "gh") or ec.codes_get(h, "typeOfLevel") != "isobaricInhPa" \
                        or ec.codes_get(h, "level") != 500:
                    continue
                this = (ec.codes_get(h, "dataDate"), ec.codes_get(h, "dataTime"))
                if init is None:
                    init, (nj, ni, pick) = this, grid_pick(h, model, path)
                elif this != init:
                    raise ValueError(f"{path}: initialisations {init} and {this} in one file")
                z = ec.codes_get_values(h).reshape(nj, ni)[pick].ravel()
                fields[(ec.codes_get(h, "number"), ec.codes_get(h, "step"))] = z / ref.G0 if name == "z" else z
            finally:
                ec.codes_release(h)
    if init is None:
        raise ValueError(f"{path}: no height message at 500 hPa")
    members = sorted({m for m, _ in fields})
    steps = sorted({s for _, s in fields})
    if steps != [24 * d for d in range(len(steps))] or len(fields) != len(members) * len(steps):
        raise ValueError(f"{path}: expected every member at one step a day from the initialisation")
    heights = np.stack([np.stack([fields[(m, s)] for s in steps]) for m in members])
    date, hhmm = init
    start = cftime.datetime(date // 10000, date // 100 % 100, date % 100, hhmm // 100, hhmm % 100,
                            calendar="proleptic_gregorian")
    return start, heights


def daily(g):
    return {d["valid_date"]: (d["members"], d["probabilities"]) for d in g["daily"]}


def grib_against_netcdf(g_grib, g_netcdf):
    """(largest daily probability difference, dates that differ at all,
    dates beyond one member's weight (1 / members, equal weights)), or None
    when the valid dates differ."""
    a, b = daily(g_grib), daily(g_netcdf)
    if sorted(a) != sorted(b):
        return None
    worst, moved, beyond = 0.0, 0, 0
    for date, (members, p) in a.items():
        d = max(abs(p[s] - b[date][1][s]) for s in p)
        worst = max(worst, d)
        moved += d > 1e-12
        beyond += d > 1.0 / members + 1e-9
    return worst, moved, beyond


def compare(a):
    with open(a.guidance_grib) as f:
        g_grib = json.load(f)
    with open(a.guidance_netcdf) as f:
        g_netcdf = json.load(f)
    r = dict(np.load(a.ref))
    r["inits"] = [str(s) for s in r["inits"]]
    differ, ties, worst_ref = ref.compare_guidance(g_grib, r)
    against = grib_against_netcdf(g_grib, g_netcdf)
    runs = [gnu_time(p) for p in (a.time_grib, a.time_netcdf, a.time_ref)]
    print(f"{'':24s}{'isohypse, GRIB':>16s}{'isohypse, NetCDF':>18s}{'python3-eccodes':>17s}{'ratio':>8s}")
    for i, (what, fmt) in enumerate((("wall time (s)", "{:.2f}"), ("CPU time, user+sys (s)", "{:.2f}"),
                                     ("peak memory (MB)", "{:.0f}"))):
        g, n, p = (run[i] for run in runs)
        print(f"{what:24s}{fmt.format(g):>16s}{fmt.format(n):>18s}{fmt.format(p):>17s}{p / g:8.1f}")
    print(f"(ratio: python3-eccodes + numpy / isohypse from GRIB)")
    print(f"member-days classified: {r['labels'].size}; isohypse (GRIB) against the python3-eccodes reference: "
          f"labels differing {differ} (+ {ties} float ties within 1e-4), largest daily probability "
          f"difference {worst_ref:.2e}")
    if against is None:
        print("isohypse GRIB against NetCDF: THE VALID DATES DIFFER")
    else:
        print(f"isohypse GRIB against NetCDF (16-bit packing): largest daily probability difference "
              f"{against[0]:.4f} (one member's weight: {1.0 / g_grib['daily'][0]['members']:.4f}); "
              f"{against[1]} of {len(g_grib['daily'])} valid dates differ, {against[2]} by more than one member's "
              f"weight")
    speed = runs[2][0] / runs[0][0]
    print(f"target (>= 5 x the python3-eccodes version's wall time): {'met' if speed >= 5 else 'NOT met'} "
          f"({speed:.1f} x; CPU {runs[2][1] / runs[0][1]:.1f} x)")
    ok = differ == 0 and worst_ref <= 1e-9 and against is not None and against[2] == 0
    print("answers agree" if ok else "ANSWERS DIFFER")
    return 0 if ok else 1


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    r = sub.add_parser("run")
    r.add_argument("--model", required=True)
    r.add_argument("--forecasts", required=True)
    r.add_argument("--out", required=True)
    c = sub.add_parser("compare")
    for name in ("--guidance-grib", "--guidance-netcdf", "--ref", "--time-grib", "--time-netcdf", "--time-ref"):
        c.add_argument(name, required=True)
    a = ap.parse_args()
    if a.cmd == "compare":
        return compare(a)
    t0 = time.perf_counter()
    out = ref.classify_files(ref.Model(a.model), sorted(glob.glob(a.forecasts)), log=sys.stderr,
                             read=read_grib_forecast)
    np.savez(a.out, **{k: np.asarray(v) for k, v in out.items()})
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(f"python3-eccodes reference: total {time.perf_counter() - t0:.2f} s, peak RSS {rss / 1024:.0f} MB",
          file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
