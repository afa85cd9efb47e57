# Regenerates testdata/reference/acf_r.json: reference values for trendsql's
# sample ACVF / ACF / PACF, Ljung–Box and Box–Pierce, computed with R's stats
# package on datasets shipped with R (package datasets).
#
#   /usr/bin/Rscript testdata/reference/acf_ref.R > testdata/reference/acf_r.json
#
# Calls used (R 4.2.2, package stats):
#   acf(x, lag.max = L, type = "covariance", plot = FALSE, na.action = na.pass, demean = TRUE)
#   acf(x, lag.max = L, type = "correlation", plot = FALSE, na.action = na.pass)
#   pacf(x, lag.max = L, plot = FALSE, na.action = na.pass)
#   Box.test(x, lag = h, type = "Ljung-Box" | "Box-Pierce", fitdf = k)
#     $statistic is the reference Q; the reference p-value is
#     pchisq(Q, h - k, lower.tail = FALSE) (Box.test itself reports
#     1 - pchisq(...), which loses precision below about 1e-15).
#   residuals(lm(x ~ time(x))) for the residual series (presidents, which
#   has missing quarters: lm(..., na.action = na.exclude), NA kept in place),
#   and coef(lm(x ~ time(x)))[2], the removed line's slope per unit of
#   time(x) (one year for these series), as "lm_slope".
#
# Times: each observation is given as the UTC date of the start of its
# period (year, quarter or month), so trendsql places them on a grid of
# 1y, 1y/4 or 1y/12 (365.25-day years).

num <- function(v) {
  s <- ifelse(is.na(v), "null", sprintf("%.17g", v))
  paste0("[", paste(s, collapse = ","), "]")
}
str <- function(v) paste0("[", paste0('"', v, '"', collapse = ","), "]")

period_dates <- function(x) {
  tt <- time(x)
  f <- frequency(x)
  yr <- floor(tt + 1e-9)
  k <- round((tt - yr) * f)
  if (f == 1) {
    return(sprintf("%04d-01-01", yr))
  }
  month <- 1 + k * (12 / f)
  sprintf("%04d-%02d-01", yr, as.integer(month))
}

case_json <- function(name, source, x, L, boxes, lm_slope = NULL) {
  cov <- acf(x, lag.max = L, type = "covariance", plot = FALSE, na.action = na.pass, demean = TRUE)$acf[, 1, 1]
  cor <- acf(x, lag.max = L, type = "correlation", plot = FALSE, na.action = na.pass)$acf[, 1, 1]
  pac <- pacf(x, lag.max = L, plot = FALSE, na.action = na.pass)$acf[, 1, 1]
  bx <- character(0)
  for (b in boxes) {
    for (type in c("Ljung-Box", "Box-Pierce")) {
      r <- Box.test(x, lag = b[1], type = type, fitdf = b[2])
      q <- unname(r$statistic)
      p <- pchisq(q, b[1] - b[2], lower.tail = FALSE)
      bx <- c(bx, sprintf('{"type":"%s","lags":%d,"fitdf":%d,"q":%.17g,"p":%.17g,"p_box_test":%.17g}',
        type, b[1], b[2], q, p, unname(r$p.value)))
    }
  }
  paste0('{"name":"', name, '","source":"', source, '",',
    '"dates":', str(period_dates(x)), ',',
    '"y":', num(as.numeric(x)), ',',
    '"max_lag":', L, ',',
    '"acvf":', num(cov), ',',
    '"acf":', num(cor), ',',
    '"pacf":', num(c(NA, pac)), ',',  # R's pacf starts at lag 1; index 0 is null
    if (is.null(lm_slope)) "" else sprintf('"lm_slope":%.17g,', lm_slope),
    '"box":[', paste(bx, collapse = ","), ']}')
}

resid_ts <- function(x) ts(unname(residuals(lm(x ~ time(x)))), start = start(x), frequency = frequency(x))
# With missing values: na.exclude puts NA back in place of the dropped rows.
resid_ts_na <- function(x) ts(unname(residuals(lm(x ~ time(x), na.action = na.exclude))), start = start(x), frequency = frequency(x))
lm_slope <- function(x) unname(coef(lm(x ~ time(x)))[2])

cases <- c(
  case_json("nile", "R datasets::Nile (annual flow at Aswan, 1871-1970)", Nile, 20,
    list(c(1, 0), c(10, 0), c(20, 2))),
  case_json("nile_lm_resid", "residuals(lm(Nile ~ time(Nile)))", resid_ts(Nile), 20,
    list(c(10, 0), c(10, 2)), lm_slope(Nile)),
  case_json("co2", "R datasets::co2 (Mauna Loa monthly CO2, 1959-1997)", co2, 48,
    list(c(12, 0), c(24, 0), c(48, 3))),
  case_json("co2_lm_resid", "residuals(lm(co2 ~ time(co2)))", resid_ts(co2), 48,
    list(c(12, 2), c(24, 2)), lm_slope(co2)),
  case_json("presidents", "R datasets::presidents (quarterly approval, 1945-1974, 6 NA)", presidents, 16,
    list(c(4, 0), c(8, 1), c(16, 0))),
  case_json("lakehuron", "R datasets::LakeHuron (annual level, 1875-1972)", LakeHuron, 25,
    list(c(5, 0), c(25, 2))),
  case_json("presidents_lm_resid", "residuals(lm(presidents ~ time(presidents), na.action = na.exclude))", resid_ts_na(presidents), 16,
    list(c(4, 0), c(8, 1)), lm_slope(presidents))
)

cat('{"generator":"testdata/reference/acf_ref.R","r_version":"', R.version.string, '",\n', sep = "")
cat('"cases":[\n', paste(cases, collapse = ",\n"), "\n]}\n", sep = "")
