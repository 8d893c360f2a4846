"""isohypse verify on an archive of calibrated guidance (issue 13: "verify scores raw and calibrated when both are
present"), on an invented world.

The small world (isohypse-demo-world --size small: 20 forecasts of 4 members from 2025-12-01, reforecasts of
2015-2020 Dec-Jan), a 4-regime model, a calibration fitted on the reforecasts (isohypse calibrate --lag 3), and a
mixed archive: the first issue without calibration, the rest with it (guidance format version 4). Checked against
plain numpy from the guidance files and the observed labels the report lists (the same cases):
- the headline scores (the report's "windows") use each issue's headline probabilities: the multi-category Brier
  score and skill (Wilks 2011, Statistical Methods in the Atmospheric Sciences, 3rd ed., sections 8.4.2 and
  8.4.9) of every issue's "probabilities";
- raw_versus_calibrated counts the calibrated and raw issues, and per lead window scores only the calibrated
  issues' cases: their raw and calibrated multi-category Brier skill against the season's climatological
  frequencies (each with its interval, blocks of 3 issue days, and the calibrated-minus-raw difference), the hit
  rate of the most likely state, and the reliability term of the binned Brier decomposition
  summed over the states (Stephenson, Coelho & Jolliffe 2008, Wea. Forecasting 23, 752-757: REL = sum over bins
  n_k (mean forecast_k - observed frequency_k)^2 / n, 10 bins of width 0.1);
- the window products: the raw and calibrated dominance multi-category Brier skill against the report's
  climatological dominance probabilities, windows with a tie for the most observed days left out;
- the page and the terminal show the raw and calibrated columns and say what the headline scores use;
- a format version 3 archive (no "calibration" object) still verifies, without the block; a calibrated issue
  without raw_probabilities is refused naming the file (exit 3, no report written).
"""
import glob
import json
import os

import numpy as np

from common import BIN, check, finish, run, scratch
from daily_season import small_world_model

LAG = 3
tmp = scratch()
world, _, model = small_world_model(tmp)
cal = os.path.join(tmp, "calibration.nc")
r = run([BIN, "calibrate", "--model", model, "--reforecasts", f"{world}/reforecasts/*.nc", "--lag", str(LAG),
         "--out", cal, "--quiet"])
assert r.returncode == 0, "calibrate on the small world: " + r.stderr
archive = os.path.join(tmp, "archive")
os.makedirs(archive)
days = [f"2025-12-{d:02d}" for d in range(3, 15)]
for i, day in enumerate(days):
    args = [BIN, "classify", "--quiet", "--model", model, "--forecasts", f"{world}/forecasts/*.nc", "--reforecasts",
            f"{world}/reforecasts/*.nc", "--lag", str(LAG), "--issue-date", day,
            "--out", os.path.join(archive, day + ".json")]
    r = run(args + (["--calibration", cal] if i > 0 else []))
    assert r.returncode == 0, f"classify {day}: {r.stderr}"
analysis = f"{world}/analysis/*.nc"


def verify(name, guidance, code=0, *extra):
    out, html = os.path.join(tmp, name + ".json"), os.path.join(tmp, name + ".html")
    r = run([BIN, "verify", "--model", model, "--guidance", guidance, "--observed", analysis, "--out", out,
             "--html", html, "--bootstrap", "200", *extra])
    assert r.returncode == code, r.stderr
    if code != 0:
        return None, None, r.stderr, os.path.exists(out)
    return json.load(open(out)), open(html).read(), r.stdout, True


# Blocks of 3 issue days: 4 blocks in the 12 days, enough for an interval (the default lag + 7 gives 1).
rep, page, text, _ = verify("mixed", archive, 0, "--block-days", "3")
print(text)
docs = [json.load(open(f)) for f in sorted(glob.glob(os.path.join(archive, "*.json")))]
check([d["calibration"]["applied"] for d in docs] == [False] + [True] * (len(days) - 1),
      "the archive mixes one raw issue with calibrated ones (guidance format version 4)")
states = rep["states"]
K = len(states)
clim = np.array(rep["climatology"])
observed = {day: states.index(s) for day, s in rep["sequence"]["observed"]}
season = set(rep["out_of_season"]["season_months"])


def daily_cases(first, last, key, calibrated_only):
    """(probabilities, observed) of every daily entry with lead in first..last, valid on an observed in-season
    day: the cases verify scores."""
    p, o = [], []
    for d in docs:
        if calibrated_only and not d["calibration"]["applied"]:
            continue
        for e in d["daily"]:
            month = int(e["valid_date"][5:7])
            if first <= e["lead_days"] <= last and e["valid_date"] in observed and month in season:
                p.append([e[key][s] if e[key][s] is not None else 0.0 for s in states])
                o.append(observed[e["valid_date"]])
    return np.array(p), np.array(o, dtype=int)


