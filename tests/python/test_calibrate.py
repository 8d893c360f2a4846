"""isohypse calibrate and classify --calibration end to end on the small invented world
(isohypse-demo-world --size small: reforecasts on the Mondays and Thursdays of December-January 2015-2020, 3
members; the no-skill system's reforecasts on the same dates), against plain numpy and scikit-learn computed
from the cases calibrate writes (--cases) and the regime model's own record:
- the observed states and the monthly climatological frequencies of the cases equal the model record's;
- the blend coefficient a(L): the closed form of ../shared/METHODS.md §8 (common practice) pooled over the 5
  leads around L, clipped to [0, 1]; the cross-validated probabilities: refitted without each season year;
- the scores by window: mean multi-category Brier score (Brier 1950, Mon. Wea. Rev. 78, 1-3) and its skill
  against climatology, the binned reliability term (Stephenson, Coelho & Jolliffe 2008, Wea. Forecasting 23,
  752-757) summed over the states, the hit rate;
- --method logistic against scikit-learn's LogisticRegression (multinomial, L2, newton-cg; Pedregosa et al.
  2011, JMLR 12, 2825-2830) per window, all years and leaving each year out;
- fields held between read and labels or read again (--held-fields-memory 0): the same probabilities;
- the no-skill system: its calibrated probabilities stay within 0.05 of the climatological frequencies;
- classify --calibration: calibrated = c + a(L) (raw - c) day by day, windows blended with the window's mean
  a(L) towards the record's climatology of such windows (numpy over the record), both CSV pairs;
- bad input: a calibration for another model (classify, and serve at start-up), too few reforecast years, observed
  files that do not cover the reforecasts: a clear message, exit 2, no output."""
import csv
import datetime
import glob
import json
import os
import shutil
import sys
import warnings

import netCDF4
import numpy as np
from sklearn.linear_model import LogisticRegression

sys.path.insert(0, os.path.dirname(__file__))
from common import BIN, check, finish, run, scratch  # noqa: E402
from daily_season import small_world_model  # noqa: E402

WINDOWS = [(1, 3), (4, 7), (8, 14), (15, 28), (29, 45)]
tmp = scratch()
world, derive_cfg, model = small_world_model(tmp)

with netCDF4.Dataset(model) as ds:
    t = ds["time"]
    record_dates = [datetime.date(d.year, d.month, d.day) for d in netCDF4.num2date(t[:], t.units, t.calendar)]
    record_labels = np.asarray(ds["label"][:], int)
    record_season = np.asarray(ds["in_season"][:], int)
    k = ds["centroid"].shape[0]
S = k + 1
states = [f"R{i + 1}" for i in range(k)] + ["no_regime"]
label_of = {d: (l if l >= 0 else k) for d, l in zip(record_dates, record_labels)}
# The record's monthly frequencies (in-season days of a season month; label -1 = no regime).
monthly = {}
for m in range(1, 13):
    sel = [label_of[d] for d, s in zip(record_dates, record_season) if d.month == m and s]
    if sel:
        monthly[m] = np.bincount(sel, minlength=S) / len(sel)


def calibrate(name, reforecasts, *extra):
    out, cases = os.path.join(tmp, name + ".nc"), os.path.join(tmp, name + ".csv")
    r = run([BIN, "calibrate", "--model", model, "--reforecasts", reforecasts, "--lag", "3", "--weights", "exp:3",
             "--out", out, "--cases", cases, *extra])
    assert r.returncode == 0, r.stderr
    print(r.stdout)
    with open(cases) as f:
        rows = list(csv.DictReader(f))
    cols = lambda what: np.array([[float(r[what + s]) for s in states] for r in rows])  # noqa: E731
    c = {"issue": [datetime.date.fromisoformat(r["issue_date"]) for r in rows],
         "valid": [datetime.date.fromisoformat(r["valid_date"]) for r in rows],
         "lead": np.array([int(r["lead_days"]) for r in rows]), "year": np.array([int(r["season_year"]) for r in rows]),
         "members": np.array([float(r["members"]) for r in rows]),
         "obs": np.array([states.index(r["observed"]) for r in rows]),
         "raw": cols("raw_"), "cal": cols("calibrated_"), "clim": cols("climatology_")}
    return out, c


