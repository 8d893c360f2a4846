"""isohypse verify --all-months (issue 12, "Season"): out-of-season valid dates kept, and every
case scored against the climatological frequencies of its valid month in the model's record.

References, outside the project:
  - the model file read with netCDF4-python and cftime (Debian python3-netcdf4): the record's
    dates (`time`) and labels (`label`, -1 = no regime); the monthly frequencies are counted here
    with numpy over every record day of the month, in season or not;
  - the multi-category Brier score sum_k (p_k - o_k)^2 and the skill score 1 - BS / BS_ref
    (Wilks 2011, Statistical Methods in the Atmospheric Sciences, 3rd ed., ch. 8), computed with
    numpy from the guidance files themselves.

Part 1 (always): a tiny planted world (isohypse-demo-world --size tiny, reanalysis 2011-2020),
a model derived from it (season Nov-Mar), weekly hand-made guidance with random probabilities
issued from February to April 2019, valid up to May, verified against the model's own record.
Part 2 (when the README demo has been built, `./setup.sh demo`: out/regimes.nc, out/archive and
demo/data/analysis under ISOHYPSE_DEMO_ROOT, default the source tree): the demo season, whose
weekly archive runs into April."""
import datetime
import glob
import json
import os

import netCDF4
import numpy as np

from common import BIN, BUILD, SOURCE, check, finish, run, scratch

tmp = scratch()


def record_climatology(model_path):
    """Season frequencies and {month: (record days, frequency per state)} from the model file."""
    with netCDF4.Dataset(model_path) as m:
        t = m["time"]
        dates = netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard"))
        labels = np.asarray(m["label"][:]).astype(int)
        freq = np.asarray(m["frequency"][:], dtype=float)
    k = len(freq)
    state = np.where(labels < 0, k, labels)
    months = np.array([d.month for d in dates])
    monthly = {}
    for mo in range(1, 13):
        sel = months == mo
        if sel.any():
            monthly[mo] = (int(sel.sum()), np.bincount(state[sel], minlength=k + 1) / sel.sum())
    season = np.append(freq, max(0.0, 1 - freq.sum()))
    return k, season, monthly, {f"{d.year:04d}-{d.month:02d}-{d.day:02d}": int(s) for d, s in zip(dates, state)}


def guidance_cases(folder, states, observed, season_months, first, last):
    """(valid month, probabilities, observed state) of every daily entry of lead first..last with
    an observation, and the out-of-season count by month over all leads."""
    cases, outside = [], {}
    for path in sorted(glob.glob(os.path.join(folder, "*.json"))):
        doc = json.load(open(path))
        for d in doc["daily"]:
            v = d["valid_date"]
            if v not in observed:
                continue
            month = int(v[5:7])
            if month not in season_months:
                outside[month] = outside.get(month, 0) + 1
            if first <= d["lead_days"] <= last:
                p = np.array([d["probabilities"][s] or 0.0 for s in states])
                cases.append((month, p, observed[v]))
    return cases, outside


def brier_skill(cases, reference):
    """Multi-category Brier score and its skill against reference(month) (Wilks 2011)."""
    bs = np.mean([np.sum((p - np.eye(len(p))[o]) ** 2) for _, p, o in cases])
    ref = np.mean([np.sum((reference(mo) - np.eye(len(p))[o]) ** 2) for mo, p, o in cases])
    return bs, 1 - bs / ref


def state_skill(cases, reference, s):
    """Brier skill of state s against reference(month)[s]."""
    bs = np.mean([(p[s] - (o == s)) ** 2 for _, p, o in cases])
    ref = np.mean([(reference(mo)[s] - (o == s)) ** 2 for mo, p, o in cases])
    return 1 - bs / ref


def verify(name, model, guidance, *extra):
    out = os.path.join(tmp, name + ".json")
    html = os.path.join(tmp, name + ".html")
    r = run([BIN, "verify", "--model", model, "--guidance", guidance, "--out", out, "--html", html,
             "--bootstrap", "50", *extra])
    check(r.returncode == 0, f"{name}: verify {' '.join(extra)} exits 0 ({r.stderr.strip()[-300:]})")
    if r.returncode != 0:
        finish()
    return json.load(open(out)), open(html).read(), r.stdout


