"""EOFs of isohypse (numerics_tool eof) against numpy.linalg.svd and scipy.

References (Debian's numpy 1.24 and scipy):
- numpy.linalg.svd of the centred data Xc^T = U S V^T: EOFs are the columns
  of V, explained fractions s_k^2 / sum(s^2), eigenvalues s_k^2 / (n_t - 1)
  (METHODS.md section 2).
- scipy.sparse.linalg.svds (ARPACK, Lehoucq, Sorensen & Yang 1998) for the
  leading singular triplets of a matrix too large for a quick full SVD, the
  case where isohypse switches to the randomized method (Halko et al. 2011).
Both methods must give the explained fractions within 1e-6 and the leading
patterns with |correlation| > 0.9999. The test data have a slowly decaying
power-law spectrum (singular values ~ k^-0.7, as geopotential EOFs) plus
noise, a non-zero time mean, and are rounded to float32 first because the
library stores anomalies as float.
"""
import os
import sys

import numpy as np
from scipy.sparse.linalg import svds

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch, tool  # noqa: E402


def synthetic(n_space, n_time, modes, seed):
    rng = np.random.default_rng(seed)
    u, _ = np.linalg.qr(rng.standard_normal((n_space, modes)))
    v, _ = np.linalg.qr(rng.standard_normal((n_time, modes)))
    s = 100.0 * np.arange(1, modes + 1) ** -0.7
    x = (u * s) @ v.T + 0.05 * rng.standard_normal((n_space, n_time))
    x += rng.standard_normal((n_space, 1)) * 3.0  # a time mean to remove
    return x.astype(np.float32).astype(np.float64)


def write(folder, name, x):
    path = os.path.join(folder, name + ".f64")
    np.ascontiguousarray(x).tofile(path)
    return f"{path}@{x.shape[0]}x{x.shape[1]}"


def compare(label, out, eofs_ref, explained_ref, eig_ref, xc, n_check):
    n = len(out["explained"])
    expl = np.array(out["explained"])
    check(np.max(np.abs(expl - explained_ref[:n])) < 1e-6,
          f"{label}: explained fractions of {n} EOFs within 1e-6 of the reference "
          f"(max diff {np.max(np.abs(expl - explained_ref[:n])):.2e})")
    check(np.allclose(out["eigenvalues"], eig_ref[:n], rtol=1e-5),
          f"{label}: eigenvalues s^2/(n_t-1) within 1e-5 relative")
    eofs = np.array(out["eofs"])
    corr = np.abs(np.sum(eofs[:, :n_check] * eofs_ref[:, :n_check], axis=0))
    check(np.min(corr) > 0.9999, f"{label}: leading {n_check} patterns |corr| > 0.9999 (min {np.min(corr):.8f})")
    lead = np.argmax(np.abs(eofs), axis=0)
    check(np.all(eofs[lead, np.arange(n)] > 0), f"{label}: largest loading of every EOF positive")
    pcs = np.array(out["pcs"])
    check(np.allclose(pcs, xc.T @ eofs, atol=1e-4 * np.abs(pcs).max()),
          f"{label}: PCs equal Xc^T * EOFs")
    check(abs(out["total_variance"] - np.sum(xc ** 2) / (xc.shape[1] - 1)) < 1e-9 * out["total_variance"],
          f"{label}: total variance = trace of the covariance")


def main():
    folder = scratch()

    # A few hundred by a few hundred, both methods, fixed count and fraction.
    x = synthetic(300, 240, 240, seed=1)
    spec = write(folder, "x", x)
    xc = x - x.mean(axis=1, keepdims=True)
    _, s, vt = np.linalg.svd(xc.T, full_matrices=False)
    explained = s ** 2 / np.sum(s ** 2)
    eig = s ** 2 / (x.shape[1] - 1)
    eofs_ref = vt.T
    need = int(np.searchsorted(np.cumsum(explained), 0.8) + 1)
    print(f"300 x 240: numpy needs {need} EOFs for 80% of the variance")
    for method in ("exact", "randomized"):
        out = tool("numerics_tool", "eof", spec, "--method", method, "--count", "15")
        check(out["method"] == method, f"{method}: method reported")
        compare(f"{method}, 15 EOFs", out, eofs_ref, explained, eig, xc, 15)
        out = tool("numerics_tool", "eof", spec, "--method", method, "--fraction", "0.8")
        check(len(out["explained"]) == need, f"{method}: {len(out['explained'])} EOFs for 80%, numpy {need}")
    out = tool("numerics_tool", "eof", spec)
    check(out["method"] == "exact", "automatic method is exact for 300 x 240")

    # Effective sample size with season breaks: N (1 - r1^2) / (1 + r1^2),
    # r1 over consecutive days only (Bretherton et al. 1999, from memory).
    flags = np.ones(240)
    flags[::40] = 0
    np.savetxt(os.path.join(folder, "flags.txt"), flags, fmt="%d")
    out = tool("numerics_tool", "eof", spec, "--count", "3", "--consecutive", os.path.join(folder, "flags.txt"))
    pcs = np.array(out["pcs"])
    for k in range(3):
        p = pcs[:, k] - pcs[:, k].mean()
        pairs = np.nonzero(flags[1:])[0] + 1
        r1 = np.mean(p[pairs - 1] * p[pairs]) / np.mean(p ** 2)
        n_eff = 240 * (1 - r1 ** 2) / (1 + r1 ** 2)
        check(abs(out["effective_n"][k] - n_eff) < 1e-9 * n_eff, f"EOF {k + 1}: effective n {n_eff:.3f}")
        check(abs(out["north_error"][k] - out["eigenvalues"][k] * np.sqrt(2 / n_eff)) < 1e-9 * out["eigenvalues"][k],
              f"EOF {k + 1}: North et al. (1982) error lambda sqrt(2/N*)")

    # Large enough (min dimension > 2500) for the automatic randomized method;
    # reference: the 20 leading singular triplets from ARPACK.
    x = synthetic(2600, 2520, 120, seed=2)
    spec = write(folder, "big", x)
    xc = x - x.mean(axis=1, keepdims=True)
    u, s, vt = svds(xc.T, k=20, tol=0)
    order = np.argsort(s)[::-1]
    s, v = s[order], vt[order].T
    total = np.sum(xc ** 2)
    out = tool("numerics_tool", "eof", spec, "--count", "12")
    print(f"2600 x 2520 randomized EOFs: {out['seconds']:.2f} s")
    check(out["method"] == "randomized", "automatic method is randomized for 2600 x 2520")
    compare("randomized 2600 x 2520", out, v, s ** 2 / total, s ** 2 / (x.shape[1] - 1), xc, 12)
    finish()


if __name__ == "__main__":
    main()
