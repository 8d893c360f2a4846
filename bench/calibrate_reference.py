#!/usr/bin/python3
"""The steps of `isohypse calibrate`, written plainly with numpy, netCDF4 and
scikit-learn as one would in a notebook; the calibrate benchmark
(bench/run-calibrate-bench.sh) times it and compares its answers with the
calibration file that isohypse writes.

  calibrate_reference.py run --model M.nc --reforecasts 'DIR/rf_*.nc' --lag 4 --weights exp:3 \
      [--method blend|logistic|both] [--years 2001-2004] [--out ref.json]
  calibrate_reference.py compare --calibration CAL.nc --ref ref.json [--tolerance 1e-3]
  calibrate_reference.py times --iso-time T --ref-time T --iso-timings TXT --ref ref.json

The steps (../shared/METHODS.md §8; include/isohypse/stages/calibrate.hpp):
  - read every reforecast (bench/classify_reference.py read_forecast: the
    model's points, bilinear where they are not grid nodes, metres) and take
    F - C(valid date), C the regime model's climatology in the forecast's own
    calendar;
  - season years: a Nov-Mar season's November and December count to the
    next year;
  - the drift of an initialisation: the mean over every member of the OTHER
    season years' reforecasts initialised within +-7 days of its day of the
    year (at least as many lead days) of [F - C(valid)], smoothed with a
    centred 5-day running mean in lead; each member's anomalies are
    F - C(valid) - drift, labelled with the model (classify_reference.Model);
  - issues: each reforecast date, pooling the same season year's reforecasts
    initialised up to lag_days = lag - 1 days before it (widened to the next
    older one within a further 7 days when it alone would be pooled), weights
    exp(-age / 3) (classify_reference.init_weights), lagged probabilities by
    day offset from the issue date (classify_reference.lagged_probabilities,
    the real-calendar offset lead - age);
  - cases: offsets whose valid date (issue + offset, real calendar) lies in a
    season month and in the model's record (time/label variables; label -1 =
    no regime; days past the record are left out and counted); c = the
    record's frequency of each state in the valid month (in-season days);
  - blend (common practice; closed form of the least multi-category Brier
    score, METHODS.md §8): a(L) = sum (p - c).(o - c) / sum |p - c|^2 over the
    cases of leads L-2..L+2 (at least 30 cases, else the nearest lead's
    value), shrunk by max(0, 1 - (2 SE / a)^2) with SE its jackknife
    standard error over the season years, clipped to [0, 1];
  - logistic (--method logistic): sklearn.linear_model.LogisticRegression
    (C=1, solver newton-cg, multinomial) per lead window on the features of
    include/isohypse/numerics/calibration.hpp: log((p m + 1/2) / (m + S/2)),
    log(max(c, 1e-6));
  - leave one season year out: each year's cases recalibrated by a fit on the
    other years; by window the mean multi-category Brier score (sum over the
    states of (p - o)^2) of raw, calibrated and climatological probabilities,
    the skill 1 - BS / BS_clim, the binned reliability term (10 bins of width
    0.1; Murphy 1973, J. Appl. Meteor. 12, 595-600) summed over the states,
    and the hit rate of the most likely state.
"""
import argparse
import datetime
import glob
import json
import math
import os
import re
import resource
import sys
import time
import warnings

import cftime
import netCDF4
import numpy as np
from sklearn.linear_model import LogisticRegression

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from classify_reference import (Model, init_weights, lagged_probabilities, read_forecast, real_date,  # noqa: E402
                                running_mean, year_position)
from gnu_time import gnu_time  # noqa: E402

WINDOWS = [(1, 3), (4, 7), (8, 14), (15, 28), (29, 45)]
MIN_CASES = 30  # per lead (include/isohypse/stages/calibrate.hpp kMinCasesPerLead)


def season_year(d, months):
    """The season's year: November and December of a Nov-Mar season count to the next year."""
    wraps = 12 in months and 1 in months and len(months) < 12
    start = min(m for m in months if (m - 1 if m > 1 else 12) not in months) if wraps else 0
    return d.year + (1 if wraps and d.month >= start else 0)


