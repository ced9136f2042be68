# GEV fits with 95% profile-likelihood intervals of the annual maxima of
# extremes_points.nc (annual_maxima.csv), the reference of the end-to-end
# check of the extremes columns (pipelines TestExtremesEndToEnd). Made with R's
# evd (Debian r-cran-evd); the delta-method interval is level -+ 1.96 times the
# standard error fgev reports for the quantile parameter:   Rscript testdata/extremes_points/make_evd_refs.R
# from the repository root; writes testdata/extremes_points/evd_refs.csv.
suppressPackageStartupMessages(library(evd))
am <- read.csv("testdata/extremes_points/annual_maxima.csv", comment.char = "#")
ctl <- list(reltol = 1e-14, maxit = 20000)
rows <- list()
for (st in c("offshore", "shallow")) {
  x <- am[[st]]
  base <- fgev(x, control = ctl)
  for (T in c(10, 100)) {
    m <- fgev(x, prob = 1 / T, control = ctl)
    q <- unname(m$estimate["quantile"])
    ci <- confint(profile(m, which = "quantile", xmin = q * 0.8, xmax = q * 2, mesh = q / 4000, control = ctl),
                  parm = "quantile", level = 0.95)
    rows[[length(rows) + 1]] <- data.frame(station = st, T = T, loc = unname(base$estimate["loc"]),
      scale = unname(base$estimate["scale"]), shape = unname(base$estimate["shape"]),
      level = q, lower = ci[1, 1], upper = ci[1, 2],
      delta_lower = q - qnorm(0.975) * unname(m$std.err["quantile"]),
      delta_upper = q + qnorm(0.975) * unname(m$std.err["quantile"]))
  }
}
out <- do.call(rbind, rows)
con <- file("testdata/extremes_points/evd_refs.csv", "w")
writeLines(sprintf("# made by make_evd_refs.R with R %s, evd %s", getRversion(), packageVersion("evd")), con)
write.csv(format(out, digits = 10), con, row.names = FALSE, quote = FALSE)
close(con)
print(out, digits = 8)
