"""isohypse verify: scores against independent references, planted answers, bad input.

References: scikit-learn's brier_score_loss and roc_auc_score (Debian python3-sklearn) on
random probabilities; Wilks (2011, Statistical Methods in the Atmospheric Sciences, 3rd ed.)
for the multi-category Brier score sum_k (p_k - o_k)^2 and the skill score 1 - BS/BS_ref;
a perfect forecast scores 1 and the climatological forecast 0 against climatology (by the
definition of a skill score)."""
import glob
import json
import os

import netCDF4
import numpy as np
from sklearn.metrics import brier_score_loss, roc_auc_score

from common import BIN, check, finish, run, scratch
from daily_season import small_world_model

tmp = scratch()
world, cfg, model = small_world_model(tmp)

with netCDF4.Dataset(model) as m:
    t = m["time"]
    dates = [d.strftime("%Y-%m-%d") for d in netCDF4.num2date(t[:], t.units, t.calendar)]
    labels = np.asarray(m["label"][:])
    in_season = np.asarray(m["in_season"][:]) == 1
    freq = np.asarray(m["frequency"][:], dtype=float)
k = len(freq)
states = [f"R{i + 1}" for i in range(k)] + ["no_regime"]
clim = np.append(freq, max(0.0, 1 - freq.sum()))
sha = run(["sha256sum", model]).stdout.split()[0]
obs_state = {d: (k if l < 0 else int(l)) for d, l in zip(dates, labels)}


def write_guidance(folder, issue_days, prob_of):
    """Hand-made guidance inside the model's record: prob_of(valid_date, observed_state) -> vector."""
    os.makedirs(folder, exist_ok=True)
    for i in issue_days:
        daily = []
        for lead in range(0, 11):
            v = dates[i + lead]
            p = prob_of(v, obs_state[v])
            daily.append({"valid_date": v, "lead_days": lead, "members": 10, "weight_sum": 10.0,
                          "probabilities": {s: float(p[j]) for j, s in enumerate(states)},
                          "most_likely": states[int(np.argmax(p))]})
        doc = {"format": "isohypse-guidance", "format_version": 1, "issue_date": dates[i], "states": states,
               "daily": daily, "provenance": {"model": {"sha256": sha}}}
        json.dump(doc, open(os.path.join(folder, dates[i] + ".json"), "w"))


season_idx = [i for i in range(len(dates) - 20) if in_season[i] and in_season[i + 10]]
issues = season_idx[::7][:25]

# 1. A perfect forecast scores 1; the climatological forecast scores 0 against climatology.
write_guidance(os.path.join(tmp, "perfect"), issues, lambda v, o: np.eye(k + 1)[o])
out = os.path.join(tmp, "perfect.json")
r = run([BIN, "verify", "--model", model, "--guidance", os.path.join(tmp, "perfect"), "--out", out, "--bootstrap", "50"])
check(r.returncode == 0, f"verify runs on hand-made guidance ({r.stderr.strip()[:200]})")
rep = json.load(open(out))
w = rep["windows"][0]
check(abs(w["hit_rate"]["estimate"] - 1) < 1e-12 and abs(w["multicategory_brier_skill"]["estimate"] - 1) < 1e-12
      and abs(w["heidke"]["estimate"] - 1) < 1e-12, "perfect forecast: hit rate, Heidke and Brier skill are 1")
write_guidance(os.path.join(tmp, "clim"), issues, lambda v, o: clim)
out = os.path.join(tmp, "clim.json")
run([BIN, "verify", "--model", model, "--guidance", os.path.join(tmp, "clim"), "--out", out, "--bootstrap", "50"])
rep = json.load(open(out))
vals = [wd["multicategory_brier_skill"]["estimate"] for wd in rep["windows"]]
check(all(abs(x) < 1e-9 for x in vals), f"climatological forecast: multi-category Brier skill 0 ({vals})")

