# Recomputes tests/fixtures/spline_r.json with R's stats::smooth.spline (an implementation
# independent of trajweave's core): fits at a requested df with all.knots = TRUE, recording the
# df R actually reached (fit$df, the trace of its hat matrix on the distinct x with tie counts
# as weights), its fitted values at the distinct x, and its lambda (on x scaled to [0, 1]);
# and R's GCV choice (cv = FALSE, the default), with its criterion value fit$cv.crit.
# Data: R's `cars` (tied speeds) and generated data with ties (set.seed below).
# Run from the repository root:
#   Rscript tests/reference/spline_r.R          # rewrite the fixture
#   Rscript tests/reference/spline_r.R --check  # fail if it would change
suppressPackageStartupMessages(library(jsonlite))

fixture <- file.path("tests", "fixtures", "spline_r.json")

set.seed(20240601)
gx <- round(runif(150, 0, 20), 1)          # one decimal: many ties
gy <- sin(gx / 3) * 10 + 0.05 * gx^2 + rnorm(150, sd = 2)

datasets <- list(
  list(name = "cars", x = cars$speed, y = cars$dist, dfs = c(3.5, 5, 10)),
  list(name = "generated with ties", x = gx, y = gy, dfs = c(4, 8, 20, 40))
)

# jsonlite prints at most 15 significant digits; these write 17 (exact doubles) verbatim.
num <- function(v) structure(paste0("[", paste(sprintf("%.17g", v), collapse = ", "), "]"), class = "json")
num1 <- function(v) structure(sprintf("%.17g", v), class = "json")

case <- function(d) {
  fits <- lapply(d$dfs, function(k) {
    f <- smooth.spline(d$x, d$y, all.knots = TRUE, df = k)
    list(df_requested = num1(k), df = num1(f$df), lambda_unit_x = num1(f$lambda),
         x = num(f$x), fitted = num(f$y))
  })
  g <- smooth.spline(d$x, d$y, all.knots = TRUE)
  list(name = d$name, x = num(d$x), y = num(d$y), fits = fits,
       gcv = list(df = num1(g$df), lambda_unit_x = num1(g$lambda), cv_crit = num1(g$cv.crit),
                  fitted = num(g$y)))
}

out <- list(
  source = paste("stats::smooth.spline(x, y, all.knots = TRUE, df = k) and (..., all.knots = TRUE),",
                 R.version.string),
  cases = lapply(datasets, case)
)
text <- paste0(toJSON(out, auto_unbox = TRUE, json_verbatim = TRUE, pretty = TRUE), "\n")

if ("--check" %in% commandArgs(trailingOnly = TRUE)) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " is out of date: rerun spline_r.R")
    quit(status = 1)
  }
} else {
  writeLines(text, fixture, sep = "")
}
