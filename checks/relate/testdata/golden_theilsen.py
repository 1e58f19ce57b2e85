"""Theil-Sen golden values for package relate from SciPy (Debian's
python3-scipy). Run from this folder after golden.R:

    /usr/bin/python3 golden_theilsen.py

Reads golden/pairs.csv and writes golden/theilsen.csv (case, slope,
intercept) with scipy.stats.theilslopes(y, x, method="joint"): the median of
the slopes over pairs with distinct x, and the median of y - slope * x.
"""
import csv
import collections

import numpy
import scipy
import scipy.stats

cases = collections.OrderedDict()
with open("golden/pairs.csv") as f:
    rows = [r for r in f if not r.startswith("#")]
for r in csv.DictReader(rows):
    cases.setdefault(r["case"], ([], []))
    cases[r["case"]][0].append(float(r["x"]))
    cases[r["case"]][1].append(float(r["y"]))

with open("golden/theilsen.csv", "w") as f:
    f.write("# SciPy %s; NumPy %s\n" % (scipy.__version__, numpy.__version__))
    f.write("case,slope,intercept\n")
    for case, (x, y) in cases.items():
        res = scipy.stats.theilslopes(y, x, method="joint")
        f.write("%s,%r,%r\n" % (case, float(res[0]), float(res[1])))
