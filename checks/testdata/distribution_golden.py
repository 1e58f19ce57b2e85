"""Golden values for checks/distribution_test.go.

Run with Debian's python3-scipy (written with SciPy 1.10.1, NumPy 1.24.2):

    python3 checks/testdata/distribution_golden.py

and compare the printed numbers with the constants of the tests named.
"""
import numpy as np
from scipy import stats

# TestDistributionGivenNormal: five values against N(0, 1), parameters given.
x = [-1.2, -0.4, 0.1, 0.3, 1.5]
r = stats.kstest(x, "norm", method="exact")
print("ks given normal: D = %.10f  p = %.10f" % (r.statistic, r.pvalue))
a = stats.cramervonmises(x, "norm")
print("cvm given normal: W2 = %.10f  p = %.10f" % (a.statistic, a.pvalue))

# TestDistributionCategorical: counts 55, 25, 20 against shares 0.5, 0.3, 0.2.
r = stats.chisquare([55, 25, 20], [50, 30, 20])
print("chi-square categorical: X2 = %.10f  p = %.10f" % (r.statistic, r.pvalue))

# TestDistributionPoisson: eight counts against Poisson(2), cells 0..5, the
# end cells taking the tails.
x = np.array([0, 1, 1, 2, 2, 2, 3, 5])
cells = np.arange(0, 6)
obs = np.array([(x == k).sum() for k in cells])
p = stats.poisson.pmf(cells, 2.0)
p[0] = stats.poisson.cdf(0, 2.0)
p[-1] = stats.poisson.sf(4, 2.0)
print("poisson cells: p =", " ".join("%.10f" % v for v in p))
print("poisson TV distance = %.10f" % (0.5 * np.abs(obs / obs.sum() - p).sum()))
