"""The demo world's no-skill forecast system (isohypse-demo-world --size small:
forecasts_noskill/, reforecasts_noskill/, truth/*_members_noskill.csv), read
back with netCDF4-python and cftime and checked with numpy.

Checks:
  - truth.json lists the system (how its members are made, its files); its
    reforecasts are on the skilful reforecasts' dates (Mondays and Thursdays
    of December-January 2015-2020, 3 members), its forecasts the last 4 of
    the skilful forecasts (4 members);
  - layout: every no-skill file has the layout of the skilful file of the
    same initialisation: the same variables with the same dimensions, shapes,
    types, attributes (units, calendar), deflate and chunking, and the same
    coordinate values; the member tables' valid dates are the files' noleap
    valid times;
  - no skill: the members' planted regimes agree with the truth's regime at
    leads 0..3 about as often as chance, sum over states of the squared
    climatological frequencies (two independent draws of the same climate
    agree with that probability), within 4 standard errors of a rate over
    n_inits x members pairs (the standard error below); the skilful
    reforecasts agree at lead 0 always;
  - the fields diverge at once: at lead 0 the no-skill members differ from
    the reanalysis by about sqrt(2) times the cold-season anomaly standard
    deviation, as two independent states of one climate do, while the
    skilful members equal it.

The standard error of an agreement rate: members of one initialisation are
independent given the truth's state T, each agreeing with probability p_T
(the members' chain starts from its stationary distribution p), so the
variance of the rate over n initialisations of m members is
E[p_T (1 - p_T)] / (n m) + Var(p_T) / n_eff, where the second term's
initialisations (3-4 days apart within a winter) share the truth's regime:
n_eff = n (1 - rho) / (1 + rho), rho = the chain's mean self-transition
raised to the mean spacing of 3.5 days (the AR(1) variance inflation, common
practice for a persistent series). Leads 0..3 of one member are dependent,
so the pooled rate keeps the per-lead standard error.
"""
import csv
import datetime
import glob
import json
import os
import subprocess
import sys

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import cftime  # noqa: E402
import netCDF4  # noqa: E402
import numpy as np  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch  # noqa: E402

GEN = os.path.join(os.environ.get("ISOHYPSE_BUILD_DIR", ""), "isohypse-demo-world")
G0 = 9.80665  # standard gravity (WMO), m s-2


def iso(d):
    return f"{d.year:04d}-{d.month:02d}-{d.day:02d}"


def generate(folder):
    r = subprocess.run([GEN, "--out", folder, "--size", "small", "--seed", "8", "--jobs", "2"],
                       capture_output=True, text=True)
    check(r.returncode == 0, "isohypse-demo-world --size small exits 0" + (f": {r.stderr[-300:]}" if r.returncode else ""))
    if r.returncode:
        finish()
    print(r.stdout, flush=True)
    with open(os.path.join(folder, "truth", "truth.json")) as f:
        return json.load(f)


def read_members(path):
    """{init_date: rows in file order}."""
    rows = {}
    with open(path) as f:
        for r in csv.DictReader(f):
            rows.setdefault(r["init_date"], []).append(r)
    return rows


def read_labels(path):
    with open(path) as f:
        return {row["date"]: int(row["regime"]) for row in csv.DictReader(f)}


def check_listing(world, truth):
    ns_rf, ns_fc = truth["reforecasts_noskill"], truth["forecasts_noskill"]
    dates = [os.path.basename(p)[3:11] for p in ns_rf["files"]]
    main_dates = [os.path.basename(p)[3:11] for p in truth["reforecasts"]["files"]]
    check(dates == main_dates and ns_rf["members"] == 3 and len(dates) == 108,
          f"reforecasts_noskill: {len(dates)} inits on the skilful reforecasts' dates, {ns_rf['members']} members")
    fc = [os.path.basename(p)[3:11] for p in ns_fc["files"]]
    main_fc = [os.path.basename(p)[3:11] for p in truth["forecasts"]["files"]]
    check(fc == main_fc[-4:] and ns_fc["members"] == 4,
          f"forecasts_noskill: the last 4 forecast inits {fc[0]}..{fc[-1]}, {ns_fc['members']} members")
    desc = truth["world"]["members_noskill"]
    check(desc["divergence_lead"] == 0 and "stationary" in desc["regime"] and "own" in desc["noise"],
          "truth.json describes the no-skill members: divergence at lead 0, start from the stationary distribution, "
          "own noise")
    listed = set(ns_rf["files"]) | set(ns_fc["files"])
    found = {os.path.relpath(p, world) for d in ("forecasts_noskill", "reforecasts_noskill")
             for p in glob.glob(os.path.join(world, d, "*"))}
    check(listed == found and {"truth/forecast_members_noskill.csv", "truth/reforecast_members_noskill.csv"}
          <= set(truth["truth_files"]), f"truth.json lists the {len(found)} no-skill files and both member tables")


