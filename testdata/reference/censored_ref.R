# Reference values from R's stats package for the censored Mann-Kendall test
# with a single reporting limit (the equivalence stated in censored_ref.py:
# censored values replaced by one common value below the limit).
#
#   /usr/bin/Rscript testdata/reference/censored_ref.R [cases.txt [out.json]]
#
# Reads name|t|y_sub lines (default censored_cases.txt, written by
# censored_ref.py) and writes (default censored_ref_r.json):
#   cor.test(t, y_sub, method = "kendall", exact = FALSE, continuity = TRUE)
#   -> statistic (z with continuity correction), p.value, estimate (tau-b)
here <- local({
  a <- commandArgs(trailingOnly = FALSE)
  f <- sub("^--file=", "", a[grep("^--file=", a)])
  if (length(f)) dirname(normalizePath(f)) else "testdata/reference"
})
args <- commandArgs(trailingOnly = TRUE)
infile <- if (length(args) >= 1) args[1] else file.path(here, "censored_cases.txt")
outfile <- if (length(args) >= 2) args[2] else file.path(here, "censored_ref_r.json")
num <- function(v) ifelse(is.finite(v), sprintf("%.17g", v), "null")

out <- character(0)
for (ln in readLines(infile)) {
  parts <- strsplit(ln, "|", fixed = TRUE)[[1]]
  t <- as.numeric(strsplit(parts[2], " ")[[1]])
  y <- as.numeric(strsplit(parts[3], " ")[[1]])
  r <- tryCatch(suppressWarnings(cor.test(t, y, method = "kendall", exact = FALSE, continuity = TRUE)),
                error = function(e) NULL)
  if (is.null(r)) {
    out <- c(out, sprintf('{"name":"%s","z":null,"p":null,"tau":null}', parts[1]))
    next
  }
  out <- c(out, sprintf('{"name":"%s","z":%s,"p":%s,"tau":%s}', parts[1],
                        num(r$statistic), num(r$p.value), num(r$estimate)))
}
json <- paste0('{"versions":{"R":"', R.version.string, '"},\n"mk":[\n', paste(out, collapse = ",\n"), ']}\n')
writeLines(json, outfile)
