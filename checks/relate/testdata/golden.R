# Golden values for package relate from R's stats and MASS (Debian's
# r-base-core and r-cran-mass). Run from this folder:
#
#     Rscript golden.R
#
# It draws seeded pairs and tables and writes, under golden/:
#   pairs.csv   case,x,y              the data of every numeric case
#   lm.csv      case,quantity,value   lm(y ~ x): coefficients, standard errors, sigma, R², F
#   points.csv  case,row,rstudent,cooks,hat
#   cor.csv     case,method,estimate,statistic,p   cor.test, two-sided, default method choice
#   huber.csv   case,intercept,slope,scale,converged   MASS::rlm, psi.huber k = 1.345, MAD scale
#   tables.csv  case,a,b,count        contingency tables
#   chisq.csv   case,statistic,df,p,v,v_corrected   chisq.test(correct = FALSE); V by formula
#   cutoffs.csv n,alpha,bonferroni_t,cooks_f50   qt(1 - alpha/(2n), n - 3), qf(0.5, 2, n - 2)
# The first line of each file names the R and MASS versions.

suppressMessages(library(MASS))
dir.create("golden", showWarnings = FALSE)
versions <- sprintf("# %s; MASS %s", R.version.string, packageVersion("MASS"))
num <- function(v) sprintf("%.17g", v)
write_golden <- function(df, name) {
  path <- file.path("golden", name)
  writeLines(versions, path)
  suppressWarnings(write.table(df, path, sep = ",", row.names = FALSE,
    quote = FALSE, append = TRUE, col.names = TRUE))
}

set.seed(20250611)
cases <- list()
add <- function(id, x, y) cases[[id]] <<- list(x = x, y = y)

x <- runif(12, 0, 10); add("lin12", x, 2 + 0.5 * x + rnorm(12))
x <- rnorm(60, 50, 10); y <- 10 - 0.8 * x + rnorm(60, 0, 3)
i <- sample(60, 6); y[i] <- y[i] + 40; add("outliers60", x, y)
x <- c(rnorm(29), 8); y <- 1 + 2 * x + rnorm(30); y[30] <- 0; add("leverage30", x, y)
x <- runif(200, 1, 20); add("hetero200", x, 3 + x + rnorm(200, 0, x / 3))
# Sizes around the switches of cor.test's p-value methods (no ties).
for (n in c(5, 7, 9, 10, 11, 20, 49, 50, 100, 1290, 1291)) {
  x <- rnorm(n); add(sprintf("cont%d", n), x, 0.3 * x + rnorm(n))
}
x <- rnorm(8); add("neg8", x, -x + rnorm(8, 0, 0.5))
x <- rnorm(40); add("neg40", x, -0.2 * x + rnorm(40))
x <- rnorm(30); add("indep30", x, rnorm(30))
x <- rnorm(25); add("strong25", x, x + rnorm(25, 0, 0.01))
# Ties.
x <- round(rnorm(12) * 2); add("ties12", x, round(x + rnorm(12)))
x <- round(rnorm(40), 1); add("ties40", x, round(x + rnorm(40)))
x <- sample(1:5, 300, TRUE); add("ties300", x, x + sample(1:3, 300, TRUE))
# Hollander & Wolfe (1973, p. 187f), tuna quality, as in R's cor.test
# examples: Hunter L value and panel score.
add("tuna9", c(44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1),
  c(2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8))

# Anscombe's quartet: one line, four shapes (set 3 has an outlier, set 4 a
# point of leverage 1, whose rstudent and Cook's distance R leaves NaN).
q <- read.csv("anscombe_1973_quartet.csv", comment.char = "#")
for (k in 1:4) add(sprintf("anscombe%d", k), q[[sprintf("x%d", k)]], q[[sprintf("y%d", k)]])

pairs <- do.call(rbind, lapply(names(cases), function(id)
  data.frame(case = id, x = num(cases[[id]]$x), y = num(cases[[id]]$y))))
write_golden(pairs, "pairs.csv")

