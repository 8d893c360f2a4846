"""The p-values, the correction for testing several k and the choice of k
(numerics_tool regime-table and holm) against numpy on the same indices.

Input: principal components with four planted regimes (centres of radius 3
at the corners of a square in the first two of six components, 8-day
episodes, unit noise; 600 days in 120-day seasons). numerics_tool runs the
table for k = 2..6 with 10 runs and 60 surrogates (5 values of k at level 0.9
need 49) and returns the data's index, spread and variance ratio per k and
every surrogate's. numpy recomputes from those numbers:
- Monte Carlo p-values (Davison & Hinkley 1997, Bootstrap Methods and their
  Application, eq. 4.11): p = (1 + #{surrogates at least as extreme}) / (1 + S),
  "at least as classifiable" within 1e-5;
- the surrogates' 90 % level, numpy.quantile (linear interpolation);
- Holm's correction (Holm 1979, Scand. J. Statist. 6, 65-70) written as
  adjusted p-values, p_adj(i) = max over j <= i of (m - j + 1) p_(j), a k
  passing where p_adj <= alpha (an independent formulation of the step-down
  rule the library loops through), and the index test at alpha;
- the gap (Tibshirani, Walther & Hastie 2001, J. R. Statist. Soc. B 63,
  411-423) on log(1 + R) and its spread sd * sqrt(1 + 1/S);
- the choice: the highest index among the passing, ties within
  max(spread, 0.001) broken by the gap, gaps within the spread to the smaller k.
A second part feeds numerics_tool holm p-values made up to cover ties and a
chain that stops, and compares the verdicts with numpy's.
"""
import json
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch, tool  # noqa: E402

ALPHA = 0.1
RESOLUTION, TIE = 1e-5, 1e-3


def planted(rng, n=600, dims=6):
    centres = np.zeros((4, dims))
    centres[:, :2] = 3.0 * np.array([[1, 1], [1, -1], [-1, 1], [-1, -1]]) / np.sqrt(2)
    pcs, flags = np.empty((n, dims)), np.ones(n, dtype=int)
    regime = 0
    for t in range(n):
        if t % 8 == 0:
            regime = rng.integers(4)
        if t % 120 == 0:
            flags[t] = 0
        pcs[t] = centres[regime] + rng.standard_normal(dims)
    return pcs, flags


def holm_numpy(p, alpha):
    """Adjusted p-values: sort, scale by (m - rank), running maximum."""
    p = np.asarray(p, dtype=float)
    m = len(p)
    order = np.argsort(p, kind="stable")
    adjusted = np.maximum.accumulate((m - np.arange(m)) * p[order])
    passes = np.empty(m, dtype=bool)
    passes[order] = adjusted <= alpha
    return passes


def choose_numpy(rows, significant):
    passing = [i for i in range(len(rows)) if significant[i]]
    if not passing:
        return 0
    top = max(passing, key=lambda i: (rows[i]["classifiability"], -i))
    tie = max(rows[top]["classifiability_spread"], TIE)
    tied = [i for i in passing if rows[i]["classifiability"] >= rows[top]["classifiability"] - tie]
    widest = max(tied, key=lambda i: (rows[i]["gap"], -i))
    return min(rows[i]["k"] for i in tied if rows[i]["gap"] >= rows[widest]["gap"] - rows[widest]["gap_spread"])


