#!/usr/bin/Rscript
# Second, independent reference for trendsql's trend fits: R's lm() and
# acf() (package stats) on the Nile series shipped with R (datasets::Nile,
# annual flow at Aswan 1871-1970). Run with Debian's R:
#
#   Rscript testdata/reference/trend_ref_r.R > testdata/reference/trend_ref_r.json
#
# Design as documented in sqlfuncs/stats/trend.go: t = 1 January of each
# year 00:00 UTC in unix seconds, x = (t - mean(t)) / 31557600, columns
# 1, x, ..., x^d. Calls: lm(y ~ X[, -1]) (x, ..., x^d after the intercept), summary(fit)$coefficients
# (estimates, standard errors, two-sided t p-values), summary(fit)$r.squared,
# summary(fit)$sigma, df.residual(fit), acf(residuals(fit), lag.max = 1,
# plot = FALSE)$acf[2], predict(fit, newdata) at three other times.
y <- as.numeric(datasets::Nile)
years <- seq(tsp(datasets::Nile)[1], tsp(datasets::Nile)[2])
t <- as.numeric(as.POSIXct(sprintf("%d-01-01", years), tz = "UTC"))
tc <- mean(t)
Y <- 365.25 * 86400
teval <- as.numeric(as.POSIXct(c("1850-06-01", "1921-01-01", "2000-01-01"), tz = "UTC"))
num <- function(v) paste(sprintf("%.17g", v), collapse = ",")
cases <- character(0)
for (d in c(1, 2, 3)) {
  X <- outer((t - tc) / Y, 0:d, `^`)
  Xe <- outer((teval - tc) / Y, 0:d, `^`)
  fit <- lm(y ~ X[, -1, drop = FALSE])  # intercept from the formula, so r.squared is centred
  s <- summary(fit)
  cf <- s$coefficients
  r1 <- acf(residuals(fit), lag.max = 1, plot = FALSE)$acf[2]
  pred <- as.numeric(Xe %*% coef(fit))
  cases <- c(cases, sprintf(
    '{"degree":%d,"coef":[%s],"se":[%s],"p":[%s],"r2":%s,"sigma":%s,"df_resid":%d,"resid_acf1":%s,"t_eval":[%s],"value":[%s]}',
    d, num(cf[, 1]), num(cf[, 2]), num(cf[, 4]), num(s$r.squared), num(s$sigma),
    as.integer(df.residual(fit)), num(r1), num(teval), num(pred)))
}
cat(sprintf('{"generator":"testdata/reference/trend_ref_r.R","versions":{"R":"%s"},"source":"datasets::Nile","t":[%s],"y":[%s],"fits":[%s]}\n',
            R.version.string, num(t), num(y), paste(cases, collapse = ",")))
