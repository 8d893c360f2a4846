"""Red-noise surrogates of isohypse (numerics_tool surrogate) against numpy.

Michelangeli, Vautard & Legras (1995, J. Atmos. Sci. 52, 1237-1256) test the
classifiability against surrogates in which every principal component is an
independent AR(1) process with the data's lag-1 autocorrelation and variance.
Input: three AR(1) series (r1 = 0.3, 0.7, 0.9; standard deviations 4, 1,
0.5; means 0, 2, -1) in 50 seasons of 90 days. Checked with numpy on 10
surrogates, each statistic within 4 standard errors:
- lag-1 autocorrelation over consecutive days: SE ~ sqrt((1 - r1^2) / N)
  (Bartlett 1946, large-sample variance of an AR(1) autocorrelation; from
  memory);
- variance: SE ~ var sqrt(2 / N*), N* = N (1 - r1^2) / (1 + r1^2)
  (Bretherton et al. 1999, from memory);
- mean: SE ~ sd / sqrt(N (1 - r1) / (1 + r1));
- no correlation across season breaks (the process restarts) and none
  between components.
"""
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch, tool  # noqa: E402

R1 = np.array([0.3, 0.7, 0.9])
SD = np.array([4.0, 1.0, 0.5])
MEAN = np.array([0.0, 2.0, -1.0])
SEASONS, LENGTH, SURROGATES = 50, 90, 10


def lag1(x, flags):
    """Sample lag-1 autocorrelation over consecutive days only."""
    d = x - x.mean()
    t = np.nonzero(flags[1:])[0] + 1
    return np.mean(d[t - 1] * d[t]) / np.mean(d ** 2)


def main():
    folder = scratch()
    rng = np.random.default_rng(7)
    n = SEASONS * LENGTH
    flags = np.ones(n, dtype=int)
    flags[::LENGTH] = 0
    pcs = np.empty((n, 3))
    for t in range(n):
        fresh = SD * rng.standard_normal(3)
        pcs[t] = fresh if flags[t] == 0 else R1 * pcs[t - 1] + np.sqrt(1 - R1 ** 2) * fresh
    pcs += MEAN
    pcs_path, flags_path = os.path.join(folder, "pcs.txt"), os.path.join(folder, "flags.txt")
    np.savetxt(pcs_path, pcs, fmt="%.17g")
    np.savetxt(flags_path, flags, fmt="%d")

    surrogates = [np.array(tool("numerics_tool", "surrogate", pcs_path, flags_path, "--seed", str(s))["surrogate"])
                  for s in range(SURROGATES)]
    check(all(s.shape == pcs.shape for s in surrogates), "surrogates have the shape of the input")
    check(not np.allclose(surrogates[0], surrogates[1]), "different seeds give different surrogates")
    again = np.array(tool("numerics_tool", "surrogate", pcs_path, flags_path, "--seed", "0")["surrogate"])
    check(np.array_equal(again, surrogates[0]), "the same seed gives the same surrogate")

    breaks = np.nonzero(flags[1:] == 0)[0] + 1
    for c in range(3):
        r1_in, var_in, mean_in = lag1(pcs[:, c], flags), pcs[:, c].var(ddof=1), pcs[:, c].mean()
        r1_s = np.mean([lag1(s[:, c], flags) for s in surrogates])
        var_s = np.mean([s[:, c].var(ddof=1) for s in surrogates])
        mean_s = np.mean([s[:, c].mean() for s in surrogates])
        m = SURROGATES * n
        se_r1 = np.sqrt((1 - r1_in ** 2) / m)
        se_var = var_in * np.sqrt(2 * (1 + r1_in ** 2) / (m * (1 - r1_in ** 2)))
        se_mean = np.sqrt(var_in * (1 + r1_in) / (m * (1 - r1_in)))
        check(abs(r1_s - r1_in) < 4 * se_r1, f"PC {c + 1}: lag-1 autocorrelation {r1_s:.4f} vs input {r1_in:.4f}")
        check(abs(var_s - var_in) < 4 * se_var, f"PC {c + 1}: variance {var_s:.4f} vs input {var_in:.4f}")
        check(abs(mean_s - mean_in) < 4 * se_mean, f"PC {c + 1}: mean {mean_s:.4f} vs input {mean_in:.4f}")
        # Across breaks: correlation of (last day, first day of next season).
        a = np.concatenate([s[breaks - 1, c] for s in surrogates])
        b = np.concatenate([s[breaks, c] for s in surrogates])
        cross = np.corrcoef(a, b)[0, 1]
        check(abs(cross) < 4 / np.sqrt(len(a)), f"PC {c + 1}: correlation across season breaks {cross:.3f} ~ 0")
    for i, j in ((0, 1), (0, 2), (1, 2)):
        corr = np.mean([np.corrcoef(s[:, i], s[:, j])[0, 1] for s in surrogates])
        # Bartlett (1946, from memory): var(corr) ~ (1 + r_i r_j) / (N (1 - r_i r_j)).
        n_eff = n * (1 - R1[i] * R1[j]) / (1 + R1[i] * R1[j])
        check(abs(corr) < 4 / np.sqrt(SURROGATES * n_eff), f"PCs {i + 1} and {j + 1} independent (corr {corr:.4f})")
    finish()


if __name__ == "__main__":
    main()