def layout(path):
    """Everything about a run file but its heights."""
    with netCDF4.Dataset(path) as ds:
        out = {"model": ds.data_model, "globals": {a: ds.getncattr(a) for a in ds.ncattrs()}}
        for name, v in ds.variables.items():
            out[name] = (v.dimensions, v.shape, str(v.dtype), {a: str(v.getncattr(a)) for a in v.ncattrs()},
                         v.filters(), v.chunking(), None if name == "gh" else np.asarray(v[...]).tobytes())
        valid = [iso(d) for d in cftime.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar)]
    return out, valid


def check_layout(world, truth, rows_ns, rows_main):
    same, tables, n = True, True, 0
    for rel in truth["reforecasts_noskill"]["files"] + truth["forecasts_noskill"]["files"]:
        kind = "reforecasts" if rel.startswith("reforecasts") else "forecasts"
        ns, valid = layout(os.path.join(world, rel))
        main, _ = layout(os.path.join(world, kind, os.path.basename(rel)))
        same &= ns == main
        same &= ns["gh"][0] == ("number", "time", "latitude", "longitude") and ns["gh"][3]["units"] == "m"
        same &= ns["time"][3]["calendar"] == "noleap" and ns["gh"][4].get("zlib", False)
        init = valid[0]
        if kind == "reforecasts":
            tables &= [r["valid_date"] for r in rows_ns[init][:46]] == valid
            tables &= len(rows_ns[init]) == 46 * ns["gh"][1][0]
        n += 1
    check(same, f"{n} no-skill files have the skilful files' layout: variable gh (number, time, latitude, "
                "longitude) in m, noleap time, deflate, chunks, attributes and coordinate values all equal")
    check(tables and len(rows_ns) == len(rows_main),
          "reforecast_members_noskill.csv: 46 leads per member, valid dates equal the files' noleap valid times")


def climatology(labels, n_states):
    cold = np.array([v for v in labels.values() if v >= 0])
    return np.array([np.mean(cold == s) for s in range(n_states)]), len(cold)


def agreement(rows, labels, lead):
    """(rate, initialisations, members) of the planted member regimes agreeing with the truth at `lead`."""
    hits, inits, members = [], 0, 0
    for init, rs in rows.items():
        at = [r for r in rs if int(r["lead"]) == lead and labels[r["valid_date"]] >= 0 and int(r["regime"]) >= 0]
        if not at:
            continue
        inits += 1
        members = max(members, len(at))
        hits += [int(r["regime"]) == labels[r["valid_date"]] for r in at]
    return np.mean(hits), inits, members


def check_chance(truth, labels, rows_ns, rows_main):
    n_states = truth["n_regimes"]
    f, n_days = climatology(labels, n_states)
    chance = float(np.sum(f ** 2))
    pi = np.array(truth["world"]["stationary"])
    markov = np.array(truth["world"]["markov"]["matrix"])
    p_t = pi  # a member's chance of agreeing, given the truth's state T
    rho = np.mean(np.diag(markov)) ** 3.5
    rates, ses = [], []
    for lead in range(4):
        rate, n, m = agreement(rows_ns, labels, lead)
        var = np.sum(f * p_t * (1 - p_t)) / (n * m) + np.sum(f * (p_t - f @ p_t) ** 2) / (n * (1 - rho) / (1 + rho))
        rates.append(rate)
        ses.append(np.sqrt(var))
        check(abs(rate - chance) < 4 * ses[-1],
              f"no-skill lead {lead}: members agree with the truth's regime on {rate:.3f} of {n} x {m} pairs, "
              f"chance {chance:.3f} (sum of squared climatological frequencies {np.round(f, 3)} over {n_days} "
              f"cold-season days) within 4 standard errors {4 * ses[-1]:.3f}")
    pooled = np.mean(rates)
    check(abs(pooled - chance) < 4 * ses[0],
          f"no-skill leads 0..3 pooled: {pooled:.3f} against chance {chance:.3f} within {4 * ses[0]:.3f}")
    main0, n0, m0 = agreement(rows_main, labels, 0)
    main3, _, _ = agreement(rows_main, labels, 3)
    check(main0 == 1.0 and main3 > chance + 8 * ses[0],
          f"skilful reforecasts agree at lead 0 on {main0:.3f} of {n0} x {m0} pairs (always) and at lead 3 on "
          f"{main3:.3f}, far above chance: the check can tell the two systems apart")


