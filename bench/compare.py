#!/usr/bin/python3
"""Compare the offending-row counts of assay's JSON reports with the
output of bench/pandas_checks.py, rule by rule.

Usage: compare.py ASSAY_PARQUET.json ASSAY_CSV.json PANDAS.tsv

Prints one line per rule of the assay report: the counts of assay on
Parquet, assay on CSV and pandas, and whether they agree.  A rule that
counts no rows (a summary statistic, a slope, table.rows) is compared by
its measure instead, to a relative 1e-9.  Rules whose method differs
between the two tools are marked and not held against the totals:
joint.climate (assay: FAST-MCD; the script: classical covariance) and the
distance of distribution rules (assay fits a seeded sample).
Exits 1 when a comparable count differs.
"""

import json
import math
import sys

# rules whose result legitimately differs by method; see the module doc
APPROXIMATE = {"joint.climate"}
# rules compared by measure rather than by offending rows
BY_MEASURE = (".slope", "table.rows", "table.closed", "table.required")


def by_measure(rule):
    """Whether rule counts no rows and is compared by its measure."""
    return ".summary." in rule or rule.endswith(BY_MEASURE)


def assay_results(path):
    """Rule id -> (offending count, measure value) from a JSON report."""
    with open(path, encoding="utf-8") as f:
        report = json.load(f)
    out = {}
    for r in report["results"]:
        count = (r.get("offending") or {}).get("count", 0)
        value = (r.get("measure") or {}).get("value")
        out[r["id"]] = (count, value, r.get("status"))
    return out


def pandas_results(path):
    """Rule id -> (offending count, measure) from pandas_checks.py output."""
    out = {}
    with open(path, encoding="utf-8") as f:
        for line in f:
            rule, count, measure = line.rstrip("\n").split("\t")
            out[rule] = (int(count), float(measure))
    return out


def close(a, b):
    """Whether two measures agree to a relative 1e-9."""
    if a is None or b is None:
        return False
    return math.isclose(float(a), float(b), rel_tol=1e-9, abs_tol=1e-12)


def main(pq_path, csv_path, pandas_path):
    pq, cs, pd = (assay_results(pq_path), assay_results(csv_path),
                  pandas_results(pandas_path))
    differ = 0
    print(f"{'rule':45} {'parquet':>9} {'csv':>9} {'pandas':>9}  agree")
    for rule, (count, value, status) in cs.items():
        pq_count = pq.get(rule, (None,))[0]
        pd_count, pd_value = pd.get(rule, (None, None))
        if rule in APPROXIMATE:
            verdict = "approx (method differs)"
        elif status != "ok" or pd_count is None:
            verdict = f"NO ({status}, pandas {'missing' if pd_count is None else 'ok'})"
        elif by_measure(rule):
            same = close(value, pd_value) and close(pq[rule][1], value)
            verdict = "yes (measure)" if same else f"NO (measure {value} vs {pd_value})"
        else:
            same = count == pd_count == pq_count
            verdict = "yes" if same else "NO"
        if verdict.startswith("NO"):
            differ += 1
        shown = [str(pq_count), str(count), str(pd_count)]
        if by_measure(rule):
            shown = [f"{pq[rule][1]:.6g}", f"{value:.6g}", f"{pd_value:.6g}"]
        print(f"{rule:45} {shown[0]:>9} {shown[1]:>9} {shown[2]:>9}  {verdict}")
    print(f"rules compared: {len(cs)}; differing: {differ}")
    return 1 if differ else 0


if __name__ == "__main__":
    if len(sys.argv) != 4:
        sys.exit("usage: compare.py ASSAY_PARQUET.json ASSAY_CSV.json PANDAS.tsv")
    sys.exit(main(*sys.argv[1:]))