def check_table(out):
    rows = out["table"]
    p_index, p_ratio = [], []
    for r in rows:
        si = np.array(r["surrogate_classifiability"], dtype=float)
        sr = np.array(r["surrogate_variance_ratio"], dtype=float)
        s_total = 60
        pi = (1 + np.sum(si >= r["classifiability"] - RESOLUTION)) / (1 + s_total)
        pr = (1 + np.sum(sr >= np.float32(r["variance_ratio"]))) / (1 + s_total)
        p_index.append(pi)
        p_ratio.append(pr)
        check(abs(pi - r["p_classifiability"]) < 1e-12 and abs(pr - r["p_variance_ratio"]) < 1e-12,
              f"k = {r['k']}: p-values {r['p_classifiability']:.4f} / {r['p_variance_ratio']:.4f} "
              f"= numpy {pi:.4f} / {pr:.4f} ({len(si)} surrogates{', stopped early' if r['stopped_early'] else ''})")
        check(r["stopped_early"] == (len(si) < s_total), f"k = {r['k']}: stopped_early means fewer surrogates")
        if r["stopped_early"]:
            check(max(np.sum(si >= r["classifiability"] - RESOLUTION), np.sum(sr >= r["variance_ratio"])) + 1
                  > ALPHA * (1 + s_total), f"k = {r['k']}: stopped only once it could no longer pass")
        level = np.quantile(si, 0.9)
        check(abs(level - r["surrogate_level"]) < 1e-6, f"k = {r['k']}: 90 % level {r['surrogate_level']:.6f} "
              f"= numpy.quantile {level:.6f}")
        logs = np.log1p(sr)
        gap = np.log1p(r["variance_ratio"]) - logs.mean()
        spread = logs.std() * np.sqrt(1 + 1 / len(sr))
        check(abs(gap - r["gap"]) < 1e-5 and abs(spread - r["gap_spread"]) < 1e-5,
              f"k = {r['k']}: gap {r['gap']:.5f} (spread {r['gap_spread']:.5f}) = numpy {gap:.5f} ({spread:.5f})")
    significant = holm_numpy(p_ratio, ALPHA) & (np.array(p_index) <= ALPHA)
    check([r["significant"] for r in rows] == list(significant),
          f"significant k {[r['k'] for r in rows if r['significant']]} = numpy "
          f"{[r['k'] for r, s in zip(rows, significant) if s]}")
    k = choose_numpy(rows, significant)
    check(out["k"] == k, f"chosen k = {out['k']} = numpy {k}; reason: {out['reason']}")
    check(out["k"] == 4, "the four planted regimes are found")


def check_holm_cases(folder):
    cases = [  # (p_index, p_ratio) per k = 2.., the indices all different
        ([0.01, 0.01, 0.01, 0.01], [0.005, 0.04, 0.03, 0.01]),
        ([0.01, 0.2, 0.01, 0.01], [0.01, 0.01, 0.01, 0.01]),
        ([0.01] * 6, [0.0099, 0.0099, 0.02, 0.0199, 0.05, 0.0999]),
        ([0.5, 0.01, 0.09, 0.11], [0.2, 0.3, 0.4, 0.5]),
    ]
    rng = np.random.default_rng(3)
    for n, (pi, pr) in enumerate(cases):
        rows = [{"k": 2 + i, "index": float(x), "spread": 0.0, "p_index": a, "p_ratio": b}
                for i, (a, b, x) in enumerate(zip(pi, pr, rng.uniform(0.7, 0.99, len(pi))))]
        path = os.path.join(folder, f"holm{n}.json")
        with open(path, "w") as f:
            json.dump(rows, f)
        out = tool("numerics_tool", "holm", path, "--level", "0.9")
        expected = holm_numpy(pr, ALPHA) & (np.array(pi) <= ALPHA)
        got = [r["significant"] for r in out["rows"]]
        check(got == list(expected), f"Holm case {n}: passing {got} = numpy {list(expected)}")


def main():
    folder = scratch()
    pcs, flags = planted(np.random.default_rng(11))
    pcs_path, flags_path = os.path.join(folder, "pcs.txt"), os.path.join(folder, "flags.txt")
    np.savetxt(pcs_path, pcs, fmt="%.17g")
    np.savetxt(flags_path, flags, fmt="%d")
    out = tool("numerics_tool", "regime-table", pcs_path, flags_path, "--k-min", "2", "--k-max", "6",
               "--runs", "10", "--surrogates", "60", "--threads", "2")
    check_table(out)
    check_holm_cases(folder)
    finish()


if __name__ == "__main__":
    main()
