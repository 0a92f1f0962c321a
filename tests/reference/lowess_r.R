# Recomputes tests/fixtures/lowess_r.json with R's stats::lowess (base R, Cleveland 1979's
# algorithm), an implementation independent of trajweave's core. Inputs: R's `cars` data
# (dist on speed, with ties) and generated data with ties and uneven spacing (fixed seed).
# Run from the repository root:
#
#     Rscript tests/reference/lowess_r.R          # rewrite the fixture
#     Rscript tests/reference/lowess_r.R --check  # fail if it would change
#
# Numbers are written with sprintf("%.17g") so every double round-trips exactly.

fixture <- file.path("tests", "fixtures", "lowess_r.json")

num <- function(v) {
  paste0("[", paste(sprintf("%.17g", v), collapse = ","), "]")
}

# Generated data: uneven spacing (exponential gaps), x rounded to 0.05 so many values tie,
# a smooth signal with heavy-tailed noise so the robustness weights matter.
set.seed(20240611)
n <- 300
gx <- round(cumsum(rexp(n, rate = 1 / 0.04)) * 20) / 20
gx <- sample(gx) # unsorted input rows
gy <- sin(gx) + 0.3 * gx + rt(n, df = 3) * 0.2

# Heavy ties: groups larger than the neighbourhood at small spans (window radius 0, a
# weighted mean of the tied points) and two groups 0.001 apart (x spread below 0.001 of the
# range, the local-constant fallback).
tx <- sample(rep(c(0, 1, 2, 2.001, 5), c(20, 20, 20, 3, 20)))
ty <- round(tx^2 / 5 + rnorm(length(tx)), 3)

data_sets <- list(
  cars = list(x = as.numeric(datasets::cars$speed), y = as.numeric(datasets::cars$dist)),
  generated = list(x = gx, y = gy),
  ties = list(x = tx, y = ty)
)

# Settings: span, iterations, delta (NULL = R's default 0.01 * diff(range(x))).
settings <- list(
  list(span = 2 / 3, iterations = 3, delta = NULL),
  list(span = 0.3, iterations = 0, delta = 0),
  list(span = 0.9, iterations = 5, delta = NULL),
  list(span = 0.2, iterations = 3, delta = 0),
  list(span = 0.5, iterations = 1, delta = 2),
  list(span = 0.1, iterations = 3, delta = 0)
)

case_json <- function(name, d, s) {
  delta <- if (is.null(s$delta)) 0.01 * diff(range(d$x)) else s$delta
  fit <- stats::lowess(d$x, d$y, f = s$span, iter = s$iterations, delta = delta)
  sprintf(
    paste0('  {"name": "%s", "data": "%s", "span": %s, "iterations": %d, ',
           '"delta": %s, "default_delta": %s,\n   "expected_x": %s,\n   "expected": %s}'),
    name, d$name, sprintf("%.17g", s$span), as.integer(s$iterations),
    sprintf("%.17g", delta), if (is.null(s$delta)) "true" else "false",
    num(fit$x), num(fit$y)
  )
}

cases <- character()
for (dn in names(data_sets)) {
  d <- data_sets[[dn]]
  d$name <- dn
  for (s in settings) {
    label <- sprintf("%s span %.4g iter %d delta %s", dn, s$span, s$iterations,
                     if (is.null(s$delta)) "default" else format(s$delta))
    cases <- c(cases, case_json(label, d, s))
  }
}

inputs <- paste(vapply(names(data_sets), function(dn) {
  sprintf('  "%s": {"x": %s,\n   "y": %s}', dn, num(data_sets[[dn]]$x), num(data_sets[[dn]]$y))
}, ""), collapse = ",\n")

text <- paste0(
  '{"about": "Inputs and stats::lowess output (sorted x with duplicates, fitted values) from ',
  'tests/reference/lowess_r.R, ', R.version.string, '. delta is the value passed to R.",\n',
  '"inputs": {\n', inputs, '},\n',
  '"cases": [\n', paste(cases, collapse = ",\n"), "\n]}\n"
)

if ("--check" %in% commandArgs(trailingOnly = TRUE)) {
  old <- paste0(paste(readLines(fixture), collapse = "\n"), "\n")
  if (!identical(old, text)) {
    message(fixture, " is out of date: rerun tests/reference/lowess_r.R")
    quit(status = 1)
  }
} else {
  writeLines(text, fixture, sep = "")
}