def blend_a(p, c, o, year, z=2.0):
    """The closed form, shrunk by max(0, 1 - (z SE / a)^2) with SE the jackknife standard error over the season
    years (Efron 1982, The Jackknife, the Bootstrap and Other Resampling Plans, ch. 3), clipped to [0, 1]."""
    d = p - c
    oc = np.eye(S)[o] - c
    num, den = np.sum(d * oc, axis=1), np.sum(d * d, axis=1)
    if den.sum() <= 0:
        return np.nan
    a = num.sum() / den.sum()
    ys = np.unique(year)
    if len(ys) >= 2:
        loo = np.array([(num.sum() - num[year == y].sum()) / (den.sum() - den[year == y].sum()) for y in ys])
        se = np.sqrt((len(ys) - 1) / len(ys) * np.sum((loo - loo.mean()) ** 2))
        a = 0.0 if a <= 0 else a * max(0.0, 1 - (z * se / a) ** 2)
    return float(np.clip(a, 0, 1))


def pooled_blend(cs, use, n_leads):
    a = np.full(n_leads, np.nan)
    for lead in range(n_leads):
        sel = use & (cs["lead"] >= lead - 2) & (cs["lead"] <= lead + 2)
        if sel.sum() >= 30:
            a[lead] = blend_a(cs["raw"][sel], cs["clim"][sel], cs["obs"][sel], cs["year"][sel])
    finite = np.flatnonzero(np.isfinite(a))
    for lead in np.flatnonzero(~np.isfinite(a)):  # gaps take the nearest fitted lead
        a[lead] = a[finite[np.argmin(np.abs(finite - lead))]] if finite.size else 1.0
    return a


def mc_brier(p, o):
    return float(np.mean(np.sum((p - np.eye(S)[o]) ** 2, axis=1)))


def binned_rel(p, o):
    rel = 0.0
    for s in range(S):
        x, y = p[:, s], (o == s).astype(float)
        b = np.minimum((x * 10).astype(int), 9)
        for i in range(10):
            m = b == i
            if m.any():
                rel += m.sum() * (x[m].mean() - y[m].mean()) ** 2
    return rel / len(o)


# ---- the blend
cal_path, cs = calibrate("blend", f"{world}/reforecasts/*.nc")
obs_ok = all(label_of[v] == o for v, o in zip(cs["valid"], cs["obs"]))
clim_ok = max(float(np.abs(cs["clim"][i] - monthly[v.month]).max()) for i, v in enumerate(cs["valid"]))
check(obs_ok and clim_ok < 1e-12 and all(v.month in monthly for v in cs["valid"]),
      f"{len(cs['lead'])} cases: observed states equal the model record's labels at the valid dates, climatology the "
      f"record's monthly frequencies (within {clim_ok:.1e}), every valid date in season")
with netCDF4.Dataset(cal_path) as ds:
    a_file = np.asarray(ds["blend_coefficient"][:])
    scores = {v: np.asarray(ds[v][:]) for v in ("skill_raw", "skill_calibrated", "reliability_raw",
                                                  "reliability_calibrated", "hit_rate_raw", "hit_rate_calibrated")}
    years = list(ds.reforecast_years)
    check(int(ds.isohypse_calibration_format_version) == 1 and ds.method == "blend" and
          ds.regime_model_file == "model.nc" and len(ds.reforecast_files.split("\n")) ==
          len(glob.glob(f"{world}/reforecasts/*.nc")),
          f"calibration file: format version 1, method blend, model file named, {len(years)} season years, "
          f"every reforecast file listed")
a_np = pooled_blend(cs, np.ones(len(cs["lead"]), bool), len(a_file))
check(np.abs(a_np - a_file).max() < 1e-9, f"a(L) = numpy's closed form pooled over leads L-2..L+2, shrunk by its "
      f"jackknife error over years (max difference "
      f"{np.abs(a_np - a_file).max():.1e}); a(1) {a_file[1]:.3f}, a(10) {a_file[10]:.3f}, a(40) {a_file[40]:.3f}")
cv = np.empty_like(cs["raw"])
for y in years:
    held = cs["year"] == y
    a_y = pooled_blend(cs, ~held, len(a_file))
    cv[held] = cs["clim"][held] + a_y[cs["lead"][held]][:, None] * (cs["raw"][held] - cs["clim"][held])
