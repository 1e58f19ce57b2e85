#!/usr/bin/python3
"""Golden values for package gof from SciPy (Debian's python3-scipy).

Run from this folder with Debian's interpreter:

    /usr/bin/python3 golden.py && Rscript golden.R

It draws seeded samples across families and sizes and writes, under golden/:

  cases.csv    one row per sample: family, generating parameters, the fully
               specified reference the tests use, n and seed
  samples.csv  the samples (case, value), every value written with repr so
               that it reads back to the same float64
  bins.csv     edges of equal-probability bins under the reference (binned
               chi-square of continuous samples)
  scipy.csv    SciPy's statistics and p-values (case, test, statistic,
               p_value); its first line names the libraries and versions

golden.R reads cases.csv and samples.csv and writes r.csv the same way.

The chi-square rows need cells built the way package gof builds them (unit
cells over the observed range with the tails in the end cells; adjacent
cells pooled from the left until each expects >= 5, a short remainder
joining the cell before it); that rule is written again below,
independently of the Go code, and scipy.stats.chisquare does the rest.
"""

import csv
import math
import os
import sys

import numpy as np
import scipy
from scipy import stats

OUT = "golden"

# (case id, family, generating params, reference params, n, seed)
# The reference is the fully specified distribution of the Specified tests;
# where it differs from the generating one the case is an alternative and
# the p-values are small.
CASES = []


def case(family, gen, ref, n):
    cid = "%s-%d-%s" % (family, n, "null" if gen == ref else "alt")
    seed = 20240600 + len(CASES)
    CASES.append((cid, family, gen, ref, n, seed))


for n in (4, 8, 12, 20, 35, 50, 100, 250, 500, 1000, 2000, 5000):
    case("normal", (10.0, 2.0), (10.0, 2.0), n)
case("normal", (10.0, 2.0), (10.3, 2.0), 50)
case("normal", (10.0, 2.0), (10.1, 2.1), 500)
for n in (20, 60, 200, 1000, 5000):
    case("exponential", (3.0,), (3.0,), n)
case("exponential", (3.0,), (3.5,), 300)
for n in (10, 20, 100, 700, 5000):
    case("uniform", (-1.0, 3.0), (-1.0, 3.0), n)
case("uniform", (-1.0, 3.0), (-1.1, 3.0), 400)
for n in (30, 200, 1000, 5000):
    case("gamma", (2.5, 1.5), (2.5, 1.5), n)
case("gamma", (2.5, 1.5), (2.0, 1.5), 150)
for n in (25, 300, 2000):
    case("lognormal", (0.5, 0.8), (0.5, 0.8), n)
case("lognormal", (0.5, 0.8), (0.6, 0.8), 80)
for n in (100, 1000):
    case("student", (5.0,), (5.0,), n)
for lam, n in ((3.5, 50), (3.5, 200), (3.5, 1000), (3.5, 5000), (0.7, 100), (12.0, 500)):
    case("poisson", (lam,), (lam,), n)
case("poisson", (3.5,), (3.0,), 400)


def frozen(family, p):
    if family == "normal":
        return stats.norm(loc=p[0], scale=p[1])
    if family == "exponential":
        return stats.expon(scale=p[0])
    if family == "uniform":
        return stats.uniform(loc=p[0], scale=p[1] - p[0])
    if family == "gamma":
        return stats.gamma(p[0], scale=p[1])
    if family == "lognormal":
        return stats.lognorm(p[1], scale=math.exp(p[0]))
    if family == "student":
        return stats.t(p[0])
    if family == "poisson":
        return stats.poisson(p[0])
    raise ValueError(family)


def integer_cells(x, dist):
    lo, hi = int(x.min()), int(x.max())
    obs = np.bincount((x - lo).astype(int), minlength=hi - lo + 1)
    k = hi - lo + 1
    if k == 1:
        return obs, np.array([1.0])
    cdf = dist.cdf(np.arange(lo, hi))  # F(lo) .. F(hi-1)
    probs = np.empty(k)
    probs[0] = cdf[0]
    probs[1:-1] = np.diff(cdf)
    probs[-1] = dist.sf(hi - 1)
    return obs, probs


