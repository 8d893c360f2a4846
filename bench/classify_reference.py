#!/usr/bin/python3
"""The steps of `isohypse classify` (without reforecasts), written plainly with
numpy, netCDF4 and cftime as one would in a notebook. The classify tests
(tests/python/test_classify_*.py) import it as their independent reference,
and the classify benchmark (bench/run-classify-bench.sh) times it.

  classify_reference.py run --model M.nc --forecasts 'DIR/fc_*.nc' --out ref.npz [--weights equal|linear|exp:D]
  classify_reference.py compare --guidance G.json --ref ref.npz --iso-wall S --iso-cpu S --iso-rss KB \
      --ref-wall S --ref-cpu S --ref-rss KB

The steps, from the published methods (../shared/METHODS.md §1, §4):
  - anomaly = forecast - climatology, the model's least-squares coefficients
    evaluated with the basis 1, cos(2 pi n f), sin(2 pi n f), n = 1..H,
    f = (day_of_year - 1) / days_in_year in the forecast's own calendar (the
    basis stated in include/isohypse/climatology.hpp) [+ a linear trend in
    real days];
  - optional centred running mean along lead (the model's running_mean_days);
  - times the model's sqrt(cos lat) weights, minus the stored EOF mean,
    projected on the EOFs: pc_j = sum_s (w_s x'_s - m_s) e_js;
  - nearest centroid by squared distance in component space; "no regime"
    where the uncentred correlation with that centroid is below the model's
    threshold: over the full weighted field, (pc . c) / (|w x' - m| |c|),
    for format version 2 models (no_regime_correlation =
    "full_field_area_weighted"), in EOF space, (pc . c) / (|pc| |c|), for
    version 1 models;
  - lagged ensemble (Hoffman & Kalnay 1983, Tellus 35A, 100-118): every
    member of every initialisation pooled on its real-calendar valid day,
    p_k = sum_m w_m 1[label_m = k] / sum_m w_m with "no regime" a category.
"""
import argparse
import calendar as pycalendar
import datetime
import glob
import json
import math
import resource
import sys
import time

import cftime
import netCDF4
import numpy as np
from scipy.interpolate import RegularGridInterpolator

G0 = 9.80665  # standard gravity, m s-2 (WMO)
HEIGHT_NAMES = ("geopotential", "geopotential_height")


def real_date(y, m, d):
    """The real-calendar twin of a model day: the same year-month-day, or the
    month's last real day when it has none (360_day 02-29/02-30)."""
    return datetime.date(y, m, min(d, pycalendar.monthrange(y, m)[1]))


def days_in_year(year, cal):
    return (cftime.datetime(year + 1, 1, 1, calendar=cal) - cftime.datetime(year, 1, 1, calendar=cal)).days


