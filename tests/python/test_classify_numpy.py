"""`isohypse classify` against an independent numpy computation (issue 4).

Member assignments must equal a plain numpy computation on the same
anomalies (bench/classify_reference.py: the model's climatology coefficients
evaluated with the basis of include/isohypse/climatology.hpp at each
model-calendar valid date, sqrt(cos lat) weights, EOF projection and nearest
centroid as in ../shared/METHODS.md §4; no regime below the uncentred
correlation threshold). The forecasts are written here with netCDF4-python on
the model's grid (latitudes descending, geopotential in m2 s-2, one file per
initialisation with a `number` dimension), once in the noleap calendar across
29 February and once in 360_day across 30 January/1 February, each with
another weighting; a third run uses a model with a 5-day running mean (the
full-field no-regime correlation of smoothed fields), a fourth a copy of the
model marked format version 1 (the EOF-space correlation, issue 11).
Also: the document validates against config/guidance.schema.json (jsonschema,
Draft 2020-12); the daily probabilities are the lagged-ensemble fractions
(Hoffman & Kalnay 1983, Tellus 35A, 100-118) of the reference's labels and sum
to 1; daily.csv and windows.csv agree with the JSON."""
import csv
import datetime
import json
import os
import shutil

import netCDF4
import numpy as np
from jsonschema import Draft202012Validator

from common import SOURCE, check, finish, scratch
from classify_data import classify, classify_and_validate, planted_forecast, reference, small_model, write_forecast

tmp = scratch()
lat = np.arange(20.0, 80.1, 5.0)
lon = np.arange(170.0, 320.1, 5.0)
with open(os.path.join(SOURCE, "config", "guidance.schema.json")) as f:
    validator = Draft202012Validator(json.load(f))
rng = np.random.default_rng(4)
MEMBERS, LEADS = 4, 20


def close(a, b, tol):
    return a is not None and b is not None and abs(a - b) <= tol


def check_csv(g, folder, what):
    states = g["states"]
    with open(os.path.join(folder, "daily.csv")) as f:
        rows = list(csv.reader(f))
    check(rows[0] == ["valid_date", "lead_days"] + states, f"{what}: daily.csv header {','.join(rows[0])}")
    ok = len(rows) - 1 == len(g["daily"])
    for row, d in zip(rows[1:], g["daily"]):
        ok &= row[0] == d["valid_date"] and int(row[1]) == d["lead_days"]
        # 6 significant digits in the CSV.
        ok &= all(close(float(x), d["probabilities"][s], 1e-6) for x, s in zip(row[2:], states))
    check(ok, f"{what}: daily.csv's {len(rows) - 1} rows equal the JSON's daily probabilities")
    with open(os.path.join(folder, "windows.csv")) as f:
        rows = list(csv.reader(f))
    want = (["first_lead_days", "last_lead_days", "from", "to"] + [f"p_dominant_{s}" for s in states]
            + [f"expected_days_{s}" for s in states] + ["members", "member_weight", "initialisations"])
    check(rows[0] == want, f"{what}: windows.csv header {','.join(rows[0])}")
    ok = len(rows) - 1 == len(g["windows"])
    for row, w in zip(rows[1:], g["windows"]):
        vals = ([w["dominance"][s] for s in states] + [w["expected_days"][s] for s in states]
                + [w["members"], w["member_weight"], w["initialisations"]])
        ok &= [int(row[0]), int(row[1]), row[2], row[3]] == [w["first_lead_days"], w["last_lead_days"], w["from"], w["to"]]
        ok &= all((x == "" and v is None) or close(float(x), v, 1e-5 * max(1.0, abs(v or 0))) for x, v in zip(row[4:], vals))
    check(ok, f"{what}: windows.csv's {len(rows) - 1} rows equal the JSON's windows")