def compare(label, model, folder, rep_season, rep_all, observed, text_all, page_all):
    """The checks common to both parts: which months are scored, and the numbers against numpy."""
    k, season, monthly, _ = record_climatology(model)
    states = rep_all["states"]
    season_months = set(rep_season["out_of_season"]["season_months"])
    _, outside = guidance_cases(folder, states, observed, season_months, 0, -1)
    months_default = {int(m) for m in rep_season["frequency_bias_by_month"]}
    months_all = {int(m) for m in rep_all["frequency_bias_by_month"]}
    outside_months = set(outside)
    print(f"{label}: pairs outside the season by month (numpy): {outside}; default report "
          f"{rep_season['out_of_season']['by_month']}, --all-months report {rep_all['out_of_season']['by_month']}")
    check(len(outside_months) > 0 and not (months_default & outside_months) and outside_months <= months_all,
          f"{label}: months {sorted(outside_months)} outside the season are scored only with --all-months "
          f"(default {sorted(months_default)}, --all-months {sorted(months_all)})")
    check({int(m): n for m, n in rep_season["out_of_season"]["by_month"].items()} == outside
          and {int(m): n for m, n in rep_all["out_of_season"]["by_month"].items()} == outside,
          f"{label}: both reports count the out-of-season pairs as numpy does")
    check(rep_all["cases"] == rep_season["cases"] + sum(outside.values()),
          f"{label}: --all-months scores {rep_all['cases']} pairs = {rep_season['cases']} + "
          f"{sum(outside.values())} outside the season")
    check(rep_season["season_filter"] == "model season" and "monthly_climatology" not in rep_season
          and rep_all["season_filter"] == "all months, monthly climatology",
          f"{label}: the reports state the season filter")

    # Each window's multi-category Brier skill: default against the season's frequencies (in-season
    # cases only), --all-months against each valid month's frequencies over the whole record.
    assert len(rep_season["windows"]) == len(rep_all["windows"])
    for w0, w in zip(rep_season["windows"], rep_all["windows"]):
        first, last = w["first_lead_days"], w["last_lead_days"]
        cases, _ = guidance_cases(folder, states, observed, season_months, first, last)
        in_season = [c for c in cases if c[0] in season_months]
        april = sum(c[0] == 4 for c in cases)
        bs, skill = brier_skill(in_season, lambda mo: season)
        got = w0["multicategory_brier_skill"]["estimate"]
        check(w0["cases"] == len(in_season) and abs(got - skill) < 1e-9
              and abs(w0["multicategory_brier"] - bs) < 1e-9,
              f"{label}, days {first}-{last}, default: {w0['cases']} cases, Brier skill {got:.12f} = numpy "
              f"{skill:.12f} against the season's frequencies")
        bs, skill = brier_skill(cases, lambda mo: monthly[mo][1])
        got = w["multicategory_brier_skill"]["estimate"]
        check(w["cases"] == len(cases) and abs(got - skill) < 1e-9 and abs(w["multicategory_brier"] - bs) < 1e-9,
              f"{label}, days {first}-{last}, --all-months: {w['cases']} cases ({april} in April), Brier skill "
              f"{got:.12f} = numpy {skill:.12f} against monthly climatology")
        _, wrong = brier_skill(cases, lambda mo: season)
        check(abs(wrong - skill) > 1e-6, f"{label}, days {first}-{last}: the monthly reference changes the skill "
              f"(the season's would give {wrong:.6f})")
        for s, name in enumerate(states):
            want = state_skill(cases, lambda mo: monthly[mo][1], s)
            got = w["regimes"][name]["brier_skill"]
            check(got is not None and abs(got - want) < 1e-9,
                  f"{label}, days {first}-{last}, --all-months: Brier skill of {name} {got} = numpy {want:.12f}")
    table = rep_all["monthly_climatology"]["months"]
    same = all(table[str(mo)]["record_days"] == monthly[mo][0]
               and np.allclose(table[str(mo)]["frequency"], monthly[mo][1], atol=1e-12, rtol=0) for mo in months_all)
    check(set(int(m) for m in table) == months_all and same,
          f"{label}: the report's monthly references (months {sorted(int(m) for m in table)}) equal numpy's "
          "counts over the record")
    check("monthly climatology" in text_all and "Season filter: all months" in page_all
          and page_all.count("<td class=\"l\">Apr</td>") >= 1,
          f"{label}: the terminal summary and the page's season note say so (page shows the April reference)")


# ---------------------------------------------------------------- part 1: a tiny planted world
world = os.path.join(tmp, "world")
r = run([os.path.join(BUILD, "isohypse-demo-world"), "--out", world, "--size", "tiny", "--seed", "8", "--jobs", "2"])
check(r.returncode == 0, f"isohypse-demo-world --size tiny ({r.stderr.strip()[-200:]})")
cfg = os.path.join(tmp, "derive.json")
json.dump({"domain": "20,80,170,-40", "months": [11, 12, 1, 2, 3],
           "inputs": [os.path.join(world, "reanalysis", "hgt500_*.nc")],
           "regimes": {"k": 4, "classifiability_runs": 4, "surrogates": 4, "restarts": 10}}, open(cfg, "w"))
model = os.path.join(tmp, "model.nc")
r = run([BIN, "derive", "--config", cfg, "--out", model])
check(r.returncode == 0, f"derive k = 4 on the tiny world ({r.stderr.strip()[-300:]})")
if r.returncode != 0:
    finish()
