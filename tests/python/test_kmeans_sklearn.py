"""k-means and the adjusted Rand index of isohypse against scikit-learn.

References (Debian's scikit-learn 1.2):
- sklearn.cluster.KMeans(n_init=50): best of 50 greedy k-means++ starts
  (Arthur & Vassilvitskii 2007) with Lloyd iterations (Lloyd 1982). isohypse
  (100 restarts) must reach an inertia no worse than scikit-learn's by more
  than 0.1% and the same partition (adjusted Rand index >= 0.99). On
  unimodal, PC-like data distinct local minima lie within 0.01% of each
  other; there the partitions must agree when the inertias do, and
  otherwise isohypse's minimum must be the lower one.
- KMeans(init=centres, n_init=1, algorithm="lloyd"): from the same initial
  centres isohypse's kmeans_from must give the same labels, iterations and
  inertia, with the plain and with Hamerly's (2010) accelerated step.
- sklearn.metrics.adjusted_rand_score (Hubert & Arabie 1985) on random
  partitions.
"""
import os
import sys

# One OpenMP thread for scikit-learn: on a busy machine its spinning worker
# threads make KMeans(n_init=50) a hundred times slower.
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np  # noqa: E402
from sklearn.cluster import KMeans  # noqa: E402
from sklearn.metrics import adjusted_rand_score  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from common import check, finish, scratch, tool  # noqa: E402


def save(folder, name, array, fmt="%.17g"):
    path = os.path.join(folder, name + ".txt")
    np.savetxt(path, array, fmt=fmt)
    return path


def planted_groups(rng):
    """Four overlapping groups of unequal size in 6 dimensions."""
    centres = rng.normal(0, 2.2, size=(4, 6))
    sizes = [300, 220, 160, 120]
    return np.vstack([c + rng.standard_normal((n, 6)) for c, n in zip(centres, sizes)])


def pc_like(rng):
    """Unimodal, anisotropic: like principal components with falling variance."""
    return rng.standard_normal((1500, 8)) * np.sqrt(1.0 / np.arange(1, 9))


def main():
    folder = scratch()
    rng = np.random.default_rng(2026)

    for name, points, k in (("planted groups", planted_groups(rng), 4), ("PC-like", pc_like(rng), 4)):
        path = save(folder, "points", points)
        sk = KMeans(n_clusters=k, n_init=50, random_state=0, algorithm="lloyd").fit(points)
        ours = tool("numerics_tool", "kmeans", path, "--k", str(k), "--restarts", "100")
        ari = adjusted_rand_score(sk.labels_, ours["labels"])
        print(f"{name}: inertia isohypse {ours['inertia']:.6f}, scikit-learn {sk.inertia_:.6f}, ARI {ari:.6f}")
        check(ours["inertia"] <= sk.inertia_ * 1.001, f"{name}: inertia within 0.1% of scikit-learn's best of 50")
        if name == "planted groups" or abs(ours["inertia"] - sk.inertia_) <= 1e-9 * sk.inertia_:
            check(ari >= 0.99, f"{name}: adjusted Rand index against scikit-learn >= 0.99")
        else:
            check(ours["inertia"] < sk.inertia_, f"{name}: a different partition only with a lower inertia")
        sizes = np.bincount(ours["labels"], minlength=k)
        check(np.all(np.diff(sizes) <= 0), f"{name}: clusters numbered by decreasing size {sizes.tolist()}")
        single = tool("numerics_tool", "kmeans", path, "--k", str(k), "--restarts", "100", "--threads", "1")
        check(single["labels"] == ours["labels"] and single["inertia"] == ours["inertia"],
              f"{name}: same result on 1 thread")

    # Same start, plain and accelerated Lloyd against scikit-learn's Lloyd.
    for seed in range(4):
        r = np.random.default_rng(seed)
        points = pc_like(r) if seed % 2 else planted_groups(r)
        k = 5
        init = points[r.choice(len(points), k, replace=False)]
        path, init_path = save(folder, "points", points), save(folder, "init", init)
        sk = KMeans(n_clusters=k, init=init, n_init=1, algorithm="lloyd", tol=1e-4, max_iter=300).fit(points)
        for step in ("plain", "hamerly"):
            ours = tool("numerics_tool", "kmeans-from", path, init_path, "--tol", "1e-4", "--max-iter", "300",
                        "--step", step)
            what = f"start {seed}, {step}"
            check(np.array_equal(ours["labels"], sk.labels_), f"{what}: same labels as scikit-learn")
            check(abs(ours["inertia"] - sk.inertia_) <= 1e-9 * sk.inertia_,
                  f"{what}: inertia {ours['inertia']:.9f} vs {sk.inertia_:.9f}")
            check(ours["iterations"] == sk.n_iter_, f"{what}: iterations {ours['iterations']} vs {sk.n_iter_}")
            check(np.allclose(ours["centroids"], sk.cluster_centers_, atol=1e-9), f"{what}: same centres")

    # Adjusted Rand index on random partitions, including a near-copy.
    for seed in range(5):
        r = np.random.default_rng(100 + seed)
        a = r.integers(0, 3 + seed, size=200)
        b = np.where(r.random(200) < 0.2 * seed, r.integers(0, 4, size=200), a)
        ours = tool("numerics_tool", "ari", save(folder, "a", a, "%d"), save(folder, "b", b, "%d"))["ari"]
        ref = adjusted_rand_score(a, b)
        check(abs(ours - ref) < 1e-12, f"ARI seed {seed}: {ours:.12f} vs scikit-learn {ref:.12f}")
    finish()


if __name__ == "__main__":
    main()