# 2. Random probabilities: per-regime Brier score and ROC area equal scikit-learn's.
rng = np.random.default_rng(11)
rand = {}
def random_prob(v, o):
    if v not in rand:
        p = rng.dirichlet(np.ones(k + 1))
        rand[v] = np.round(p, 2) / np.round(p, 2).sum()
    return rand[v]
write_guidance(os.path.join(tmp, "random"), issues, random_prob)
out = os.path.join(tmp, "random.json")
r = run([BIN, "verify", "--model", model, "--guidance", os.path.join(tmp, "random"), "--out", out, "--bootstrap", "50"])
rep = json.load(open(out))
lead5 = next(x for x in rep["by_lead"] if x["lead_days"] == 5)
ps = np.array([rand[dates[i + 5]] for i in issues])
os_ = np.array([obs_state[dates[i + 5]] for i in issues])
for j, s in enumerate(states):
    y = (os_ == j).astype(int)
    bs = brier_score_loss(y, ps[:, j])
    got = lead5["regimes"][s]
    ok = abs(got["brier"] - bs) < 1e-12
    if 0 < y.sum() < len(y):
        auc = roc_auc_score(y, ps[:, j])
        ok = ok and abs(got["roc_area"] - auc) < 1e-12
        check(ok, f"lead 5, {s}: Brier {got['brier']:.6f} = sklearn {bs:.6f}, ROC {got['roc_area']:.6f} = sklearn {auc:.6f}")
    else:
        check(ok, f"lead 5, {s}: Brier {got['brier']:.6f} = sklearn {bs:.6f}")
# The five-term binned decomposition (Stephenson, Coelho and Jolliffe 2008) of each regime, 10 bins, with numpy.
edges = np.arange(11) / 10
for j, s in enumerate(states):
    p, y = ps[:, j], (os_ == j).astype(float)
    b = np.minimum(np.searchsorted(edges, p, side="right") - 1, 9)
    want = dict.fromkeys(["reliability", "resolution", "within_bin_variance", "within_bin_covariance"], 0.0)
    for m in (b == i for i in range(10) if (b == i).any()):
        pk, ok = p[m].mean(), y[m].mean()
        want["reliability"] += m.sum() * (pk - ok) ** 2 / len(p)
        want["resolution"] += m.sum() * (ok - y.mean()) ** 2 / len(p)
        want["within_bin_variance"] += ((p[m] - pk) ** 2).sum() / len(p)
        want["within_bin_covariance"] += 2 * ((y[m] - ok) * (p[m] - pk)).sum() / len(p)
    # What sampling alone gives a reliable forecast (one case per valid date at one lead: independent cases):
    # (1/N) sum_k (1/n_k) sum_(j in k) p_j (1 - p_j), the bias Ferro & Fricker (2012) correct the term for.
    want["reliability_sampling_mean"] = sum((p[m] * (1 - p[m])).sum() / m.sum() for m in
                                            (b == i for i in range(10) if (b == i).any())) / len(p)
    want["reliability_beyond_sampling"] = want["reliability"] - want["reliability_sampling_mean"]
    got = lead5["regimes"][s]
    diff = max(abs(got[key] - v) for key, v in want.items())
    ident = got["reliability"] - got["resolution"] + got["uncertainty"] + got["within_bin_variance"] \
        - got["within_bin_covariance"] - got["brier"]
    check(diff < 1e-12 and abs(ident) < 1e-12,
          f"lead 5, {s}: five Brier terms and the reliability from sampling alone equal numpy to 1e-12 ({diff:.1e}), "
          f"identity gap {ident:.1e}")
mcb = np.mean([np.sum((ps[i] - np.eye(k + 1)[os_[i]]) ** 2) for i in range(len(issues))])
check(abs(lead5["multicategory_brier"] - mcb) < 1e-12, f"lead 5 multi-category Brier {lead5['multicategory_brier']:.6f} = numpy {mcb:.6f}")

