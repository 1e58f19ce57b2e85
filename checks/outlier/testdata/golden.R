# Golden values for package outlier from R (Debian's r-base-core and
# r-cran-robustbase). Run from this folder:
#
#     Rscript golden.R
#
# Writes into golden/:
#   data_<name>.csv.gz  the seeded data sets (columns x1..xp), 17 digits
#   quantile.csv        set,column,prob,value: stats::quantile(type = 7) of every
#                       column and of the vectors in vectors.csv
#   vectors.csv         set,value: small hand-made vectors (ties, n = 1, 2)
#   classical.csv.gz    set,row,d2: stats::mahalanobis(x, colMeans(x), cov(x))
#   mcd.csv.gz          set,key,i,j,value: robustbase::covMcd(x, alpha,
#                       use.correction = FALSE) with its default nsamp = 500;
#                       keys h, alpha, crit, raw_factor, factor, raw_center,
#                       raw_cov, center, cov, best (row numbers of the best
#                       h-subset), raw_kept (rows given weight 1), flagged (rows
#                       with mah > qchisq(0.999, p)), classical_flagged (rows
#                       with classical d2 > qchisq(0.999, p))
#   mcdrows.csv.gz      set,row,raw_mah,mah: squared robust distances to the raw
#                       and the reweighted estimate
#   consistency.csv     p,alpha,factor: robustbase:::.MCDcons(p, alpha), the
#                       Croux & Haesbroeck (1999) factor
#   chisq.csv           p,prob,quantile: stats::qchisq
# The first line of every csv names R and robustbase versions. Rows are 1-based.
#
# use.correction = FALSE: package outlier applies the consistency factor but not
# the small-sample factors of Pison, Van Aelst & Willems (2002).

suppressPackageStartupMessages(library(robustbase))

versions <- sprintf("# %s, robustbase %s", R.version.string, packageVersion("robustbase"))
fmt <- function(v) sprintf("%.17g", v)
open_csv <- function(name, header) {
  path <- file.path("golden", name)
  f <- if (endsWith(name, ".gz")) gzfile(path, "w") else file(path, "w")
  writeLines(versions, f)
  writeLines(header, f)
  f
}

# mvn draws n rows from a normal with the given mean and covariance.
mvn <- function(n, mu, sigma) {
  z <- matrix(rnorm(n * length(mu)), n, length(mu))
  sweep(z %*% chol(sigma), 2, mu, "+")
}

sets <- list()

# corr2: two strongly correlated columns; 8 rows break the correlation while
# each of their values lies inside the column's own range.
set.seed(20240611)
x <- mvn(300, c(50, 20), matrix(c(16, 0.9 * 4 * 5, 0.9 * 4 * 5, 25), 2))
bad <- c(17, 58, 99, 140, 181, 222, 263, 290)
x[bad, 1] <- 50 + 6 + rnorm(8, sd = 0.5)
x[bad, 2] <- 20 - 7.5 + rnorm(8, sd = 0.5)
sets$corr2 <- list(x = x, alpha = 0.5)

# shift3: 10% of the rows form a shifted cluster (masking for the classical
# estimate); n > 600, so covMcd works on subsets.
set.seed(20240612)
s3 <- matrix(c(1, 0.5, 0.3, 0.5, 1, 0.4, 0.3, 0.4, 1), 3)
x <- mvn(1000, c(0, 0, 0), s3)
x[seq(5, 1000, 10), ] <- mvn(100, c(4, 4, -4), s3 / 4)
sets$shift3 <- list(x = x, alpha = 0.5)
sets$shift3_a75 <- list(x = x, alpha = 0.75)

# wide2000: 3% scattered gross errors; n > 1500, so covMcd draws a merged
# subsample of 1500 rows.
set.seed(20240613)
x <- mvn(2000, c(10, -5, 100), matrix(c(4, 1, 3, 1, 1, 0.5, 3, 0.5, 9), 3))
bad <- sample(2000, 60)
x[bad, ] <- x[bad, ] + matrix(runif(180, -20, 20), 60, 3)
sets$wide2000 <- list(x = x, alpha = 0.5)

# small4: n = 40, p = 4 with 3 planted rows.
set.seed(20240614)
x <- mvn(40, c(1, 2, 3, 4), diag(4) + 0.3)
x[c(3, 21, 38), ] <- x[c(3, 21, 38), ] + c(6, -6, 6, 5)
sets$small4 <- list(x = x, alpha = 0.5)