check(np.abs(cv - cs["cal"]).max() < 1e-9, f"cross-validated probabilities = numpy's refit without each of the "
      f"{len(years)} season years (max difference {np.abs(cv - cs['cal']).max():.1e})")
worst = 0.0
for i, (f, l) in enumerate(WINDOWS):
    sel = (cs["lead"] >= f) & (cs["lead"] <= l)
    o = cs["obs"][sel]
    ref = mc_brier(cs["clim"][sel], o)
    want = {"skill_raw": 1 - mc_brier(cs["raw"][sel], o) / ref, "skill_calibrated": 1 - mc_brier(cs["cal"][sel], o) / ref,
            "reliability_raw": binned_rel(cs["raw"][sel], o), "reliability_calibrated": binned_rel(cs["cal"][sel], o),
            "hit_rate_raw": float(np.mean(cs["raw"][sel].argmax(1) == o)),
            "hit_rate_calibrated": float(np.mean(cs["cal"][sel].argmax(1) == o))}
    worst = max(worst, max(abs(want[v] - scores[v][i]) for v in want))
    print(f"  leads {f}-{l}: skill raw {want['skill_raw']:.3f} calibrated {want['skill_calibrated']:.3f}; "
          f"REL raw {want['reliability_raw']:.4f} calibrated {want['reliability_calibrated']:.4f}")
check(worst < 1e-9, f"skills, binned reliability and hit rates by window = numpy's from the cases (max difference "
      f"{worst:.1e})")

# ---- the same read with no fields held: every initialisation read twice (drift, then labels), one thread
_, cr = calibrate("blend-reread", f"{world}/reforecasts/*.nc", "--held-fields-memory", "0", "--threads", "1")
check(np.array_equal(cr["raw"], cs["raw"]) and np.array_equal(cr["cal"], cs["cal"]),
      f"--held-fields-memory 0 --threads 1 (each initialisation read again for its labels) gives the same raw and "
      f"calibrated probabilities, bit for bit, as fields held between read and labels on every core "
      f"({len(cr['lead'])} cases)")

# ---- the logistic method against scikit-learn
log_path, cl = calibrate("logistic", f"{world}/reforecasts/*.nc", "--method", "logistic")


def features(c):
    m = c["members"][:, None]
    return np.hstack([np.log((c["raw"] * m + 0.5) / (m + 0.5 * S)), np.log(np.maximum(c["clim"], 1e-6))])


def sk_fit(X, y):
    m = LogisticRegression(C=1.0, solver="newton-cg", tol=1e-8, max_iter=1000)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        m.fit(X, y)
    return m


def sk_prob(m, X):
    p = np.zeros((X.shape[0], S))
    p[:, m.classes_] = m.predict_proba(X)
    return p


X = features(cl)
with netCDF4.Dataset(log_path) as ds:
    weights = np.asarray(ds["logistic_weight"][:])
w_err = p_err = 0.0
for i, (f, l) in enumerate(WINDOWS):
    sel = (cl["lead"] >= f) & (cl["lead"] <= l)
    m = sk_fit(X[sel], cl["obs"][sel])
    if len(m.classes_) == S:
        w_err = max(w_err, float(np.abs(m.coef_ - weights[i]).max()))
    for y in years:
        tr, te = sel & (cl["year"] != y), sel & (cl["year"] == y)
        if te.any():
            p_err = max(p_err, float(np.abs(sk_prob(sk_fit(X[tr], cl["obs"][tr]), X[te]) - cl["cal"][te]).max()))
check(w_err < 1e-5 and p_err < 1e-6, f"logistic: weights by window = scikit-learn's on all years (within "
      f"{w_err:.1e}); cross-validated probabilities = scikit-learn's refit without each year (within {p_err:.1e})")

# ---- auto: per window, the method with the lower cross-validated Brier score
auto_path, ca = calibrate("auto", f"{world}/reforecasts/*.nc", "--method", "auto")
same_cases = (len(ca["lead"]) == len(cs["lead"]) == len(cl["lead"]) and ca["issue"] == cs["issue"] == cl["issue"]
              and (ca["lead"] == cs["lead"]).all())
