# Golden values for package gof from R (Debian's r-base-core, r-cran-goftest,
# r-cran-nortest). Run from this folder after golden.py:
#
#     Rscript golden.R
#
# Reads golden/cases.csv and golden/samples.csv and writes golden/r.csv
# (case, test, statistic, p_value); its first line names R and the package
# versions. Tests:
#   ks_exact   stats::ks.test(exact = TRUE), Marsaglia-Tsang-Wang exact p
#   ks_asymp   stats::ks.test(exact = FALSE), the Kolmogorov limit
#   ad         goftest::ad.test, fully specified, Marsaglia & Marsaglia p
#   cvm        goftest::cvm.test, fully specified, Csorgo & Faraway p
#   sw         stats::shapiro.test (Royston AS R94)
#   lillie     nortest::lillie.test (Dallal-Wilkinson p where p <= 0.1)
#   ad_norm    nortest::ad.test (Stephens, normal, mean and sd estimated)
#   cvm_norm   nortest::cvm.test (Stephens, normal, mean and sd estimated)

suppressPackageStartupMessages({
  library(goftest)
  library(nortest)
})

cases <- read.csv("golden/cases.csv", stringsAsFactors = FALSE)
samples <- read.csv("golden/samples.csv", stringsAsFactors = FALSE)

cdf <- function(family, a, b) {
  switch(family,
    normal = function(q) pnorm(q, mean = a, sd = b),
    exponential = function(q) pexp(q, rate = 1 / a),
    uniform = function(q) punif(q, min = a, max = b),
    gamma = function(q) pgamma(q, shape = a, scale = b),
    lognormal = function(q) plnorm(q, meanlog = a, sdlog = b),
    student = function(q) pt(q, df = a),
    NULL)
}

out <- file("golden/r.csv", "w")
writeLines(sprintf("# %s, goftest %s, nortest %s", R.version.string,
                   packageVersion("goftest"), packageVersion("nortest")), out)
writeLines("case,test,statistic,p_value", out)
fmt <- function(v) if (is.null(v) || is.na(v)) "" else sprintf("%.17g", v)
emit <- function(id, test, h) {
  writeLines(paste(id, test, fmt(unname(h$statistic)), fmt(h$p.value), sep = ","), out)
}

for (i in seq_len(nrow(cases))) {
  cs <- cases[i, ]
  if (cs$family == "poisson") next
  x <- samples$value[samples$case == cs$case]
  f <- cdf(cs$family, cs$ref1, cs$ref2)
  n <- length(x)
  emit(cs$case, "ks_exact", ks.test(x, f, exact = TRUE))
  emit(cs$case, "ks_asymp", ks.test(x, f, exact = FALSE))
  emit(cs$case, "ad", goftest::ad.test(x, f))
  emit(cs$case, "cvm", goftest::cvm.test(x, f))
  emit(cs$case, "sw", shapiro.test(x))
  if (n >= 5) emit(cs$case, "lillie", lillie.test(x))
  if (n >= 8) {
    emit(cs$case, "ad_norm", nortest::ad.test(x))
    emit(cs$case, "cvm_norm", nortest::cvm.test(x))
  }
}
close(out)