class Model:
    """The parts of a regime model file that classifying needs, read with netCDF4."""

    def __init__(self, path):
        with netCDF4.Dataset(path) as ds:
            ds.set_auto_mask(False)
            self.lat = np.asarray(ds["lat"][:], float)
            self.lon = np.asarray(ds["lon"][:], float)
            n = self.lat.size * self.lon.size
            self.coef = np.asarray(ds["climatology_coefficient"][:], float).reshape(-1, n)  # (coef, point)
            self.weight = np.asarray(ds["weight"][:], float).ravel()
            self.eof_mean = np.asarray(ds["eof_mean"][:], float).ravel()
            self.eofs = np.asarray(ds["eof"][:], float).reshape(-1, n)  # (eof, point)
            self.centroids = np.asarray(ds["centroid"][:], float)  # (regime, eof)
            self.patterns = np.asarray(ds["pattern"][:], float)  # (regime, lat, lon)
            self.threshold = float(ds.no_regime_threshold)
            version = int(np.ravel(ds.getncattr("isohypse_format_version"))[0])
            self.rule = ds.getncattr("no_regime_correlation") if version >= 2 else "eof_space"
            if self.rule not in ("full_field_area_weighted", "eof_space"):
                raise ValueError(f"{path}: unknown no_regime_correlation {self.rule!r}")
            self.running_mean_days = int(ds.running_mean_days)
            self.harmonics = int(ds.climatology_harmonics)
            self.detrend = int(ds.climatology_detrend) != 0
            self.trend_origin = datetime.date.fromisoformat(ds.climatology_trend_origin)
            self.states = [r["id"] for r in json.loads(ds.regimes)] + ["no_regime"]
        self.k = self.centroids.shape[0]

    def climatology(self, dates):
        """Heights (n_dates, n_points) for cftime dates in any calendar."""
        B = np.zeros((len(dates), self.coef.shape[0]))
        for i, d in enumerate(dates):
            f = (d.dayofyr - 1.0) / days_in_year(d.year, d.calendar)
            B[i, 0] = 1.0
            for n in range(1, self.harmonics + 1):
                B[i, 2 * n - 1] = math.cos(2 * math.pi * n * f)
                B[i, 2 * n] = math.sin(2 * math.pi * n * f)
            if self.detrend:
                B[i, -1] = (real_date(d.year, d.month, d.day) - self.trend_origin).days
        return B @ self.coef

    def classify(self, anomalies):
        """anomalies (n, n_points) in metres -> labels (k = no regime),
        correlations, and each day's margin from a different answer (relative
        gap between the two nearest squared distances, distance of the
        correlation from the threshold) so callers can set aside float ties."""
        y = anomalies * self.weight - self.eof_mean
        pcs = y @ self.eofs.T
        d2 = ((pcs[:, None, :] - self.centroids[None, :, :]) ** 2).sum(axis=2)
        order = np.argsort(d2, axis=1)
        best = order[:, 0]
        c = self.centroids[best]
        day_norm = np.linalg.norm(y if self.rule == "full_field_area_weighted" else pcs, axis=1)
        norm = day_norm * np.linalg.norm(c, axis=1)
        cor = np.where(norm > 0, (pcs * c).sum(axis=1) / np.where(norm > 0, norm, 1.0), 0.0)
        labels = np.where(cor >= self.threshold, best, self.k)
        rows = np.arange(len(best))
        gap = (d2[rows, order[:, 1]] - d2[rows, best]) / np.maximum(d2[rows, order[:, 1]], 1e-300)
        return labels, cor, np.minimum(gap, np.abs(cor - self.threshold))


def running_mean(x, days):
    """Centred running mean along axis 0 (lead), shorter windows at the ends."""
    if days <= 1:
        return x
    lo, hi = (days - 1) // 2, days // 2
    return np.stack([x[max(0, t - lo):t + hi + 1].mean(axis=0) for t in range(x.shape[0])])


def point_index(axis, wanted, what, periodic=False):
    diff = (axis[None, :] - wanted[:, None])
    if periodic:
        diff = (diff + 180.0) % 360.0 - 180.0
    hit = np.abs(diff) < 1e-4
    if not hit.any(axis=1).all():
        raise ValueError(f"{what}: the file lacks grid points of the model")
    return hit.argmax(axis=1)


def read_forecast(path, model):
    """One file per initialisation (member, time, lat, lon), daily steps from
    the initialisation. Returns (init as cftime, heights (members, leads,
    points) on the model's points, in metres): picked where the model's
    points are grid nodes, else interpolated bilinearly
    (scipy.interpolate.RegularGridInterpolator, method "linear")."""
    with netCDF4.Dataset(path) as ds:
        name = next(v for v in ds.variables if getattr(ds[v], "standard_name", "") in HEIGHT_NAMES)
        var = ds[name]
        t = ds["time"]
        times = cftime.num2date(t[:], t.units, getattr(t, "calendar", "standard"))
        flat = np.asarray(ds[var.dimensions[2]][:], float)
        flon = np.asarray(ds[var.dimensions[3]][:], float)
        try:
            ilat = point_index(flat, model.lat, path)
            ilon = point_index(flon, model.lon, path, periodic=True)
            lat0, lat1, lon0, lon1 = ilat.min(), ilat.max() + 1, ilon.min(), ilon.max() + 1
            block = np.asarray(var[:, :, lat0:lat1, lon0:lon1], np.float64)
            z = block[:, :, ilat - lat0][:, :, :, ilon - lon0].reshape(block.shape[0], block.shape[1], -1)
        except ValueError:
            z = np.asarray(var[:], np.float64)
            # Longitudes as representatives within half a turn of the model's first one, both axes ascending.
            flon = model.lon[0] + (flon - model.lon[0] + 180.0) % 360.0 - 180.0
            ia, io = np.argsort(flat), np.argsort(flon)
            grid = RegularGridInterpolator((flat[ia], flon[io]), z[:, :, ia][:, :, :, io].transpose(2, 3, 0, 1))
            la, lo = np.meshgrid(model.lat, model.lon, indexing="ij")
            z = grid(np.column_stack([la.ravel(), lo.ravel()])).transpose(1, 2, 0)
        if var.standard_name == "geopotential":
            z /= G0
    leads = np.array([(d - times[0]).days for d in times])
    if not np.array_equal(leads, np.arange(len(times))):
        raise ValueError(f"{path}: expected one step per day from the initialisation")
    return times[0], z


