"""isohypse verify on a daily season whose issues overlap (issue 12's "done when"), on an invented world.

daily_season.py makes 57 daily issues with lag 4 (consecutive issues share 3 of 4 initialisations). Checked:
- every interval rests on moving blocks of the lag span + 7 = 11 days (Kuensch 1989, Ann. Statist. 17,
  1217-1241), the block length and count beside it, and is wider than the interval from single issues
  (--block-days 1, the resampling before issue 12), which ignores the overlap;
- the reliability share REL / BS of the five-term binned decomposition (Stephenson, Coelho & Jolliffe 2008, Wea.
  Forecasting 23, 752-757) printed per window and state equals the report's terms; from 8 days on it is at most
  0.5 for every state with at least 10 days with and without it; where it is above 0.5 (1-7 days: the planted
  members stay with the truth for ~10 days, so the weighted lagged probabilities are under-confident), the
  window's reliability diagram has a bin whose observed frequency lies outside its consistency bar (Broecker &
  Smith 2007, Wea. Forecasting 22, 651-661): miscalibration, not noise, which calibration is for;
- no episode under way on the first valid date is scored as missed; each scored onset lies after the first issue;
- the window products are scored for every window (their numbers are checked in test_window_products.py);
- the HTML page shows the share column, the block length, the window products and the episode table.
"""
import json
import os
import re

from common import BIN, check, finish, run, scratch
from daily_season import LAG, make_daily_season

tmp = scratch()
model, archive, analysis, n_issues = make_daily_season(tmp)
print(f"daily season: {n_issues} issues, lag {LAG}")


def verify(name, *extra):
    out, html = os.path.join(tmp, name + ".json"), os.path.join(tmp, name + ".html")
    r = run([BIN, "verify", "--model", model, "--guidance", archive, "--observed", analysis, "--out", out,
             "--html", html, "--bootstrap", "300", *extra])
    assert r.returncode == 0, r.stderr
    return json.load(open(out)), open(html).read(), r.stdout


rep, page, text = verify("blocks")
single, _, _ = verify("single", "--block-days", "1")
print(text)

# ---- intervals: blocks of lag + 7 days, wider than single issues
block = LAG + 7
ratios = []
for w, w1 in zip(rep["windows"], single["windows"]):
    for key in ("hit_rate", "heidke", "multicategory_brier_skill"):
        a, b = w[key], w1[key]
        check(a["block_days"] == block and a["blocks"] == (n_issues // block),
              f"{w['first_lead_days']}-{w['last_lead_days']} {key}: blocks of {a['block_days']} days, "
              f"{a['blocks']} of them")
        ratios.append((a["upper"] - a["lower"]) / (b["upper"] - b["lower"]))
ratios.sort()
print("interval width, blocks of 11 days / single issues:", " ".join(f"{x:.2f}" for x in ratios))
check(ratios[0] >= 1.0 and ratios[len(ratios) // 2] >= 1.5,
      f"every interval at least as wide as from single issues, the median {ratios[len(ratios) // 2]:.2f} x as wide")
check(f"blocks of {block} days (lag span {LAG} days + 7)" in text, "the block length printed beside the intervals")

# ---- the reliability share table: REL / BS, and in brackets (REL - what sampling alone gives) / BS
states = rep["states"]
section = text[text.index("reliability / Brier score, (beyond sampling)"):text.index("beyond sampling: the")]
cell_re = re.compile(r"(-?\d+\.\d\d) \(\s*(-?\d+\.\d\d)\)(~?)|(?<=\s)-(?=\s|$)")
rows = {}
for line in section.splitlines()[2:]:
    if line.strip():
        rows[line.split()[0]] = [m.group(0) for m in cell_re.finditer(line[len(line.split()[0]):])]
print("reliability / Brier score (beyond sampling), recomputed from the report's terms:")
for w in rep["windows"]:
    lead = f"{w['first_lead_days']}-{w['last_lead_days']}"
    printed = rows.get(lead)
    check(printed is not None and len(printed) == len(states), f"{lead}: a row in the printed reliability share table")
    shares, beyond = {}, {}
    for s, cell in zip(states, printed or []):
        r = w["regimes"][s]
        days = r["base_rate"] * w["cases"]
        enough = days >= 10 - 1e-9 and w["cases"] - days >= 10 - 1e-9
        share = r["reliability"] / r["brier"] if enough and r["brier"] > 0 else None
        shares[s] = share
        beyond[s] = None if share is None else (r["reliability"] - r["reliability_sampling_mean"]) / r["brier"]
        noise = share is not None and r["reliability"] <= r["reliability_sampling_upper"]
        expect = "-" if share is None else f"{share:.2f} ({beyond[s]:5.2f})" + ("~" if noise else "")
        check(cell == expect, f"{lead} {s}: printed {cell!r}, the report's REL / BS and beyond sampling {expect!r}")
    print(f"  {lead:>6}", " ".join("          -" if v is None else f"{v:5.2f} ({beyond[s]:5.2f})"
                                    for s, v in shares.items()))
    worst = max((v for v in shares.values() if v is not None), default=0.0)
    worst_beyond = max((v for v in beyond.values() if v is not None), default=0.0)
    if w["first_lead_days"] >= 8:
        check(worst_beyond <= 0.5, f"{lead}: the reliability beyond sampling at most half of BS for every state "
                                   f"with enough days (largest {worst_beyond:.2f})")
        check(worst <= 0.5, f"{lead}: REL itself at most half of BS for every state with enough days (largest "
                            f"{worst:.2f})")
    elif worst > 0.5:  # these raw short-range probabilities are under-confident: the diagram must show it
        outside = [b for b in w["reliability"] if b["count"] > 0 and not (
            b["consistency_lower"] - 1e-12 <= b["observed_frequency"] <= b["consistency_upper"] + 1e-12)]
        check(len(outside) > 0, f"{lead}: REL/BS {worst:.2f} > 0.5 comes with {len(outside)} bin(s) outside their "
                                f"consistency bars (miscalibration, not noise)")

# ---- episodes
first_valid = rep["period"]["from"]
first_issue = min(os.path.basename(f)[:10] for f in os.listdir(archive))
for e in rep["episodes"]["list"]:
    check(e["onset"] > first_valid and e["onset"] > first_issue,
          f"episode {e['regime']} from {e['onset']}: onset after the first valid date and the first issue")
check(rep["episodes"]["not_scored"]["under_way_at_start"] >= 0 and
      all(not (e["onset"] == first_valid and not e["caught"]) for e in rep["episodes"]["list"]),
      f"no episode under way on {first_valid} counted as missed "
      f"({rep['episodes']['not_scored']['under_way_at_start']} not scored)")

# ---- window products
wp = rep["window_products"]["windows"]
check(len(wp) == len(rep["windows"]) and all(w["cases"] > 0 for w in wp),
      "window products scored for every window: " + ", ".join(f"{w['first_lead_days']}-{w['last_lead_days']} "
                                                             f"{w['cases']}" for w in wp))
check(all(w["dominance"]["multicategory_brier_skill"]["block_days"] == block for w in wp),
      "the window products' intervals on the same blocks")

# ---- the page
for what in ("reliability / Brier score", f"blocks of {block} days", "<h2>Window products</h2>",
             "Episodes of at least 5 days", "within-bin covariance"):
    check(what in page, f"the page shows '{what}'")
finish()
