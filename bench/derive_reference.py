#!/usr/bin/python3
"""The steps of `isohypse derive`, written plainly with numpy, netCDF4 and
scikit-learn as one would in a notebook, for the derive benchmark (bench/README.md).

  derive_reference.py run --input 'DIR/reanalysis/*.nc' --out ref.npz
  derive_reference.py compare --model M.nc --ref ref.npz --iso-wall S --iso-rss KB --ref-wall S --ref-rss KB

`run` reproduces the settings of derive's defaults (src/derive.cpp): domain
20-80N, 170E-40W; mean + 3 annual harmonics fitted by least squares over the
whole record; season Nov-Mar; sqrt(cos lat) weights; EOFs to 80 % of the
variance; classifiability table for k = 2..8 (30 k-means runs with one
k-means++ start each, on the data and on 30 red-noise surrogates; k is
significant where the index beats the surrogates' 90 % quantile, and the
significant k with the largest index is chosen); final k-means with 100
k-means++ starts; labels for every day by the nearest centroid, "no regime"
(-1) below an anomaly correlation of 0.25 taken over the full weighted field,
(pc . c) / (|w x' - m| |c|) (issue 11); patterns: the composites of each
regime's in-season days, no-regime days left out. The random numbers differ from
isohypse's (fixed seeds of its own), so k and the partitions agree only as
far as the data determine them.

`compare` reads the isohypse model file and the reference's results and prints
the benchmark table.
"""
import argparse
import glob
import json
import resource
import sys
import time

import netCDF4
import numpy as np
from scipy.optimize import linear_sum_assignment
from sklearn.cluster import KMeans
from sklearn.metrics import adjusted_rand_score

G0 = 9.80665  # standard gravity, m s-2 (WMO)
LAT_MIN, LAT_MAX, LON_WEST, LON_WIDTH = 20.0, 80.0, 170.0, 150.0
MONTHS = (11, 12, 1, 2, 3)
HARMONICS = 3
VARIANCE_FRACTION, MAX_EOFS = 0.8, 60
K_RANGE = range(2, 9)
RUNS, SURROGATES, LEVEL = 30, 30, 0.9
RESTARTS, MAX_ITER, TOL = 100, 300, 1e-10
NO_REGIME_THRESHOLD = 0.25
SEED = 20261202


def read_record(pattern):
    """Heights in metres (days x lat x lon, latitudes ascending), dates."""
    fields, dates = [], []
    for path in sorted(glob.glob(pattern)):
        with netCDF4.Dataset(path) as ds:
            lat = np.asarray(ds["latitude"][:], float)
            lon = np.asarray(ds["longitude"][:], float)
            ilat = np.where((lat >= LAT_MIN) & (lat <= LAT_MAX))[0]
            ilat = ilat[np.argsort(lat[ilat])]
            east = (lon - LON_WEST) % 360.0
            ilon = np.where(east <= LON_WIDTH + 1e-6)[0]
            ilon = ilon[np.argsort(east[ilon])]
            z = ds["z"][:, ilat.min():ilat.max() + 1, :]  # masked and unpacked by netCDF4
            z = z[:, ilat - ilat.min(), :][:, :, ilon]
            fields.append(np.ma.filled(z.astype(np.float64), np.nan) / G0)
            t = ds["time"]
            dates.extend(netCDF4.num2date(t[:], t.units, getattr(t, "calendar", "standard")))
    lats = np.sort(lat[ilat])
    return np.concatenate(fields), dates, lats


def harmonic_basis(dates):
    doy = np.array([d.timetuple().tm_yday for d in dates], float)
    ndays = np.array([366.0 if (d.year % 4 == 0 and (d.year % 100 != 0 or d.year % 400 == 0)) else 365.0
                      for d in dates])
    f = (doy - 1.0) / ndays
    cols = [np.ones_like(f)]
    for n in range(1, HARMONICS + 1):
        cols += [np.cos(2 * np.pi * n * f), np.sin(2 * np.pi * n * f)]
    return np.column_stack(cols)


def consecutive_flags(dates):
    flags = np.zeros(len(dates), bool)
    for t in range(1, len(dates)):
        flags[t] = (dates[t] - dates[t - 1]).days == 1
    return flags