def mcb_skill(p, o, ref):
    """1 - mean sum_k (p_k - o_k)^2 / the same of the climatological forecast (Wilks 2011, 8.4.9)."""
    onehot = np.eye(K)[o]
    return 1 - np.mean(np.sum((p - onehot) ** 2, axis=1)) / np.mean(np.sum((ref - onehot) ** 2, axis=1))


def reliability(p, o, bins=10):
    """Binned reliability term summed over the states (Stephenson, Coelho & Jolliffe 2008), bins [i/10, (i+1)/10),
    the last one closed."""
    total = 0.0
    edges = np.arange(bins + 1) / bins
    for s in range(K):
        ps, os_ = p[:, s], (o == s).astype(float)
        b = np.clip(np.searchsorted(edges, ps, side="right") - 1, 0, bins - 1)
        for k in range(bins):
            m = b == k
            if m.any():
                total += m.sum() * (ps[m].mean() - os_[m].mean()) ** 2
    return total / len(o)


# ---- the headline: every issue's own "probabilities"
for w in rep["windows"]:
    f, l = w["first_lead_days"], w["last_lead_days"]
    p, o = daily_cases(f, l, "probabilities", False)
    check(len(o) == w["cases"], f"{f}-{l}: {w['cases']} headline cases, numpy {len(o)}")
    ours = w["multicategory_brier_skill"]["estimate"]
    check(abs(ours - mcb_skill(p, o, clim)) < 1e-9,
          f"{f}-{l}: headline multi-category Brier skill {ours:.6f}, numpy {mcb_skill(p, o, clim):.6f}")

# ---- raw against calibrated, the calibrated issues only
rc = rep["raw_versus_calibrated"]
check(rc["issues"] == {"calibrated": len(days) - 1, "raw": 1},
      f"issues counted: {rc['issues']} (expected {len(days) - 1} calibrated, 1 raw)")
check(len(rc["windows"]) == len(rep["windows"]), f"{len(rc['windows'])} lead windows compared")
differ = 0
for w in rc["windows"]:
    f, l = w["first_lead_days"], w["last_lead_days"]
    pr, o = daily_cases(f, l, "raw_probabilities", True)
    pc, oc = daily_cases(f, l, "calibrated_probabilities", True)
    check(len(o) == w["cases"] == len(oc), f"{f}-{l}: {w['cases']} cases of calibrated issues, numpy {len(o)}")
    for name, p in (("raw", pr), ("calibrated", pc)):
        ours = w[name]
        skill = mcb_skill(p, o, clim)
        check(abs(ours["multicategory_brier_skill"]["estimate"] - skill) < 1e-9,
              f"{f}-{l} {name}: multi-category Brier skill {ours['multicategory_brier_skill']['estimate']:.6f}, "
              f"numpy {skill:.6f}")
        lo, hi = ours["multicategory_brier_skill"]["lower"], ours["multicategory_brier_skill"]["upper"]
        check(lo is not None and lo <= ours["multicategory_brier_skill"]["estimate"] <= hi,
              f"{f}-{l} {name}: the interval {lo} to {hi} holds the estimate")
        hit = np.mean(np.argmax(p, axis=1) == o)
        check(abs(ours["hit_rate"] - hit) < 1e-12, f"{f}-{l} {name}: hit rate {ours['hit_rate']:.4f}, numpy {hit:.4f}")
        rel = reliability(p, o)
        check(abs(ours["reliability"] - rel) < 1e-9,
              f"{f}-{l} {name}: reliability summed over states {ours['reliability']:.6f}, numpy {rel:.6f}")
    diff = mcb_skill(pc, o, clim) - mcb_skill(pr, o, clim)
    check(abs(w["skill_difference"]["estimate"] - diff) < 1e-9,
          f"{f}-{l}: calibrated - raw skill {w['skill_difference']['estimate']:.6f}, numpy {diff:.6f}")
    d = w["skill_difference"]
    check(d["lower"] is not None and d["lower"] - 1e-9 <= diff <= d["upper"] + 1e-9 and d["block_days"] == 3,
          f"{f}-{l}: its interval {d['lower']} to {d['upper']} from blocks of {d['block_days']} days holds it")
    differ += abs(diff) > 1e-6
