"""Persistence in the guidance against plain numpy counts (issue 13).

- The climatological chance that a regime lasts at least n more days is
  counted in the model file's own record (read with netCDF4-python: time,
  label, in_season): the fraction of in-season days in the state whose next n
  days are in the record, in the season and consecutive, followed by n more
  days in it (../shared/METHODS.md §8 "Empirical persistence", common
  practice); conditioned on the spell's age at the issue date when the record
  holds at least min_age_cases days of that age, else unconditioned.
- The Markov value p_kk^n (Anderson & Goodman 1957, Ann. Math. Statist. 28,
  89-110) from the file's transition matrix.
- The forecast is for the spell under way at the issue date: the members
  covering lead 0 (classify --members gives each member's regimes), each in its
  state there and whether it stays for n more days, weighted by its
  initialisation's weight (Hoffman & Kalnay 1983, Tellus 35A, 100-118).
Two issues on a small planted world: one inside the record (the observed regime
is the record's on the issue date itself) and one the day after the record
ends (the observed regime a day old: its spell one day older, any other state
a spell of age 1)."""
import datetime
import json
import os

import cftime
import netCDF4
import numpy as np
from jsonschema import Draft202012Validator

from common import SOURCE, check, finish, scratch
from classify_data import classify_and_validate, reference, small_model, write_forecast

tmp = scratch()
lat = np.arange(20.0, 80.1, 5.0)
lon = np.arange(170.0, 320.1, 5.0)
with open(os.path.join(SOURCE, "config", "guidance.schema.json")) as f:
    validator = Draft202012Validator(json.load(f))
rng = np.random.default_rng(13)
MEMBERS, LEADS, HORIZONS = 4, 20, [3, 5, 7]


def read_record(path):
    with netCDF4.Dataset(path) as m:
        t = m["time"]
        dates = [datetime.date(d.year, d.month, d.day) for d in netCDF4.num2date(t[:], t.units, t.calendar)]
        labels = np.asarray(m["label"][:]).astype(int)
        in_season = np.asarray(m["in_season"][:]) == 1
    return dates, labels, in_season


def season_sequence(dates, labels, in_season, k):
    """In-season days in order, no regime as state k, and whether each follows its predecessor."""
    idx = np.flatnonzero(in_season)
    states = np.where(labels[idx] < 0, k, labels[idx])
    follows = np.zeros(len(idx), bool)
    for j in range(1, len(idx)):
        follows[j] = idx[j] == idx[j - 1] + 1 and (dates[idx[j]] - dates[idx[j - 1]]).days == 1
    return [dates[i] for i in idx], states, follows


def count(states, follows, s, n, age=0):
    """(cases, lasted) by the plain rule: each day looked at on its own."""
    cases = lasted = 0
    for t in range(len(states)):
        if states[t] != s or t + n >= len(states) or not follows[t + 1:t + n + 1].all():
            continue
        a = 1
        while t - a >= 0 and follows[t - a + 1] and states[t - a] == s:
            a += 1
        if age and a != age:
            continue
        cases += 1
        lasted += bool((states[t + 1:t + n + 1] == s).all())
    return cases, lasted


def planted_runs(model, init, rng, noise=25.0):
    """Heights (members, leads, lat, lon): climatology plus one regime pattern
    held for runs of 2..9 days (a run of no pattern one time in ten), so
    members persist and the forecast chance of lasting is not trivially 0
    (and differs from the value pooled over every lead)."""
    valid = [cftime.datetime(*init, calendar="standard") + datetime.timedelta(days=d) for d in range(LEADS)]
    clim = model.climatology(valid).reshape(LEADS, model.lat.size, model.lon.size)
    h = np.empty((MEMBERS, LEADS, model.lat.size, model.lon.size))
    for m in range(MEMBERS):
        d = 0
        while d < LEADS:
            run_len, a = int(rng.integers(2, 10)), (0.0 if rng.random() < 0.1 else 1.3)
            pattern = model.patterns[rng.integers(model.k)]
            for t in range(d, min(LEADS, d + run_len)):
                h[m, t] = clim[t] + a * pattern + rng.normal(0.0, noise, pattern.shape)
            d += run_len
    return h


def run_case(what, model_path, inits, record):
    model = reference.Model(model_path)
    folder = os.path.join(tmp, what)
    os.makedirs(folder)
    for init in inits:
        write_forecast(os.path.join(folder, "fc_%04d%02d%02d.nc" % init),
                       planted_runs(model, init, rng), lat, lon, init, "standard")
    out = os.path.join(folder, "guidance.json")
    g, r = classify_and_validate(what, out, validator, "--model", model_path, "--forecasts",
                                 os.path.join(folder, "fc_*.nc"), "--members", "--weights", "linear", "--out", out)
    if g is None:
        return
    states = g["states"]
    k = len(states) - 1
    lasting = g["persistence"]["lasting"]
    check(lasting["horizons_days"] == HORIZONS, f"{what}: horizons {lasting['horizons_days']}")
    check_climatology(what, g, lasting, record, states)
    check_markov(what, lasting, model_path, states)
    check_forecast(what, g, lasting, states, k)
    # The terminal text prints the observed regime's three values, rounded.
    st = g["persistence"]["observed"]["regime"]
    pc = lambda v: "/".join("-" if x is None else str(int(np.floor(100 * x + 0.5))) for x in v) + "%"
    want = (f"Spell of {st} under way: lasts 3/5/7 more days: forecast {pc(lasting['forecast'][st])}, record "
            f"{pc(lasting['climatological'][st])}")
    check(want in r.stdout, f"{what}: the terminal says '{want}'")


