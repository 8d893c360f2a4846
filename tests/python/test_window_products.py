"""isohypse verify: the window products (dominance probability, expected days) scored against references.

Runs verify on a small season made here (isohypse-demo-world --size small, daily issues with lag 3; or the built
demo season named by ISOHYPSE_DEMO_ROOT: daily issues, lag 4), the analysis files as observations, and
recomputes every score from the guidance JSON files, the observed daily labels the report lists
(sequence.observed) and the regime model file:
- the dominance Brier score (Brier 1950) and ROC area (Mason & Graham 2002, Mann-Whitney) per state and window with
  scikit-learn's brier_score_loss and roc_auc_score;
- the climatological dominance probability over every run of D consecutive in-season record days, ties split
  equally, and the Brier skill 1 - BS/BS_clim (Wilks 2011, Statistical Methods in the Atmospheric Sciences, 3rd ed.);
- the five-term binned decomposition identity BS = REL - RES + UNC + WBV - WBC (Stephenson, Coelho & Jolliffe 2008);
- the multi-category dominance Brier score sum_k (p_k - o_k)^2 (Wilks 2011) and its skill;
- the expected-days mean absolute error per state and over all states and its skill 1 - MAE/MAE_clim, with numpy.
Then a planted answer (the guidance's window products replaced by what was observed scores perfectly) and bad input.
"""
import datetime
import glob
import json
import os
import shutil

import netCDF4
import numpy as np
from sklearn.metrics import brier_score_loss, roc_auc_score

from common import BIN, check, finish, run, scratch
from daily_season import small_world_model

tmp = scratch()
# The season verified: by default a small world made here (daily issues, lag 3, so that issues overlap, as
# test_verify.py makes it); with ISOHYPSE_DEMO_ROOT=/path/of/a/built/demo (out/archive, out/regimes.nc,
# demo/data/analysis) the demo season instead.
DEMO = os.environ.get("ISOHYPSE_DEMO_ROOT")
if DEMO:
    archive = os.path.join(DEMO, "out", "archive")
    model = os.path.join(DEMO, "out", "regimes.nc")
    analysis = os.path.join(DEMO, "demo", "data", "analysis", "*.nc")
else:
    world, _, model = small_world_model(tmp)
    archive = os.path.join(tmp, "archive")
    os.makedirs(archive)
    for f in sorted(glob.glob(f"{world}/forecasts/*.nc"))[2:]:
        d = os.path.basename(f)[3:11]
        iso = f"{d[:4]}-{d[4:6]}-{d[6:]}"
        r = run([BIN, "classify", "--model", model, "--forecasts", f"{world}/forecasts/*.nc", "--reforecasts",
                 f"{world}/reforecasts/*.nc", "--lag", "3", "--issue-date", iso, "--quiet", "--out",
                 f"{archive}/{iso}.json"])
        assert r.returncode == 0, r.stderr
    analysis = f"{world}/analysis/*.nc"
print(f"season: {archive}, model {model}, observations {analysis}")


def verify(guidance, name, *extra):
    out, html = os.path.join(tmp, name + ".json"), os.path.join(tmp, name + ".html")
    r = run([BIN, "verify", "--model", model, "--guidance", guidance, "--observed", analysis, "--out", out,
             "--html", html, "--bootstrap", "200", *extra])
    return r, out, html


r, out, html = verify(archive, "season")
check(r.returncode == 0, f"verify runs on the demo season ({r.stderr.strip()[:200]})")
rep = json.load(open(out))
states = rep["states"]
K = len(states)
observed = {d: states.index(s) for d, s in rep["sequence"]["observed"]}
season = set(rep["out_of_season"]["season_months"])
clim_freq = np.array(rep["climatology"])
guidance = [json.load(open(f)) for f in sorted(glob.glob(os.path.join(archive, "*.json")))]

# The model's record: consecutive in-season days, their states (label -1 = no regime, the last state).
with netCDF4.Dataset(model) as m:
    day = np.asarray(m["time"][:], dtype=np.int64)
    label = np.asarray(m["label"][:], dtype=int)
    in_season = np.asarray(m["in_season"][:]) == 1
state = np.where(label < 0, K - 1, label)


def clim_dominance(D):
    """Fraction of the runs of D consecutive in-season record days each state dominates, ties split equally."""
    dom, n = np.zeros(K), 0
    for t in range(len(day) - D + 1):
        if not in_season[t:t + D].all() or day[t + D - 1] - day[t] != D - 1:
            continue
        counts = np.bincount(state[t:t + D], minlength=K)
        modes = counts == counts.max()
        dom[modes] += 1 / modes.sum()
        n += 1
    return dom / n


