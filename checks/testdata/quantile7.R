# Golden values for the type-7 quantiles of the summary check (quantile7 in
# checks/summary.go): R's stats::quantile with its default type = 7
# (Hyndman & Fan 1996, definition 7).
#
# Run from checks/testdata with R from Debian's r-base-core:
#   Rscript quantile7.R > quantile7.golden
# The output names the R version that wrote it.

read_y <- function(name) {
  read.csv(file.path("nist_strd", paste0(name, ".csv")), comment.char = "#")$y
}

sets <- list(
  michelso = read_y("michelso"),
  lew      = read_y("lew"),       # integers: also tested as an int64 column
  pidigits = read_y("pidigits"),  # integers 0..9, heavy ties
  mavro    = read_y("mavro"),
  one      = c(5),
  two      = c(1, 2),
  small    = c(9, 4, 2, 4, 5, 7, 4, 5),  # unsorted on purpose
  negative = c(-1e300, -3.5, 0, 2.25, 1e300)
)
probs <- c(0, 0.001, 0.05, 0.1, 0.25, 1/3, 0.5, 0.75, 0.9, 0.95, 0.99, 0.999, 1)

cat(sprintf("# %s; stats::quantile(x, p, type = 7, names = FALSE)\n", R.version.string))
cat("dataset,p,value\n")
for (name in names(sets)) {
  q <- quantile(sets[[name]], probs, type = 7, names = FALSE)
  cat(sprintf("%s,%.17g,%.17g\n", name, probs, q), sep = "")
}
