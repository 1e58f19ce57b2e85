#!/usr/bin/python3
"""The checks of bench/policy.yaml, written with pandas and SciPy.

This is the "usual alternative" of issue 7: a straightforward, competently
written script that reads the benchmark CSV (written by bench/gen) and
performs the same checks as assay does with bench/policy.yaml.  It prints
one line per rule, in the order of assay's JSON report:

    <rule id> <TAB> <offending rows> <TAB> <measure>

The offending count is the number of rows the rule counts against the data
(0 for rules that count no rows, such as summary statistics); the measure is
the rule's measure as assay defines it (a share, a statistic, a distance).
bench/run.sh compares both columns with assay's report.

Where the methods differ, the script says so in the comment of the rule:
the distribution fits run on every value (assay fits a seeded sample of a
million values), and the joint rule uses the classical mean and covariance
(SciPy has no minimum covariance determinant estimator; assay's default is
FAST-MCD), so those measures agree only approximately.

Runs on Debian's python3-pandas (1.5) and python3-scipy (1.10).
Usage: pandas_checks.py DATA.csv
"""

import sys

import numpy as np
import pandas as pd
from scipy import stats

DECLARED = ["id", "ts", "site", "device", "temp_c", "humidity_pct",
            "pressure_hpa", "load_kwh", "wait_s", "cost_eur", "items", "ok"]
NUMBERS = ["temp_c", "humidity_pct", "pressure_hpa", "load_kwh", "wait_s",
           "cost_eur"]
SITES = ["north", "south", "east", "west", "lab", "depot"]


def emit(rule, count, measure):
    """Print one result line."""
    print(f"{rule}\t{int(count)}\t{measure}")


def share(count, n):
    """Share of n, 0 when n is 0."""
    return count / n if n else 0.0


def type_errors(df, col, kind):
    """Non-null cells of col that do not parse as kind; returns (count, parsed).

    pandas has already inferred a column type; a clean column needs no
    second parse, a dirty one is parsed again with errors coerced to null.
    """
    s = df[col]
    if kind == "number" and pd.api.types.is_numeric_dtype(s):
        return 0, s.astype("float64")
    if kind == "integer" and pd.api.types.is_integer_dtype(s):
        return 0, s
    if kind == "boolean" and pd.api.types.is_bool_dtype(s):
        return 0, s
    if kind == "string":
        return 0, s
    if kind == "timestamp":
        parsed = pd.to_datetime(s, utc=True, errors="coerce")
    elif kind == "boolean":
        parsed = s.map({"true": True, "false": False, "TRUE": True,
                        "FALSE": False, "True": True, "False": False})
    else:
        parsed = pd.to_numeric(s, errors="coerce")
    return int((parsed.isna() & s.notna()).sum()), parsed


def below(s, bound, strict=False):
    """Rows of s below bound (at or below it when strict)."""
    v = s.dropna()
    return int((v <= bound).sum() if strict else (v < bound).sum())


def above(s, bound):
    """Rows of s above bound."""
    v = s.dropna()
    return int((v > bound).sum())


def fit_distance(x, family):
    """Fit family by maximum likelihood to x; return the KS distance and
    the Anderson-Darling statistic A^2 of the fitted distribution.

    A^2 = -n - (1/n) sum_i (2i - 1) [ln F(x_(i)) + ln(1 - F(x_(n+1-i)))]
    (Anderson and Darling 1954; Stephens 1974).
    """
    if family == "normal":
        dist = stats.norm(*stats.norm.fit(x))
    elif family == "lognormal":
        shape, _, scale = stats.lognorm.fit(x, floc=0)
        dist = stats.lognorm(shape, 0, scale)
    else:
        a, _, scale = stats.gamma.fit(x, floc=0)
        dist = stats.gamma(a, 0, scale)
    xs = np.sort(x)
    n = len(xs)
    cdf = np.clip(dist.cdf(xs), 1e-300, 1 - 1e-16)
    i = np.arange(1, n + 1)
    ks = max(np.max(i / n - cdf), np.max(cdf - (i - 1) / n))
    a2 = -n - np.sum((2 * i - 1) * (np.log(cdf) + np.log1p(-cdf[::-1]))) / n
    return ks, a2


def extremes(s, rule, k):
    """Count values of s flagged by an extremes rule (missing values and
    NaN not judged)."""
    x = s.dropna().to_numpy()
    if rule == "zscore":
        z = np.abs(x - x.mean()) / x.std(ddof=1)
        flagged = z > k
    elif rule == "robust-z":
        med = np.median(x)
        mad = np.median(np.abs(x - med))
        flagged = 0.6745 * np.abs(x - med) / mad > k
    else:  # tukey, quartiles by numpy's default (R type 7)
        q1, q3 = np.quantile(x, [0.25, 0.75])
        iqr = q3 - q1
        flagged = (x < q1 - k * iqr) | (x > q3 + k * iqr)
    return int(flagged.sum()), share(int(flagged.sum()), len(x))


def studentized_outliers(x, y, alpha=0.05):
    """Rows whose externally studentized OLS residual exceeds the
    Bonferroni cutoff t(1 - alpha/(2n), n - 3) (Cook and Weisberg 1982)."""
    n = len(x)
    xbar, ybar = x.mean(), y.mean()
    sxx = np.sum((x - xbar) ** 2)
    slope = np.sum((x - xbar) * (y - ybar)) / sxx
    e = y - (ybar + slope * (x - xbar))
    h = 1 / n + (x - xbar) ** 2 / sxx
    sse = np.sum(e ** 2)
    s_i = np.sqrt((sse - e ** 2 / (1 - h)) / (n - 3))
    t = np.abs(e / (s_i * np.sqrt(1 - h)))
    cutoff = stats.t.ppf(1 - alpha / (2 * n), n - 3)
    return slope, int((t > cutoff).sum())