def valid_days(w):
    a = datetime.date.fromisoformat(w["from"])
    return [(a + datetime.timedelta(days=i)).isoformat() for i in range(w["last_lead_days"] - w["first_lead_days"] + 1)]


# The windows each report entry should score, recomputed from the guidance files.
groups = {}
for g in guidance:
    for w in g["windows"]:
        days = valid_days(w)
        grp = groups.setdefault((w["first_lead_days"], w["last_lead_days"]),
                                {"cases": [], "outside_season": 0, "not_observed": 0, "no_member_covers": 0})
        if any(datetime.date.fromisoformat(d).month not in season for d in days):
            grp["outside_season"] += 1
        elif any(d not in observed for d in days):
            grp["not_observed"] += 1
        elif all(v is None for v in w["dominance"].values()):
            grp["no_member_covers"] += 1
        else:
            obs_days = np.bincount([observed[d] for d in days], minlength=K).astype(float)
            grp["cases"].append({"issue": g["issue_date"],
                                 "p": np.array([w["dominance"][s] for s in states], dtype=float),
                                 "e": np.array([w["expected_days"][s] or 0.0 for s in states], dtype=float),
                                 "o": obs_days})

got = {(x["first_lead_days"], x["last_lead_days"]): x for x in rep["window_products"]["windows"]}
check(set(got) == set(groups), f"one entry per lead window of the guidance: {sorted(got)}")
print("window   scored tied  dominance BSS  days MAE  MAE skill")
for key, grp in sorted(groups.items()):
    x = got[key]
    D = key[1] - key[0] + 1
    cases = grp["cases"]
    lo = x["left_out"]
    check(x["cases"] == len(cases) and all(lo[k] == grp[k] for k in ("outside_season", "not_observed",
                                                                      "no_member_covers")),
          f"days {key[0]}-{key[1]}: {len(cases)} windows scored, left out {lo}")
    if not cases:
        continue
    P = np.array([c["p"] for c in cases])
    E = np.array([c["e"] for c in cases])
    O = np.array([c["o"] for c in cases])
    dominant = np.array([np.argmax(o) if (o == o.max()).sum() == 1 else -1 for o in O])
    keep = dominant >= 0
    check(x["tied"] == int((~keep).sum()) and x["dominance"]["cases"] == int(keep.sum()),
          f"days {key[0]}-{key[1]}: {int((~keep).sum())} tied windows left out of the dominance scores")
    cd = clim_dominance(D)
    cd_got = np.array([x["climatology"]["dominance"][s] for s in states])
    check(np.max(np.abs(cd - cd_got)) < 1e-12, f"days {key[0]}-{key[1]}: climatological dominance "
          f"{np.round(cd_got, 4)} = numpy over the record's {D}-day runs")
    for j, s in enumerate(states):
        if not keep.any():
            break
        y = (dominant[keep] == j).astype(int)
        p = P[keep, j]
        r_ = x["dominance"]["regimes"][s]
        bs = brier_score_loss(y, p)
        bss = 1 - bs / brier_score_loss(y, np.full(len(y), cd[j]))
        ok = abs(r_["brier"] - bs) < 1e-9 and abs(r_["brier_skill"] - bss) < 1e-9
        ident = r_["reliability"] - r_["resolution"] + r_["uncertainty"] + r_["within_bin_variance"] \
            - r_["within_bin_covariance"] - r_["brier"]
        msg = f"days {key[0]}-{key[1]}, {s}: dominance Brier {r_['brier']:.6f} = sklearn {bs:.6f}, skill " \
              f"{r_['brier_skill']:.4f} = {bss:.4f}, five-term gap {ident:.1e}"
        if 0 < y.sum() < len(y):
            auc = roc_auc_score(y, p)
            ok = ok and abs(r_["roc_area"] - auc) < 1e-9
            msg += f", ROC {r_['roc_area']:.6f} = sklearn {auc:.6f}"
        else:
            ok = ok and r_["roc_area"] is None
            msg += ", ROC null (one class)"
        check(ok and abs(ident) < 1e-12, msg)
    if keep.any():
        onehot = np.eye(K)[dominant[keep]]
        mcb = np.mean(np.sum((P[keep] - onehot) ** 2, axis=1))
        mcb_clim = np.mean(np.sum((cd - onehot) ** 2, axis=1))
        skill = x["dominance"]["multicategory_brier_skill"]
        check(abs(x["dominance"]["multicategory_brier"] - mcb) < 1e-9 and abs(skill["estimate"] - (1 - mcb / mcb_clim))
              < 1e-9 and skill["block_days"] >= 1,
              f"days {key[0]}-{key[1]}: multi-category dominance Brier {mcb:.5f}, skill {1 - mcb / mcb_clim:.4f} "
              f"({skill.get('lower')} to {skill.get('upper')}, {skill['block_days']}-day blocks, "
              f"{skill['blocks']} blocks)")
    cdays = D * clim_freq
    mae_s, mae_clim_s = np.mean(np.abs(E - O), axis=0), np.mean(np.abs(cdays - O), axis=0)
    ed = x["expected_days"]
    for j, s in enumerate(states):
        e_ = ed["regimes"][s]
        check(abs(e_["mae"] - mae_s[j]) < 1e-9 and abs(e_["mae_climatology"] - mae_clim_s[j]) < 1e-9
              and abs(e_["climatological_days"] - cdays[j]) < 1e-12
              and abs(e_["mean_observed_days"] - O[:, j].mean()) < 1e-12,
              f"days {key[0]}-{key[1]}, {s}: expected-days MAE {e_['mae']:.4f} = numpy {mae_s[j]:.4f} "
              f"(climatology {mae_clim_s[j]:.4f})")
    mae, mae_clim = np.mean(np.abs(E - O)), np.mean(np.abs(cdays - O))
    check(abs(ed["mae"] - mae) < 1e-9 and abs(ed["skill"]["estimate"] - (1 - mae / mae_clim)) < 1e-9,
          f"days {key[0]}-{key[1]}: expected-days MAE over all states {mae:.4f} = numpy, skill "
          f"{1 - mae / mae_clim:.4f} ({ed['skill'].get('lower')} to {ed['skill'].get('upper')})")
    print(f"{key[0]:>3}-{key[1]:<3}  {x['cases']:6d} {x['tied']:4d}  "
          f"{x['dominance']['multicategory_brier_skill']['estimate'] or float('nan'):13.3f}  {mae:8.3f}  "
          f"{1 - mae / mae_clim:9.3f}")