def check_climatology(what, g, lasting, record, states):
    dates, seq, follows = record
    k = len(states) - 1
    issue = datetime.date.fromisoformat(g["issue_date"])
    # The observed spell from the record: its state and age on the last day on or before the issue date.
    last = max(j for j, d in enumerate(dates) if d <= issue)
    obs_state, age = seq[last], 1
    while last - age >= 0 and follows[last - age + 1] and seq[last - age] == obs_state:
        age += 1
    gap = (issue - dates[last]).days
    obs = g["persistence"]["observed"]
    check(obs is not None and obs["regime"] == states[obs_state] and obs["age_days"] == age,
          f"{what}: observed regime {obs and obs['regime']} for {obs and obs['age_days']} days; "
          f"numpy's record says {states[obs_state]} for {age} days, {gap} day(s) before the issue")
    floor = lasting["min_age_cases"]
    worst, used, fell = 0.0, 0, 0
    ok = True
    for s in range(k + 1):
        want_age = (age + gap if s == obs_state else (1 if gap == 1 else 0)) if gap <= 1 else 0
        ok &= lasting["spell_age_days"][states[s]] == (want_age or None)
        for h, n in enumerate(HORIZONS):
            cases, lasted = count(seq, follows, s, n, want_age) if want_age else (0, 0)
            conditioned = want_age and cases >= floor
            if not conditioned:
                fell += bool(want_age)
                cases, lasted = count(seq, follows, s, n)
            used += bool(conditioned)
            ok &= lasting["climatological_cases"][states[s]][h] == cases
            ok &= lasting["climatological_age_days"][states[s]][h] == (want_age if conditioned else None)
            p = lasting["climatological"][states[s]][h]
            worst = max(worst, abs(p - lasted / cases)) if cases and p is not None else worst
            ok &= (p is None) == (cases == 0)
    check(ok and worst < 1e-12,
          f"{what}: the record's chance of lasting 3, 5, 7 days equals numpy's count for every state "
          f"(max diff {worst:.1e}; {used} conditioned on the spell's age, {fell} fell back for want of {floor} cases)")
    return used


def check_markov(what, lasting, model_path, states):
    with netCDF4.Dataset(model_path) as m:
        names = [v for v in m.variables if "transition" in v and m[v].ndim == 2 and "count" not in v]
        p = np.asarray(m[names[0]][:], float)
    err = max(abs(lasting["markov_climatological"][s][h] - p[i, i] ** n)
              for i, s in enumerate(states) for h, n in enumerate(HORIZONS))
    check(err < 1e-9, f"{what}: markov_climatological is p_kk^n of the file's '{names[0]}' (max diff {err:.1e})")


def check_forecast(what, g, lasting, states, k):
    num = np.zeros((k + 1, len(HORIZONS)))
    den = np.zeros_like(num)
    cases = np.zeros_like(num, dtype=int)
    pooled_num, pooled_den = np.zeros_like(num), np.zeros_like(num)
    for m in g["members"]:
        i0 = -m["first_lead_days"]
        regimes = [states.index(r) for r in m["regimes"]]
        if not 0 <= i0 < len(regimes):
            continue
        s = regimes[i0]
        for h, n in enumerate(HORIZONS):
            if i0 + n >= len(regimes):
                continue
            den[s, h] += m["weight"]
            cases[s, h] += 1
            num[s, h] += m["weight"] * all(x == s for x in regimes[i0 + 1:i0 + n + 1])
    for m in g["members"]:  # the old rule: every day of every member, pooled over leads
        regimes = [states.index(r) for r in m["regimes"]]
        for t, s in enumerate(regimes):
            for h, n in enumerate(HORIZONS):
                if t + n < len(regimes):
                    pooled_den[s, h] += m["weight"]
                    pooled_num[s, h] += m["weight"] * all(x == s for x in regimes[t + 1:t + n + 1])
    worst, ok = 0.0, True
    for s in range(k + 1):
        for h in range(len(HORIZONS)):
            p = lasting["forecast"][states[s]][h]
            ok &= lasting["forecast_members"][states[s]][h] == cases[s, h]
            ok &= (p is None) == (den[s, h] == 0)
            if p is not None and den[s, h]:
                worst = max(worst, abs(p - num[s, h] / den[s, h]))
    check(ok and worst < 1e-12 and cases.sum() > 0,
          f"{what}: the forecast chance of lasting equals numpy's from the members in each state on the issue date "
          f"(weighted by initialisation; {int(cases[:, 0].sum())} members at 3 days; max diff {worst:.1e})")
    pooled = np.where(pooled_den > 0, pooled_num / np.maximum(pooled_den, 1e-300), np.nan)
    mine = np.array([[np.nan if v is None else v for v in lasting["forecast"][s]] for s in states])
    both = ~np.isnan(pooled) & ~np.isnan(mine)
    check(both.any() and np.abs(pooled - mine)[both].max() > 1e-6,
          f"{what}: the value pooled over every lead differs (max diff {np.abs(pooled - mine)[both].max():.3f}), "
          f"so the test tells the two rules apart")


model_path = small_model(tmp, lat, lon)
if model_path:
    dates, labels, in_season = read_record(model_path)
    k = int(labels.max()) + 1
    record = season_sequence(dates, labels, in_season, k)
    print(f"record: {len(dates)} days, {int(in_season.sum())} in season, months "
          f"{sorted({d.month for d, s in zip(dates, in_season) if s})}")
    # Inside the record: the issue date is observed.
    run_case("inside", model_path, [(2013, 1, 18), (2013, 1, 19), (2013, 1, 20)], record)
    # The day after the record ends: the last observed day is the day before.
    last = dates[-1] + datetime.timedelta(days=1)
    inits = [tuple((last - datetime.timedelta(days=d)).timetuple()[:3]) for d in (2, 1, 0)]
    run_case("after", model_path, inits, record)
finish()