def pool(obs, expected, minimum=5.0):
    cells = []
    o = e = 0.0
    open_ = False
    for oi, ei in zip(obs, expected):
        o += oi
        e += ei
        open_ = True
        if e >= minimum:
            cells.append([o, e])
            o = e = 0.0
            open_ = False
    if open_:
        if cells:
            cells[-1][0] += o
            cells[-1][1] += e
        else:
            cells.append([o, e])
    return np.array([c[0] for c in cells]), np.array([c[1] for c in cells])


def chisq(obs, probs, ddof):
    n = obs.sum()
    probs = probs / probs.sum()
    o, e = pool(obs, n * probs)
    r = stats.chisquare(o, e, ddof=ddof)
    return r.statistic, r.pvalue


def main():
    os.makedirs(OUT, exist_ok=True)
    versions = "# scipy %s, numpy %s, python %s" % (
        scipy.__version__, np.__version__, sys.version.split()[0])
    with open(os.path.join(OUT, "cases.csv"), "w", newline="") as fc, \
            open(os.path.join(OUT, "samples.csv"), "w", newline="") as fs, \
            open(os.path.join(OUT, "bins.csv"), "w", newline="") as fb, \
            open(os.path.join(OUT, "scipy.csv"), "w", newline="") as fr:
        fr.write(versions + "\n")
        wc, ws, wb, wr = csv.writer(fc), csv.writer(fs), csv.writer(fb), csv.writer(fr)
        wc.writerow(["case", "family", "gen1", "gen2", "ref1", "ref2", "n", "seed"])
        ws.writerow(["case", "value"])
        wb.writerow(["case", "edge"])
        wr.writerow(["case", "test", "statistic", "p_value"])
        for cid, family, gen, ref, n, seed in CASES:
            rng = np.random.default_rng(seed)
            x = frozen(family, gen).rvs(size=n, random_state=rng)
            if family == "poisson":
                x = x.astype(float)
            x = np.asarray(x, dtype=float)
            pad = lambda p: list(p) + [""] * (2 - len(p))
            wc.writerow([cid, family] + pad(gen) + pad(ref) + [n, seed])
            for v in x:
                ws.writerow([cid, repr(float(v))])
            d = frozen(family, ref)

            def row(test, st, p=""):
                wr.writerow([cid, test, repr(float(st)), "" if p == "" else repr(float(p))])

            if family == "poisson":
                obs, probs = integer_cells(x, d)
                row("chisq", *chisq(obs, probs, 0))
                lam = x.mean()
                obs, probs = integer_cells(x, stats.poisson(lam))
                row("chisq_est1", *chisq(obs, probs, 1))
                continue

            r = stats.kstest(x, d.cdf, method="exact")
            row("ks_exact", r.statistic, r.pvalue)
            r = stats.kstest(x, d.cdf, method="asymp")
            row("ks_asymp", r.statistic, r.pvalue)
            row("ks_dplus", stats.kstest(x, d.cdf, alternative="greater", method="exact").statistic)
            row("ks_dminus", stats.kstest(x, d.cdf, alternative="less", method="exact").statistic)
            r = stats.cramervonmises(x, d.cdf)
            row("cvm", r.statistic, r.pvalue)
            if n >= 3:
                r = stats.shapiro(x)
                row("sw", r.statistic, r.pvalue)
            row("ad_norm", stats.anderson(x, dist="norm").statistic)
            if x.min() > 0:
                row("ad_expon", stats.anderson(x, dist="expon").statistic)
            if n >= 100:
                k = 10
                edges = d.ppf(np.arange(1, k) / k)
                for e in edges:
                    wb.writerow([cid, repr(float(e))])
                # The cells (-inf, e1], (e1, e2], ..., (e9, inf).
                idx = np.searchsorted(edges, x, side="left")
                obs = np.bincount(idx, minlength=k)
                cdf = d.cdf(edges)
                probs = np.diff(np.concatenate(([0.0], cdf, [1.0])))
                probs[-1] = d.sf(edges[-1])
                row("chisq_binned", *chisq(obs, probs, 0))


if __name__ == "__main__":
    main()
