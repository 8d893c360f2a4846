"""The drift removal keeps the reanalysis climate (issue 13): a planted world
whose reforecast years are warmer than the regime model's record.

The world (invented here with netCDF4-python, 5-degree grid over 35-75N,
0-70E):
  - truth = seasonal cycle + a linear trend of TREND m per year whose spatial
    pattern is the ridge of planted regime 0 (so warming that leaks into the
    anomalies reads as that regime) + one of four planted regime patterns
    (a ridge, its trough, a north-south dipole and its opposite) times an
    amplitude held through spells of 4-9 days, or a quiet spell (no regime),
    + 4 m white noise;
  - the winters (July to June) come in pairs whose second winter has the
    first one's anomalies with the opposite sign (and its own noise), so the
    reforecasts' mean weather is zero and what a correction leaves is the
    drift and the trend, nothing sampled;
  - the regime model is derived from the winters 1981-2000 (July 1980 to
    June 2000, k = 4) with "climatology": {"detrend": true} (its C has the
    trend);
  - reforecasts initialised every 10 days from 1 December to 30 January of
    the winters 2011-2020 (2 members, leads 0-20, noleap) = truth + a drift
    D(x) (1 - exp(-lead / TAU)) + 3 m member noise, so they are warmer than
    the record by the trend;
  - forecasts initialised every 10 days from 4 December 2025 to 2 February
    2026 (3 members), the same construction: the record's trend continued,
    plus the same drift; classified in one run (lag 0: all of them).

Checks (each printed with its numbers):
  1. classify --reforecasts: the members' labels equal the planted regime of
     their valid day on nearly every member-day, and their correlations
     equal a numpy computation of F - C(valid) - drift (bench/
     classify_reference.py: Model.climatology, model_climate), to 1e-4;
  2. numpy, on the same files: the former correction F - Rbar and the
     correction with the bracket's sign as ../shared/METHODS.md §8 writes it
     (F - Rbar + [C(valid) - mean C over the reforecasts' valid dates]) leak
     the trend (one and two times trend x years between the forecast's and
     the reforecasts' valid dates, printed from the planted trend) and
     mislabel a clear share of member-days toward the trend's regime: this
     test can fail, and the sign of include/isohypse/numerics/model_drift.hpp
     is the right one;
  3. the mean anomaly over the forecast member-days at the trend pattern's
     centre is the planted one, not shifted by the trend.
Source of the method: ../shared/METHODS.md §8, mean-drift removal that keeps
the reference climate (common practice); the derivation of the sign is in
include/isohypse/numerics/model_drift.hpp."""
import datetime
import json
import math
import os

import numpy as np

from common import check, finish, scratch
from classify_data import QUICK, classify, reference, write_forecast
from derive_data import derive, write_config, write_heights

tmp = scratch()
rng = np.random.default_rng(1313)
lat = np.arange(35.0, 75.1, 5.0)
lon = np.arange(0.0, 70.1, 5.0)
DOMAIN = "35,75,0,70"
LA, LO = np.meshgrid(lat, lon, indexing="ij")
TREND = 3.0            # m per year at the ridge's centre
TREND_ORIGIN = datetime.date(1991, 1, 1)
TAU = 5.0              # days: the drift's e-folding lead
CENTRE = (int(np.argmin(np.abs(lat - 55.0))), int(np.argmin(np.abs(lon - 20.0))))
LEADS = 21
# Reforecasts every 10 days from 1 December to 30 January of the winters 2011-2020 (5 pairs); forecasts every
# 10 days from 4 December 2025 to 2 February 2026. All valid dates fall before 28 February, where the noleap and
# the real calendars agree.
RF_INITS = [datetime.date(w - 1, 12, 1) + datetime.timedelta(days=10 * i) for w in range(2011, 2021) for i in range(7)]
FC_INITS = [datetime.date(2025, 12, 4) + datetime.timedelta(days=10 * i) for i in range(7)]


def blob(lat0, lon0, radius=12.0):
    dx = (LO - lon0) * math.cos(math.radians(55.0))
    return np.exp(-((LA - lat0) ** 2 + dx**2) / (2 * radius**2))


RIDGE = blob(55.0, 20.0)                      # 1 at CENTRE: the trend's pattern
DIPOLE = blob(67.0, 50.0) - blob(43.0, 50.0)
PATTERNS = [RIDGE, -RIDGE, DIPOLE, -DIPOLE]   # planted regimes 0..3; -1 = quiet (no regime)
OPPOSITE = {0: 1, 1: 0, 2: 3, 3: 2, -1: -1}
# The drift: a saddle about (55N, 50E), nearly orthogonal to the four patterns.
DRIFT = 30.0 * ((LA - 55.0) / 20.0) * ((LO - 50.0) / 20.0)


