"""Window dominance at long leads (issue 13): members covering at least 80 % of
a window's days count, each with its most frequent state over the days it
covers.

A small world (classify_data.small_model, a k = 4 model) and four invented
initialisations of 46 lead days, issued with the latest: ages 5, 2, 1 and 0
days. In the 29-45 window (17 days) the initialisations of ages 0, 1 and 2
cover 17, 16 and 15 days (100, 94 and 88 %) and count; the one of age 5
covers 12 (71 %) and does not. Every window's dominance, member count,
member weight and initialisation count is recomputed with numpy from the
member-level assignments (`classify --members`): the weighted fraction of
members whose most frequent state is k, ties split equally (the lagged
ensemble of Hoffman & Kalnay 1983, Tellus 35A, 100-118, with each member's
window mode as its vote). Expected days stay the sums of the daily weighted
fractions of every covering member. The 29-45 window must count more members
than the latest initialisation holds. windows.csv's new columns and the
terminal table's members column agree with the JSON, which validates against
config/guidance.schema.json (jsonschema, Draft 2020-12)."""
import csv
import json
import os

import numpy as np
from jsonschema import Draft202012Validator

from common import SOURCE, check, finish, scratch
from classify_data import classify, planted_forecast, reference, small_model, write_forecast

MIN_COVERAGE = 0.8  # the rule under test (ensemble_stats.hpp, kDominanceMinCoverage)
MEMBERS, LEADS = 3, 46
INITS = [(2025, 12, 10), (2025, 12, 13), (2025, 12, 14), (2025, 12, 15)]

tmp = scratch()
lat = np.arange(20.0, 80.1, 5.0)
lon = np.arange(170.0, 320.1, 5.0)
rng = np.random.default_rng(13)


def recompute(members, states, first, last, min_coverage=MIN_COVERAGE):
    """Dominance, counts and expected days of window [first, last] from the
    member assignments, in plain numpy; members covering less than
    min_coverage of the window's days have no dominance vote."""
    n = len(states)
    index = {s: i for i, s in enumerate(states)}
    dominance, weight, counted, inits = np.zeros(n), 0.0, 0, set()
    expected_w = np.zeros((last - first + 1, n))  # weight per day and state
    for m in members:
        labels = np.array([index[s] for s in m["regimes"]])
        offsets = m["first_lead_days"] + np.arange(labels.size)
        inside = labels[(offsets >= first) & (offsets <= last)]
        np.add.at(expected_w, (offsets[(offsets >= first) & (offsets <= last)] - first, inside), m["weight"])
        if inside.size < min_coverage * (last - first + 1) - 1e-9:
            continue
        days_in = np.bincount(inside, minlength=n)
        modes = np.flatnonzero(days_in == days_in.max())
        dominance[modes] += m["weight"] / modes.size
        weight += m["weight"]
        counted += 1
        inits.add(m["initialisation"])
    covered = expected_w.sum(axis=1) > 0
    expected = (expected_w[covered] / expected_w[covered].sum(axis=1, keepdims=True)).sum(axis=0)
    return (dominance / weight if counted else np.full(n, np.nan)), counted, weight, len(inits), expected


def check_windows(g):
    states = g["states"]
    worst, counts_ok = 0.0, True
    for w in g["windows"]:
        dom, counted, weight, inits, expected = recompute(g["members"], states, w["first_lead_days"],
                                                          w["last_lead_days"])
        got = np.array([np.nan if w["dominance"][s] is None else w["dominance"][s] for s in states])
        worst = max(worst, float(np.nanmax(np.abs(got - dom))), float(np.max(np.abs(
            np.array([w["expected_days"][s] for s in states]) - expected))))
        counts_ok &= (w["members"], w["initialisations"]) == (counted, inits)
        counts_ok &= abs(w["member_weight"] - weight) < 1e-12 and w["min_coverage"] == MIN_COVERAGE
        print(f"  window {w['first_lead_days']}-{w['last_lead_days']}: {counted} members of {inits} initialisations, "
              f"weight {weight:.4f}, dominance {np.round(dom, 4).tolist()}")
    check(worst < 1e-12, f"every window's dominance and expected days equal numpy's from the member assignments "
          f"under the 80 % rule (max diff {worst:.1e})")
    check(counts_ok, "every window's members, member_weight, initialisations and min_coverage equal numpy's")