def days_apart_in_year(a, b):
    d = abs(year_position(a) - year_position(b))
    return min(d, 365 - d)


def read_record(path):
    """The model's labelled record: {real date: state (k = no regime)}, the
    dates, states and in-season flags, and the season months."""
    with netCDF4.Dataset(path) as ds:
        ds.set_auto_mask(False)
        t = ds["time"]
        dates = cftime.num2date(t[:], t.units, getattr(t, "calendar", "standard"))
        labels = np.asarray(ds["label"][:], int)
        in_season = np.asarray(ds["in_season"][:], int) != 0
        months = [int(m) for m in np.ravel(ds.season_months)]
        k = ds["centroid"].shape[0]
    dates = [real_date(d.year, d.month, d.day) for d in dates]
    states = np.where(labels < 0, k, labels)
    return dates, states, in_season, months


def monthly_frequencies(dates, states, in_season, months, n_states):
    """freq[m - 1]: each state's share of the record's days in month m (a season month: its in-season days)."""
    counts = np.zeros((12, n_states))
    for d, s, ins in zip(dates, states, in_season):
        if d.month in months and not ins:
            continue
        counts[d.month - 1, s] += 1
    with np.errstate(invalid="ignore"):
        return counts / counts.sum(axis=1, keepdims=True)


def issues_of(inits, years, lag_days, scheme):
    """Per initialisation (sorted by date) as the latest: the pooled ones, oldest first, their ages and weights."""
    out = []
    for latest in range(len(inits)):
        issue = inits[latest]["real"]
        chosen, ages = [], []
        for j in range(latest, -1, -1):
            age = (issue - inits[j]["real"]).days
            if years[j] != years[latest]:
                break
            if age < 0:
                continue
            within = age <= lag_days
            if not within and (len(chosen) >= 2 or age > lag_days + 7):
                break
            chosen.insert(0, j)
            ages.insert(0, age)
            if not within:
                break
        out.append({"issue": issue, "year": years[latest], "inits": chosen, "ages": ages,
                    "weights": init_weights(ages, scheme)})
    return out


def blend_fit(p, c, o, lead, use, n_leads, year, smoothing=5, z=2.0):
    """a(L) smoothed (pooled over the leads of a centred window, shrunk by its jackknife error over the season
    years) and unsmoothed, from the cases `use`."""
    d = p - c
    oc = -c.copy()
    oc[np.arange(len(o)), o] += 1.0
    num_case, den_case = (d * oc).sum(axis=1), (d * d).sum(axis=1)

    def closed_form(rows):
        if rows.sum() < MIN_CASES:
            return math.nan
        den = den_case[rows].sum()
        return float(np.clip(num_case[rows].sum() / den, 0.0, 1.0)) if den > 0 else math.nan

    def shrunk(rows):
        if rows.sum() < MIN_CASES:
            return math.nan
        num, den = num_case[rows].sum(), den_case[rows].sum()
        if den <= 0:
            return math.nan
        a = num / den
        ys = np.unique(year[rows])
        if len(ys) >= 2:
            loo = np.array([(num - num_case[rows & (year == y)].sum()) / (den - den_case[rows & (year == y)].sum())
                            for y in ys])
            se = math.sqrt((len(ys) - 1) / len(ys) * np.sum((loo - loo.mean()) ** 2))
            a = 0.0 if a <= 0 else a * max(0.0, 1 - (z * se / a) ** 2)
        return float(np.clip(a, 0.0, 1.0))

    lo, hi = (smoothing - 1) // 2, smoothing // 2
    raw = np.array([closed_form(use & (lead == L)) for L in range(n_leads)])
    smooth = np.array([shrunk(use & (lead >= L - lo) & (lead <= L + hi)) for L in range(n_leads)])
    finite = np.nonzero(np.isfinite(smooth))[0]
    for L in np.nonzero(~np.isfinite(smooth))[0]:  # the nearest fitted lead (the earlier one on a tie), else 1
        smooth[L] = smooth[finite[np.argmin(np.abs(finite - L))]] if finite.size else 1.0
    return smooth, raw