page = open(html).read()
with_diagram = [x for x in got.values() if x["dominance"]["cases"] > 0]
check("<h2>Window products</h2>" in page and page.count("<h3>Days ") == len(got)
      and "ROC area" in page and "expected days (mean per window)" in page and "absolute error" in page
      and page.count('class="chart dominance"') == len(with_diagram),
      "the HTML page shows a window-products table and a dominance reliability diagram per lead window")
# The dominance reliability diagram pools every state: each scored, untied window once per state, in 10 bins.
check(all(len(x["dominance"]["reliability"]) == 10 and sum(b["count"] for b in x["dominance"]["reliability"])
          == x["dominance"]["cases"] * K for x in with_diagram),
      "dominance reliability diagrams: 10 bins holding every state of every window scored")
check("window products" in r.stdout and all(f"{a:3d}-{b:<3d}" in r.stdout for a, b in got),
      "the terminal summary prints a line per lead window")

# A planted answer: replace every window product by what was observed (dominance one-hot on the observed
# dominant state, a tie split equally; expected days = observed days). Brier 0, MAE 0, both skills 1.
perfect = os.path.join(tmp, "perfect")
os.makedirs(perfect)
for f in sorted(glob.glob(os.path.join(archive, "*.json"))):
    g = json.load(open(f))
    for w in g["windows"]:
        days = valid_days(w)
        if not all(d in observed for d in days):
            continue
        o = np.bincount([observed[d] for d in days], minlength=K)
        modes = o == o.max()
        w["dominance"] = {s: float(modes[j] / modes.sum()) for j, s in enumerate(states)}
        w["expected_days"] = {s: float(o[j]) for j, s in enumerate(states)}
    json.dump(g, open(os.path.join(perfect, os.path.basename(f)), "w"))
r, out, _ = verify(perfect, "perfect")
prep = json.load(open(out))
for x in prep["window_products"]["windows"]:
    if x["cases"] == 0:
        continue
    dom, ed = x["dominance"], x["expected_days"]
    ok = abs(ed["mae"]) < 1e-12 and abs(ed["skill"]["estimate"] - 1) < 1e-12
    if dom["cases"]:
        ok = ok and abs(dom["multicategory_brier"]) < 1e-12
        ok = ok and abs(dom["multicategory_brier_skill"]["estimate"] - 1) < 1e-12
        ok = ok and all(abs(v["brier"]) < 1e-12 for v in dom["regimes"].values())
    check(r.returncode == 0 and ok, f"observed window products score perfectly, days {x['first_lead_days']}-"
          f"{x['last_lead_days']}: Brier {dom['multicategory_brier']}, MAE {ed['mae']}, "
          f"skill {ed['skill']['estimate']}")