# Frequency bias (../shared/METHODS.md §6; Wilks 2011): days forecast as the most likely over days observed,
# per state and window, beside the probability-sum version (expected_days / observed_days).
for wd in rep["windows"]:
    leads = range(wd["first_lead_days"], wd["last_lead_days"] + 1)
    ml = np.array([np.argmax(rand[dates[i + L]]) for i in issues for L in leads if L <= 10])
    ob = np.array([obs_state[dates[i + L]] for i in issues for L in leads if L <= 10])
    pr = np.array([rand[dates[i + L]] for i in issues for L in leads if L <= 10])
    for j, s in enumerate(states):
        got = wd["frequency_bias"][s]
        n_fc, n_ob = int(np.sum(ml == j)), int(np.sum(ob == j))
        want = n_fc / n_ob if n_ob else None
        same = (got["bias"] is None) if want is None else abs(got["bias"] - want) < 1e-12
        check(same and got["most_likely_days"] == n_fc and got["observed_days"] == n_ob
              and abs(got["expected_days"] - pr[:, j].sum()) < 1e-9,
              f"window {wd['first_lead_days']}-{wd['last_lead_days']}, {s}: bias {got['bias']} = numpy "
              f"{n_fc}/{n_ob}, expected days {got['expected_days']:.3f}")
    if wd["last_lead_days"] >= 10:
        break

# 3. The demo season: classify every third day, verify against the analysis files.
arch = os.path.join(tmp, "archive")
os.makedirs(arch)
inits = sorted(glob.glob(f"{world}/forecasts/*.nc"))
issue_dates = [os.path.basename(p)[3:11] for p in inits][2::3]
for d in issue_dates:
    iso = f"{d[:4]}-{d[4:6]}-{d[6:]}"
    r = run([BIN, "classify", "--model", model, "--forecasts", f"{world}/forecasts/*.nc", "--reforecasts",
             f"{world}/reforecasts/*.nc", "--lag", "3", "--issue-date", iso, "--quiet", "--out", f"{arch}/{iso}.json"])
    assert r.returncode == 0, r.stderr
out, html = os.path.join(tmp, "season.json"), os.path.join(tmp, "season.html")
r = run([BIN, "verify", "--model", model, "--guidance", arch, "--observed", f"{world}/analysis/*.nc", "--out", out,
         "--html", html])
check(r.returncode == 0, "verify the demo season")
rep = json.load(open(out))
hits = {(wd["first_lead_days"], wd["last_lead_days"]): wd["hit_rate"]["estimate"] for wd in rep["windows"]}
print("hit rate by window:", hits)
check(hits[(1, 3)] > hits[(29, 45)] + 0.2, "skill falls with lead as planted (days 1-3 against 29-45)")
check(rep["episodes"]["caught"] + rep["episodes"]["missed"] >= 1 and rep["episodes"]["caught"] >= 1,
      f"episodes found: {rep['episodes']['caught']} caught, {rep['episodes']['missed']} missed")
season = set(rep["out_of_season"]["season_months"])
months = {int(m) for m in rep["frequency_bias_by_month"]}
check(months <= season, f"only months of the model's season are scored ({sorted(months)} in {sorted(season)}); "
      f"{rep['out_of_season']['cases']} pairs outside it counted: {rep['out_of_season']['by_month']}")
page = open(html).read()
check("<svg" in page and "http" not in page.replace("http://www.w3.org", "") and "never replaces" in page,
      "the HTML page is self-contained (inline SVG, no links out) and carries the caution")
check(all(w in page for w in ["within-bin variance", "within-bin covariance", 'class="bar"', 'class="count"'])
      and page.count('class="chart reliability"') == len(rep["windows"]),
      "the HTML page shows the five Brier terms and a reliability diagram per window with counts and bars")
print("window     state       BS      REL      RES      UNC      WBV      WBC")
for wd in rep["windows"]:
    rel = wd["reliability"]
    bars = all((b["count"] == 0) == (b["consistency_lower"] is None) for b in rel)
    check(len(rel) == 10 and sum(b["count"] for b in rel) == wd["cases"] * len(states) and bars,
          f"days {wd['first_lead_days']}-{wd['last_lead_days']}: 10 reliability bins holding every case, "
          "a consistency bar on each non-empty one")
    for s, t in wd["regimes"].items():
        print(f"{wd['first_lead_days']:>3}-{wd['last_lead_days']:<3}  {s:10s}" + "".join(
            f" {t[key]:8.5f}" for key in ["brier", "reliability", "resolution", "uncertainty", "within_bin_variance",
                                          "within_bin_covariance"]))