def check_long_window(g):
    w = next((w for w in g["windows"] if (w["first_lead_days"], w["last_lead_days"]) == (29, 45)), None)
    check(w is not None, "the guidance has the 29-45 window")
    if w is None:
        return
    ages = sorted(i["age_days"] for i in g["ensemble"]["initialisations"])
    latest = [i for i in g["ensemble"]["initialisations"] if i["age_days"] == 0][0]
    weights = {i["age_days"]: i["weight"] for i in g["ensemble"]["initialisations"]}
    check(ages == [0, 1, 2, 5], f"initialisation ages {ages} (want 0, 1, 2, 5)")
    # Worked by hand: ages 0, 1, 2 cover 17, 16, 15 of 17 days; age 5 covers 12 (71 %).
    want_weight = MEMBERS * (weights[0] + weights[1] + weights[2])
    check(w["members"] == 3 * MEMBERS and w["initialisations"] == 3 and abs(w["member_weight"] - want_weight) < 1e-12,
          f"29-45: {w['members']} members of {w['initialisations']} initialisations, weight {w['member_weight']:.4f} "
          f"(want {3 * MEMBERS} of 3, weight {want_weight:.4f}: ages 0, 1, 2 but not 5)")
    check(w["members"] > latest["members"],
          f"29-45 counts more members ({w['members']}) than the latest initialisation holds ({latest['members']})")
    # The rule before issue 13 (every day covered) would have counted the latest initialisation alone.
    _, before, _, before_inits, _ = recompute(g["members"], g["states"], 29, 45, min_coverage=1.0)
    check(before == latest["members"] and before_inits == 1,
          f"requiring every day would count {before} members of {before_inits} initialisation")


def check_csv_and_text(g, folder, stdout):
    with open(os.path.join(folder, "windows.csv")) as f:
        rows = list(csv.reader(f))
    check(rows[0][-3:] == ["members", "member_weight", "initialisations"],
          f"windows.csv ends with members,member_weight,initialisations ({','.join(rows[0][-3:])})")
    ok = len(rows) - 1 == len(g["windows"])
    for row, w in zip(rows[1:], g["windows"]):
        ok &= int(row[-3]) == w["members"] and int(row[-1]) == w["initialisations"]
        ok &= abs(float(row[-2]) - w["member_weight"]) <= 1e-5 * max(1.0, w["member_weight"])
    check(ok, f"windows.csv's member columns equal the JSON's in all {len(rows) - 1} rows")
    lines = [line for line in stdout.splitlines() if line.lstrip().startswith("29-45")]
    want = f"{g['windows'][-1]['members']} from {g['windows'][-1]['initialisations']} initialisations"
    check(len(lines) == 1 and lines[0].rstrip().endswith(want),
          f"the terminal table's 29-45 line ends with '{want}' ({lines[0].strip() if lines else 'no line'})")


model_path = small_model(tmp, lat, lon)
if model_path:
    model = reference.Model(model_path)
    paths = []
    for init in INITS:
        paths.append(os.path.join(tmp, "fc_%04d%02d%02d.nc" % init))
        heights = planted_forecast(model, init, "noleap", MEMBERS, LEADS, rng)
        write_forecast(paths[-1], heights, lat, lon, init, "noleap")
    out = os.path.join(tmp, "guidance.json")
    r = classify("--model", model_path, "--forecasts", os.path.join(tmp, "fc_*.nc"), "--lag", "4", "--weights", "exp:3",
                 "--members", "--csv", os.path.join(tmp, "csv"), "--out", out)
    check(r.returncode == 0, f"classify exits 0 ({r.stderr.strip()[-400:]})")
    if r.returncode == 0:
        with open(out) as f:
            g = json.load(f)
        with open(os.path.join(SOURCE, "config", "guidance.schema.json")) as f:
            errors = sorted(Draft202012Validator(json.load(f)).iter_errors(g), key=str)
        check(not errors, "guidance validates against config/guidance.schema.json"
              + (f" (first error: {errors[0].message} at {list(errors[0].absolute_path)})" if errors else ""))
        check_windows(g)
        check_long_window(g)
        check_csv_and_text(g, os.path.join(tmp, "csv"), r.stdout)
finish()