# A window no member covers whole (its dominance null for every state, as classify writes it) is not scored and
# is counted; so is one whose dominance is null altogether.
nulls = os.path.join(tmp, "nulls")
shutil.copytree(archive, nulls)
files = sorted(glob.glob(os.path.join(nulls, "*.json")))
for f, value in ((files[0], "each"), (files[1], None)):
    g = json.load(open(f))
    g["windows"][0]["dominance"] = {s: None for s in states} if value == "each" else None
    json.dump(g, open(f, "w"))
r, out, _ = verify(nulls, "nulls")
first_window = json.load(open(out))["window_products"]["windows"][0]
base = got[(first_window["first_lead_days"], first_window["last_lead_days"])]
check(r.returncode == 0 and first_window["left_out"]["no_member_covers"] == 2
      and first_window["cases"] == base["cases"] - 2,
      f"null dominance: the window is counted as no member covering it and not scored ({first_window['left_out']})")


# --from/--to: only windows wholly inside the period are scored; those that straddle it are counted.
first_issue = datetime.date.fromisoformat(min(g["issue_date"] for g in guidance))
p_from, p_to = (first_issue + datetime.timedelta(days=n) for n in (28, 58))
p_from, p_to = p_from.isoformat(), p_to.isoformat()
r, out, _ = verify(archive, "period", "--from", p_from, "--to", p_to)
prep = json.load(open(out))
want = {}
for g in guidance:
    for w in g["windows"]:
        if w["to"] < p_from or w["from"] > p_to:
            continue
        k = (w["first_lead_days"], w["last_lead_days"])
        want.setdefault(k, [0, 0])[0 if (w["from"] >= p_from and w["to"] <= p_to) else 1] += 1
gotp = {(x["first_lead_days"], x["last_lead_days"]): x for x in prep["window_products"]["windows"]}
check(r.returncode == 0 and set(gotp) == set(want) and all(
      gotp[k]["left_out"]["partly_outside_period"] == v[1] and gotp[k]["windows"] == v[0] + v[1]
      and gotp[k]["cases"] <= v[0] for k, v in want.items()),
      f"--from {p_from} --to {p_to}: windows straddling the period counted, not scored "
      f"({ {f'{k[0]}-{k[1]}': v for k, v in sorted(want.items())} })")


# Bad input: a malformed window is bad data, exit 3, the message names the file and the entry; no report.
def refused(doc, words, what):
    bad = os.path.join(tmp, "bad")
    shutil.rmtree(bad, ignore_errors=True)
    os.makedirs(bad)
    path = os.path.join(bad, "broken.json")
    json.dump(doc, open(path, "w"))
    out = os.path.join(tmp, "bad.json")
    r = run([BIN, "verify", "--model", model, "--guidance", path, "--out", out])
    msg = r.stderr.strip()
    check(r.returncode == 3 and path in msg and all(w in msg for w in words) and not os.path.exists(out),
          f"{what}: exit {r.returncode}: {msg[:200]}")


first = open(sorted(glob.glob(os.path.join(archive, "*.json")))[0]).read()
doc = json.loads(first)
doc["windows"][1]["dominance"][states[0]] = "high"
refused(doc, ["windows[1]", f"dominance of '{states[0]}' is a string"], "a dominance that is a string")
doc = json.loads(first)
doc["windows"][0]["dominance"][states[1]] = 1.5
refused(doc, ["windows[0]", "1.5, not a probability"], "a dominance above 1")
doc = json.loads(first)
doc["windows"][0]["to"] = doc["windows"][1]["to"]
refused(doc, ["windows[0]", "spans", "lead days 1-3"], "a window whose dates do not match its leads")
doc = json.loads(first)
del doc["windows"][2]["expected_days"]
refused(doc, ["windows[2] has no 'expected_days'"], "a window without expected days")
doc = json.loads(first)
doc["windows"][0]["dominance"][states[0]] = None
refused(doc, ["windows[0]", "dominance is null for some states"], "a dominance null for one state only")
doc = json.loads(first)
doc["windows"] = {"a": 1}
refused(doc, ["windows is an object, not a list"], "windows that are not a list")
finish()
