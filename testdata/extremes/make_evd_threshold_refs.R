# Reference values for the threshold diagnostics of stats/extremes
# (TestThresholdDiagnosticsAgainstEvd). Made with R's evd package (Debian
# r-cran-evd) by:   Rscript testdata/extremes/make_evd_threshold_refs.R
# from the repository root. Writes testdata/extremes/evd_threshold_refs.csv.
# Data: the rainfall exceedances of 30 mm of Coles (2001), section 4.4.1.
# At each threshold u: the mean excess and its 95% normal interval as in evd's
# mrlplot (mean -+ qnorm(0.975) sd/sqrt(n)), and fpot's maximum-likelihood
# shape and modified scale sigma - xi u with delta-method 95% intervals from
# fpot's covariance (Coles 2001, section 4.3.4, as in evd's tcplot).
suppressPackageStartupMessages(library(evd))
rain <- read.csv("testdata/extremes/rain_exceedances.csv", comment.char = "#")$rain_mm
ctl <- list(reltol = 1e-14, maxit = 20000)
z <- qnorm(0.975)
rows <- list()
for (u in c(30, 35, 40, 45, 50)) {
  ex <- rain[rain > u] - u
  n <- length(ex)
  me <- mean(ex); h <- z * sd(ex) / sqrt(n)
  m <- fpot(rain, threshold = u, control = ctl)
  sc <- m$estimate["scale"]; sh <- m$estimate["shape"]; V <- m$var.cov
  ms <- sc - sh * u
  vms <- V[1, 1] - 2 * u * V[1, 2] + u^2 * V[2, 2]
  rows[[length(rows) + 1]] <- data.frame(threshold = u, n = n, mean_excess = me, me_lo = me - h, me_hi = me + h,
    shape = unname(sh), shape_lo = unname(sh - z * sqrt(V[2, 2])), shape_hi = unname(sh + z * sqrt(V[2, 2])),
    mod_scale = unname(ms), mod_scale_lo = unname(ms - z * sqrt(vms)), mod_scale_hi = unname(ms + z * sqrt(vms)))
}
out <- do.call(rbind, rows)
con <- file("testdata/extremes/evd_threshold_refs.csv", "w")
writeLines(sprintf("# made by make_evd_threshold_refs.R with R %s, evd %s", getRversion(), packageVersion("evd")), con)
write.csv(format(out, digits = 10), con, row.names = FALSE, quote = FALSE)
close(con)
print(out, digits = 8)