k, season, monthly, observed = record_climatology(model)
states = [f"R{i + 1}" for i in range(k)] + ["no_regime"]
sha = run(["sha256sum", model]).stdout.split()[0]
rng = np.random.default_rng(12)


def write_guidance(folder, sha, issues):
    os.makedirs(folder, exist_ok=True)
    for issue in issues:
        daily = []
        for lead in range(0, 15):
            v = (issue + datetime.timedelta(days=lead)).isoformat()
            p = rng.dirichlet(np.ones(k + 1) * 0.7)
            daily.append({"valid_date": v, "lead_days": lead, "members": 10, "weight_sum": 10.0,
                          "probabilities": {s: float(p[j]) for j, s in enumerate(states)},
                          "most_likely": states[int(np.argmax(p))]})
        doc = {"format": "isohypse-guidance", "format_version": 1, "issue_date": issue.isoformat(), "states": states,
               "daily": daily, "provenance": {"model": {"sha256": sha}}}
        json.dump(doc, open(os.path.join(folder, issue.isoformat() + ".json"), "w"))


arch = os.path.join(tmp, "archive")
write_guidance(arch, sha, [datetime.date(2019, 2, 14) + datetime.timedelta(days=7 * i) for i in range(10)])
rep_season, _, _ = verify("tiny-season", model, arch)
rep_all, page_all, text_all = verify("tiny-all", model, arch, "--all-months")
compare("tiny world", model, arch, rep_season, rep_all, observed, text_all, page_all)

# A record without April: --all-months refuses April guidance observed in analysis files (here the
# world's reanalysis of 2019), naming the month and the model file, and writes nothing; without the
# flag the same archive verifies.
no_april = os.path.join(tmp, "no-april.nc")
with netCDF4.Dataset(model) as src, netCDF4.Dataset(no_april, "w", format="NETCDF4") as dst:
    t = src["time"]
    keep = np.array([d.month != 4 for d in netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard"))])
    dst.setncatts({a: src.getncattr(a) for a in src.ncattrs()})
    for name, dim in src.dimensions.items():
        dst.createDimension(name, int(keep.sum()) if name == "day" else len(dim))
    for name, var in src.variables.items():
        out = dst.createVariable(name, var.dtype, var.dimensions)
        out.setncatts({a: var.getncattr(a) for a in var.ncattrs() if a != "_FillValue"})
        data = var[:]
        out[:] = data[keep] if var.dimensions[:1] == ("day",) else data
sha_no_april = run(["sha256sum", no_april]).stdout.split()[0]
arch_no_april = os.path.join(tmp, "archive-no-april")
write_guidance(arch_no_april, sha_no_april, [datetime.date(2019, 3, 21)])
bad = os.path.join(tmp, "bad.json")
obs_2019 = ["--observed", os.path.join(world, "reanalysis", "hgt500_2019.nc")]
r = run([BIN, "verify", "--model", no_april, "--guidance", arch_no_april, "--out", bad, "--all-months",
         "--bootstrap", "50", *obs_2019])
msg = r.stderr.strip()
check(r.returncode == 2 and "April" in msg and "no-april.nc" in msg and not os.path.exists(bad),
      f"a record without April: --all-months refused, exit {r.returncode}, no report: {msg[:220]}")
r = run([BIN, "verify", "--model", no_april, "--guidance", arch_no_april, "--out", bad, "--bootstrap", "50", *obs_2019])
check(r.returncode == 0 and json.load(open(bad))["out_of_season"]["by_month"].get("4") == 4,
      f"... and verified without the flag, the 4 April days counted ({r.stderr.strip()[-200:]})")

# ---------------------------------------------------------------- part 2: the README demo
root = os.environ.get("ISOHYPSE_DEMO_ROOT", SOURCE)
demo_model, demo_archive = os.path.join(root, "out", "regimes.nc"), os.path.join(root, "out", "archive")
analysis = os.path.join(root, "demo", "data", "analysis", "*.nc")
if os.path.exists(demo_model) and glob.glob(os.path.join(demo_archive, "*.json")) and glob.glob(analysis):
    rep_season, _, _ = verify("demo-season", demo_model, demo_archive, "--observed", analysis)
    rep_all, page_all, text_all = verify("demo-all", demo_model, demo_archive, "--observed", analysis, "--all-months")
    # The observed states are verify's own labels of the analysis files (the sequence in the report):
    # the labelling is checked elsewhere (test_verify.py); here the reference is what is tested.
    demo_observed = {d: rep_all["states"].index(s) for d, s in rep_all["sequence"]["observed"]}
    compare("demo", demo_model, demo_archive, rep_season, rep_all, demo_observed, text_all, page_all)
    print("demo: April pairs outside the season:", rep_all["out_of_season"]["by_month"].get("4"))
else:
    print(f"demo part not run: no built demo under {root} (run ./setup.sh demo, or set ISOHYPSE_DEMO_ROOT)")

finish()