# 4. Bad input: one clear message, non-zero exit, no report.
def refused(args, words, what):
    out = os.path.join(tmp, "bad.json")
    r = run([BIN, "verify", "--model", model, *args, "--out", out])
    msg = r.stderr.strip()
    check(r.returncode != 0 and all(w in msg for w in words) and not os.path.exists(out),
          f"{what}: exit {r.returncode}: {msg[:180]}")

empty = os.path.join(tmp, "empty")
os.makedirs(empty)
refused(["--guidance", empty], ["no guidance files", "empty archive"], "an empty archive")
other = os.path.join(tmp, "other.nc")
r = run([BIN, "derive", "--config", cfg, "--input", f"{world}/reanalysis/*.nc", "--domain", "20,80,170,-40",
         "--k", "3", "--out", other])
r = run([BIN, "verify", "--model", other, "--guidance", arch, "--out", os.path.join(tmp, "bad.json")])
check(r.returncode != 0 and "another regime model" in r.stderr and not os.path.exists(os.path.join(tmp, "bad.json")),
      f"guidance from another regime model: {r.stderr.strip()[:180]}")
# Which side is empty is said (issue 12): no guidance valid in the period, or no observations for it.
refused(["--guidance", arch, "--observed", f"{world}/analysis/*.nc", "--from", "2030-01-01", "--to", "2030-02-01"],
        ["no guidance valid between 2030-01-01 and 2030-02-01", "the guidance covers"],
        "a period with no guidance valid in it")
last_year = sorted(glob.glob(f"{world}/reanalysis/*.nc"))[-1]
refused(["--guidance", arch, "--observed", last_year],
        ["no observations for the valid dates", "cover"], "guidance with no observations for its valid dates")


# 5. Bad flags: refused by the option builders or VerifyConfig::validate, exit 2 and one line naming the flag.
def refused_with(args, code, words, what):
    out = os.path.join(tmp, "bad.json")
    r = run([BIN, "verify", "--model", model, *args, "--out", out])
    msg = r.stderr.strip()
    check(r.returncode == code and msg.startswith("isohypse: error: ") and all(w in msg for w in words)
          and not os.path.exists(out), f"{what}: exit {r.returncode} (want {code}): {msg[:180]}")


refused_with(["--guidance", arch, "--from", "2026-02-30"], 2, ["--from", "2026-02-30"], "an impossible --from date")
refused_with(["--guidance", arch, "--windows", "3-1"], 2, ["--windows", "3-1"], "a window that runs backwards")
refused_with(["--guidance", arch, "--bootstrap", "5"], 2, ["--bootstrap", "5"], "too few bootstrap resamples")
refused_with(["--guidance", arch, "--from", "2026-02-01", "--to", "2026-01-01"], 2, ["--from", "after"],
             "--from after --to")
refused_with(["--guidance", arch, "--bins", "1"], 2, ["--bins", "reliability_bins 1", "at least 2"],
             "fewer than 2 reliability bins")

