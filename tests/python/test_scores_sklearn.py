"""Brier score, ROC area and Heidke skill of isohypse against scikit-learn.

References (scikit-learn 1.2, Debian's python3-sklearn):
- sklearn.metrics.brier_score_loss: mean squared difference (Brier 1950).
- sklearn.metrics.roc_auc_score: trapezoidal area under the ROC curve, which
  equals the Mann-Whitney statistic with ties counted half (Mason & Graham
  2002, QJRMS 128, 2145-2166).
- sklearn.metrics.cohen_kappa_score: Cohen's (1960) kappa, which is the
  Heidke skill score (Wilks 2011, Statistical Methods in the Atmospheric
  Sciences, 3rd ed., ch. 8.3).
Random data from several seeds, with and without ties in the probabilities.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np
from sklearn.metrics import brier_score_loss, cohen_kappa_score, roc_auc_score

TOOL = os.path.join(os.environ["ISOHYPSE_TOOLS_DIR"], "scores_tool")
TOL = 1e-12


def run_tool(args, columns, folder):
    path = os.path.join(folder, "cases.txt")
    np.savetxt(path, np.column_stack(columns), fmt="%.17g")
    out = subprocess.run([TOOL, args[0], path, *args[1:]], check=True, capture_output=True, text=True)
    return float(out.stdout)


def cases(rng):
    """Yields (label, p, o): continuous probabilities, and ties from rounding."""
    n = int(rng.integers(20, 400))
    p = rng.random(n)
    o = (rng.random(n) < 0.3 + 0.4 * p).astype(int)
    yield "continuous", p, o
    yield "ties (1 decimal)", np.round(p, 1), o
    # Lagged-ensemble-like probabilities: multiples of 1/10, many ties.
    k = rng.integers(0, 11, n)
    yield "ties (k/10)", k / 10.0, (rng.random(n) < k / 10.0).astype(int)


def main():
    failures = 0
    with tempfile.TemporaryDirectory() as folder:
        for seed in range(6):
            rng = np.random.default_rng(seed)
            for label, p, o in cases(rng):
                for name, ours, ref in (
                    ("brier", run_tool(["brier"], [p, o], folder), brier_score_loss(o, p)),
                    ("roc", run_tool(["roc"], [p, o], folder), roc_auc_score(o, p)),
                ):
                    ok = abs(ours - ref) <= TOL
                    failures += not ok
                    print(f"seed {seed} {label:17s} n={len(p):3d} {name:6s} isohypse {ours:.15f} "
                          f"sklearn {ref:.15f} {'ok' if ok else 'MISMATCH'}")
            k = 5
            n = int(rng.integers(30, 300))
            obs = rng.integers(0, k, n)
            fc = np.where(rng.random(n) < 0.5, obs, rng.integers(0, k, n))
            ours = run_tool(["heidke", str(k)], [fc, obs], folder)
            ref = cohen_kappa_score(fc, obs)
            ok = abs(ours - ref) <= TOL
            failures += not ok
            print(f"seed {seed} heidke K={k} n={n:3d} isohypse {ours:.15f} kappa {ref:.15f} "
                  f"{'ok' if ok else 'MISMATCH'}")
    print(f"{failures} mismatches (tolerance {TOL})")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