def features(p, members, c):
    S = p.shape[1]
    m = members[:, None]
    return np.hstack([np.log((p * m + 0.5) / (m + 0.5 * S)), np.log(np.maximum(c, 1e-6))])


def window_index(lead):
    """The window holding the lead, or the nearest one (include/isohypse/io/calibration_file.hpp window_of)."""
    dist = [0 if a <= lead <= b else min(abs(lead - a), abs(lead - b)) for a, b in WINDOWS]
    return int(np.argmin(dist))


def logistic_fit(X, o, use, lead, S, C):
    models = []
    for a, b in WINDOWS:
        rows = use & (lead >= a) & (lead <= b)
        # newton-cg reaches the minimum in about 20 steps here; tol 1e-8 moves the weights by about 1e-5 from the
        # default tol's, and a tighter one only makes its line search warn that it cannot improve any more.
        lr = LogisticRegression(C=C, solver="newton-cg", multi_class="multinomial", tol=1e-8, max_iter=100)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            models.append(lr.fit(X[rows], o[rows]) if rows.any() else (models[-1] if models else None))
    return models


def logistic_apply(models, X, lead, S):
    out = np.zeros((len(X), S))
    w = np.array([window_index(L) for L in lead])
    for i, lr in enumerate(models):
        rows = w == i
        if rows.any():
            out[np.ix_(rows, lr.classes_)] = lr.predict_proba(X[rows])
    return out


def reliability(p, happened, bins=10):
    """Murphy's (1973) reliability term over bins [i/10, (i+1)/10), the last closed."""
    edges = np.arange(bins + 1) / bins
    b = np.clip(np.searchsorted(edges, p, side="right") - 1, 0, bins - 1)
    rel = 0.0
    for k in np.unique(b):
        sel = b == k
        rel += sel.sum() * (p[sel].mean() - happened[sel].mean()) ** 2
    return rel / len(p)


def scores(p, cal, c, o, lead):
    out = []
    S = p.shape[1]
    onehot = np.eye(S)[o]
    for a, b in WINDOWS:
        r = (lead >= a) & (lead <= b)
        bs = {name: float(((x[r] - onehot[r]) ** 2).sum(axis=1).mean()) for name, x in
              (("raw", p), ("calibrated", cal), ("climatology", c))}
        out.append({"first": a, "last": b, "cases": int(r.sum()),
                    "brier_raw": bs["raw"], "brier_calibrated": bs["calibrated"],
                    "brier_climatology": bs["climatology"],
                    "skill_raw": 1 - bs["raw"] / bs["climatology"],
                    "skill_calibrated": 1 - bs["calibrated"] / bs["climatology"],
                    "reliability_raw": sum(reliability(p[r, k], onehot[r, k]) for k in range(S)),
                    "reliability_calibrated": sum(reliability(np.clip(cal[r, k], 0, 1), onehot[r, k])
                                                  for k in range(S)),
                    "hit_rate_raw": float((p[r].argmax(axis=1) == o[r]).mean()),
                    "hit_rate_calibrated": float((cal[r].argmax(axis=1) == o[r]).mean())})
    return out


def read_all(model, paths, months, log):
    """Every reforecast: its dates, member count and F - C(valid) (members, leads, points)."""
    inits = []
    for n, path in enumerate(paths):
        init, z = read_forecast(path, model)
        valid = [init + datetime.timedelta(days=lead) for lead in range(z.shape[1])]
        d = z - model.climatology(valid)[None]
        inits.append({"path": path, "init": init, "real": real_date(init.year, init.month, init.day), "d": d})
        if log and (n + 1) % 100 == 0:
            print(f"reference: read {n + 1}/{len(paths)}", file=log, flush=True)
    inits.sort(key=lambda r: r["real"])
    return inits