def draw_winter(n=366):
    """Planted states and amplitudes of one winter's days (July to June): spells of 4-9 days."""
    states, amps = np.empty(n, int), np.empty(n)
    day = 0
    while day < n:
        length = int(rng.integers(4, 10))
        s = -1 if rng.random() < 0.15 else int(rng.integers(4))
        states[day:day + length] = s
        amps[day:day + length] = rng.uniform(40.0, 110.0)
        day += length
    return states, amps


# Winter w runs from 1 July of w - 1 to 30 June of w; an even winter repeats the odd one before it with the
# opposite sign, day for day.
WINTERS = {}
for w in range(1981, 2027):
    if w % 2 == 0:
        s, a = WINTERS[w - 1]
        WINTERS[w] = (np.array([OPPOSITE[x] for x in s]), a)
    else:
        WINTERS[w] = draw_winter()


def planted_state(d):
    w = d.year + (d.month >= 7)
    states, amps = WINTERS[w]
    i = (d - datetime.date(w - 1, 7, 1)).days
    return int(states[i]), float(amps[i])


NOISE = {}


def anomaly(d):
    """The planted anomaly of real date d (lat, lon), its noise drawn once per date."""
    s, a = planted_state(d)
    if d not in NOISE:
        NOISE[d] = rng.normal(0.0, 4.0, LA.shape)
    return (a * PATTERNS[s] if s >= 0 else 0.0) + NOISE[d]


def climate(d):
    """The planted climate: a seasonal cycle within the model's harmonics (f as in
    include/isohypse/numerics/climatology.hpp, standard calendar) plus the trend."""
    f = (d.timetuple().tm_yday - 1) / (366 if d.year % 4 == 0 else 365)
    s = np.sin(np.deg2rad(LA))
    season = 80.0 * s * math.cos(2 * math.pi * f) + 25.0 * np.cos(np.deg2rad(LA)) * math.sin(2 * math.pi * f)
    return 5500.0 - 300.0 * s**2 + season + TREND * (d - TREND_ORIGIN).days / 365.25 * RIDGE


def truth(d):
    return climate(d) + anomaly(d)


def runs(init, members):
    """Members (members, leads, lat, lon) of an initialisation: truth + drift + 3 m member noise."""
    first = init
    h = np.empty((members, LEADS) + LA.shape)
    for lead in range(LEADS):
        base = truth(first + datetime.timedelta(days=lead)) + DRIFT * (1.0 - math.exp(-lead / TAU))
        for m in range(members):
            h[m, lead] = base + rng.normal(0.0, 3.0, LA.shape)
    return h


# The record (the winters 1981-2000: 10 pairs), the reforecasts, the forecasts.
first = datetime.date(1980, 7, 1)
days = [first + datetime.timedelta(days=i) for i in range((datetime.date(2000, 7, 1) - first).days)]
write_heights(os.path.join(tmp, "reanalysis.nc"), np.stack([truth(d) for d in days]), lat, lon, first)
os.makedirs(os.path.join(tmp, "rf"))
os.makedirs(os.path.join(tmp, "fc"))
for init in RF_INITS:
    write_forecast(os.path.join(tmp, "rf", f"rf_{init:%Y%m%d}.nc"), runs(init, 2), lat, lon, init.timetuple()[:3])
for init in FC_INITS:
    write_forecast(os.path.join(tmp, "fc", f"fc_{init:%Y%m%d}.nc"), runs(init, 3), lat, lon, init.timetuple()[:3])

model_path = os.path.join(tmp, "model.nc")
cfg = dict(QUICK, climatology={"detrend": True})
r = derive("--input", os.path.join(tmp, "reanalysis.nc"), "--domain", DOMAIN, "--k", "4", "--out", model_path,
           "--config", write_config(tmp, cfg))
check(r.returncode == 0, "derive k=4 with a detrended climatology on the winters 1981-2000"
      + ("" if r.returncode == 0 else r.stderr[-300:]))
if r.returncode != 0:
    finish()
model = reference.Model(model_path)
n_points = LA.size
centre = CENTRE[0] * lon.size + CENTRE[1]

# The model's climatology has the planted trend (its last coefficient is per day).
slope = model.coef[-1, centre] * 365.25
check(model.detrend and abs(slope - TREND) < 0.1,
      f"the model's climatology trend at 55N 20E: {slope:.3f} m per year (planted {TREND})")

