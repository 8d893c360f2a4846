"""The calibration numerics (include/isohypse/numerics/calibration.hpp)
against outside references:
- the closed-form blend coefficient of ../shared/METHODS.md §8 on its worked
  example (a = 0.926606; mean multi-category Brier raw 0.605, climatology
  0.76, blended 0.604021, numpy), and against a brute-force numpy
  minimisation of the mean multi-category Brier score over a in [0, 1] on
  random data (Brier 1950, Mon. Wea. Rev. 78, 1-3, for the score);
- the multinomial logistic regression against scikit-learn's
  LogisticRegression (multinomial, L2, newton-cg; Pedregosa et al. 2011, JMLR 12,
  2825-2830) on the same features, on the worked example's cases and on
  random data."""
import json
import os
import sys
import tempfile
import warnings

import numpy as np
from sklearn.linear_model import LogisticRegression

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, tool  # noqa: E402


def run(what, cases):
    with tempfile.NamedTemporaryFile("w", suffix=".json", delete=False) as f:
        json.dump(cases, f)
    try:
        return tool("calibration_tool", what, f.name)
    finally:
        os.unlink(f.name)


def mc_brier(p, o):
    onehot = np.eye(p.shape[1])[o]
    return float(np.mean(np.sum((p - onehot) ** 2, axis=1)))


# METHODS.md §8 worked example.
c = np.array([.3, .3, .2, .2])
p = np.array([[.7, .2, .1, 0], [.5, .5, 0, 0], [.1, .6, .2, .1], [0, .1, .1, .8], [.4, .4, .2, 0], [.25, .25, .25, .25]])
o = np.array([0, 2, 1, 3, 2, 0])
C = np.tile(c, (len(o), 1))
got = run("blend", {"p": p.tolist(), "c": C.tolist(), "observed": o.tolist()})
blended = np.array(got["blended"])
check(abs(got["a"] - 0.926606) < 5e-7, f"METHODS.md §8 worked example: a = {got['a']:.6f} (expected 0.926606)")
check(abs(mc_brier(p, o) - 0.605) < 1e-12 and abs(mc_brier(C, o) - 0.76) < 1e-12 and
      abs(mc_brier(blended, o) - 0.604021) < 5e-7,
      f"worked example Brier: raw {mc_brier(p, o):.6f} (0.605), climatology {mc_brier(C, o):.6f} (0.76), "
      f"blended {mc_brier(blended, o):.6f} (0.604021)")

# Brute force on random data: a grid over [0, 1] refined around the best point.
rng = np.random.default_rng(20261202)
worst = 0.0
for trial in range(20):
    n, S = int(rng.integers(20, 200)), int(rng.integers(3, 7))
    cc = rng.dirichlet(np.ones(S) * 5, size=1).repeat(n, axis=0)
    truth = rng.dirichlet(np.ones(S), size=n)
    oo = np.array([rng.choice(S, p=t) for t in truth])
    sharp = rng.uniform(0.3, 3.0)  # over- or under-confident raw forecasts
    pp = np.exp(sharp * np.log(truth + 1e-9))
    pp /= pp.sum(axis=1, keepdims=True)
    got = run("blend", {"p": pp.tolist(), "c": cc.tolist(), "observed": oo.tolist()})
    grid = np.linspace(0, 1, 10001)
    scores = [mc_brier(cc + a * (pp - cc), oo) for a in grid]
    best = grid[int(np.argmin(scores))]
    worst = max(worst, abs(best - got["a"]))
check(worst <= 1e-4, f"blend coefficient = numpy's brute-force minimum of the mean multi-category Brier score over "
      f"a in [0, 1] (grid step 1e-4) in 20 random sets: largest difference {worst:.2e}")


def sklearn_fit(X, y, S, Cpen):
    # newton-cg: lbfgs stops a little short of the minimum here whatever its tol (its penalised objective stays
    # ~5e-6 above newton-cg's and ours on random set 1), newton-cg reaches it within ~20 steps at tol 1e-8 (at
    # 1e-12 it never meets its own test and runs to max_iter).
    m = LogisticRegression(C=Cpen, solver="newton-cg", tol=1e-8, max_iter=1000)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # newton-cg's line search warns once it cannot improve any further
        m.fit(X, y)
    prob = np.zeros((X.shape[0], S))
    prob[:, m.classes_] = m.predict_proba(X)
    return m, prob


def compare_logistic(name, p, c, members, o, Cpen):
    S = p.shape[1]
    got = run("logistic", {"p": p.tolist(), "c": c.tolist(), "members": members.tolist(), "observed": o.tolist(),
                           "C": Cpen})
    X = np.log((p * members[:, None] + 0.5) / (members[:, None] + 0.5 * S))
    X = np.hstack([X, np.log(np.maximum(c, 1e-6))])
    feat_err = float(np.abs(np.array(got["features"]) - X).max())
    m, prob = sklearn_fit(X, o, S, Cpen)
    prob_err = float(np.abs(np.array(got["probabilities"]) - prob).max())
    coef_err = float(np.abs(np.array(got["weights"]) - m.coef_).max()) if len(m.classes_) == S else 0.0
    check(feat_err < 1e-12 and prob_err < 1e-7 and coef_err < 1e-6,
          f"{name}: logistic features equal numpy's ({feat_err:.1e}); probabilities equal scikit-learn's "
          f"LogisticRegression(C={Cpen}, multinomial, newton-cg) within {prob_err:.1e}, weights within {coef_err:.1e} "
          f"({got['iterations']} Newton steps)")


compare_logistic("worked example", p, C, np.full(len(o), 8.0), o, 1.0)
rng = np.random.default_rng(7)
for trial, (n, S, Cpen) in enumerate([(300, 5, 1.0), (500, 4, 0.1), (200, 6, 10.0)]):
    cc = np.tile(rng.dirichlet(np.ones(S) * 5), (n, 1))
    cc[n // 2:] = rng.dirichlet(np.ones(S) * 5)  # two months
    truth = rng.dirichlet(np.ones(S), size=n)
    oo = np.array([rng.choice(S, p=t) for t in truth])
    members = rng.integers(8, 33, size=n).astype(float)
    pp = np.array([np.bincount(rng.choice(S, size=int(m), p=t), minlength=S) / m for t, m in zip(truth, members)])
    compare_logistic(f"random set {trial + 1} ({n} cases, {S} states)", pp, cc, members, oo, Cpen)

finish()
