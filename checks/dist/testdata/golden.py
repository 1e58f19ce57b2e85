#!/usr/bin/python3
"""Golden values for package dist, computed with SciPy from Debian's python3-scipy.

Run from this folder:  /usr/bin/python3 golden.py
Writes
  golden_samples.csv.gz  one seeded sample per line: id,v1,v2,...
  golden.json            per sample: the family, its maximum-likelihood
                         estimates and log-likelihood, and CDF, survival,
                         log-density (or log-mass) and quantile values at the
                         estimates, all computed by scipy.stats.

Estimates: closed forms where SciPy has them (norm, lognorm with floc=0,
expon with floc=0, uniform, gamma with floc=0 by root of the digamma
equation, poisson, binomial with n known, geometric); otherwise scipy's fit
followed by a Nelder-Mead polish of the negative log-likelihood (scipy.stats
logpdf/logpmf) with tight tolerances, so the golden estimates are the
maximiser to about 1e-9 rather than scipy.optimize.fmin's default 1e-4.
The negative binomial size is the maximiser of the profile log-likelihood
(p = size / (size + mean)) found by scipy.optimize.minimize_scalar.

Parameterisations (names are package dist's):
  normal(mean, sd)              norm(loc=mean, scale=sd), sd the MLE (divisor n)
  lognormal(meanlog, sdlog)     lognorm(s=sdlog, scale=exp(meanlog))
  exponential(rate)             expon(scale=1/rate)
  gamma(shape, scale)           gamma(a=shape, scale=scale)
  weibull(shape, scale)         weibull_min(c=shape, scale=scale)
  uniform(min, max)             uniform(loc=min, scale=max-min)
  beta(alpha, beta)             beta(a=alpha, b=beta)
  logistic(location, scale)     logistic(loc, scale)
  student-t(location, scale, df) t(df, loc, scale)
  cauchy(location, scale)       cauchy(loc, scale)
  poisson(lambda)               poisson(mu=lambda)
  binomial(n, p)                binom(n, p)
  negative-binomial(size, p)    nbinom(n=size, p) (failures before the size-th success)
  geometric(p)                  geom(p, loc=-1) (failures before the first success)
"""
import gzip
import json
import math
import platform

import numpy as np
import scipy
from scipy import optimize, special, stats

SEED = 20240611


def sig(x, digits):
    """Round to `digits` significant digits, as a recorded value would be."""
    return float(f"{x:.{digits}g}")


def frozen(family, p):
    if family == "normal":
        return stats.norm(loc=p["mean"], scale=p["sd"])
    if family == "lognormal":
        return stats.lognorm(s=p["sdlog"], scale=math.exp(p["meanlog"]))
    if family == "exponential":
        return stats.expon(scale=1 / p["rate"])
    if family == "gamma":
        return stats.gamma(a=p["shape"], scale=p["scale"])
    if family == "weibull":
        return stats.weibull_min(c=p["shape"], scale=p["scale"])
    if family == "uniform":
        return stats.uniform(loc=p["min"], scale=p["max"] - p["min"])
    if family == "beta":
        return stats.beta(a=p["alpha"], b=p["beta"])
    if family == "logistic":
        return stats.logistic(loc=p["location"], scale=p["scale"])
    if family == "student-t":
        return stats.t(df=p["df"], loc=p["location"], scale=p["scale"])
    if family == "cauchy":
        return stats.cauchy(loc=p["location"], scale=p["scale"])
    if family == "poisson":
        return stats.poisson(mu=p["lambda"])
    if family == "binomial":
        return stats.binom(n=p["n"], p=p["p"])
    if family == "negative-binomial":
        return stats.nbinom(n=p["size"], p=p["p"])
    if family == "geometric":
        return stats.geom(p=p["p"], loc=-1)
    raise ValueError(family)


DISCRETE = {"poisson", "binomial", "negative-binomial", "geometric"}


def loglik(family, p, x):
    d = frozen(family, p)
    if family in DISCRETE:
        return float(np.sum(d.logpmf(x)))
    return float(np.sum(d.logpdf(x)))