# The model's regimes matched to the planted ones by pattern correlation.
corr = np.array([[np.corrcoef(model.patterns[j].ravel(), p.ravel())[0, 1] for j in range(model.k)] for p in PATTERNS])
model_of = [int(np.argmax(corr[i])) for i in range(4)]
check(sorted(model_of) == list(range(4)) and min(corr[i, model_of[i]] for i in range(4)) > 0.9,
      f"the model's regimes are the planted ones: planted -> model {model_of}, pattern correlations "
      f"{[round(float(corr[i, model_of[i]]), 3) for i in range(4)]}")
TREND_REGIME = model_of[0]
drift_cor = [round(float(np.corrcoef(DRIFT.ravel(), p.ravel())[0, 1]), 2) for p in PATTERNS]
print(f"the drift pattern's correlations with the planted patterns: {drift_cor}")


def planted_label(d):
    s, _ = planted_state(d)
    return model_of[s] if s >= 0 else model.k


# classify with the reforecasts, member detail.
out = os.path.join(tmp, "guidance.json")
r = classify("--model", model_path, "--forecasts", os.path.join(tmp, "fc", "fc_*.nc"), "--reforecasts",
             os.path.join(tmp, "rf", "rf_*.nc"), "--members", "--out", out)
check(r.returncode == 0, f"classify --reforecasts --members exits 0 ({r.stderr.strip()[-300:]})")
if r.returncode != 0:
    finish()
with open(out) as f:
    guidance = json.load(f)
by_key = {(m["initialisation"], m["member"]): m for m in guidance["members"]}

# numpy: the three corrections on the same files.
refc = [reference.read_forecast(os.path.join(tmp, "rf", f"rf_{i:%Y%m%d}.nc"), model) for i in RF_INITS]


def near_reforecasts(init):
    """The reforecasts within 7 days of the year of init (classify's default window) with enough leads."""
    pos = reference.year_position(init)
    return [(i, z) for i, z in refc
            if min(abs(reference.year_position(i) - pos), 365 - abs(reference.year_position(i) - pos)) <= 7]


def valid_dates(init):
    return [init + datetime.timedelta(days=lead) for lead in range(LEADS)]


def corrections(init, z):
    """Anomalies (members, leads, points) of forecast z initialised on init (cftime) by the three
    corrections; the bracket is C(valid) - the smoothed mean of C over the reforecasts' valid dates."""
    near = near_reforecasts(init)
    clim_valid = model.climatology(valid_dates(init))
    rbar = reference.running_mean(np.concatenate([zz[:, :LEADS] for _, zz in near]).mean(axis=0), 5)
    crf = reference.running_mean(np.mean([model.climatology(valid_dates(i)) for i, _ in near], axis=0), 5)
    bracket = clim_valid - crf
    return {"new (model_drift.hpp)": z - reference.model_climate(model, refc, init, LEADS)[None],
            "old (F - Rbar)": z - rbar[None],
            "plus sign (METHODS.md 8)": z - rbar[None] + bracket[None]}


def planted_bracket(init):
    """The same bracket from the planted climate: what the old correction leaks."""
    near = near_reforecasts(init)
    real = [datetime.date(d.year, d.month, d.day) for d in valid_dates(init)]
    clim_valid = np.stack([climate(d).ravel() for d in real])
    rf = np.mean([[climate(datetime.date(d.year, d.month, d.day)).ravel() for d in valid_dates(i)] for i, _ in near],
                 axis=0)
    return clim_valid - reference.running_mean(rf, 5)