want_methods, auto_err = [], 0.0
for f, l in WINDOWS:
    sel = (ca["lead"] >= f) & (ca["lead"] <= l)
    better = mc_brier(cl["cal"][sel], ca["obs"][sel]) < mc_brier(cs["cal"][sel], ca["obs"][sel])
    want_methods.append("logistic" if better else "blend")
    auto_err = max(auto_err, float(np.abs(ca["cal"][sel] - (cl if better else cs)["cal"][sel]).max()))
with netCDF4.Dataset(auto_path) as ds:
    methods = ds.window_methods.split(",")
check(same_cases and methods == want_methods and auto_err < 1e-9,
      f"auto: window methods {','.join(methods)} = the lower of numpy's cross-validated Brier scores of the blend's "
      f"and the logistic's probabilities; its probabilities are that method's (within {auto_err:.1e})")

# ---- the no-skill system: the 5 leads pooled around each lead hold about 500 cases of 7 season years here (the
# demo's full world about 1350 of 11, where every case stays within 0.05 with the blend and with auto)
for method in ("blend", "auto"):
    _, cn = calibrate("noskill-" + method, f"{world}/reforecasts_noskill/*.nc", "--method", method)
    dev = np.abs(cn["cal"] - cn["clim"]).max(axis=1)
    raw_dev = np.abs(cn["raw"] - cn["clim"]).max(axis=1)
    by_lead = [dev[cn["lead"] == lead].mean() for lead in np.unique(cn["lead"])]
    check(max(by_lead) <= 0.05 and np.median(dev) <= 0.01,
          f"no-skill system, {method}: calibrated probabilities on average within {max(by_lead):.3f} of the "
          f"climatological frequencies at every lead (<= 0.05; median case {np.median(dev):.3f}, worst "
          f"{dev.max():.3f}; raw ones on average {raw_dev.mean():.2f} away)")

# ---- classify --calibration
csv_dir, guidance = os.path.join(tmp, "csv"), os.path.join(tmp, "g.json")
r = run([BIN, "classify", "--model", model, "--forecasts", f"{world}/forecasts/*.nc", "--reforecasts",
         f"{world}/reforecasts/*.nc", "--lag", "3", "--weights", "exp:3", "--calibration", cal_path, "--csv", csv_dir,
         "--out", guidance])
assert r.returncode == 0, r.stderr
g = json.load(open(guidance))
issue = datetime.date.fromisoformat(g["issue_date"])
with netCDF4.Dataset(cal_path) as ds:
    blend_sums = np.asarray(ds["blend_sums"][:])  # lead x season year x (numerator, denominator, q, q m, cases)


def a_for(sums, lead, members=None, z=2.0):
    """a(L) refitted for an ensemble of `members`: each year's denominator with its sampling noise q = sum_k
    p_k (1 - p_k) / (m - 1) rescaled, D - Q + Q m / M (the binomial variance of a sample proportion, common
    practice), then the jackknife shrinkage and the clip, as blend_a; members None: as fitted."""
    t = sums[min(lead, len(sums) - 1)]
    t = t[t[:, 4] > 0]
    num, den = t[:, 0], (t[:, 1] if members is None else t[:, 1] - t[:, 2] + t[:, 3] / members)
    if den.sum() <= 0:
        return 0.0
    a = num.sum() / den.sum()
    loo_den = den.sum() - den
    if (loo_den <= 0).any():
        return 0.0
    loo = (num.sum() - num) / loo_den
    se = np.sqrt((len(t) - 1) / len(t) * np.sum((loo - loo.mean()) ** 2))
    a = 0.0 if a <= 0 else a * max(0.0, 1 - (z * se / a) ** 2)
    return float(np.clip(a, 0, 1))


same_size = max(abs(a_for(blend_sums, lead) - a_file[lead]) for lead in range(len(a_file)))
day_err, days_adjusted = 0.0, 0
for d in g["daily"]:
    c = monthly[datetime.date.fromisoformat(d["valid_date"]).month]
    raw = np.array([d["raw_probabilities"][s] for s in states])
    cal = np.array([d["probabilities"][s] for s in states])
    a_day = a_for(blend_sums, d["lead_days"], d["members"])
    days_adjusted += abs(a_day - a_file[min(d["lead_days"], len(a_file) - 1)]) > 1e-3
    day_err = max(day_err, float(np.abs(c + a_day * (raw - c) - cal).max()))