lm_rows <- list(); point_rows <- list(); cor_rows <- list(); huber_rows <- list()
for (id in names(cases)) {
  x <- cases[[id]]$x; y <- cases[[id]]$y
  fit <- lm(y ~ x)
  s <- summary(fit)
  q <- c(b0 = coef(fit)[[1]], b1 = coef(fit)[[2]],
    se_b0 = s$coefficients[1, 2], se_b1 = s$coefficients[2, 2],
    sigma = s$sigma, r_squared = s$r.squared, f = s$fstatistic[["value"]])
  lm_rows[[id]] <- data.frame(case = id, quantity = names(q), value = num(q))
  if (length(x) <= 300) {
    point_rows[[id]] <- data.frame(case = id, row = seq_along(x),
      rstudent = num(rstudent(fit)), cooks = num(cooks.distance(fit)),
      hat = num(hatvalues(fit)))
  }
  for (m in c("pearson", "spearman", "kendall")) {
    ct <- suppressWarnings(cor.test(x, y, method = m))
    cor_rows[[paste(id, m)]] <- data.frame(case = id, method = m,
      estimate = num(ct$estimate[[1]]), statistic = num(ct$statistic[[1]]),
      statistic_name = names(ct$statistic), p = num(ct$p.value))
  }
  if (length(x) >= 12 && length(x) <= 300) {
    h <- rlm(y ~ x, psi = psi.huber, k = 1.345, scale.est = "MAD",
      acc = 1e-13, maxit = 1000)
    huber_rows[[id]] <- data.frame(case = id, intercept = num(coef(h)[[1]]),
      slope = num(coef(h)[[2]]), scale = num(h$s), converged = h$converged)
  }
}
write_golden(do.call(rbind, lm_rows), "lm.csv")
write_golden(do.call(rbind, point_rows), "points.csv")
write_golden(do.call(rbind, cor_rows), "cor.csv")
write_golden(do.call(rbind, huber_rows), "huber.csv")

# Contingency tables.
tables <- list()
# Agresti (2007), An Introduction to Categorical Data Analysis, 2nd ed.,
# p. 39: gender by party identification (R's chisq.test example).
tables[["agresti"]] <- as.table(rbind(F = c(D = 762, I = 327, R = 468),
  M = c(D = 484, I = 239, R = 477)))
# R's chisq.test help, the 2x2 example.
tables[["help2x2"]] <- as.table(matrix(c(12, 5, 7, 7), ncol = 2,
  dimnames = list(c("a1", "a2"), c("b1", "b2"))))
a <- sample(c("p", "q", "r"), 500, TRUE, prob = c(0.5, 0.3, 0.2))
b <- ifelse(runif(500) < 0.4, c(p = "w", q = "x", r = "y")[a],
  sample(c("w", "x", "y", "z"), 500, TRUE))
tables[["dependent3x4"]] <- table(a, b)
tables[["independent5x3"]] <- table(sample(LETTERS[1:5], 300, TRUE),
  sample(c("u", "v", "w"), 300, TRUE))
tables[["sparse4x4"]] <- table(sample(letters[1:4], 40, TRUE),
  sample(letters[23:26], 40, TRUE))

table_rows <- list(); chisq_rows <- list()
for (id in names(tables)) {
  tb <- tables[[id]]
  d <- as.data.frame(tb, stringsAsFactors = FALSE)
  table_rows[[id]] <- data.frame(case = id, a = d[[1]], b = d[[2]], count = d[[3]])
  ct <- suppressWarnings(chisq.test(tb, correct = FALSE))
  n <- sum(tb); r <- nrow(tb); k <- ncol(tb)
  x2 <- ct$statistic[[1]]
  v <- sqrt(x2 / (n * (min(r, k) - 1)))
  # Bergsma (2013), by its formula.
  phi2 <- max(0, x2 / n - (r - 1) * (k - 1) / (n - 1))
  rt <- r - (r - 1)^2 / (n - 1); kt <- k - (k - 1)^2 / (n - 1)
  vc <- sqrt(phi2 / min(rt - 1, kt - 1))
  chisq_rows[[id]] <- data.frame(case = id, statistic = num(x2),
    df = ct$parameter[[1]], p = num(ct$p.value), v = num(v),
    v_corrected = num(vc))
}
write_golden(do.call(rbind, table_rows), "tables.csv")
write_golden(do.call(rbind, chisq_rows), "chisq.csv")

# Cutoffs of the row diagnostics.
cut <- expand.grid(n = c(4, 5, 10, 30, 100, 1000, 1e6), alpha = c(0.05, 0.01))
cut$bonferroni_t <- num(qt(1 - cut$alpha / (2 * cut$n), cut$n - 3))
cut$cooks_f50 <- num(qf(0.5, 2, cut$n - 2))
cut$n <- sprintf("%d", as.integer(cut$n))
write_golden(cut, "cutoffs.csv")
