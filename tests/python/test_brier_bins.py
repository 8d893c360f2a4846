"""The binned Brier decomposition and the reliability diagram's consistency bars against plain numpy.

References: Stephenson, Coelho and Jolliffe (2008), "Two extra components in the Brier score
decomposition", Wea. Forecasting 23, 752-757 (BS = REL - RES + UNC + WBV - WBC), recomputed here
from its formulas with numpy; the worked example of ../shared/METHODS.md section 6; Broecker and
Smith (2007), "Increasing the reliability of reliability diagrams", Wea. Forecasting 22, 651-661
(consistency bars: the range of observed frequency a reliable forecast gives), checked against
scipy's binomial quantiles and by simulating reliable and unreliable forecasts."""
import os

import numpy as np
from scipy.stats import binom

from common import check, finish, scratch, tool

tmp = scratch()


def numpy_terms(p, o, n_bins):
    """The five terms with fixed-width bins [i/n, (i+1)/n), the last one closed."""
    edges = np.arange(n_bins + 1) / n_bins
    k = np.minimum(np.searchsorted(edges, p, side="right") - 1, n_bins - 1)
    n, obar = len(p), o.mean()
    rel = res = wbv = wbc = 0.0
    for b in range(n_bins):
        m = k == b
        if not m.any():
            continue
        pk, ok = p[m].mean(), o[m].mean()
        rel += m.sum() * (pk - ok) ** 2
        res += m.sum() * (ok - obar) ** 2
        wbv += ((p[m] - pk) ** 2).sum()
        wbc += 2 * ((o[m] - ok) * (p[m] - pk)).sum()
    return {"brier": np.mean((p - o) ** 2), "reliability": rel / n, "resolution": res / n,
            "uncertainty": obar * (1 - obar), "within_bin_variance": wbv / n, "within_bin_covariance": wbc / n}, k


def isohypse_terms(p, o, *extra):
    pf, of = os.path.join(tmp, "p.txt"), os.path.join(tmp, "o.txt")
    np.savetxt(pf, p, fmt="%.17g")
    np.savetxt(of, o, fmt="%.0f")
    return tool("numerics_tool", "brier-bins", pf, of, *extra)


def gap(t):
    return t["reliability"] - t["resolution"] + t["uncertainty"] + t["within_bin_variance"] \
        - t["within_bin_covariance"] - t["brier"]


KEYS = ["brier", "reliability", "resolution", "uncertainty", "within_bin_variance", "within_bin_covariance"]

# 1. The worked example of METHODS.md section 6: 12 cases, 5 bins.
p = np.array([.05, .12, .18, .33, .36, .41, .58, .62, .77, .93, .08, .27])
o = np.array([0, 0, 1, 0, 1, 0, 1, 1, 1, 1, 0, 0], dtype=float)
got = isohypse_terms(p, o, "--bins", "5")
want, _ = numpy_terms(p, o, 5)
printed = [0.152817, 0.022730, 0.090278, 0.25, 0.003281, 0.032917]
check(all(abs(got[key] - want[key]) < 1e-12 for key in KEYS), "12-case example: all five terms equal numpy to 1e-12")
check(all(abs(got[key] - v) < 5e-7 for key, v in zip(KEYS, printed)),
      "12-case example: " + ", ".join(f"{key} {got[key]:.6f}" for key in KEYS) + " as printed in METHODS.md")
check(abs(gap(got)) < 1e-12, f"12-case example: BS = REL - RES + UNC + WBV - WBC (gap {gap(got):.1e})")

# 2. Random forecasts, some on bin edges and at 0 and 1: five terms and bin counts against numpy.
rng = np.random.default_rng(2008)
worst, worst_gap, counts_ok = 0.0, 0.0, True
for trial in range(12):
    n = int(rng.integers(5, 2000))
    p = rng.uniform(size=n)
    if trial % 2:
        p = np.round(p * 20) / 20  # multiples of 0.05: many on the edges of 10 and 20 bins
    o = (rng.uniform(size=n) < p ** (0.5 + trial / 8)).astype(float)
    for bins in (2, 5, 10, 13):
        got = isohypse_terms(p, o, "--bins", str(bins), "--resamples", "50")
        want, k = numpy_terms(p, o, bins)
        worst = max(worst, max(abs(got[key] - want[key]) for key in KEYS))
        worst_gap = max(worst_gap, abs(gap(got)))
        counts_ok = counts_ok and [b["count"] for b in got["bins"]] == np.bincount(k, minlength=bins).tolist()
check(worst < 1e-12, f"48 random sets (5-2000 cases, 2/5/10/13 bins): largest difference from numpy {worst:.1e}")
check(worst_gap < 1e-12, f"48 random sets: largest gap in the five-term identity {worst_gap:.1e}")
check(counts_ok, "48 random sets: the cases per bin equal numpy's (edges i/n, last bin closed)")

# 3. Consistency bars against the binomial: 200 cases all at p = 0.33 (bin 3 of 10).
p = np.full(200, 0.33)
o = (np.arange(200) < 70).astype(float)
b3 = isohypse_terms(p, o, "--resamples", "4000", "--level", "0.9", "--seed", "5")["bins"][3]
lo, hi = binom.ppf(0.05, 200, 0.33) / 200, binom.ppf(0.95, 200, 0.33) / 200
check(abs(b3["consistency_lower"] - lo) <= 0.0101 and abs(b3["consistency_upper"] - hi) <= 0.0101,
      f"bar of 200 cases at p = 0.33: {b3['consistency_lower']:.3f} to {b3['consistency_upper']:.3f}, "
      f"scipy binomial 5-95 % {lo:.3f} to {hi:.3f} (within 2 cases)")

# 4. Reliable forecasts fall inside their bars about 90 % of the time; unreliable ones do not.
def inside_fraction(power, trials=40):
    inside = total = 0
    for t in range(trials):
        p = rng.uniform(size=600)
        o = (rng.uniform(size=600) < p ** power).astype(float)
        for b in isohypse_terms(p, o, "--resamples", "400", "--seed", str(t))["bins"]:
            total += 1
            inside += b["consistency_lower"] <= b["observed_frequency"] <= b["consistency_upper"]
    return inside / total


reliable = inside_fraction(1.0)
check(0.82 <= reliable <= 0.97, f"reliable forecasts (o ~ Bernoulli(p), 40 x 600 cases, 10 bins): "
      f"{100 * reliable:.1f} % of bins inside their 90 % bar")
overconfident = inside_fraction(2.0)
check(overconfident < 0.5, f"over-forecast events (o ~ Bernoulli(p^2)): {100 * overconfident:.1f} % inside")

# 5. Bad input: fewer than 2 bins is refused.
pf, of = os.path.join(tmp, "p.txt"), os.path.join(tmp, "o.txt")
try:
    tool("numerics_tool", "brier-bins", pf, of, "--bins", "1")
    check(False, "1 bin is refused")
except RuntimeError as e:
    check("at least 2" in str(e), f"1 bin is refused: {str(e).strip()[-90:]}")
finish()