def mahalanobis_outliers(frame, quantile=0.999):
    """Rows whose squared Mahalanobis distance from the classical mean and
    covariance exceeds the chi-square quantile; rows with a missing value
    are not judged."""
    x = frame.dropna().to_numpy()
    u = x - x.mean(axis=0)
    inv = np.linalg.inv(np.cov(x, rowvar=False))
    d2 = np.einsum("ij,jk,ik->i", u, inv, u)
    cut = stats.chi2.ppf(quantile, x.shape[1])
    return int((d2 > cut).sum()), share(int((d2 > cut).sum()), len(x))


def main(path):
    df = pd.read_csv(path, keep_default_na=False,
                     na_values=["", "NA", "N/A", "null", "NULL"])
    n = len(df)

    emit("table.rows", 0, n)
    dup = int(df["id"].duplicated(keep=False).sum())
    emit("table.key", dup, share(dup, n))
    emit("table.closed", 0, len([c for c in df.columns if c not in DECLARED]))
    emit("table.required", 0,
         len([c for c in ["id", "ts", "temp_c"] if c not in df.columns]))

    def type_rule(col, kind):
        bad, parsed = type_errors(df, col, kind)
        emit(f"columns.{col}.type", bad, share(bad, df[col].notna().sum()))
        return parsed

    def nulls_rule(col):
        c = int(df[col].isna().sum())
        emit(f"columns.{col}.nulls", c, share(c, n))

    def bound_rule(col, s, key, c):
        emit(f"columns.{col}.{key}", c, share(c, s.notna().sum()))

    ids = type_rule("id", "integer")
    nulls_rule("id")
    bound_rule("id", ids, "minimum", below(ids, 1))

    ts = type_rule("ts", "timestamp")
    nulls_rule("ts")
    bound_rule("ts", ts, "minimum",
               below(ts, pd.Timestamp("2026-01-01T00:00:00Z")))

    site = type_rule("site", "string")
    c = int((~site.dropna().isin(SITES)).sum())
    bound_rule("site", site, "enum", c)

    device = type_rule("device", "string")
    c = int((~device.dropna().str.contains(r"^D-[0-9]{4}$", regex=True)).sum())
    bound_rule("device", device, "pattern", c)
    bound_rule("device", device, "maxLength",
               int((device.dropna().str.len() > 6).sum()))

    temp = type_rule("temp_c", "number")
    emit("columns.temp_c.summary.mean", 0, temp.mean())
    emit("columns.temp_c.summary.p95", 0, np.quantile(temp.dropna(), 0.95))
    ks, _ = fit_distance(temp.dropna().to_numpy(), "normal")
    emit("columns.temp_c.distribution", 0, ks)
    emit("columns.temp_c.extremes", *extremes(temp, "zscore", 4))

    hum = type_rule("humidity_pct", "number")
    bound_rule("humidity_pct", hum, "minimum", below(hum, 0))
    bound_rule("humidity_pct", hum, "maximum", above(hum, 100))
    emit("columns.humidity_pct.extremes", *extremes(hum, "robust-z", 3.5))

    press = type_rule("pressure_hpa", "number")
    nulls_rule("pressure_hpa")
    emit("columns.pressure_hpa.extremes", *extremes(press, "tukey", 1.5))

    load = type_rule("load_kwh", "number")
    bound_rule("load_kwh", load, "exclusiveMinimum",
               below(load, 0, strict=True))
    # values a lognormal cannot produce count as offending; the fit uses
    # the rest, tested by Anderson-Darling (the measure is the KS distance)
    pos = load.dropna()
    ks, _ = fit_distance(pos[pos > 0].to_numpy(), "lognormal")
    emit("columns.load_kwh.distribution", int((pos <= 0).sum()), ks)

    wait = type_rule("wait_s", "number")
    bound_rule("wait_s", wait, "minimum", below(wait, 0))
    pos = wait.dropna()
    ks, _ = fit_distance(pos[pos > 0].to_numpy(), "gamma")
    emit("columns.wait_s.distribution", int((pos <= 0).sum()), ks)
    emit("columns.wait_s.extremes", *extremes(wait, "tukey", 3))

    cost = type_rule("cost_eur", "number")
    bound_rule("cost_eur", cost, "minimum", below(cost, 0))
    emit("columns.cost_eur.summary.median", 0, cost.median())

    items = type_rule("items", "integer")
    bound_rule("items", items, "minimum", below(items, 0))
    bound_rule("items", items, "maximum", above(items, 30))

    type_rule("ok", "boolean")
    nulls_rule("ok")

    # row rules: a row that reads a missing value is not counted
    c = int((cost < 0.25 * load).sum())
    emit("rows.cost-covers-energy", c, share(c, n))
    c = int((hum + temp >= 150).sum())
    emit("rows.humidity-plausible-for-temperature", c, share(c, n))
    c = int(((site == "lab") & (items > 25)).sum())
    emit("rows.lab-batches-are-small", c, share(c, n))

    # joint rule: classical estimate (assay: FAST-MCD), see the module doc
    emit("joint.climate",
         *mahalanobis_outliers(df[["temp_c", "humidity_pct", "pressure_hpa"]]))

    pair = df[["temp_c", "humidity_pct"]].dropna().to_numpy()
    slope, c = studentized_outliers(pair[:, 0], pair[:, 1])
    emit("pairs.humidity-by-temperature.slope", 0, slope)
    emit("pairs.humidity-by-temperature.residuals", c, share(c, len(pair)))


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit("usage: pandas_checks.py DATA.csv")
    main(sys.argv[1])