check(differ > 0, f"the calibration changes the skill in {differ} of {len(rc['windows'])} windows (a real comparison)")

# ---- the window products: dominance, raw against calibrated
clim_dominance = {
    (g["first_lead_days"], g["last_lead_days"]): np.array([g["climatology"]["dominance"][s] for s in states])
    for g in rep["window_products"]["windows"]}
check(len(rc["window_products"]) > 0, f"{len(rc['window_products'])} window products compared")
for g in rc["window_products"]:
    f, l = g["first_lead_days"], g["last_lead_days"]
    p = {"raw_dominance": [], "calibrated_dominance": []}
    o = []
    for d in docs[1:]:
        for w in d["windows"]:
            if (w["first_lead_days"], w["last_lead_days"]) != (f, l) or w["raw_dominance"][states[0]] is None:
                continue
            valid = [str(np.datetime64(w["from"]) + np.timedelta64(i, "D")) for i in range(l - f + 1)]
            if not all(v in observed and int(v[5:7]) in season for v in valid):
                continue
            counts = np.bincount([observed[v] for v in valid], minlength=K)
            if (counts == counts.max()).sum() > 1:
                continue  # a tie for the most observed days: left out of the dominance scores
            o.append(int(np.argmax(counts)))
            for key in p:
                p[key].append([w[key][s] for s in states])
    o = np.array(o, dtype=int)
    check(len(o) == g["raw"]["dominance_cases"] == g["calibrated"]["dominance_cases"],
          f"window {f}-{l}: {g['raw']['dominance_cases']} dominance cases, numpy {len(o)}")
    for name in ("raw", "calibrated"):
        skill = mcb_skill(np.array(p[name + "_dominance"]), o, clim_dominance[(f, l)])
        ours = g[name]["dominance_multicategory_brier_skill"]["estimate"]
        check(abs(ours - skill) < 1e-9, f"window {f}-{l} {name}: dominance Brier skill {ours:.6f}, numpy {skill:.6f}")

# ---- the page and the terminal
check("Raw against calibrated" in page and "<th>raw</th><th>calibrated</th>" in page,
      "the page shows the raw against calibrated table")
check(f"the calibrated ones for the {len(days) - 1} calibrated issues, the raw ones for the 1 issues" in page,
      "the page says which probabilities the headline scores use")
check(f"raw against calibrated ({len(days) - 1} calibrated issues, 1 without" in text,
      "the terminal summary shows the comparison")

# ---- a format version 3 archive: no "calibration" object, no raw probabilities
v3 = os.path.join(tmp, "v3")
os.makedirs(v3)
raw_doc = dict(docs[0])
raw_doc.pop("calibration")
raw_doc["format_version"] = 3
json.dump(raw_doc, open(os.path.join(v3, days[0] + ".json"), "w"))
rep3, page3, text3, _ = verify("v3", v3)
check("raw_versus_calibrated" not in rep3 and "raw against calibrated" not in text3,
      "a format version 3 archive verifies, without the raw against calibrated block")
check("no issue of the archive is calibrated" in page3, "its page says the scores use the raw probabilities")
for w in rep3["windows"]:
    f, l = w["first_lead_days"], w["last_lead_days"]
    cases = [(e["probabilities"], observed[e["valid_date"]]) for e in raw_doc["daily"]
             if f <= e["lead_days"] <= l and e["valid_date"] in observed and int(e["valid_date"][5:7]) in season]
    p3 = np.array([[pr[s] for s in states] for pr, _ in cases])
    o3 = np.array([ob for _, ob in cases], dtype=int)
    skill = mcb_skill(p3, o3, clim)
    check(len(o3) == w["cases"] and abs(w["multicategory_brier_skill"]["estimate"] - skill) < 1e-9,
          f"version 3, {f}-{l}: {w['cases']} cases, skill {w['multicategory_brier_skill']['estimate']:.6f}, "
          f"numpy {len(o3)} cases, {skill:.6f}")

# ---- a calibrated issue without its raw probabilities is refused
broken = os.path.join(tmp, "broken")
os.makedirs(broken)
bad = json.loads(json.dumps(docs[1]))
del bad["daily"][2]["raw_probabilities"]
bad_file = os.path.join(broken, "bad.json")
json.dump(bad, open(bad_file, "w"))
_, _, err, written = verify("broken", broken, code=3)
check(bad_file in err and "daily[2] has no 'raw_probabilities'" in err and not written,
      f"a calibrated issue without raw_probabilities refused naming the file, nothing written: {err.strip()}")

finish()
