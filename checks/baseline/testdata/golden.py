#!/usr/bin/python3
"""Golden values for package checks/baseline, from SciPy.

Run: /usr/bin/python3 testdata/golden.py > testdata/golden.json
Made with Debian's python3-scipy 1.10.1 and python3-numpy 1.24.2 (the
versions are also written into the output).

Two-sample KS: D from scipy.stats.ks_2samp; the asymptotic p-value from
scipy.stats.kstwobign.sf(sqrt(n m / (n + m)) D), the limiting Kolmogorov
distribution that KS2PValue computes; ks_2samp's own p-value (method
"auto", exact below 10,000 values a side) as p_scipy, which
KS2ExactPValue computes. Chi-square
homogeneity: scipy.stats.chi2_contingency(correction=False).
Wasserstein-1: scipy.stats.wasserstein_distance. Jensen-Shannon:
scipy.spatial.distance.jensenshannon(base=2) squared (SciPy returns the
distance, the square root of the divergence).
"""
import json

import numpy as np
import scipy
from scipy import stats
from scipy.spatial import distance

rng = np.random.default_rng(20261202)
out = {"scipy": scipy.__version__, "numpy": np.__version__, "ks": [], "chi2": [], "w1": [], "js": []}

cases = [
    ("normal shift 0.5", rng.normal(0, 1, 400), rng.normal(0.5, 1, 300)),
    ("same normal", rng.normal(10, 2, 1000), rng.normal(10, 2, 800)),
    ("normal vs scaled", rng.normal(0, 1, 250), rng.normal(0, 1.5, 500)),
    ("rounded with ties", np.round(rng.normal(0, 1, 600), 1), np.round(rng.normal(0.1, 1, 700), 1)),
    ("small", rng.exponential(1, 30), rng.exponential(1.6, 40)),
]
for name, a, b in cases:
    r = stats.ks_2samp(a, b)
    n, m = len(a), len(b)
    en = n * m / (n + m)
    out["ks"].append({
        "name": name, "base": a.tolist(), "cur": b.tolist(), "d": float(r.statistic),
        "p_asymp": float(stats.kstwobign.sf(np.sqrt(en) * r.statistic)), "p_scipy": float(r.pvalue),
    })
    out["w1"].append({"name": name, "base": a.tolist(), "cur": b.tolist(),
                      "w1": float(stats.wasserstein_distance(a, b))})

tables = [
    ("three categories", [120, 90, 40], [100, 110, 60]),
    ("one empty in base", [50, 50, 0], [40, 45, 15]),
    ("same shares", [200, 100], [400, 200]),
]
for name, a, b in tables:
    chi2, p, dof, _ = stats.chi2_contingency(np.array([a, b]), correction=False)
    out["chi2"].append({"name": name, "base": a, "cur": b, "statistic": float(chi2), "df": int(dof), "p": float(p)})

shares = [
    ("quarters", [0.25, 0.25, 0.25, 0.25], [0.1, 0.2, 0.3, 0.4]),
    ("disjoint", [0.5, 0.5, 0, 0], [0, 0, 0.5, 0.5]),
    ("skewed", [0.7, 0.2, 0.1], [0.6, 0.25, 0.15]),
]
for name, p, q in shares:
    out["js"].append({"name": name, "p": p, "q": q, "js": float(distance.jensenshannon(p, q, base=2) ** 2)})

print(json.dumps(out, indent=1))
