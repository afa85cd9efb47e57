# Reference values for the Benjamini–Hochberg adjustment stored by
# `trendsql summarize` (trend_p_fdr), from R's stats package.
#
#   /usr/bin/Rscript testdata/reference/fdr_bh.R
#
# writes fdr_bh.json: for each case the p-values (null = a series without a
# p-value, NA in R) and p.adjust(p, method = "BH"), which leaves NA out of the
# count m (n = length(p[!is.na(p)]) by default). The p-values are arbitrary
# inputs chosen to exercise the step-up minimum, ties, NA and large p.
# Cross-checked when written: statsmodels 0.13.5
# multipletests(p, method = "fdr_bh")[1] at /usr/bin/python3 agrees to 6e-17.
here <- local({
  a <- commandArgs(trailingOnly = FALSE)
  f <- sub("^--file=", "", a[grep("^--file=", a)])
  if (length(f)) dirname(normalizePath(f)) else "testdata/reference"
})
num <- function(v) ifelse(is.finite(v), sprintf("%.17g", v), "null")
vec <- function(v) paste0("[", paste(num(v), collapse = ","), "]")

cases <- list(
  list(name = "step_up_minimum", alpha = 0.05,
       p = c(0.0001, 0.0008, 0.0021, 0.0040, 0.0200, 0.0210, 0.0230, 0.0410,
             0.0420, 0.0600, 0.0740, 0.2050, 0.3600, 0.5200, 0.9870)),
  list(name = "ties_and_missing", alpha = 0.10,
       p = c(0.03, NA, 0.01, 0.03, 0.03, NA, 0.2, 0.049, 1e-12, 0.6)),
  list(name = "large_p", alpha = 0.05,
       p = c(0.8, 0.95, 0.99, 0.7)),
  list(name = "single", alpha = 0.05, p = c(0.012)),
  list(name = "unsorted_small", alpha = 0.05,
       p = c(0.04, 0.001, 0.5, 0.012, 0.0049, 0.09, 0.011, 0.3))
)
out <- character(0)
for (c in cases) {
  adj <- p.adjust(c$p, method = "BH")
  out <- c(out, sprintf('{"name":"%s","alpha":%s,"p":%s,"adjusted":%s}',
                        c$name, num(c$alpha), vec(c$p), vec(adj)))
}
src <- sprintf('%s stats::p.adjust(p, method = \\"BH\\")', R.version.string)
writeLines(c("{", sprintf('"source":"%s",', src), '"cases":[',
             paste(out, collapse = ",\n"), "]}"),
           file.path(here, "fdr_bh.json"))
