"""The moving-block bootstrap interval of verify against scipy and numpy.

References: Student's t quantiles against scipy.stats.t.ppf; the exact moving-block bootstrap variance of a
mean (Kuensch 1989, "The jackknife and the bootstrap for general stationary observations", Ann. Statist. 17,
1217-1241: with k whole blocks drawn uniformly from the n - L + 1 block starts, the variance of the resampled
mean is the variance of the block means over the starts divided by k), computed with numpy; the batch-means
interval, estimate +- t_(blocks - 1) * that standard error * sqrt(D / (D - L)) (Schmeiser 1982, "Batch size
effects in the analysis of simulation output", Oper. Res. 30, 556-568; Meketon and Schmeiser 1984,
"Overlapping batch means: something for nothing?", Proc. Winter Simulation Conf. 226-230; both from memory);
and the coverage of the nominal 90 % interval on numpy-simulated scores of overlapping lagged-ensemble issues
(issue 12 asks for 85-95 %)."""
import os

import numpy as np
from scipy.stats import t as student_t

from common import check, finish, scratch, tool

tmp = scratch()

# 1. Student's t quantiles, P(|T| <= t) = level, against scipy.
#    scipy's ppf itself is good to a few 1e-9 relative; its cdf at our quantile must give the level to 1e-12.
dfs = list(range(1, 41)) + [60, 89, 200]
worst_ppf = worst_cdf = 0.0
for level in (0.5, 0.8, 0.9, 0.95, 0.99):
    got = np.array(tool("bootstrap_tool", "t-quantile", str(level), *map(str, dfs))["quantiles"])
    worst_ppf = max(worst_ppf, float(np.max(np.abs(got / student_t.ppf((1 + level) / 2, dfs) - 1))))
    worst_cdf = max(worst_cdf, float(np.max(np.abs(student_t.cdf(got, dfs) - student_t.cdf(-got, dfs) - level))))
check(worst_ppf < 1e-8 and worst_cdf < 1e-12,
      f"t quantiles for df 1-40, 60, 89, 200 and levels 0.5-0.99: scipy.stats.t.ppf within {worst_ppf:.1e} "
      f"(relative), and scipy's P(|T| <= t) at them equals the level within {worst_cdf:.1e}")


def intervals(series, block_days, resamples, level=0.9, seed=1):
    path = os.path.join(tmp, "series.txt")
    np.savetxt(path, np.atleast_2d(series), fmt="%.17g")
    return tool("bootstrap_tool", "intervals", path, str(block_days), str(resamples), str(level), str(seed))


# 2. The interval of a mean with whole blocks only (n = k L): half width = t_(k - 1) * the exact bootstrap standard
#    error * sqrt(n / (n - L)). 20000 resamples leave the resampled spread about 0.5 % from the exact one.
rng = np.random.default_rng(12)
x = np.convolve(rng.normal(size=92), np.ones(3) / 3, mode="valid") + 0.4  # 90 overlapping issues, lag 3
for L in (9, 10, 15):
    k, n = 90 // L, 90
    block_means = np.convolve(x, np.ones(L) / L, mode="valid")  # the n - L + 1 moving blocks
    se = np.sqrt(block_means.var() / k)
    half = student_t.ppf(0.95, k - 1) * se * np.sqrt(n / (n - L))
    r = intervals(x, L, 20000)
    got = (r["upper"][0] - r["lower"][0]) / 2
    check(r["blocks"] == k and abs(r["estimate"][0] - x.mean()) < 1e-12 and abs(got / half - 1) < 0.02,
          f"blocks of {L} days over 90 days ({k} blocks): half width {got:.5f} against t_{k - 1} * exact bootstrap "
          f"standard error * sqrt(90/{n - L}) = {half:.5f} (numpy, scipy)")

# 3. Coverage of the nominal 90 % interval: 400 numpy series (seed 2031) of 90 daily issues, each the mean of `lag`
#    consecutive independent initialisation scores (issues of a lagged ensemble sharing lag - 1 of them), blocks of
#    lag + 7 days, 500 resamples per interval.
sims = 400
for lag in (3, 4):
    rng = np.random.default_rng(2031 + lag)
    init = rng.normal(size=(sims, 90 + lag - 1))
    series = 0.4 + sum(init[:, j:j + 90] for j in range(lag)) / lag
    r = intervals(series, lag + 7, 500, seed=100)
    lower, upper = np.array(r["lower"]), np.array(r["upper"])
    covered = float(np.mean((lower <= 0.4) & (0.4 <= upper)))
    check(0.85 <= covered <= 0.95, f"lag {lag}, blocks of {lag + 7} days: the nominal 90 % interval covers the true "
          f"mean in {covered:.3f} of {sims} simulations (85-95 % asked)")

finish()
