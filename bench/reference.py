#!/usr/bin/python3
"""The reference side of bench/side-by-side.py: the work of one rankplan benchmark plan
done as a competent user would do it in Python with Debian's python3-pandas 1.5.3,
python3-scipy 1.10.1 and python3-statsmodels 0.13.5, as one process whose wall time and
peak memory the side-by-side script measures.

    /usr/bin/python3 bench/reference.py WORKLOAD DATA.csv [--seed S] [--resamples B]

WORKLOAD is one of
  kw    read the CSV with pandas, scipy.stats.kruskal: H and its asymptotic p (and its
        log10, from mpmath where scipy's p underflows to 0);
  dunn  kw, then Dunn's z for every pair of groups from the pooled midranks with the tie
        correction of the rank variance (Dunn 1964, Technometrics 6:241-252), two-sided
        normal p, Holm adjustment with statsmodels multipletests, Cliff's delta and the
        Hodges-Lehmann shift (the median of all pairwise differences) of every pair;
  full  dunn, then a percentile bootstrap of H resampling within groups (B resamples,
        default 2000) mapped to epsilon-squared = H / (N - 1);
  mc    H with a Monte Carlo p-value: scipy.stats.permutation_test on the midranks
        computed once, B random reassignments (default 10000), statistic sum R_g^2 / n_g
        (monotone in H, so the same p; common practice).

It prints one JSON object on standard output; bench/side-by-side.py compares it with
rankplan's results.json.

How the pairwise work is vectorised. The median of the m*n differences x_i - y_j is never
formed as an m-by-n array (10^11 differences at 10^6 rows): the data hold 3 decimals (the
benchmark's generator writes them so), so the values are exact integers in units of 0.001,
and the k-th smallest difference is found by bisection over those integers, counting
#{x_i - y_j <= d} = m*n - sum_i #{y_j < x_i - d} with numpy.searchsorted on the sorted
groups (O(m log n) per step, about 20 steps). The median is the middle order statistic, or
the mean of the two middle ones when m*n is even. The bootstrap draws indices within each
group and gets the pooled midranks of each resample from counts of the distinct values
(numpy.bincount over value codes computed once), so no resample is sorted.
"""

import argparse
import json
import sys

import numpy as np
import pandas as pd
from scipy import stats
from statsmodels.stats.multitest import multipletests


def load(path):
    """The data frame (group codes in label order), the labels, and the groups' values."""
    df = pd.read_csv(path, dtype={"group": "category", "value": "float64"})
    names = sorted(df["group"].cat.categories)
    df["group"] = df["group"].cat.reorder_categories(names)
    codes = df["group"].cat.codes.to_numpy()
    order = np.argsort(codes, kind="stable")
    bounds = np.cumsum(np.bincount(codes, minlength=len(names)))[:-1]
    groups = np.split(df["value"].to_numpy()[order], bounds)
    return df, names, groups


def dunn(df, names):
    """Dunn's z, two-sided p and Holm-adjusted p for every pair (i < j), in pair order."""
    values = df["value"].to_numpy()
    codes = df["group"].cat.codes.to_numpy()
    n_total = values.size
    ranks = stats.rankdata(values)
    n = np.bincount(codes, minlength=len(names)).astype(np.float64)
    mean_rank = np.bincount(codes, weights=ranks, minlength=len(names)) / n
    _, t = np.unique(values, return_counts=True)
    t = t.astype(np.float64)
    ties = float(np.sum(t * t * t - t))
    # Rank variance with ties: N(N+1)/12 - sum(t^3 - t) / (12 (N - 1)).
    var = n_total * (n_total + 1) / 12.0 - ties / (12.0 * (n_total - 1))
    i, j = np.triu_indices(len(names), k=1)
    z = (mean_rank[i] - mean_rank[j]) / np.sqrt(var * (1.0 / n[i] + 1.0 / n[j]))
    p = 2.0 * stats.norm.sf(np.abs(z))
    p_holm = multipletests(p, method="holm")[1]
    return i, j, z, p, p_holm


def kth_difference(x, y, k):
    """The k-th smallest (1-based) of x_a - y_b over all pairs; x, y sorted int64."""
    m, n = x.size, y.size
    lo, hi = int(x[0] - y[-1]), int(x[-1] - y[0])
    while lo < hi:
        mid = (lo + hi) // 2
        at_most = m * n - int(np.searchsorted(y, x - mid, side="left").sum())
        if at_most >= k:
            hi = mid
        else:
            lo = mid + 1
    return lo