def year_position(d):
    """0..364: the day's place in a 365-day year, 29 February sharing 28 February's."""
    return cftime.datetime(2001, d.month, min(d.day, 28 if d.month == 2 else 31 if d.month in (1, 3, 5, 7, 8, 10, 12)
                                              else 30), calendar="noleap").dayofyr - 1


def model_climate(model, reforecasts, init, n_leads, window_days=7, smoothing_days=5):
    """What a forecast initialised on `init` is compared with (n_leads,
    points): the regime model's climatology C at its valid dates plus the
    model's mean drift, the mean over every member of the reforecasts
    initialised within +-window_days of the year of `init` (and at least
    n_leads long) of [F - C(the reforecast's valid date)], smoothed with a
    centred running mean along lead (../shared/METHODS.md §8, mean-drift
    removal that keeps the reference climate; include/isohypse/numerics/
    model_drift.hpp for the sign of the bracket). reforecasts: [(init as
    cftime, heights (members, leads, points))]."""
    pos = year_position(init)
    near = []
    for i, z in reforecasts:
        if min(abs(year_position(i) - pos), 365 - abs(year_position(i) - pos)) <= window_days and z.shape[1] >= n_leads:
            valid = [i + datetime.timedelta(days=lead) for lead in range(n_leads)]
            near.append(z[:, :n_leads] - model.climatology(valid)[None])
    if not near:
        raise ValueError(f"no reforecast within {window_days} days of the year of {init}")
    valid = [init + datetime.timedelta(days=lead) for lead in range(n_leads)]
    return model.climatology(valid) + running_mean(np.concatenate(near).mean(axis=0), smoothing_days)


def init_weights(ages, scheme):
    """include/isohypse/ensemble_stats.hpp's schemes: equal, linear 1 - age/(max+1), exp(-age/D)."""
    ages = np.asarray(ages, float)
    if scheme == "equal":
        return np.ones_like(ages)
    if scheme == "linear":
        return 1.0 - ages / (ages.max() + 1.0)
    return np.exp(-ages / float(scheme.split(":")[1]))


def lagged_probabilities(runs, issue, n_states, scheme):
    """runs: [(init_real date, labels (members, leads))]. Returns offsets and
    p (offsets, n_states) for every day from the issue date on that a member
    covers, with the members and weight sums."""
    ages = [(issue - r).days for r, _ in runs]
    w = init_weights(ages, scheme)
    last = max(lab.shape[1] - 1 - a for (_, lab), a in zip(runs, ages))
    acc = np.zeros((last + 1, n_states))
    count = np.zeros(last + 1, int)
    wsum = np.zeros(last + 1)
    for (_, lab), a, wi in zip(runs, ages, w):
        for lead in range(max(a, 0), lab.shape[1]):
            o = lead - a
            np.add.at(acc[o], lab[:, lead], wi)
            count[o] += lab.shape[0]
            wsum[o] += wi * lab.shape[0]
    keep = count > 0
    return np.nonzero(keep)[0], acc[keep] / wsum[keep, None], count[keep], wsum[keep]


def most_likely(p):
    """Index of the largest probability; ties within 1e-12 go to the lowest index."""
    return int(np.nonzero(p >= p.max() - 1e-12)[0][0])