def red_noise(pcs, consecutive, rng):
    out = np.empty_like(pcs)
    pairs = np.where(consecutive)[0]
    for c in range(pcs.shape[1]):
        x = pcs[:, c]
        d = x - x.mean()
        r1 = np.clip(np.mean(d[pairs - 1] * d[pairs]) / np.mean(d * d), -0.999, 0.999)
        sigma = x.std(ddof=1)
        prev = 0.0
        for t in range(len(x)):
            if t > 0 and consecutive[t]:
                prev = r1 * prev + sigma * np.sqrt(1 - r1 * r1) * rng.standard_normal()
            else:
                prev = sigma * rng.standard_normal()
            out[t, c] = x.mean() + prev
    return out


def classifiability(centroid_sets):
    """Michelangeli, Vautard & Legras (1995), J. Atmos. Sci. 52, 1237-1256: mean over ordered
    pairs of partitions of min_i max_j ACC(c_i, c_j)."""
    n = len(centroid_sets)
    unit = [c / np.linalg.norm(c, axis=1, keepdims=True) for c in centroid_sets]
    total = 0.0
    for m in range(n):
        for q in range(n):
            if m != q:
                total += (unit[m] @ unit[q].T).max(axis=1).min()
    return total / (n * (n - 1))


def kmeans_centroids(data, k, seed):
    return KMeans(n_clusters=k, n_init=1, max_iter=MAX_ITER, tol=TOL, random_state=seed).fit(data).cluster_centers_


def run(args):
    timings = {}
    t0 = time.perf_counter()

    def lap(stage):
        nonlocal t0
        now = time.perf_counter()
        timings[stage] = round(now - t0, 3)
        print(f"reference: {stage} {now - t0:.1f} s", file=sys.stderr, flush=True)
        t0 = now

    h, dates, lats = read_record(args.input)
    nt, nlat, nlon = h.shape
    Y = h.reshape(nt, nlat * nlon)
    del h
    lap("read")

    B = harmonic_basis(dates)
    # Points with missing days are fitted on their valid days alone; missing anomalies then
    # become 0 (the climatology), as isohypse does.
    gaps = np.isnan(Y).any(axis=0)
    coef = np.empty((B.shape[1], Y.shape[1]))
    coef[:, ~gaps] = np.linalg.lstsq(B, Y[:, ~gaps], rcond=None)[0]
    for p in np.where(gaps)[0]:
        ok = ~np.isnan(Y[:, p])
        coef[:, p] = np.linalg.lstsq(B[ok], Y[ok, p], rcond=None)[0]
    anom = np.nan_to_num(Y - B @ coef, nan=0.0)
    del Y
    lap("climatology")

    season = np.array([d.month in MONTHS for d in dates])
    season_dates = [d for d, s in zip(dates, season) if s]
    w = np.repeat(np.sqrt(np.cos(np.deg2rad(lats))), nlon)
    X = anom[season] * w
    mean = X.mean(axis=0)
    X -= mean
    U, s, Vt = np.linalg.svd(X, full_matrices=False)
    eigen = s ** 2 / (X.shape[0] - 1)
    explained = eigen / eigen.sum()
    n_eof = min(int(np.searchsorted(np.cumsum(explained), VARIANCE_FRACTION - 1e-12) + 1), MAX_EOFS)
    pcs = U[:, :n_eof] * s[:n_eof]
    eofs = Vt[:n_eof]
    del X, U, Vt
    lap("eof")

    consecutive = consecutive_flags(season_dates)
    rng = np.random.default_rng(SEED)
    surrogates = [red_noise(pcs, consecutive, rng) for _ in range(SURROGATES)]
    table = []
    for k in K_RANGE:
        index = classifiability([kmeans_centroids(pcs, k, 1000 * k + r) for r in range(RUNS)])
        surr = [classifiability([kmeans_centroids(sd, k, 1000000 * (i + 1) + 1000 * k + r) for r in range(RUNS)])
                for i, sd in enumerate(surrogates)]
        level = np.quantile(surr, LEVEL)
        table.append({"k": k, "classifiability": index, "surrogate_level": level, "significant": bool(index > level)})
        print(f"reference: k={k} index {index:.4f} level {level:.4f}", file=sys.stderr, flush=True)
    significant = [row for row in table if row["significant"]]
    if not significant:
        sys.exit("reference: no k is significant: " + json.dumps(table))
    k = max(significant, key=lambda row: (row["classifiability"], -row["k"]))["k"]
    lap("classifiability")

    km = KMeans(n_clusters=k, n_init=RESTARTS, max_iter=MAX_ITER, tol=TOL, random_state=SEED).fit(pcs)
    lap("kmeans")

    weighted = anom * w - mean
    all_pcs = weighted @ eofs.T
    field_norms = np.linalg.norm(weighted, axis=1)
    del weighted
    labels, corr = assign(all_pcs, km.cluster_centers_, field_norms)
    patterns = np.stack([anom[season & (labels == j)].mean(axis=0) for j in range(k)])
    lap("labels")

    peak_kb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    np.savez(args.out, explained=explained[:n_eof], n_eof=n_eof, k=k, k_table=json.dumps(table),
             patterns=patterns.reshape(k, nlat, nlon), labels=labels, correlation=corr, in_season=season,
             pcs=pcs, eofs=eofs, mean=mean, weights=w, anom_season_days=np.where(season)[0], field_norms=field_norms,
             timings=json.dumps(timings), peak_kb=peak_kb)
    print(f"reference: k = {k}, {n_eof} EOFs ({explained[:n_eof].sum():.3f}), peak RSS {peak_kb / 1024:.0f} MiB",
          file=sys.stderr)