def pair_effects(groups_int, i, j):
    """Cliff's delta and the Hodges-Lehmann shift (in data units) of each pair."""
    delta, shift = [], []
    for a, b in zip(i, j):
        x, y = groups_int[a], groups_int[b]
        m, n = x.size, y.size
        below = np.searchsorted(y, x, side="left")  # y < x
        not_above = np.searchsorted(y, x, side="right")  # y <= x
        greater = int(below.sum())
        less = m * n - int(not_above.sum())
        delta.append((greater - less) / (m * n))
        mn = m * n
        if mn % 2 == 1:
            med = float(kth_difference(x, y, (mn + 1) // 2))
        else:
            med = (kth_difference(x, y, mn // 2) + kth_difference(x, y, mn // 2 + 1)) / 2.0
        shift.append(med / 1000.0)
    return delta, shift


def bootstrap_h(df, names, resamples, seed):
    """H of each bootstrap resample drawn within groups (numpy default_rng(seed))."""
    rng = np.random.default_rng(seed)
    values = df["value"].to_numpy()
    codes = df["group"].cat.codes.to_numpy()
    uniq, vcode = np.unique(values, return_inverse=True)
    order = np.argsort(codes, kind="stable")
    n = np.bincount(codes, minlength=len(names))
    start = np.concatenate(([0], np.cumsum(n)[:-1]))
    vcode_by_group = vcode[order]
    group_of = np.repeat(np.arange(len(names)), n)
    n_total = values.size
    nf = n.astype(np.float64)
    out = np.empty(resamples)
    for r in range(resamples):
        idx = np.concatenate([s + rng.integers(0, c, c) for s, c in zip(start, n)])
        vc = vcode_by_group[idx]
        counts = np.bincount(vc, minlength=uniq.size).astype(np.float64)
        midrank = np.cumsum(counts) - (counts - 1.0) / 2.0
        rank_sum = np.bincount(group_of, weights=midrank[vc], minlength=len(names))
        h = 12.0 / (n_total * (n_total + 1.0)) * np.sum(rank_sum**2 / nf) - 3.0 * (n_total + 1.0)
        tie = 1.0 - np.sum(counts**3 - counts) / (float(n_total) ** 3 - n_total)
        out[r] = h / tie if tie > 0 else np.nan
    return out


def log10_p(res, k):
    """log10 of the asymptotic p; where scipy's p is below the smallest normal double (it
    returns 0 there, and chi2.logsf returns -inf), the upper regularized incomplete gamma
    Q((k-1)/2, H/2) in mpmath at 30 digits."""
    if res.pvalue >= np.finfo(np.float64).tiny:
        return float(np.log10(res.pvalue))
    import mpmath

    mpmath.mp.dps = 30
    q = mpmath.gammainc(mpmath.mpf(k - 1) / 2, mpmath.mpf(float(res.statistic)) / 2, mpmath.inf,
                        regularized=True)
    return float(mpmath.log10(q))


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("workload", choices=["kw", "dunn", "full", "mc"])
    ap.add_argument("data")
    ap.add_argument("--seed", type=int, default=15)
    ap.add_argument("--resamples", type=int, default=None)
    args = ap.parse_args()

    df, names, groups = load(args.data)
    res = stats.kruskal(*groups)
    out = {"workload": args.workload, "n": int(df.shape[0]), "groups": names,
           "h": float(res.statistic), "p": float(res.pvalue), "log10_p": log10_p(res, len(names))}

    if args.workload in ("dunn", "full"):
        i, j, z, p, p_holm = dunn(df, names)
        groups_int = [np.sort(np.rint(g * 1000.0).astype(np.int64)) for g in groups]
        delta, shift = pair_effects(groups_int, i, j)
        out["pairs"] = [
            {"groups": [names[a], names[b]], "z": float(zz), "p": float(pp),
             "p_holm": float(ph), "cliffs_delta": float(d), "hodges_lehmann": float(s)}
            for a, b, zz, pp, ph, d, s in zip(i, j, z, p, p_holm, delta, shift)]

    if args.workload == "full":
        b = args.resamples or 2000
        h = bootstrap_h(df, names, b, args.seed)
        eps = h / (out["n"] - 1.0)
        lo, hi = np.percentile(eps, [2.5, 97.5])
        out["bootstrap"] = {"resamples": b, "epsilon_squared_low": float(lo),
                            "epsilon_squared_high": float(hi)}

    if args.workload == "mc":
        b = args.resamples or 10000
        ranks = stats.rankdata(df["value"].to_numpy())
        codes = df["group"].cat.codes.to_numpy()
        samples = tuple(ranks[codes == g] for g in range(len(names)))

        def statistic(*s, axis):
            return sum(np.sum(x, axis=axis) ** 2 / x.shape[axis] for x in s)

        # scipy counts the possible reassignments as a float product that overflows to
        # inf for 1000 observations, harmlessly (it then samples); keep that quiet.
        with np.errstate(over="ignore"):
            pt = stats.permutation_test(samples, statistic, permutation_type="independent",
                                        vectorized=True, n_resamples=b,
                                        alternative="greater", random_state=args.seed)
        out["monte_carlo"] = {"resamples": b, "p": float(pt.pvalue)}

    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