def classify_files(model, paths, issue=None, scheme="equal", log=None, read=read_forecast):
    """The whole reference. Returns a dict of numpy arrays (and timings).
    read(path, model) -> (init, heights (members, leads, points)) reads one
    initialisation's file (read_forecast, or the GRIB reader of
    bench/classify_grib_reference.py)."""
    timing = {}
    t0 = time.perf_counter()
    inits, heights = [], []
    for p in paths:
        init, z = read(p, model)
        inits.append(init)
        heights.append(z)
    timing["read"] = time.perf_counter() - t0
    reals = [real_date(i.year, i.month, i.day) for i in inits]
    issue = issue or max(reals)
    chosen = [i for i, r in enumerate(reals) if r <= issue]

    t0 = time.perf_counter()
    labels, cors, margins = [], [], []
    for i in chosen:
        z = heights[i]
        valid = [inits[i] + datetime.timedelta(days=lead) for lead in range(z.shape[1])]
        anom = z - model.climatology(valid)[None]
        lab = np.empty(z.shape[:2], int)
        cor = np.empty(z.shape[:2])
        mar = np.empty(z.shape[:2])
        for m in range(z.shape[0]):
            lab[m], cor[m], mar[m] = model.classify(running_mean(anom[m], model.running_mean_days))
        labels.append(lab)
        cors.append(cor)
        margins.append(mar)
    timing["classify"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    offsets, prob, members, wsum = lagged_probabilities([(reals[i], lab) for i, lab in zip(chosen, labels)], issue,
                                                        model.k + 1, scheme)
    timing["probabilities"] = time.perf_counter() - t0
    if log:
        for k, v in timing.items():
            print(f"reference: {k} {v:.2f} s", file=log)
    return {"paths": [paths[i] for i in chosen],
            "inits": [f"{inits[i].year:04d}-{inits[i].month:02d}-{inits[i].day:02d}" for i in chosen],
            "issue": issue.isoformat(), "labels": np.stack(labels), "correlations": np.stack(cors),
            "margins": np.stack(margins), "offsets": offsets, "probabilities": prob, "members": members,
            "weight_sums": wsum, "states": model.states}


def compare_guidance(g, ref, tol=1e-9):
    """Differences between a guidance document written with --members and the
    reference: (member labels that differ where the reference's margin is
    clear, labels set aside as float ties, largest probability difference)."""
    states = g["states"]
    by_key = {(m["initialisation"], m["member"]): m for m in g["members"]}
    differ, ties = 0, 0
    for i, init in enumerate(ref["inits"]):
        for m in range(ref["labels"].shape[1]):
            got = by_key[(init, m)]["regimes"]
            want = [states[s] for s in ref["labels"][i, m]]
            for lead, (a, b) in enumerate(zip(got, want)):
                if a != b:
                    if ref["margins"][i, m, lead] < 1e-4:
                        ties += 1
                    else:
                        differ += 1
    daily = {d["lead_days"]: d for d in g["daily"]}
    worst = 0.0
    if sorted(daily) != [int(o) for o in ref["offsets"]]:
        worst = math.inf
    else:
        for o, p in zip(ref["offsets"], ref["probabilities"]):
            got = np.array([daily[int(o)]["probabilities"][s] for s in states])
            worst = max(worst, float(np.abs(got - p).max()))
    return differ, ties, worst


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    r = sub.add_parser("run")
    r.add_argument("--model", required=True)
    r.add_argument("--forecasts", required=True)
    r.add_argument("--weights", default="equal")
    r.add_argument("--out", required=True)
    c = sub.add_parser("compare")
    c.add_argument("--guidance", required=True)
    c.add_argument("--ref", required=True)
    for name in ("--iso-wall", "--iso-cpu", "--iso-rss", "--ref-wall", "--ref-cpu", "--ref-rss"):
        c.add_argument(name, type=float, required=True)
    a = ap.parse_args()
    if a.cmd == "run":
        t0 = time.perf_counter()
        ref = classify_files(Model(a.model), sorted(glob.glob(a.forecasts)), scheme=a.weights, log=sys.stderr)
        np.savez(a.out, **{k: np.asarray(v) for k, v in ref.items()})
        rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
        print(f"reference: total {time.perf_counter() - t0:.2f} s, peak RSS {rss / 1024:.0f} MB", file=sys.stderr)
        return 0
    ref = dict(np.load(a.ref))
    ref["inits"] = [str(s) for s in ref["inits"]]
    with open(a.guidance) as f:
        g = json.load(f)
    differ, ties, worst = compare_guidance(g, ref)
    n = ref["labels"].size
    print(f"{'':24s}{'isohypse classify':>20s}{'numpy reference':>20s}{'ratio':>10s}")
    print(f"{'wall time (s)':24s}{a.iso_wall:20.2f}{a.ref_wall:20.2f}{a.ref_wall / a.iso_wall:10.1f}")
    print(f"{'CPU time, user+sys (s)':24s}{a.iso_cpu:20.2f}{a.ref_cpu:20.2f}{a.ref_cpu / a.iso_cpu:10.1f}")
    print(f"{'peak memory (MB)':24s}{a.iso_rss / 1024:20.0f}{a.ref_rss / 1024:20.0f}"
          f"{a.ref_rss / a.iso_rss:10.1f}")
    print(f"member-days classified: {n}; labels differing: {differ} (+ {ties} float ties within 1e-4); "
          f"largest daily probability difference: {worst:.2e}")
    ok = differ == 0 and worst <= 1e-9
    print("answers agree" if ok else "ANSWERS DIFFER")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