# stackloss: R's datasets::stackloss (Brownlee 1965), all four columns.
sets$stackloss <- list(x = as.matrix(stackloss), alpha = 0.5)

for (nm in names(sets)) {
  x <- unname(sets[[nm]]$x)
  if (grepl("_a", nm)) next # same data as another set
  g <- gzfile(file.path("golden", paste0("data_", nm, ".csv.gz")), "w")
  writeLines(paste0("x", seq_len(ncol(x)), collapse = ","), g)
  write.table(matrix(fmt(x), nrow(x)), g, sep = ",", quote = FALSE,
              row.names = FALSE, col.names = FALSE)
  close(g)
}

vectors <- list(
  ties = c(3, 1, 2, 2, 2, 2, 5, 2, 9, 2),
  one = c(4.25),
  two = c(-1, 7),
  mixed = c(-3.5, 1e-3, 2.25, 1e6, -7, 0, 0, 13.125, 42, -0.5, 8)
)
vf <- open_csv("vectors.csv", "set,value")
for (nm in names(vectors)) writeLines(paste(nm, fmt(vectors[[nm]]), sep = ","), vf)
close(vf)

probs <- c(0, 0.001, 0.01, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.99, 0.999, 1, 1/3)
qf <- open_csv("quantile.csv", "set,column,prob,value")
emit_q <- function(set, col, v) {
  q <- quantile(v, probs, type = 7, names = FALSE)
  writeLines(paste(set, col, fmt(probs), fmt(q), sep = ","), qf)
}
for (nm in names(sets)) {
  if (grepl("_a", nm)) next
  x <- sets[[nm]]$x
  for (j in seq_len(ncol(x))) emit_q(nm, j, x[, j])
}
for (nm in names(vectors)) emit_q(nm, 1, vectors[[nm]])
close(qf)

cf <- open_csv("classical.csv.gz", "set,row,d2")
mf <- open_csv("mcd.csv.gz", "set,key,i,j,value")
rf <- open_csv("mcdrows.csv.gz", "set,row,raw_mah,mah")
for (nm in names(sets)) {
  x <- unname(sets[[nm]]$x)
  n <- nrow(x); p <- ncol(x)
  d2 <- mahalanobis(x, colMeans(x), cov(x))
  if (!grepl("_a", nm)) writeLines(paste(nm, seq_len(n), fmt(d2), sep = ","), cf)
  set.seed(1)
  m <- covMcd(x, alpha = sets[[nm]]$alpha, use.correction = FALSE)
  cut <- qchisq(0.999, p)
  kv <- function(key, i, j, v) writeLines(paste(nm, key, i, j, fmt(v), sep = ","), mf)
  kv("h", 0, 0, m$quan)
  kv("alpha", 0, 0, sets[[nm]]$alpha)
  kv("crit", 0, 0, m$crit)
  kv("raw_factor", 0, 0, m$raw.cnp2[1])
  kv("factor", 0, 0, m$cnp2[1])
  for (i in seq_len(p)) {
    kv("raw_center", i, 0, m$raw.center[i])
    kv("center", i, 0, m$center[i])
    for (j in seq_len(p)) {
      kv("raw_cov", i, j, m$raw.cov[i, j])
      kv("cov", i, j, m$cov[i, j])
    }
  }
  for (r in sort(m$best)) kv("best", r, 0, 1)
  for (r in which(m$raw.weights == 1)) kv("raw_kept", r, 0, 1)
  for (r in which(m$mah > cut)) kv("flagged", r, 0, 1)
  for (r in which(d2 > cut)) kv("classical_flagged", r, 0, 1)
  writeLines(paste(nm, seq_len(n), fmt(m$raw.mah), fmt(m$mah), sep = ","), rf)
}
close(cf); close(mf); close(rf)

kf <- open_csv("consistency.csv", "p,alpha,factor")
for (p in 1:6) for (a in c(0.5, 0.55, 0.6, 0.75, 0.875, 0.9, 0.95, 0.975, 0.99)) {
  writeLines(paste(p, fmt(a), fmt(robustbase:::.MCDcons(p, a)), sep = ","), kf)
}
close(kf)

xf <- open_csv("chisq.csv", "p,prob,quantile")
for (p in 1:8) for (pr in c(0.5, 0.9, 0.975, 0.99, 0.999, 0.9999)) {
  writeLines(paste(p, fmt(pr), fmt(qchisq(pr, p)), sep = ","), xf)
}
close(xf)