def window_climatology(length, month):
    """Runs of `length` consecutive in-season record days whose middle day falls in `month`: how often each state
    dominates (ties split) and its mean days."""
    dom, days, runs = np.zeros(S), np.zeros(S), 0
    for i in range(len(record_dates) - length + 1):
        span = range(i, i + length)
        if not all(record_season[j] for j in span) or (record_dates[i + length - 1] - record_dates[i]).days != length - 1:
            continue
        if record_dates[i + (length - 1) // 2].month != month:
            continue
        n = np.bincount([label_of[record_dates[j]] for j in span], minlength=S)
        top = np.flatnonzero(n == n.max())
        dom[top] += 1 / len(top)
        days += n
        runs += 1
    return dom / runs, days / runs


win_err = 0.0
for w in g["windows"]:
    f, l = w["first_lead_days"], w["last_lead_days"]
    month = (issue + datetime.timedelta(days=(f + l) // 2)).month
    dom_c, days_c = window_climatology(l - f + 1, month)
    a_w = float(np.mean([a_for(blend_sums, x, w["members"]) for x in range(f, l + 1)]))
    raw_dom = np.array([w["raw_dominance"][s] for s in states])
    raw_days = np.array([w["raw_expected_days"][s] for s in states])
    covered = raw_days.sum()
    want_dom = dom_c + a_w * (raw_dom - dom_c)
    want_days = days_c * covered / (l - f + 1) + a_w * (raw_days - days_c * covered / (l - f + 1))
    win_err = max(win_err, float(np.abs(want_dom - [w["dominance"][s] for s in states]).max()),
                  float(np.abs(want_days - [w["expected_days"][s] for s in states]).max()),
                  abs(a_w - w["calibration_coefficient"]))
check(g["format_version"] == 4 and g["calibration"]["applied"] and g["calibration"]["headline"] == "calibrated" and
      day_err < 1e-9 and win_err < 1e-9 and same_size < 1e-12,
      f"classify --calibration: the file's sums give its a(L) (within {same_size:.1e}); daily calibrated = c + a(L) "
      f"(raw - c) with a(L) refitted for the day's members ({days_adjusted} of {len(g['daily'])} days differ from the "
      f"file's a(L) by over 1e-3; within {day_err:.1e}); windows blended with "
      f"their mean a(L) towards numpy's climatology of such windows in the record (within {win_err:.1e})")


def read_csv(name):
    with open(os.path.join(csv_dir, name)) as f:
        return list(csv.DictReader(f))


daily, daily_raw = read_csv("daily.csv"), read_csv("daily_raw.csv")
windows, windows_raw = read_csv("windows.csv"), read_csv("windows_raw.csv")
csv_err = 0.0
for d, row, row_raw in zip(g["daily"], daily, daily_raw):
    for s in states:
        csv_err = max(csv_err, abs(float(row[s]) - d["probabilities"][s]), abs(float(row_raw[s]) - d["raw_probabilities"][s]))
for w, row, row_raw in zip(g["windows"], windows, windows_raw):
    for s in states:
        csv_err = max(csv_err, abs(float(row["p_dominant_" + s]) - w["dominance"][s]),
                      abs(float(row_raw["p_dominant_" + s]) - w["raw_dominance"][s]),
                      abs(float(row_raw["expected_days_" + s]) - w["raw_expected_days"][s]))
check(len(daily) == len(daily_raw) == len(g["daily"]) and len(windows) == len(windows_raw) == len(g["windows"]) and
      csv_err < 1e-5, f"daily.csv/windows.csv hold the calibrated values, daily_raw.csv/windows_raw.csv the raw ones "
      f"(within {csv_err:.1e}, 6 significant digits)")
r = run([BIN, "inspect", cal_path])
check(r.returncode == 0 and "isohypse calibration, format version 1" in r.stdout and "model.nc" in r.stdout and
      "29-45" in r.stdout, "inspect describes the calibration: version, regime model, scores by window")

# ---- classify with the auto calibration: each day by its window's method (the logistic model applied in numpy)
r = run([BIN, "classify", "--model", model, "--forecasts", f"{world}/forecasts/*.nc", "--reforecasts",
         f"{world}/reforecasts/*.nc", "--lag", "3", "--weights", "exp:3", "--calibration", auto_path,
         "--out", os.path.join(tmp, "g_auto.json")])
assert r.returncode == 0, r.stderr
ga = json.load(open(os.path.join(tmp, "g_auto.json")))
with netCDF4.Dataset(auto_path) as ds:
    lw, lb, auto_sums = (np.asarray(ds[v][:]) for v in ("logistic_weight", "logistic_intercept", "blend_sums"))


def window_index(lead):
    return int(np.argmin([0 if f <= lead <= l else min(abs(lead - f), abs(lead - l)) for f, l in WINDOWS]))


auto_day_err, used = 0.0, set()
for d in ga["daily"]:
    c = monthly[datetime.date.fromisoformat(d["valid_date"]).month]
    raw = np.array([d["raw_probabilities"][s] for s in states])
    w, lead = window_index(d["lead_days"]), d["lead_days"]
    if methods[w] == "logistic":
        m = d["members"]
        x = np.concatenate([np.log((raw * m + 0.5) / (m + 0.5 * S)), np.log(np.maximum(c, 1e-6))])
        z = lw[w] @ x + lb[w]
        want = np.exp(z - z.max()) / np.exp(z - z.max()).sum()
    else:
        want = c + a_for(auto_sums, lead, d["members"]) * (raw - c)
    used.add(methods[w])
    auto_day_err = max(auto_day_err, float(np.abs(want - [d["probabilities"][s] for s in states]).max()))
check(auto_day_err < 1e-9 and used == set(methods) and ga["calibration"]["method"] == "auto" and
      [x["method"] for x in ga["calibration"]["cross_validated_skill"]] == methods,
      f"classify with the auto calibration: each day by its window's method ({', '.join(sorted(used))}; the "
      f"logistic softmax in numpy), within {auto_day_err:.1e}")

# ---- bad input: a clear message, exit 2, no output
other = os.path.join(tmp, "other.nc")
r = run([BIN, "derive", "--config", derive_cfg, "--input", f"{world}/reanalysis/*.nc", "--domain", "20,80,170,-40",
         "--k", "3", "--out", other])
assert r.returncode == 0, r.stderr
out = os.path.join(tmp, "refused.json")
r = run([BIN, "classify", "--model", other, "--forecasts", f"{world}/forecasts/*.nc", "--calibration", cal_path,
         "--out", out])
check(r.returncode == 2 and "made for the regime model model.nc" in r.stderr and not os.path.exists(out),
      f"a calibration for another regime model is refused, naming it: exit {r.returncode}: {r.stderr.strip()[:160]}")
r = run([BIN, "serve", "--model", other, "--inbox", os.path.join(tmp, "srv-in"), "--archive",
         os.path.join(tmp, "srv-archive"), "--listen", "127.0.0.1:0", "--calibration", cal_path],
        timeout=60, env=dict(os.environ, ISOHYPSE_TOKEN=""))
check(r.returncode == 2 and "made for the regime model model.nc" in r.stderr and
      not os.path.exists(os.path.join(tmp, "srv-in")) and not os.path.exists(os.path.join(tmp, "srv-archive")),
      f"serve refuses a calibration for another regime model at start-up, before making its folders (exit {r.returncode}): {r.stderr[-160:]!r}")
few = os.path.join(tmp, "few")
os.makedirs(few)
for p in glob.glob(f"{world}/reforecasts/rf_2015*.nc") + glob.glob(f"{world}/reforecasts/rf_2016*.nc"):
    if os.path.basename(p)[3:7] == "2015" or os.path.basename(p)[7:9] == "01":
        shutil.copy(p, few)
out = os.path.join(tmp, "few.nc")
r = run([BIN, "calibrate", "--model", model, "--reforecasts", f"{few}/*.nc", "--out", out])
check(r.returncode == 2 and "at least 3 years" in r.stderr and not os.path.exists(out),
      f"too few reforecast years: exit {r.returncode}: {r.stderr.strip()[:200]}")
out = os.path.join(tmp, "uncovered.nc")
r = run([BIN, "calibrate", "--model", model, "--reforecasts", f"{world}/reforecasts/*.nc", "--observed",
         f"{world}/analysis/*.nc", "--out", out])
check(r.returncode == 2 and "are not observed" in r.stderr and "analysis" in r.stderr and not os.path.exists(out),
      f"observed files that do not cover the reforecasts: exit {r.returncode}: {r.stderr.strip()[:220]}")
finish()