def run_case(what, model_path, calendar, inits, weights, issue=None):
    model = reference.Model(model_path)
    folder = os.path.join(tmp, what)
    os.makedirs(folder)
    paths = []
    for init in inits:
        paths.append(os.path.join(folder, "fc_%04d%02d%02d.nc" % init))
        write_forecast(paths[-1], planted_forecast(model, init, calendar, MEMBERS, LEADS, rng), lat, lon, init, calendar)
    out = os.path.join(folder, "guidance.json")
    args = ["--model", model_path, "--forecasts", os.path.join(folder, "fc_*.nc"), "--members", "--weights", weights,
            "--csv", os.path.join(folder, "csv"), "--out", out]
    if issue:
        args += ["--issue-date", issue.isoformat()]
    g, _ = classify_and_validate(what, out, validator, *args)
    if g is None:
        return

    ref = reference.classify_files(model, paths, issue=issue, scheme=weights)
    counts = np.bincount(ref["labels"].ravel(), minlength=model.k + 1)
    print(f"{what}: reference labels per state {dict(zip(model.states, counts.tolist()))}")
    check((counts > 0).all(), f"{what}: the planted forecasts reach every state, no regime included")
    check(len(g["members"]) == len(inits) * MEMBERS, f"{what}: {len(g['members'])} member entries "
          f"(want {len(inits)} initialisations x {MEMBERS})")
    differ, ties, worst = reference.compare_guidance(g, ref)
    check(differ == 0, f"{what}: every member's daily regime equals numpy's ({ref['labels'].size} member-days, "
          f"{differ} differ, {ties} float ties set aside)")
    by_key = {(m["initialisation"], m["member"]): m for m in g["members"]}
    cor_err = max(abs(a - b) for i, init in enumerate(ref["inits"]) for m in range(MEMBERS)
                  for a, b in zip(by_key[(init, m)]["correlation"], ref["correlations"][i, m]))
    check(cor_err < 1e-4, f"{what}: member correlations with the nearest centroid equal numpy's (max diff {cor_err:.1e})")

    issue_real = datetime.date.fromisoformat(ref["issue"])
    ages = [(issue_real - reference.real_date(*i)).days for i in inits]
    w = reference.init_weights(ages, weights)
    meta_ok = g["issue_date"] == ref["issue"]
    for i, init in enumerate(ref["inits"]):
        for m in range(MEMBERS):
            e = by_key[(init, m)]
            meta_ok &= e["first_lead_days"] == -ages[i] and abs(e["weight"] - w[i]) < 1e-12
            meta_ok &= e["first_valid_date"] == reference.real_date(*inits[i]).isoformat()
    check(meta_ok, f"{what}: issue date {ref['issue']}, ages {ages} and {weights} weights {np.round(w, 4).tolist()} "
          f"as ensemble_stats.hpp states")

    check(worst <= 1e-9,
          f"{what}: daily probabilities equal the lagged-ensemble fractions of numpy's labels (max diff {worst:.1e})")
    daily = {d["lead_days"]: d for d in g["daily"]}
    sums = [abs(sum(v for v in d["probabilities"].values()) - 1.0) for d in g["daily"]]
    check(max(sums) <= 1e-9, f"{what}: probabilities sum to 1 on all {len(sums)} days (max error {max(sums):.1e})")
    ok = True
    for o, p, n, ws in zip(ref["offsets"], ref["probabilities"], ref["members"], ref["weight_sums"]):
        d = daily.get(int(o))
        ok &= d is not None and d["members"] == n and abs(d["weight_sum"] - ws) < 1e-9
        ok &= d is not None and d["most_likely"] == model.states[reference.most_likely(p)]
        ok &= d is not None and d["valid_date"] == (issue_real + datetime.timedelta(days=int(o))).isoformat()
    check(ok, f"{what}: members, weight sums, most likely states and real valid dates of every day agree")
    # Window expected days are sums of daily probabilities (ensemble_stats.hpp, WindowSummary).
    win_err = 0.0
    for wdw in g["windows"]:
        sel = (ref["offsets"] >= wdw["first_lead_days"]) & (ref["offsets"] <= wdw["last_lead_days"])
        want = ref["probabilities"][sel].sum(axis=0)
        win_err = max(win_err, max(abs(wdw["expected_days"][s] - want[j]) for j, s in enumerate(model.states)))
    check(win_err < 1e-9, f"{what}: window expected days are the sums of numpy's daily probabilities "
          f"(max diff {win_err:.1e})")
    check_csv(g, os.path.join(folder, "csv"), what)
    # One thread gives the same document as every core: threads only share the members.
    one = os.path.join(folder, "guidance_one_thread.json")
    r = classify(*[one if a == out else a for a in args], "--threads", "1")
    with open(one) as f:
        g1 = json.load(f) if r.returncode == 0 else {}
    for doc in (g, g1):
        doc.get("provenance", {}).pop("created", None)
    check(r.returncode == 0 and g1 == g, f"{what}: --threads 1 gives the same guidance as every core")


model_path = small_model(tmp, lat, lon)
if model_path:
    # noleap across 29 February 2024: the valid dates of the two calendars part.
    run_case("noleap", model_path, "noleap", [(2024, 2, 24), (2024, 2, 26), (2024, 2, 27)], "equal")
    # 360_day across 30 January; issued a day after the latest initialisation.
    run_case("360_day", model_path, "360_day", [(2001, 1, 28), (2001, 1, 30), (2001, 2, 1)], "linear",
             issue=datetime.date(2001, 2, 2))
    # A model of format version 1 (before issue 11) keeps its EOF-space
    # no-regime correlation; the reference follows the file's version too.
    v1_dir = os.path.join(tmp, "v1")
    os.makedirs(v1_dir)
    v1_model = os.path.join(v1_dir, "model_v1.nc")
    shutil.copy(model_path, v1_model)
    with netCDF4.Dataset(v1_model, "a") as ds:
        ds.setncattr("isohypse_format_version", np.int32(1))
        ds.delncattr("no_regime_correlation")
    check(reference.Model(model_path).rule == "full_field_area_weighted" and reference.Model(v1_model).rule == "eof_space",
          "the model says full_field_area_weighted; its version 1 copy falls back to the EOF-space rule")
    run_case("version-1", v1_model, "noleap", [(2024, 2, 24), (2024, 2, 26)], "equal")
    smooth_dir = os.path.join(tmp, "smooth")
    os.makedirs(smooth_dir)
    smooth_model = small_model(smooth_dir, lat, lon, {"filter": {"running_mean_days": 5}})
    if smooth_model:
        check(reference.Model(smooth_model).running_mean_days == 5, "the second model has a 5-day running mean")
        run_case("running-mean", smooth_model, "noleap", [(2025, 12, 1), (2025, 12, 3)], "exp:2.5")
finish()