def label_all(model, inits, years, window_days=7, smoothing_days=5):
    """Each member's states by lead, against C + the drift of the other season years near the day of the year."""
    sums = [r["d"].sum(axis=0) for r in inits]
    labels = []
    for i, r in enumerate(inits):
        L = r["d"].shape[1]
        near = [j for j, s in enumerate(inits) if years[j] != years[i] and s["d"].shape[1] >= L
                and days_apart_in_year(s["init"], r["init"]) <= window_days]
        if not near:
            raise ValueError(f"{r['path']}: no reforecast of another season year near its day of the year")
        members = sum(inits[j]["d"].shape[0] for j in near)
        drift = running_mean(sum(sums[j][:L] for j in near) / members, smoothing_days)
        anom = r["d"] - drift[None]
        labels.append(np.stack([model.classify(running_mean(anom[m], model.running_mean_days))[0]
                                for m in range(anom.shape[0])]))
    return labels


def build_cases(inits, labels, issues, record, freq, months, S):
    observed = dict(zip(record[0], record[1]))
    rows = {"p": [], "c": [], "members": [], "observed": [], "lead": [], "year": []}
    unobserved = 0
    for iss in issues:
        runs = [(inits[j]["real"], labels[j]) for j in iss["inits"]]
        scheme = iss["scheme"]
        offsets, prob, members, _ = lagged_probabilities(runs, iss["issue"], S, scheme)
        for o, p, m in zip(offsets, prob, members):
            valid = iss["issue"] + datetime.timedelta(days=int(o))
            if valid.month not in months:
                continue
            if valid not in observed:
                unobserved += 1
                continue
            rows["p"].append(p)
            rows["c"].append(freq[valid.month - 1])
            rows["members"].append(m)
            rows["observed"].append(observed[valid])
            rows["lead"].append(int(o))
            rows["year"].append(iss["year"])
    out = {k: np.array(v) for k, v in rows.items()}
    out["unobserved"] = unobserved
    return out


def fit_and_score(cs, years, method, C, S):
    """The fit on every year and the scores of the leave-one-year-out fits; with the blend coefficients always
    (isohypse's logistic calibration file carries them too)."""
    p, c, o, lead, year = cs["p"], cs["c"], cs["observed"], cs["lead"], cs["year"]
    n_leads = int(lead.max()) + 1
    X = features(p, cs["members"].astype(float), c) if method == "logistic" else None
    cross = np.zeros_like(p)
    for y in years:
        held = year == y
        if not held.any():
            continue
        if method == "logistic":
            cross[held] = logistic_apply(logistic_fit(X, o, ~held, lead, S, C), X[held], lead[held], S)
        else:
            a, _ = blend_fit(p, c, o, lead, ~held, n_leads, year)
            a_case = a[np.minimum(lead[held], n_leads - 1)]
            cross[held] = c[held] + a_case[:, None] * (p[held] - c[held])
    everything = np.ones(len(o), bool)
    a, a_raw = blend_fit(p, c, o, lead, everything, n_leads, year)
    result = {"blend": a.tolist(), "blend_unsmoothed": [None if not np.isfinite(v) else v for v in a_raw],
              "cases": np.bincount(lead, minlength=n_leads).tolist(), "scores": scores(p, cross, c, o, lead)}
    if method == "logistic":
        models = logistic_fit(X, o, everything, lead, S, C)
        result["logistic"] = [{"classes": lr.classes_.tolist(), "weights": lr.coef_.tolist(),
                               "intercepts": (lr.intercept_ - lr.intercept_.mean()).tolist()} for lr in models]
    return result