def polish(family, est, names, positive, x):
    """Nelder-Mead on the negative log-likelihood from scipy's estimate;
    positive parameters are searched on the log scale."""
    def unpack(v):
        p = dict(est)
        for i, k in enumerate(names):
            p[k] = math.exp(v[i]) if k in positive else v[i]
        return p

    def nll(v):
        val = -loglik(family, unpack(v), x)
        return val if np.isfinite(val) else 1e300

    v0 = [math.log(est[k]) if k in positive else est[k] for k in names]
    best = dict(est)
    for _ in range(3):  # restart: Nelder-Mead may stall on a shrunken simplex
        res = optimize.minimize(nll, v0, method="Nelder-Mead",
                                options=dict(xatol=1e-11, fatol=1e-13, maxiter=40000, maxfev=80000))
        cand = unpack(res.x)
        if loglik(family, cand, x) >= loglik(family, best, x):
            best = cand
        v0 = list(res.x)
    return best


def fit(family, x, given):
    """Maximum-likelihood estimates as a dict of package dist's names."""
    if family == "normal":
        m, s = stats.norm.fit(x)
        return dict(mean=m, sd=s)
    if family == "lognormal":
        s, _, scale = stats.lognorm.fit(x, floc=0)
        return dict(meanlog=math.log(scale), sdlog=s)
    if family == "exponential":
        _, scale = stats.expon.fit(x, floc=0)
        return dict(rate=1 / scale)
    if family == "gamma":
        a, _, scale = stats.gamma.fit(x, floc=0)
        return dict(shape=a, scale=scale)
    if family == "weibull":
        c, _, scale = stats.weibull_min.fit(x, floc=0)
        return polish(family, dict(shape=c, scale=scale), ["shape", "scale"], {"shape", "scale"}, x)
    if family == "uniform":
        loc, scale = stats.uniform.fit(x)
        return {"min": loc, "max": loc + scale}
    if family == "beta":
        a, b, _, _ = stats.beta.fit(x, floc=0, fscale=1)
        return polish(family, dict(alpha=a, beta=b), ["alpha", "beta"], {"alpha", "beta"}, x)
    if family == "logistic":
        loc, scale = stats.logistic.fit(x)
        return polish(family, dict(location=loc, scale=scale), ["location", "scale"], {"scale"}, x)
    if family == "student-t":
        df, loc, scale = stats.t.fit(x)
        return polish(family, dict(location=loc, scale=scale, df=df),
                      ["location", "scale", "df"], {"scale", "df"}, x)
    if family == "cauchy":
        loc, scale = stats.cauchy.fit(x)
        return polish(family, dict(location=loc, scale=scale), ["location", "scale"], {"scale"}, x)
    if family == "poisson":
        return {"lambda": float(np.mean(x))}
    if family == "binomial":
        return dict(n=given["n"], p=float(np.mean(x)) / given["n"])
    if family == "geometric":
        return dict(p=1 / (1 + float(np.mean(x))))
    if family == "negative-binomial":
        m = float(np.mean(x))

        def nprof(logr):
            r = math.exp(logr)
            return -float(np.sum(stats.nbinom.logpmf(x, r, r / (r + m))))

        res = optimize.minimize_scalar(nprof, bracket=(-3, 3), method="brent", tol=1e-12)
        r = math.exp(res.x)
        return dict(size=r, p=r / (r + m))
    raise ValueError(family)


# (family, true parameters, sample sizes, significant digits kept)
CASES = [
    ("normal", dict(mean=10, sd=2), [20, 100, 1000, 5000], 7),
    ("lognormal", dict(meanlog=1, sdlog=0.5), [20, 100, 1000], 7),
    ("exponential", dict(rate=0.25), [20, 100, 1000], 7),
    ("gamma", dict(shape=2.5, scale=3), [20, 100, 1000, 5000], 7),
    ("gamma", dict(shape=0.6, scale=10), [100, 1000], 7),
    ("weibull", dict(shape=1.7, scale=40), [20, 100, 1000, 5000], 7),
    ("weibull", dict(shape=0.8, scale=2), [100, 1000], 7),
    ("uniform", dict(min=-3, max=7), [20, 100, 1000], 7),
    ("beta", dict(alpha=2, beta=5), [20, 100, 1000, 5000], 12),
    ("beta", dict(alpha=0.6, beta=0.8), [100, 1000], 12),
    ("logistic", dict(location=5, scale=1.5), [20, 100, 1000], 7),
    ("student-t", dict(location=0.5, scale=2, df=4), [50, 100, 1000, 5000], 7),
    ("cauchy", dict(location=-1, scale=0.7), [20, 100, 1000], 7),
    ("poisson", {"lambda": 3.2}, [20, 100, 1000, 5000], 0),
    ("poisson", {"lambda": 250}, [100, 1000], 0),
    ("binomial", dict(n=12, p=0.3), [20, 100, 1000], 0),
    ("negative-binomial", dict(size=2.5, p=0.4), [50, 100, 1000, 5000], 0),
    ("geometric", dict(p=0.2), [20, 100, 1000], 0),
]

