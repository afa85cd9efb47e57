# Reference values from R's stats package for mann_kendall and cross_corr.
#
#   /usr/bin/Rscript testdata/reference/kendall_ref.R
#
# Reads kendall_cases.txt (written by kendall_ref.py) and writes
# kendall_ref_r.json:
#   cases: cor.test(t, y, method = "kendall", exact = FALSE, continuity = TRUE)
#          -> statistic (z with continuity correction), p.value, estimate (tau-b)
#   nile:  the same on datasets::Nile against its years
#   ccf:   ccf(y, x, lag.max = L, na.action = na.pass, plot = FALSE) on daily
#          series with missing days (NA in both x and y), lags -L..L
here <- local({
  a <- commandArgs(trailingOnly = FALSE)
  f <- sub("^--file=", "", a[grep("^--file=", a)])
  if (length(f)) dirname(normalizePath(f)) else "testdata/reference"
})
num <- function(v) ifelse(is.finite(v), sprintf("%.17g", v), "null")
vec <- function(v) paste0("[", paste(num(v), collapse = ","), "]")

lines <- readLines(file.path(here, "kendall_cases.txt"))
out <- character(0)
for (ln in lines) {
  parts <- strsplit(ln, "|", fixed = TRUE)[[1]]
  t <- as.numeric(strsplit(parts[2], " ")[[1]])
  y <- as.numeric(strsplit(parts[3], " ")[[1]])
  r <- tryCatch(suppressWarnings(cor.test(t, y, method = "kendall", exact = FALSE, continuity = TRUE)),
                error = function(e) NULL)
  if (is.null(r) || !is.finite(r$statistic)) next
  out <- c(out, sprintf('{"name":"%s","z":%s,"p":%s,"tau":%s}', parts[1],
                        num(r$statistic), num(r$p.value), num(r$estimate)))
}
nile <- cor.test(as.numeric(time(Nile)), as.numeric(Nile), method = "kendall", exact = FALSE, continuity = TRUE)

set.seed(42)
ccfs <- character(0)
for (n in c(80, 150)) {
  base <- rnorm(n + 2)
  x <- base[3:(n + 2)] + 0.3 * rnorm(n)
  y <- 0.7 * base[1:n] + 0.4 * rnorm(n)
  miss <- sort(sample(2:(n - 1), round(n / 10)))
  x[miss] <- NA
  y[miss] <- NA
  L <- 8
  cc <- ccf(y, x, lag.max = L, na.action = na.pass, plot = FALSE)
  day <- seq_len(n) - 1
  keep <- !is.na(x)
  ccfs <- c(ccfs, sprintf('{"name":"r_ccf_%d","day":%s,"x":%s,"y":%s,"max_lag":%d,"lags":%s,"ccf_y_x":%s}',
                          n, vec(day[keep]), vec(x[keep]), vec(y[keep]), L, vec(as.numeric(cc$lag)), vec(as.numeric(cc$acf))))
}

json <- paste0('{"versions":{"R":"', R.version.string, '"},\n"cases":[\n', paste(out, collapse = ",\n"), '],\n',
               '"nile":{"z":', num(nile$statistic), ',"p":', num(nile$p.value), ',"tau":', num(nile$estimate), '},\n',
               '"ccf":[\n', paste(ccfs, collapse = ",\n"), ']}\n')
writeLines(json, file.path(here, "kendall_ref_r.json"))
cat("wrote", length(out), "cases\n")