def run(a):
    timing = {}
    log = sys.stderr
    t_all = time.perf_counter()
    t0 = time.perf_counter()
    model = Model(a.model)
    record = read_record(a.model)
    months = record[3]
    S = model.k + 1
    freq = monthly_frequencies(record[0], record[1], record[2], months, S)
    paths = sorted(glob.glob(a.reforecasts))
    if a.years:
        first, last = (int(v) for v in a.years.split("-"))
        keep = []
        for p in paths:  # the season year from the file's first valid time
            with netCDF4.Dataset(p) as ds:
                t = ds["time"]
                d = cftime.num2date(t[0], t.units, getattr(t, "calendar", "standard"))
            if first <= season_year(d, months) <= last:
                keep.append(p)
        paths = keep
    timing["model and record"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    inits = read_all(model, paths, months, log)
    years = [season_year(r["real"], months) for r in inits]
    timing["read, regrid, F - C"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    labels = label_all(model, inits, years)
    timing["drift and labels"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    lag_days = a.lag_days if a.lag_days > 0 else max(a.lag - 1, 0)
    issues = issues_of(inits, years, lag_days, a.weights)
    for iss in issues:
        iss["scheme"] = a.weights
    cs = build_cases(inits, labels, issues, record, freq, months, S)
    timing["issues and cases"] = time.perf_counter() - t0

    methods = {}
    for method in (("blend", "logistic") if a.method == "both" else (a.method,)):
        t0 = time.perf_counter()
        methods[method] = fit_and_score(cs, sorted(set(years)), method, a.penalty_c, S)
        timing[f"fit and cross-validation, {method}"] = time.perf_counter() - t0
    timing["total"] = time.perf_counter() - t_all

    result = {"methods": methods, "states": model.states, "files": len(paths), "years": sorted(set(years)),
                   "lag_days": lag_days, "weights": a.weights, "n_cases": int(len(cs["observed"])),
                   "unobserved_cases": cs["unobserved"], "ensemble_members": float(cs["members"].mean()),
                   "timings_s": timing,
                   "peak_rss_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}
    for method in methods:
        print(table(result, method))
    for k, v in timing.items():
        print(f"reference: {k:28s} {v:8.2f} s", file=log)
    print(f"reference: peak RSS {result['peak_rss_mb']:.0f} MB", file=log)
    if a.out:
        with open(a.out, "w") as f:
            json.dump(result, f, indent=1)
    return 0


def table(r, method):
    m = r["methods"][method]
    lines = [f"Reference calibration ({method}): {r['files']} reforecast files, {len(r['years'])} season years, "
             f"lagged over {r['lag_days']} days ({r['weights']}), {r['ensemble_members']:.0f} members per lagged "
             f"ensemble on average; {r['unobserved_cases']} case days past the record left out.",
             f"  {'leads':7s} {'cases':>6s}  {'skill raw':>9s} {'calibr.':>9s}  {'REL raw':>9s} {'calibr.':>9s}  "
             f"{'hit raw':>8s} {'calibr.':>8s}  {'a(L)':>7s}"]
    for s in m["scores"]:
        a = [m["blend"][L] for L in range(s["first"], min(s["last"], len(m["blend"]) - 1) + 1)]
        lines.append(f"  {str(s['first']) + '-' + str(s['last']):7s} {s['cases']:6d}  {s['skill_raw']:9.3f} "
                     f"{s['skill_calibrated']:9.3f}  {s['reliability_raw']:9.4f} {s['reliability_calibrated']:9.4f}  "
                     f"{s['hit_rate_raw']:8.3f} {s['hit_rate_calibrated']:8.3f}  {np.mean(a):7.2f}")
    return "\n".join(lines)


SCORE_KEYS = ["skill_raw", "skill_calibrated", "brier_raw", "brier_calibrated", "brier_climatology",
              "reliability_raw", "reliability_calibrated", "hit_rate_raw", "hit_rate_calibrated"]


def compare(a):
    """isohypse's calibration file against the reference's JSON: a(L) by lead, the cases, the scores by window
    (and with the logistic method the coefficients of the fit on every year)."""
    with open(a.ref) as f:
        whole = json.load(f)
    with netCDF4.Dataset(a.calibration) as ds:
        ds.set_auto_mask(False)
        iso = {name: np.asarray(ds[name][:]) for name in ds.variables}
        method = ds.method
    if method not in whole["methods"]:
        print(f"{a.calibration}: method {method}; the reference has {', '.join(whole['methods'])}")
        return 1
    ref = whole["methods"][method]
    print(f"== {method}: {a.calibration} against {a.ref}")
    a_iso, a_ref = iso["blend_coefficient"], np.array(ref["blend"])
    n = min(len(a_iso), len(a_ref))
    cases_same = len(a_iso) == len(a_ref) and np.array_equal(iso["cases"].astype(int), np.array(ref["cases"]))
    print(f"lead days: isohypse {len(a_iso)}, reference {len(a_ref)}; cases per lead identical: {cases_same}")
    ok = cases_same
    diff = np.abs(a_iso[:n] - a_ref[:n])
    print("a(L), smoothed in lead: lead, isohypse, reference, difference, cases")
    for L in range(n):
        print(f"  {L:2d}  {a_iso[L]:.6f}  {a_ref[L]:.6f}  {a_iso[L] - a_ref[L]:+.2e}  {int(iso['cases'][L])}")
    print(f"largest a(L) difference: {diff.max():.2e} (lead {int(np.argmax(diff))})")
    ok &= bool(diff.max() <= a.tolerance)
    print(f"{'window':8s} {'score':24s} {'isohypse':>12s} {'reference':>12s} {'difference':>11s}")
    worst = {"skill": (0.0, ""), "other": (0.0, "")}
    for w, s in enumerate(ref["scores"]):
        name = f"{s['first']}-{s['last']}"
        if int(iso["window_cases"][w]) != s["cases"]:
            print(f"{name:8s} cases: isohypse {int(iso['window_cases'][w])}, reference {s['cases']}")
            ok = False
        for key in SCORE_KEYS:
            d = float(iso[key][w]) - s[key]
            print(f"{name:8s} {key:24s} {float(iso[key][w]):12.6f} {s[key]:12.6f} {d:+11.2e}")
            group = "skill" if key.startswith("skill") else "other"
            if abs(d) >= worst[group][0]:
                worst[group] = (abs(d), f"{key}, window {name}")
    print(f"largest skill difference: {worst['skill'][0]:.2e} ({worst['skill'][1]}); "
          f"largest other score difference: {worst['other'][0]:.2e} ({worst['other'][1]})")
    ok &= worst["skill"][0] <= a.tolerance
    if method == "logistic":
        big = 0.0
        for w, m in enumerate(ref["logistic"]):
            W = np.zeros_like(iso["logistic_weight"][w])
            W[m["classes"]] = m["weights"]
            b = np.zeros(W.shape[0])
            b[m["classes"]] = m["intercepts"]
            big = max(big, float(np.abs(iso["logistic_weight"][w] - W).max()),
                      float(np.abs(iso["logistic_intercept"][w] - (b - b.mean())).max()))
        print(f"largest logistic coefficient difference (the fit on every year, intercepts centred): {big:.2e}")
    print("answers agree" if ok else f"ANSWERS DIFFER (tolerance {a.tolerance:g})")
    return 0 if ok else 1


def isohypse_timings(path):
    """The numbers of `isohypse calibrate --timings`' line."""
    with open(path) as f:
        line = next(li for li in f if li.startswith("calibrate timings"))
    t = {}
    for key, pattern in (("model", r"model ([0-9.]+)"), ("scan", r"scan and observed ([0-9.]+)"),
                         ("threads", r"on ([0-9]+) threads"), ("labels", r"threads ([0-9.]+)"),
                         ("reads", r"netCDF-C reads ([0-9.]+)"), ("decode", r"decoding ([0-9.]+)"),
                         ("cases", r"cases ([0-9.]+)"),
                         ("fit", r"cross-validation ([0-9.]+)"), ("written", r"written ([0-9.]+)"),
                         ("total", r"total ([0-9.]+)")):
        t[key] = float(re.search(pattern, line).group(1))
    return t


def times(a):
    """The benchmark's table: both sides' wall and CPU time and peak memory, and where isohypse's time went."""
    iw, ic, im = gnu_time(a.iso_time)
    rw, rc, rm = gnu_time(a.ref_time)
    with open(a.ref) as f:
        ref = json.load(f)
    logistic_s = ref["timings_s"].get("fit and cross-validation, logistic", 0.0)
    t = isohypse_timings(a.iso_timings)
    print(f"{'':40s}{'isohypse calibrate':>20s}{'numpy reference':>18s}{'ratio':>8s}")
    if logistic_s > 0:
        print(f"{'wall time, blend (s)':40s}{iw:20.2f}{rw - logistic_s:18.2f}{(rw - logistic_s) / iw:8.1f}"
              f"   (the reference without its logistic fit)")
    else:
        print(f"{'wall time, blend (s)':40s}{iw:20.2f}{rw:18.2f}{rw / iw:8.1f}")
    if a.auto_time and logistic_s > 0:
        aw, ac, am = gnu_time(a.auto_time)
        print(f"{'wall time, both fits (s)':40s}{aw:20.2f}{rw:18.2f}{rw / aw:8.1f}"
              f"   (isohypse --method auto; the reference --method both)")
        print(f"{'CPU time, both fits, user+sys (s)':40s}{ac:20.2f}{rc:18.2f}{rc / ac:8.1f}")
    print(f"{'CPU time, blend, user+sys (s)':40s}{ic:20.2f}{'':18s}{'':8s}")
    print(f"{'peak memory (MB)':40s}{im:20.0f}{rm:18.0f}{rm / im:8.1f}")
    work = t["model"] + t["scan"] + t["threads"] * t["labels"] + t["cases"] + t["fit"] + t["written"]
    reading = t["model"] + t["scan"] + t["reads"] + t["decode"]
    print(f"isohypse's time (--timings): model {t['model']:.2f} s, scan and observed {t['scan']:.2f} s, read, drift "
          f"and labels {t['labels']:.2f} s on {t['threads']:.0f} threads (netCDF-C reads {t['reads']:.2f} s and "
          f"decoding {t['decode']:.2f} s summed over the threads), cases {t['cases']:.2f} s, fit and cross-validation "
          f"{t['fit']:.2f} s, written {t['written']:.2f} s; total {t['total']:.2f} s")
    print(f"reading files (model, scan, netCDF-C reads, decoding: inflating, unpacking, regridding): {reading:.2f} s "
          f"= {100 * reading / work:.0f} % of the {work:.2f} s of work (the read-drift-labels step counted once per "
          f"thread)")
    print("reference's steps: " + ", ".join(f"{k} {v:.2f} s" for k, v in ref["timings_s"].items()))
    return 0


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    r = sub.add_parser("run")
    r.add_argument("--model", required=True)
    r.add_argument("--reforecasts", required=True, help="a quoted glob")
    r.add_argument("--lag", type=int, default=4)
    r.add_argument("--lag-days", type=int, default=0)
    r.add_argument("--weights", default="exp:3")
    r.add_argument("--method", choices=("blend", "logistic", "both"), default="blend",
                   help="both: label once, fit and score each method")
    r.add_argument("--penalty-c", type=float, default=1.0)
    r.add_argument("--years", help="season years FIRST-LAST only (to try it on a subset)")
    r.add_argument("--out", help="the results as JSON")
    c = sub.add_parser("compare")
    c.add_argument("--calibration", required=True)
    c.add_argument("--ref", required=True)
    c.add_argument("--tolerance", type=float, default=1e-3)
    t = sub.add_parser("times")
    t.add_argument("--iso-time", required=True, help="/usr/bin/time -v's report of isohypse")
    t.add_argument("--ref-time", required=True, help="/usr/bin/time -v's report of the reference")
    t.add_argument("--iso-timings", required=True, help="isohypse calibrate --timings' standard error")
    t.add_argument("--ref", required=True, help="the reference's JSON")
    t.add_argument("--auto-time", help="/usr/bin/time -v's report of isohypse calibrate --method auto")
    a = ap.parse_args()
    return {"run": run, "compare": compare, "times": times}[a.cmd](a)


if __name__ == "__main__":
    sys.exit(main())