def quantile(family, d, p):
    """d.ppf(p), refined for continuous families by two Newton steps on
    scipy's own CDF (on the survival function above the median). scipy
    1.10's t.ppf is off by about 1e-9 relative for non-integer df: at
    df = 4.383384176496309 it gives a 0.001-quantile whose CDF is
    0.00099999999420, where R 4.2.2's qt gives -13.6047581999404681
    (location 0.3261911761455605, scale 2.1196565881223712) with CDF
    0.0009999999999999998."""
    q = float(d.ppf(p))
    if family in DISCRETE or not np.isfinite(q) or p == 0.5:
        return q
    for _ in range(2):
        f = float(d.pdf(q))
        if not f > 0:
            break
        if p < 0.5:
            q -= (float(d.cdf(q)) - p) / f
        else:
            q -= ((1 - p) - float(d.sf(q))) / f
    return q


PROBS = [0.001, 0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99, 0.999]
GIVEN = {"binomial": ["n"]}


def main():
    rng = np.random.default_rng(SEED)
    out = dict(
        generator="checks/dist/testdata/golden.py",
        libraries=dict(python=platform.python_version(), numpy=np.__version__, scipy=scipy.__version__),
        seed=SEED,
        samples="golden_samples.csv.gz",
        cases=[],
    )
    lines = []
    for family, true, sizes, digits in CASES:
        for n in sizes:
            cid = f"{family}-{len(out['cases']) + 1:02d}-n{n}"
            d = frozen(family, true)
            x = d.rvs(size=n, random_state=rng)
            if family in DISCRETE:
                x = np.asarray(x, dtype=float)
            else:
                x = np.array([sig(v, digits) for v in x])
            if family == "beta":
                assert np.all((x > 0) & (x < 1))
            given = {k: true[k] for k in GIVEN.get(family, [])}
            est = fit(family, x, given)
            fd = frozen(family, est)
            if family in DISCRETE:
                xs = sorted(set(float(v) for v in np.quantile(x, [0, 0.1, 0.5, 0.9, 1], method="lower")))
                points = [dict(x=v, cdf=float(fd.cdf(v)), sf=float(fd.sf(v)), logprob=float(fd.logpmf(v)))
                          for v in xs]
            else:
                xs = [float(v) for v in np.quantile(x, [0.01, 0.1, 0.5, 0.9, 0.99])]
                xs += [float(fd.ppf(1e-4)), float(fd.ppf(1 - 1e-4))]
                points = [dict(x=v, cdf=float(fd.cdf(v)), sf=float(fd.sf(v)), logprob=float(fd.logpdf(v)))
                          for v in xs]
            quantiles = [dict(p=p, q=quantile(family, fd, p)) for p in PROBS]
            out["cases"].append(dict(
                id=cid, family=family, n=n, truth=true, given=given,
                estimates={k: float(v) for k, v in est.items()},
                loglik=loglik(family, est, x),
                points=points, quantiles=quantiles,
            ))
            lines.append(cid + "," + ",".join(repr(float(v)) if family not in DISCRETE else str(int(v)) for v in x))
    # mtime=0 and no file name, so that reruns give identical bytes.
    data = ("\n".join(lines) + "\n").encode()
    with open("golden_samples.csv.gz", "wb") as raw:
        with gzip.GzipFile(fileobj=raw, mode="wb", compresslevel=9, mtime=0, filename="") as f:
            f.write(data)
    # Special functions and the multinomial used by package dist's tests.
    out["trigamma"] = [dict(x=x, value=float(special.polygamma(1, x)))
                       for x in [1e-3, 0.1, 0.5, 1, 2.5, 9.99, 10, 37.5, 1e3, 1e6]]
    mendel = [315, 108, 101, 32]  # Mendel (1866) dihybrid peas, 9:3:3:1
    out["multinomial"] = [dict(counts=mendel, probs=[9 / 16, 3 / 16, 3 / 16, 1 / 16],
                               logpmf=float(stats.multinomial.logpmf(mendel, sum(mendel), [9 / 16, 3 / 16, 3 / 16, 1 / 16])))]
    with open("golden.json", "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