def reanalysis_points(world):
    """{date: heights (m)} at 20..80N, 170..320E every 10 degrees, and their sector anomalies' standard deviation."""
    clat, clon = np.arange(20, 81, 10), np.arange(170, 321, 10)
    out = {}
    for path in sorted(glob.glob(os.path.join(world, "reanalysis", "hgt500_*.nc"))):
        with netCDF4.Dataset(path) as ds:
            lat, lon, t = np.asarray(ds["latitude"][:]), np.mod(np.asarray(ds["longitude"][:]), 360), ds["time"]
            ii = [int(np.argmin(np.abs(lat - x))) for x in clat]
            jj = [int(np.argmin(np.abs(lon - x))) for x in clon]
            z = np.ma.filled(ds["z"][:][:, ii][:, :, jj].astype(float), np.nan) / G0
            for d, zz in zip(cftime.num2date(t[:], t.units, t.calendar), z):
                out[iso(d)] = zz
    return out, clat, clon


def check_divergence(world, truth, rean, clat, clon):
    flat, flon = np.arange(16, 84.1, 2), np.arange(164, 326.1, 2)
    fi = np.ix_([int(np.where(flat == x)[0][0]) for x in clat], [int(np.where(flon == x)[0][0]) for x in clon])
    dates = sorted(rean)
    # Cold-season anomalies of the reanalysis at the points: departures from each calendar day's... too few
    # years for that, so from a per-point fit of mean, trend and 3 annual harmonics (as test_demo_world.py).
    x = np.array([rean[d] for d in dates]).reshape(len(dates), -1)
    keep = ~np.isnan(x).any(axis=1)
    x, dd = x[keep], [d for d, k in zip(dates, keep) if k]
    t = np.array([(datetime.date.fromisoformat(d) - datetime.date(2000, 1, 1)).days for d in dd], float)
    w = 2 * np.pi * t / 365.2425
    a = np.column_stack([np.ones(len(t)), t / 3652.4] + [f(k * w) for k in (1, 2, 3) for f in (np.cos, np.sin)])
    coef, *_ = np.linalg.lstsq(a, x, rcond=None)
    anom = x - a @ coef
    djf = np.array([int(d[5:7]) in (12, 1) for d in dd])
    expected = np.sqrt(2 * np.mean(anom[djf] ** 2))
    err = {"reforecasts_noskill": [], "reforecasts": []}
    for rel in truth["reforecasts_noskill"]["files"]:
        init = os.path.basename(rel)[3:11]
        day = f"{init[:4]}-{init[4:6]}-{init[6:]}"
        if day not in rean or np.isnan(rean[day]).any():
            continue
        for kind in err:
            with netCDF4.Dataset(os.path.join(world, kind, os.path.basename(rel))) as ds:
                gh = np.asarray(ds["gh"][:, 0])
            err[kind] += [((g[fi] - rean[day]) ** 2).mean() for g in gh]
    ns = np.sqrt(np.mean(err["reforecasts_noskill"]))
    sk = np.sqrt(np.mean(err["reforecasts"]))
    check(sk < 0.3 and 0.8 < ns / expected < 1.2,
          f"lead 0: skilful members differ from the reanalysis by {sk:.2f} m RMS, no-skill members by {ns:.1f} m, "
          f"{ns / expected:.2f} times sqrt(2) x the Dec-Jan anomaly standard deviation {expected / np.sqrt(2):.1f} m "
          f"(two independent states of one climate; within 0.8..1.2)")


def main():
    if not os.path.exists(GEN):
        check(False, f"generator built: {GEN}")
        finish()
    world = os.path.join(scratch(), "small")
    truth = generate(world)
    labels = read_labels(os.path.join(world, "truth", "labels.csv"))
    rows_ns = read_members(os.path.join(world, "truth", "reforecast_members_noskill.csv"))
    rows_main = read_members(os.path.join(world, "truth", "reforecast_members.csv"))
    check_listing(world, truth)
    check_layout(world, truth, rows_ns, rows_main)
    check_chance(truth, labels, rows_ns, rows_main)
    rean, clat, clon = reanalysis_points(world)
    check_divergence(world, truth, rean, clat, clon)
    finish()


if __name__ == "__main__":
    main()