# 6. A malformed guidance file is bad data: exit 3, the message names the file and what is wrong.
bad = os.path.join(tmp, "malformed")
os.makedirs(bad)
good_text = open(os.path.join(arch, sorted(os.listdir(arch))[0])).read()
truncated = os.path.join(bad, "truncated.json")
open(truncated, "w").write(good_text[: len(good_text) // 2])
refused_with(["--guidance", truncated], 3, [truncated, "not valid JSON at byte"], "truncated guidance JSON")
doc = json.loads(good_text)
del doc["daily"]
no_daily = os.path.join(bad, "no-daily.json")
json.dump(doc, open(no_daily, "w"))
refused_with(["--guidance", no_daily], 3, [no_daily, "guidance has no 'daily' list"], "guidance without 'daily'")
doc = json.loads(good_text)
doc["daily"][2]["probabilities"][states[0]] = "0.5"
string_p = os.path.join(bad, "string-probability.json")
json.dump(doc, open(string_p, "w"))
refused_with(["--guidance", string_p], 3, [string_p, "daily[2]", f"probability of '{states[0]}' is a string"],
             "a probability that is a string")
for version in (5, 0, "4", None):  # issue 15: a later, impossible, textual or missing format version
    doc = json.loads(good_text)
    if version is None:
        del doc["format_version"]
    else:
        doc["format_version"] = version
    path = os.path.join(bad, f"format-version-{version}.json")
    json.dump(doc, open(path, "w"))
    words = [path, "format_version", "versions 1 to 4"] if version is not None else [path, "format_version"]
    refused_with(["--guidance", path], 3, words, f"guidance of format version {version!r}")

# 7. Intervals from moving blocks of consecutive issue dates (Kuensch 1989): blocks of the lag span + 7 days by
#    default, the block length and count beside every interval and on the page; no interval below 3 blocks.
ages = [i["age_days"] for f in sorted(os.listdir(arch))
        for i in json.load(open(os.path.join(arch, f)))["ensemble"]["initialisations"]]
span = max(ages) - min(ages) + 1
rep = json.load(open(os.path.join(tmp, "season.json")))
intervals = [wd[s] for wd in rep["windows"] for s in ("hit_rate", "heidke", "multicategory_brier_skill")]
import datetime
issued = [datetime.date.fromisoformat(f[:10]) for f in sorted(os.listdir(arch))]
period = (max(issued) - min(issued)).days + 1
blocks = period // (span + 7)
check(rep["bootstrap"]["lag_span_days"] == span and rep["bootstrap"]["block_days"] == "lag+7"
      and all(i["block_days"] == span + 7 and i["blocks"] == blocks for i in intervals)
      and all((i["lower"] is None and "fewer than 3" in i["note"]) == (blocks < 3) for i in intervals),
      f"season, issue dates spanning {period} days: every interval from {blocks} blocks of the lag span {span} + 7 days, "
      f"none below 3 ({intervals[0]})")
check(f"{span + 7}-day blocks" in open(os.path.join(tmp, "season.html")).read(), "the page shows the block length")
out, html = os.path.join(tmp, "long-blocks.json"), os.path.join(tmp, "long-blocks.html")
r = run([BIN, "verify", "--model", model, "--guidance", arch, "--observed", f"{world}/analysis/*.nc", "--out", out,
         "--html", html, "--bootstrap", "50", "--block-days", "400"])
rep = json.load(open(out))
w = rep["windows"][0]["hit_rate"]
check(r.returncode == 0 and w["lower"] is None and w["upper"] is None and "fewer than 3" in w["note"]
      and "no interval" in open(html).read(), f"blocks of 400 days: no interval, and the report says why ({w})")
r = run([BIN, "verify", "--model", model, "--guidance", arch, "--observed", f"{world}/analysis/*.nc", "--out", out,
         "--bootstrap", "50", "--block-days", "auto"])
rep = json.load(open(out))
check(r.returncode == 0 and rep["bootstrap"]["block_days"] == "auto"
      and all(wd["hit_rate"]["block_days"] >= 1 for wd in rep["windows"]),
      f"--block-days auto: a Wilks length per interval ({[wd['hit_rate']['block_days'] for wd in rep['windows']]})")
refused_with(["--guidance", arch, "--block-days", "0"], 2, ["--block-days", "'0'"], "a block length of 0 days")
doc = json.loads(good_text)
doc["ensemble"]["initialisations"][0]["age_days"] = "two"
bad_age = os.path.join(bad, "string-age.json")
json.dump(doc, open(bad_age, "w"))
refused_with(["--guidance", bad_age], 3, [bad_age, "ensemble.initialisations[0]: age_days is a string"],
             "an initialisation age that is a string")
finish()
