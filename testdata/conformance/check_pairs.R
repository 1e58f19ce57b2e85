# check_pairs.R recomputes, with R, what the conformance cases pairs-linear,
# pairs-relations and segments expect of assay's pair rules (R 4.2.2, base
# stats only):
#
#   Rscript testdata/conformance/check_pairs.R
#
# It prints the rows each residual rule flags, in the order assay lists
# them (score descending, then row), and the measures the policies bound.
# The Theil-Sen line is written out here from its definition (median of
# the pairwise slopes, Sen 1968; intercept the median of y - b x) and its
# scale is median|e|/0.6745, as in checks/relate.

dir <- "testdata/conformance"
flagged <- function(score, cutoff) {
  i <- which(score > cutoff)
  i[order(-score[i], i)]
}
theil_sen <- function(x, y) {
  n <- length(x)
  ij <- combn(n, 2)
  dx <- x[ij[2, ]] - x[ij[1, ]]
  s <- (y[ij[2, ]] - y[ij[1, ]])[dx != 0] / dx[dx != 0]
  b <- median(s)
  a <- median(y - b * x)
  e <- y - a - b * x
  list(a = a, b = b, scale = median(abs(e)) / 0.6745, e = e)
}
bonferroni <- function(n) qt(1 - 0.05 / (2 * n), n - 3)

d <- read.csv(file.path(dir, "pairs-linear", "data.csv"))
n <- nrow(d)
cat("pairs-linear\n")
fit <- lm(heater_kwh ~ outside_temp_c, data = d)
cat(sprintf("  heating: slope %.6f intercept %.6f r %.6f r2 %.6f\n", coef(fit)[2], coef(fit)[1],
            cor(d$outside_temp_c, d$heater_kwh), summary(fit)$r.squared))
cat("  heating studentized, Bonferroni cutoff", bonferroni(n), ":", flagged(abs(rstudent(fit)), bonferroni(n)), "\n")
cat("  heating Cook's distance, cutoff", qf(0.5, 2, n - 2), ":", flagged(cooks.distance(fit), qf(0.5, 2, n - 2)), "\n")
pump <- lm(flow_lpm ~ pump_hz, data = d)
cat(sprintf("  pump least squares: slope %.6f\n", coef(pump)[2]))
cat("  pump studentized:", flagged(abs(rstudent(pump)), bonferroni(n)), "\n")
ts <- theil_sen(d$pump_hz, d$flow_lpm)
cat(sprintf("  pump theil-sen: slope %.6f intercept %.6f scale %.6f\n", ts$b, ts$a, ts$scale))
cat("  pump standardized:", flagged(abs(ts$e / ts$scale), bonferroni(n)), "\n")

r <- read.csv(file.path(dir, "pairs-relations", "data.csv"))
cat("pairs-relations\n")
cat(sprintf("  spearman dose~response %.6f, batch~response %.6f\n", cor(r$dose_mg, r$response, method = "spearman"),
            cor(r$batch_no, r$response, method = "spearman")))
k <- cor.test(r$dose_mg, r$response, method = "kendall")
cat(sprintf("  kendall dose~response tau %.6f p %.3g\n", k$estimate, k$p.value))
cramer <- function(a, b) {
  t <- chisq.test(table(a, b), correct = FALSE)
  sqrt(unname(t$statistic) / (length(a) * (min(dim(table(a, b))) - 1)))
}
cat(sprintf("  cramer's V region~product %.6f, region~shift %.6f\n", cramer(r$region, r$product), cramer(r$region, r$shift)))
gap <- as.numeric(as.POSIXct(r$start_at, format = "%Y-%m-%dT%H:%M:%SZ", tz = "UTC")) -
  as.numeric(as.POSIXct(r$end_at, format = "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"))
cat("  ordered, strict:", flagged(gap, -1e-9), "not strict:", flagged(gap, 0), "\n")
groups <- tapply(r$category, r$sku, function(v) length(unique(v)))
bad <- names(groups)[groups > 1]
rows <- which(r$sku %in% bad)
share <- sapply(rows, function(i) { g <- r$category[r$sku == r$sku[i]]; 1 - mean(g == r$category[i]) })
cat("  determines: groups", bad, "rows", length(rows), "share", length(rows) / nrow(r), "\n")
cat("  listed:", rows[order(-share, rows)], "\n")

s <- read.csv(file.path(dir, "segments", "data.csv"))
cat("segments\n")
cat(sprintf("  pooled slope %.4f\n", coef(lm(kwh ~ temp_c, data = s))[2]))
for (site in sort(unique(s$site))) {
  g <- s[s$site == site, ]
  cat(sprintf("  %s slope %.4f null share %.4f\n", site, coef(lm(kwh ~ temp_c, data = g))[2], mean(is.na(g$kwh))))
}
sg <- as.numeric(as.POSIXct(s$read_at, format = "%Y-%m-%dT%H:%M:%SZ", tz = "UTC")) -
  as.numeric(as.POSIXct(s$booked_at, format = "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"))
final <- !is.na(s$status) & s$status == "final"
cat("  out of order, all rows:", flagged(sg, 0), "final rows:", flagged(ifelse(final, sg, -Inf), 0), "\n")