def assign(pcs, centroids, field_norms):
    """Nearest centroid; the full-field correlation (pc . c) / (|y| |c|), field_norms = |y| per day."""
    d = ((pcs[:, None, :] - centroids[None, :, :]) ** 2).sum(axis=2)
    best = d.argmin(axis=1)
    c = centroids[best]
    corr = (pcs * c).sum(axis=1) / (field_norms * np.linalg.norm(c, axis=1))
    return np.where(corr >= NO_REGIME_THRESHOLD, best, -1), corr


def matched_correlations(p, q):
    """Uncentred pattern correlations of p's patterns with q's after the best one-to-one matching
    (Hungarian assignment on the correlations)."""
    pu = p.reshape(len(p), -1)
    qu = q.reshape(len(q), -1)
    pu = pu / np.linalg.norm(pu, axis=1, keepdims=True)
    qu = qu / np.linalg.norm(qu, axis=1, keepdims=True)
    c = pu @ qu.T
    rows, cols = linear_sum_assignment(-c)
    return c[rows, cols]


def compare(args):
    ref = np.load(args.ref)
    with netCDF4.Dataset(args.model) as ds:
        iso_explained = ds["explained_fraction"][:].filled(np.nan)
        iso_patterns = ds["pattern"][:].filled(np.nan)
        iso_labels = ds["label"][:].filled(-2)
        iso_season = ds["in_season"][:].filled(0).astype(bool)
        n_points = ds.dimensions["lat"].size * ds.dimensions["lon"].size
        provenance = json.loads(ds.getncattr("provenance"))
        iso_table = json.loads(ds.getncattr("regime_count_table"))
    n_days = len(iso_labels)
    n_season = int(iso_season.sum())
    ref_k, iso_k = int(ref["k"]), iso_patterns.shape[0]
    ref_explained = ref["explained"]
    n = min(len(ref_explained), len(iso_explained))
    ref_labels, ref_patterns = ref["labels"], ref["patterns"]
    note = ""
    if ref_k != iso_k:
        # The chosen k differs (each side's random runs decide close calls in the table): compare
        # the partitions at isohypse's k, refitting the reference's final k-means outside the timing.
        km = KMeans(n_clusters=iso_k, n_init=RESTARTS, max_iter=MAX_ITER, tol=TOL, random_state=SEED).fit(ref["pcs"])
        # The composites are of unweighted anomalies; rebuild them from the weighted PCs' partition.
        anom_w = ref["pcs"] @ ref["eofs"] + ref["mean"]
        lab, _ = assign(ref["pcs"], km.cluster_centers_, ref["field_norms"][ref["anom_season_days"]])
        ref_patterns = np.stack([(anom_w[lab == j] / ref["weights"]).mean(axis=0)
                                 for j in range(iso_k)]).reshape(iso_patterns.shape)
        ref_labels = np.full(n_days, -2)
        ref_labels[ref["anom_season_days"]] = lab
        note = f" (reference refitted at isohypse's k = {iso_k} for the comparison; patterns from retained EOFs)"
    pcorr = matched_correlations(iso_patterns, ref_patterns)
    ari_season = adjusted_rand_score(iso_labels[iso_season], ref_labels[iso_season])
    ari_all = adjusted_rand_score(iso_labels, ref_labels) if ref_k == iso_k else float("nan")

    data_bytes = n_days * n_points * 4
    season_bytes = n_season * n_points * 4
    iso_rss, ref_rss = args.iso_rss * 1024, args.ref_rss * 1024
    mib = 1024.0 ** 2
    speed = args.ref_wall / args.iso_wall
    mem_ok = iso_rss < 2 * data_bytes
    rows = [
        ("wall time", f"{args.iso_wall:.1f} s", f"{args.ref_wall:.1f} s"),
        ("CPU time (user + system)", f"{args.iso_cpu:.1f} s", f"{args.ref_cpu:.1f} s"),
        ("peak RSS (/usr/bin/time -v)", f"{iso_rss / mib:.0f} MiB", f"{ref_rss / mib:.0f} MiB"),
        ("number of EOFs (80 % variance)", str(len(iso_explained)), str(len(ref_explained))),
        ("variance explained by them", f"{iso_explained.sum():.4f}", f"{ref_explained.sum():.4f}"),
        ("k chosen (2..8)", str(iso_k), str(ref_k)),
    ]
    ref_timings = json.loads(str(ref["timings"]))
    iso_timings = provenance.get("timings_s", {})
    for stage in ["read", "climatology", "eof", "classifiability", "kmeans", "labels"]:
        rows.append((f"  stage {stage}", f"{iso_timings.get(stage, float('nan')):.1f} s",
                     f"{ref_timings.get(stage, float('nan')):.1f} s"))
    print(f"\n{'':34s} {'isohypse':>14s} {'numpy/sklearn':>14s}")
    for name, a, b in rows:
        print(f"{name:34s} {a:>14s} {b:>14s}")
    print()
    print(f"domain data: {n_days} days x {n_points} points x 4 bytes = {data_bytes / mib:.0f} MiB "
          f"(season only: {n_season} days, {season_bytes / mib:.0f} MiB)")
    print(f"speed ratio (reference / isohypse): wall {speed:.1f} x, CPU {args.ref_cpu / args.iso_cpu:.1f} x"
          f"   target >= 10: {'MET' if speed >= 10 else 'MISSED'}")
    print(f"isohypse peak / domain data: {iso_rss / data_bytes:.2f}   target < 2: {'MET' if mem_ok else 'MISSED'}"
          f"  (vs season-only data: {iso_rss / season_bytes:.2f})")
    print(f"explained fractions, max |difference| over the first {n} EOFs: "
          f"{np.max(np.abs(iso_explained[:n] - ref_explained[:n])):.2e}")
    print("pattern correlations after best matching" + note + ": " + ", ".join(f"{c:.4f}" for c in pcorr))
    print(f"label agreement (adjusted Rand index): in-season days {ari_season:.4f}, all days "
          + ("n/a" if np.isnan(ari_all) else f"{ari_all:.4f}"))
    print("classifiability tables (k: isohypse index/level | reference index/level):")
    ref_table = {row["k"]: row for row in json.loads(str(ref["k_table"]))}
    for row in iso_table:
        r = ref_table.get(row["k"], {})
        print(f"  k={row['k']}: {row['classifiability']:.4f}/{row['surrogate_level']:.4f}"
              f"{'*' if row['significant'] else ' '} | "
              f"{r.get('classifiability', float('nan')):.4f}/{r.get('surrogate_level', float('nan')):.4f}"
              f"{'*' if r.get('significant') else ' '}")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="mode", required=True)
    r = sub.add_parser("run")
    r.add_argument("--input", required=True, help="quoted glob of the yearly reanalysis files")
    r.add_argument("--out", required=True, help="results (.npz)")
    c = sub.add_parser("compare")
    c.add_argument("--model", required=True)
    c.add_argument("--ref", required=True)
    for name in ["iso-wall", "ref-wall", "iso-cpu", "ref-cpu", "iso-rss", "ref-rss"]:
        c.add_argument("--" + name, type=float, required=True, help="seconds or kbytes (/usr/bin/time -v)")
    args = ap.parse_args()
    run(args) if args.mode == "run" else compare(args)


if __name__ == "__main__":
    main()