methods = ["new (model_drift.hpp)", "old (F - Rbar)", "plus sign (METHODS.md 8)"]
wrong = {m: 0 for m in methods}
to_trend = {m: 0 for m in methods}
centre_sum = {m: 0.0 for m in methods}
planted_centre = 0.0
leak_planted = 0.0
years_apart = 0.0
truth_wrong = cpp_wrong = total = differ = 0
cor_err = old_cor_diff = 0.0
for init_t in FC_INITS:
    init, z = reference.read_forecast(os.path.join(tmp, "fc", f"fc_{init_t:%Y%m%d}.nc"), model)
    real = [datetime.date(d.year, d.month, d.day) for d in valid_dates(init)]
    want = np.array([planted_label(d) for d in real])
    planted = np.stack([anomaly(d).ravel() for d in real])
    observed = np.stack([truth(d).ravel() for d in real]) - model.climatology(valid_dates(init))
    truth_labels, _, _ = model.classify(observed)
    truth_wrong += int((truth_labels != want).sum())
    anomalies = corrections(init, z)
    leak_planted += float(planted_bracket(init)[:, centre].sum()) * z.shape[0]
    near = near_reforecasts(init)
    rf_mid = np.mean([(datetime.date(i.year, i.month, i.day) - TREND_ORIGIN).days for i, _ in near])
    years_apart += (init_t - TREND_ORIGIN).days - rf_mid
    for m in range(z.shape[0]):
        got = by_key[(init_t.isoformat(), m)]
        cpp = np.array([model.states.index(s) for s in got["regimes"]])
        cpp_wrong += int((cpp != want).sum())
        total += LEADS
        planted_centre += float(planted[:, centre].sum())
        for name in methods:
            lab, cor, margin = model.classify(reference.running_mean(anomalies[name][m], model.running_mean_days))
            wrong[name] += int((lab != want).sum())
            to_trend[name] += int(((lab == TREND_REGIME) & (want != TREND_REGIME)).sum())
            centre_sum[name] += float(anomalies[name][m][:, centre].sum())
            if name == methods[0]:
                differ += int(((cpp != lab) & (margin >= 1e-4)).sum())
                cor_err = max(cor_err, float(np.abs(np.asarray(got["correlation"]) - cor).max()))
            if name == methods[1]:
                old_cor_diff = max(old_cor_diff, float(np.abs(np.asarray(got["correlation"]) - cor).max()))

# Check 0: the planted world is what the model sees.
check(truth_wrong <= 0.03 * total / 3,
      f"the model labels the truth's anomalies as planted on {total // 3 - truth_wrong} of {total // 3} forecast days")
# Check 1: classify removes the drift without the trend.
check(cpp_wrong <= 0.05 * total,
      f"classify --reforecasts: the members' labels equal the planted regime on {total - cpp_wrong} of {total} "
      f"member-days ({100.0 * cpp_wrong / total:.1f} % differ)")
check(differ == 0 and cor_err < 1e-4,
      f"classify's member labels and correlations equal numpy's F - C(valid) - drift (bench/classify_reference.py "
      f"model_climate): {differ} labels differ, correlations within {cor_err:.1e} (against the old correction's "
      f"correlations: up to {old_cor_diff:.2f})")
# Check 2: the old correction and the plus sign leak the trend. The expected leak at the centre is the planted
# trend times the years between the forecasts' and the near reforecasts' valid dates (the smoothed bracket of the
# planted climate, which also holds the small seasonal difference of the dates).
leak = leak_planted / total
trend_years = TREND * years_apart / len(FC_INITS) / 365.25
print(f"expected leak at 55N 20E: {TREND} m/yr x {years_apart / len(FC_INITS) / 365.25:.2f} years = "
      f"{trend_years:.1f} m (planted bracket {leak:.1f} m); the plus sign twice that")
planted_mean = planted_centre / total
bias = {m: centre_sum[m] / total - planted_mean for m in methods}
for name in methods:
    print(f"  {name:26s} member-days mislabelled {wrong[name]:3d} of {total} ({100.0 * wrong[name] / total:5.1f} %), "
          f"moved to the trend's regime {to_trend[name]:3d}, mean anomaly at the centre minus the planted one "
          f"{bias[name]:+6.1f} m")
new, old, plus = methods
check(wrong[new] <= 0.05 * total and wrong[old] >= 0.15 * total and wrong[plus] > wrong[old]
      and to_trend[old] >= 0.8 * wrong[old] and to_trend[plus] >= 0.8 * wrong[plus],
      f"the old correction and the plus sign mislabel a clear share toward the trend's regime: "
      f"{100.0 * wrong[old] / total:.1f} % and {100.0 * wrong[plus] / total:.1f} % of member-days "
      f"({to_trend[old]} and {to_trend[plus]} to the trend's regime), the new one {100.0 * wrong[new] / total:.1f} %")
check(abs(bias[old] - leak) < 0.1 * leak and abs(bias[plus] - 2 * leak) < 0.1 * leak,
      f"their bias at the centre is the leak: old {bias[old]:+.1f} m against {leak:.1f} m, "
      f"plus sign {bias[plus]:+.1f} m against {2 * leak:.1f} m")
# Check 3: the anomalies keep the planted weather.
check(abs(bias[new]) < 0.1 * leak,
      f"the new correction's mean anomaly at 55N 20E is the planted one: {centre_sum[new] / total:+.1f} m against "
      f"{planted_mean:+.1f} m (within 10 % of the {leak:.1f} m leak)")
finish()
