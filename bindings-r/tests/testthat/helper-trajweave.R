# Shared by the trajweave test files.

# Quantiles recomputed in base R may differ from the core's in the last bits: R interpolates as
# (1 - h) a + h b, the core as a + h (b - a). Counts are compared exactly.
TOL_QUANTILE <- 1e-12

# Smoothers against base R, relative to sd(y). Kernel and LOWESS sums are the same finite sums
# in another order; the spline's df is matched by root finding (to 1e-9 in df) on each side
# and the super smoother's span choice involves many running fits, so those two are looser.
TOL_KERNEL <- 1e-10 # direct lm() fits; stats::ksmooth
TOL_LOWESS <- 1e-10 # stats::lowess
# stats::smooth.spline at the df it reached. R integrates the penalty with 0.333 in place of
# 1/3 (a B-spline fit with 0.333 reproduces R to 1e-12, docs/methods-spline.md), so its fit is
# not the exact smoothing spline: measured differences up to 1.3e-4 x sd(y).
TOL_SPLINE <- 3e-4
TOL_SUPER <- 1e-6 # stats::supsmu
# Cross-validation scores recomputed in R from fit_smoother() and predict(): the same fits in
# another order of summation.
TOL_TUNE <- 1e-12

# The directory of the cross-language fixtures: $TRAJWEAVE_FIXTURES if set, else the
# tests/fixtures found by walking up from the test directory; NULL when neither exists (an
# installed package checked outside the repository).
tw_fixture_dir <- function() {
  dir <- Sys.getenv("TRAJWEAVE_FIXTURES")
  if (nzchar(dir)) {
    return(dir)
  }
  here <- normalizePath(".", mustWork = FALSE)
  repeat {
    candidate <- file.path(here, "tests", "fixtures")
    if (file.exists(file.path(candidate, "bad_input.json"))) {
      return(candidate)
    }
    parent <- dirname(here)
    if (identical(parent, here)) {
      return(NULL)
    }
    here <- parent
  }
}

tw_fixture <- function(name) {
  dir <- tw_fixture_dir()
  if (is.null(dir)) {
    skip("the repository's tests/fixtures is not reachable; set TRAJWEAVE_FIXTURES")
  }
  jsonlite::fromJSON(file.path(dir, name), simplifyVector = FALSE)
}

# A fixture number: JSON numbers, or the strings "nan", "inf", "-inf".
tw_number <- function(v) {
  if (is.character(v)) {
    switch(v, nan = NaN, inf = Inf, "-inf" = -Inf, stop("fixture: unknown number ", v))
  } else {
    as.double(v)
  }
}

tw_numbers <- function(values) vapply(values, tw_number, numeric(1))

# Subject ids typed as the fixture says; JSON null is NA.
tw_subjects <- function(case) {
  raw <- case$subject
  switch(case$subject_type,
    int = vapply(raw, function(v) if (is.null(v)) NA_integer_ else as.integer(v), integer(1)),
    float = vapply(raw, function(v) if (is.null(v)) NA_real_ else tw_number(v), numeric(1)),
    text = vapply(raw, function(v) if (is.null(v)) NA_character_ else v, character(1)),
    stop("fixture: subject_type ", case$subject_type)
  )
}

# Asserts a classed trajweave error with exactly this message.
expect_tw_error <- function(expr, kind, message, info = NULL) {
  err <- expect_error(expr, class = paste0("trajweave_", kind), info = info)
  expect_s3_class(err, "trajweave_error")
  expect_true(identical(conditionMessage(err), message),
    info = paste0(info, ": got ", conditionMessage(err))
  )
  invisible(err)
}

# Skips a test of a smoother family the core does not have yet, recognised by the core's own
# refusal of an unknown family (any other error fails the test as usual).
skip_unless_family <- function(family) {
  unknown <- paste0(
    "`smoother` = \"", family, "\" is not allowed: ",
    "use \"lowess\", \"kernel\", \"spline\" or \"super\""
  )
  known <- tryCatch(
    {
      trajweave:::new_smoother(family, list())
      TRUE
    },
    trajweave_invalid_option = function(e) !identical(conditionMessage(e), unknown)
  )
  if (!known) skip(paste0("the core has no \"", family, "\" smoother yet"))
}

# Residuals of a least-squares polynomial against stats::lm(), relative to sd(y): the core
# solves by Householder QR on scaled time, lm() by its own QR on raw powers of time.
TOL_RESIDUALS <- 1e-10
# Least-squares lines within a covariate band against stats::lm(), relative to the value.
TOL_TRENDS <- 1e-10
# Group fits against fit_smoother() on the group's rows alone: the same points, summed in
# another row order.
TOL_GROUPS <- 1e-12

# ChickWeight (R's datasets) as a panel: chick id as integer, Diet as the numeric covariate
# `diet`, and `birth` (each chick's weight at day 0) as a time-fixed continuous covariate.
chick_frame <- function() {
  cw <- as.data.frame(datasets::ChickWeight)
  cw$id <- as.integer(as.character(cw$Chick))
  cw$diet <- as.numeric(as.character(cw$Diet))
  cw$birth <- ave(cw$weight, cw$id, FUN = function(w) w[1])
  cw
}
