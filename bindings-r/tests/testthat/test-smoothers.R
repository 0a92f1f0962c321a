# Smoothers through R: specs, fits against base R's own smoothers or a direct computation,
# predict, mean_curve with its subject bootstrap, tune_smoother, and every option error.

# Generated data (no real data): 200 points on a 0.1 grid, so x has ties.
kernel_data <- function() {
  set.seed(20260101)
  x <- round(runif(200, 0, 10), 1)
  y <- sin(x) + 0.1 * x + rnorm(200, sd = 0.3)
  list(x = x, y = y)
}

# --- kernel -------------------------------------------------------------------------------

test_that("Gaussian local linear matches weighted lm() at each distinct x", {
  d <- kernel_data()
  h <- 0.7
  fit <- fit_smoother(smoother_kernel(bandwidth = h, evaluation = "exact"), d$x, d$y)
  at <- sort(unique(d$x))
  expect_identical(fit$x, at)
  # The definition, in base R: weights exp(-((x - t) / h)^2 / 2), the intercept at t of the
  # weighted least-squares line.
  direct <- vapply(at, function(t) {
    w <- exp(-((d$x - t) / h)^2 / 2)
    unname(coef(lm(d$y ~ I(d$x - t), weights = w))[1])
  }, numeric(1))
  expect_lt(max(abs(fit$fitted - direct)), TOL_KERNEL * sd(d$y))
  expect_identical(fit$method, "kernel")
  expect_identical(fit$settings$evaluation, "exact")
  expect_identical(fit$diagnostics$bandwidth, h)
  expect_identical(fit$diagnostics$n, 200)
  expect_identical(fit$diagnostics$distinct_x, as.double(length(at)))
})

test_that("box local constant matches stats::ksmooth(kernel = \"box\")", {
  d <- kernel_data()
  b <- 1.2345 # not a multiple of the grid step: no point sits on a window edge
  ref <- stats::ksmooth(d$x, d$y, kernel = "box", bandwidth = b, x.points = sort(unique(d$x)))
  # Our h is the kernel's standard deviation: the box is flat on |x - t| <= sqrt(3) h = b / 2.
  fit <- fit_smoother(smoother_kernel(bandwidth = b / (2 * sqrt(3)), shape = "box", degree = 0),
    d$x, d$y
  )
  expect_identical(fit$x, ref$x)
  expect_lt(max(abs(fit$fitted - ref$y)), TOL_KERNEL * sd(d$y))
})

test_that("the box window is closed, as stats::ksmooth's: cars at several bandwidths", {
  at <- sort(unique(cars$speed))
  for (b in c(1, 2, 3, 5)) {
    ref <- stats::ksmooth(cars$speed, cars$dist, kernel = "box", bandwidth = b, x.points = at)
    fit <- fit_smoother(smoother_kernel(bandwidth = b / (2 * sqrt(3)), shape = "box", degree = 0),
      cars$speed, cars$dist
    )
    # Integer speeds: points at distance b / 2 are exactly on the edge, and inside.
    expect_lt(max(abs(fit$fitted - ref$y)), 1e-12 * sd(cars$dist), label = paste("b =", b))
  }
  # R: ksmooth(cars$speed, cars$dist, "box", bandwidth = 2, x.points = 23)$y is 82.5.
  fit <- fit_smoother(smoother_kernel(bandwidth = 1 / sqrt(3), shape = "box", degree = 0),
    cars$speed, cars$dist
  )
  expect_identical(fit$fitted[fit$x == 23], 82.5)
})

test_that("Gaussian local constant matches stats::ksmooth(kernel = \"normal\")", {
  d <- kernel_data()
  b <- 1.2345
  ref <- stats::ksmooth(d$x, d$y, kernel = "normal", bandwidth = b,
    x.points = sort(unique(d$x))
  )
  # ksmooth's normal kernel has standard deviation 0.3706506 b, cut at 4 of them.
  s <- smoother_kernel(bandwidth = 0.3706506 * b, degree = 0, truncation = 4,
    evaluation = "exact"
  )
  fit <- fit_smoother(s, d$x, d$y)
  expect_identical(fit$x, ref$x)
  expect_lt(max(abs(fit$fitted - ref$y)), TOL_KERNEL * sd(d$y))
})

test_that("integer input is accepted and gives the same curve as doubles", {
  s <- smoother_kernel(bandwidth = 2)
  expect_identical(
    fit_smoother(s, cars$speed, cars$dist),
    fit_smoother(s, as.double(cars$speed), as.double(cars$dist))
  )
})

# --- the other families (run once the core has them) ---------------------------------------

test_that("lowess matches stats::lowess on cars at the distinct x", {
  skip_unless_family("lowess")
  x <- cars$speed
  y <- cars$dist
  for (case in list(list(f = 2 / 3, iter = 3), list(f = 0.3, iter = 0), list(f = 0.5, iter = 5))) {
    delta <- 0.01 * diff(range(x))
    ref <- stats::lowess(x, y, f = case$f, iter = case$iter, delta = delta)
    keep <- !duplicated(ref$x)
    fit <- fit_smoother(
      smoother_lowess(span = case$f, iterations = case$iter, delta = delta), x, y
    )
    expect_identical(fit$x, as.double(ref$x[keep]))
    expect_lt(max(abs(fit$fitted - ref$y[keep])), TOL_LOWESS * sd(y))
  }
})

test_that("spline at smooth.spline's reached df matches smooth.spline on cars", {
  skip_unless_family("spline")
  x <- cars$speed
  y <- cars$dist
  ref <- stats::smooth.spline(x, y, all.knots = TRUE, df = 5)
  fit <- fit_smoother(smoother_spline(df = ref$df), x, y)
  expect_identical(fit$method, "spline")
  expect_identical(fit$x, as.double(ref$x))
  expect_lt(max(abs(fit$fitted - ref$y)), TOL_SPLINE * sd(y))
  expect_lt(abs(fit$diagnostics$df - ref$df), 1e-6)
})

test_that("super smoother matches stats::supsmu on cars", {
  skip_unless_family("super")
  x <- cars$speed
  y <- cars$dist
  ref <- stats::supsmu(x, y)
  fit <- fit_smoother(smoother_super(), x, y)
  expect_identical(fit$method, "super")
  expect_identical(fit$x, as.double(ref$x))
  expect_lt(max(abs(fit$fitted - ref$y)), TOL_SUPER * sd(y))
})

# --- specs and printing -------------------------------------------------------------------

test_that("a spec keeps the family and only the options given", {
  s <- smoother_kernel(bandwidth = 0.5, shape = "box")
  expect_s3_class(s, "trajweave_smoother")
  expect_identical(s$family, "kernel")
  expect_identical(s$options, list(bandwidth = 0.5, shape = "box"))
  expect_length(smoother_kernel()$options, 0)
  # NULL is "the core's default": left out, not passed.
  expect_identical(smoother_kernel(bandwidth = NULL, degree = 0L)$options, list(degree = 0L))
  expect_identical(
    capture.output(print(s)),
    c("<trajweave smoother: kernel>", "  bandwidth = 0.5", "  shape = \"box\"")
  )
  expect_identical(
    capture.output(print(smoother_kernel())),
    c("<trajweave smoother: kernel>", "  (the core's defaults)")
  )
})

test_that("spline specs: lambda, df, or GCV when neither", {
  skip_unless_family("spline")
  expect_identical(smoother_spline()$options, list(gcv = "gcv"))
  expect_identical(smoother_spline(lambda = 2)$options, list(lambda = 2))
  expect_identical(smoother_spline(df = 5)$options, list(df = 5))
})

test_that("lowess and super smoother specs keep the options given", {
  skip_unless_family("lowess")
  expect_identical(smoother_lowess(span = 0.3)$options, list(span = 0.3))
  skip_unless_family("super")
  expect_identical(smoother_super(span = "cv", bass = 2)$options, list(span = "cv", bass = 2))
})

test_that("a curve prints one line and predicts by linear interpolation", {
  fit <- fit_smoother(smoother_kernel(bandwidth = 2, shape = "box"), cars$speed, cars$dist)
  expect_s3_class(fit, "trajweave_curve")
  expect_identical(capture.output(print(fit)), "<trajweave curve: kernel, n = 50, bandwidth = 2>")
  newx <- c(0, 4, 4.5, 10.25, 24.9, 25, 40)
  # approx(rule = 2): linear between the points, the end values beyond them.
  expect_equal(predict(fit, newx), approx(fit$x, fit$fitted, xout = newx, rule = 2)$y,
    tolerance = 1e-15
  )
  expect_identical(predict(fit), fit$fitted)
  expect_identical(predict(fit, 4L), fit$fitted[1])
  expect_true(is.nan(predict(fit, NaN)))
})

# --- mean_curve ---------------------------------------------------------------------------

sim_panel <- function(subjects = 60) {
  sim <- simulate_panel(subjects = subjects, seed = 11)
  list(data = sim, panel = panel_from_frame(sim, "patient", "years", "egfr"))
}

test_that("mean_curve: the same seed gives the identical band, one limit per grid point", {
  p <- sim_panel()$panel
  s <- smoother_kernel(bandwidth = 0.8)
  at <- seq(0, 6, by = 0.25)
  a <- mean_curve(p, s, at = at, bootstrap = bootstrap_options(reps = 40, seed = 5))
  b <- mean_curve(p, s, at = at, bootstrap = bootstrap_options(reps = 40, seed = 5))
  c <- mean_curve(p, s, at = at, bootstrap = bootstrap_options(reps = 40, seed = 6))
  expect_s3_class(a, "trajweave_mean_curve")
  expect_s3_class(a$curve, "trajweave_curve")
  expect_identical(a$band, b$band)
  expect_false(identical(a$band$lower, c$band$lower))
  expect_identical(a$at, at)
  expect_length(a$band$lower, length(at))
  expect_length(a$band$upper, length(at))
  expect_true(all(a$band$lower <= a$band$upper))
  expect_identical(a$fitted, predict(a$curve, at))
  expect_identical(a$band[c("reps", "level", "seed", "failed")],
    list(reps = 40, level = 0.95, seed = 5, failed = 0)
  )
})

test_that("mean_curve without a bootstrap has no band and a 101-point default grid", {
  sp <- sim_panel()
  m <- mean_curve(sp$panel, smoother_kernel(bandwidth = 0.8))
  expect_null(m$band)
  expect_length(m$at, 101)
  expect_identical(m$at[1], min(sp$data$years))
  expect_equal(m$at[101], max(sp$data$years), tolerance = 1e-15)
  # The curve is the smoother fitted to every observation.
  direct <- fit_smoother(smoother_kernel(bandwidth = 0.8), sp$data$years, sp$data$egfr)
  expect_identical(m$curve$x, direct$x)
  expect_equal(m$curve$fitted, direct$fitted, tolerance = 1e-13)
  out <- capture.output(print(m))
  expect_identical(out[1], "<trajweave mean curve>")
})

test_that("bootstrap_options checks through the core", {
  expect_identical(unclass(bootstrap_options()), list(reps = 200, level = 0.95, seed = 1))
  expect_identical(bootstrap_options(reps = 50L, seed = 2^53 - 1)$seed, 2^53 - 1)
  expect_tw_error(bootstrap_options(reps = 5), "invalid_option",
    "`reps` = 5 is not allowed: a whole number from 10 to 100000"
  )
  expect_tw_error(bootstrap_options(reps = 10.5), "invalid_option",
    "`reps` = 10.5 is not allowed: a whole number from 10 to 100000"
  )
  expect_tw_error(bootstrap_options(level = 1), "invalid_option",
    "`level` = 1 is not allowed: a number in (0, 1), e.g. 0.95"
  )
  expect_tw_error(bootstrap_options(seed = -1), "invalid_option",
    "`seed` = -1 is not allowed: a whole number from 0 to 2^53 - 1"
  )
  expect_tw_error(bootstrap_options(seed = 1.5), "invalid_option",
    "`seed` = 1.5 is not allowed: a whole number from 0 to 2^53 - 1"
  )
  expect_tw_error(bootstrap_options(seed = 2^53), "invalid_option",
    "`seed` = 9007199254740992 is not allowed: a whole number from 0 to 2^53 - 1"
  )
  for (name in c("reps", "level", "seed")) {
    args <- list()
    args[[name]] <- "a"
    expect_tw_error(do.call(bootstrap_options, args), "invalid_option",
      paste0("`", name, "` = \"a\" is not allowed: give one number")
    )
    args[[name]] <- c(1, 2)
    expect_tw_error(do.call(bootstrap_options, args), "invalid_option",
      paste0("`", name, "` = a numeric vector of length 2 is not allowed: give one number")
    )
    args[[name]] <- NA
    expect_tw_error(do.call(bootstrap_options, args), "invalid_option",
      paste0("`", name, "` = NA is not allowed: give one number")
    )
  }
})

test_that("mean_curve refuses arguments of the wrong kind", {
  p <- sim_panel(20)$panel
  s <- smoother_kernel(bandwidth = 1)
  expect_tw_error(mean_curve(p, s, bootstrap = list(reps = 10)), "invalid_option",
    "`bootstrap` = a list of length 1 is not allowed: give NULL or bootstrap_options(reps, level, seed)"
  )
  expect_tw_error(mean_curve(p, s, at = c(0, NA)), "non_finite",
    "`at` is not finite at row 2 (value NaN): remove the row or give a finite value"
  )
  expect_tw_error(mean_curve(p, s, at = "1"), "invalid_option",
    "`at` = \"1\" is not allowed: give numbers"
  )
  expect_tw_error(mean_curve(p, list(family = "kernel")), "invalid_option",
    paste(
      "`smoother` = a list of length 1 is not allowed: build one with smoother_lowess(),",
      "smoother_kernel(), smoother_spline() or smoother_super()"
    )
  )
  expect_tw_error(mean_curve(cars, s), "invalid_option",
    "`panel` = an object of class \"data.frame\" is not allowed: build one with panel() or panel_from_frame()"
  )
})

# --- tune_smoother ------------------------------------------------------------------------

# Six invented subjects with four to seven visits each.
tiny_panel <- function() {
  set.seed(7)
  visits <- c(4, 6, 5, 7, 4, 6)
  id <- rep(seq_along(visits), visits)
  t <- round(runif(length(id), 0, 5), 2)
  y <- 10 - t + 0.3 * t^2 + rep(rnorm(6, sd = 0.8), visits) + rnorm(length(id), sd = 0.4)
  list(id = id, t = t, y = y, panel = panel(id, t, y))
}

test_that("tune_smoother's leave-one-subject-out score equals a brute-force R computation", {
  d <- tiny_panel()
  candidates <- c(0.3, 0.6, 1.2, 2.4)
  tuned <- tune_smoother(d$panel, smoother_kernel(), candidates)
  expect_s3_class(tuned, "trajweave_tuning")
  expect_identical(tuned$scheme, "leave-one-subject-out")
  expect_identical(tuned$folds, 6)
  expect_identical(tuned$family, "kernel")
  expect_identical(tuned$parameter, "bandwidth")
  brute <- vapply(candidates, function(h) {
    s <- smoother_kernel(bandwidth = h)
    sse <- 0
    for (i in unique(d$id)) {
      out <- d$id == i
      fit <- fit_smoother(s, d$t[!out], d$y[!out])
      sse <- sse + sum((predict(fit, d$t[out]) - d$y[out])^2)
    }
    sse / length(d$y)
  }, numeric(1))
  expect_equal(tuned$scores$score, brute, tolerance = TOL_TUNE)
  expect_identical(tuned$scores$candidate, candidates)
})

test_that("the brute-force check holds for LOWESS spans too", {
  skip_unless_family("lowess")
  d <- tiny_panel()
  candidates <- c(0.5, 0.8, 1)
  tuned <- tune_smoother(d$panel, smoother_lowess(iterations = 0), candidates)
  expect_identical(tuned$parameter, "span")
  brute <- vapply(candidates, function(f) {
    s <- smoother_lowess(span = f, iterations = 0)
    sse <- 0
    for (i in unique(d$id)) {
      out <- d$id == i
      fit <- fit_smoother(s, d$t[!out], d$y[!out])
      sse <- sse + sum((predict(fit, d$t[out]) - d$y[out])^2)
    }
    sse / length(d$y)
  }, numeric(1))
  expect_equal(tuned$scores$score, brute, tolerance = TOL_TUNE)
})

test_that("spline tuning shows each candidate's GCV of the full-data fit", {
  skip_unless_family("spline")
  d <- tiny_panel()
  tuned <- tune_smoother(d$panel, smoother_spline(), c(3, 5), parameter = "df")
  full <- vapply(c(3, 5), function(df) {
    fit_smoother(smoother_spline(df = df), d$t, d$y)$diagnostics$gcv
  }, numeric(1))
  expect_identical(tuned$scores$gcv, full)
})

test_that("best_index counts from 1 and points at the smallest score", {
  d <- tiny_panel()
  candidates <- c(2.4, 0.3, 0.6, 1.2)
  tuned <- tune_smoother(d$panel, smoother_kernel(shape = "box"), candidates)
  expect_identical(tuned$best_index, as.double(which.min(tuned$scores$score)))
  expect_identical(tuned$best, candidates[tuned$best_index])
  expect_s3_class(tuned$scores, "data.frame")
  expect_identical(names(tuned$scores), c("candidate", "score", "gcv"))
  # The kernel smoother reports no GCV.
  expect_true(all(is.na(tuned$scores$gcv)))
  out <- capture.output(print(tuned))
  expect_identical(out[1], "<trajweave tuning: kernel bandwidth, leave-one-subject-out, 6 folds>")
  expect_identical(
    out[2],
    paste0("best bandwidth = ", tuned$best, " (candidate ", tuned$best_index, " of 4)")
  )
})

test_that("k-fold tuning is seeded; an explicit parameter is the same as the default", {
  d <- tiny_panel()
  s <- smoother_kernel()
  a <- tune_smoother(d$panel, s, c(0.5, 1), folds = 3, seed = 9)
  b <- tune_smoother(d$panel, s, c(0.5, 1), parameter = "bandwidth", folds = 3L, seed = 9L)
  expect_identical(a, b)
  expect_identical(a$scheme, "k-fold")
  expect_identical(a$folds, 3)
})

test_that("tune_smoother option errors are classed with the core's messages", {
  d <- tiny_panel()
  s <- smoother_kernel()
  allowed_folds <- "a whole number from 2 to the number of subjects (6)"
  expect_tw_error(tune_smoother(d$panel, s, 1, folds = 1), "invalid_option",
    paste("`folds` = 1 is not allowed:", allowed_folds)
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, folds = 7), "invalid_option",
    paste("`folds` = 7 is not allowed:", allowed_folds)
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, folds = 2.5), "invalid_option",
    paste("`folds` = 2.5 is not allowed:", allowed_folds)
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, folds = "3"), "invalid_option",
    "`folds` = \"3\" is not allowed: give one number"
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, folds = c(2, 3)), "invalid_option",
    "`folds` = a numeric vector of length 2 is not allowed: give one number"
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, seed = -2), "invalid_option",
    "`seed` = -2 is not allowed: a whole number from 0 to 2^53 - 1"
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, seed = "a"), "invalid_option",
    "`seed` = \"a\" is not allowed: give one number"
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, seed = c(1, 2)), "invalid_option",
    "`seed` = a numeric vector of length 2 is not allowed: give one number"
  )
  expect_tw_error(tune_smoother(d$panel, s, numeric(0)), "invalid_option",
    "`candidates` = none is not allowed: give at least one candidate value"
  )
  expect_tw_error(tune_smoother(d$panel, s, "a"), "invalid_option",
    "`candidates` = \"a\" is not allowed: give numbers"
  )
  expect_tw_error(tune_smoother(d$panel, s, c(1, -1)), "invalid_option",
    "`bandwidth` = -1 is not allowed: a bandwidth > 0 (the kernel's standard deviation)"
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, parameter = c("a", "b")), "invalid_option",
    paste(
      "`parameter` = a character vector of length 2 is not allowed: give one option name as",
      "a string, or NULL for the family's main parameter"
    )
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, parameter = 1), "invalid_option",
    paste(
      "`parameter` = 1 is not allowed: give one option name as a string, or NULL for the",
      "family's main parameter"
    )
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, parameter = "shape"), "invalid_option",
    "`shape` = 1 is not allowed: \"box\" or \"gaussian\""
  )
  expect_tw_error(tune_smoother(d$panel, s, 1, parameter = "width"), "invalid_option",
    paste(
      "`kernel option` = \"width\" is not allowed: use one of: bandwidth, shape, degree,",
      "truncation, evaluation, bins_per_bandwidth"
    )
  )
  expect_tw_error(tune_smoother(panel(1L, 0, 1), s, 1), "too_few",
    "too few subjects for cross-validation over subjects: need at least 2, found 1"
  )
})

# --- option errors from R arguments --------------------------------------------------------

test_that("every kernel option refuses a vector of length 2, NA, a logical or a list", {
  for (name in names(formals(smoother_kernel))) {
    for (bad in list(c(1, 2), c("a", "b"), NA, NA_real_, TRUE, list(1))) {
      args <- list()
      args[[name]] <- bad
      shown <- switch(class(bad)[1],
        numeric = if (length(bad) == 2) "a numeric vector of length 2" else "NA",
        character = "a character vector of length 2",
        logical = if (is.na(bad)) "NA" else "TRUE",
        list = "a list of length 1"
      )
      expect_tw_error(do.call(smoother_kernel, args), "invalid_option",
        paste0("`", name, "` = ", shown, " is not allowed: give one number or one string"),
        info = paste(name, deparse(bad))
      )
    }
  }
})

test_that("the other families refuse a vector of length 2 before anything else", {
  cases <- list(
    list(smoother_lowess, c("span", "iterations", "delta")),
    list(smoother_super, c("span", "bass")),
    list(smoother_spline, c("lambda", "df"))
  )
  for (case in cases) {
    for (name in case[[2]]) {
      args <- list()
      args[[name]] <- c(0.5, 0.6)
      expect_tw_error(do.call(case[[1]], args), "invalid_option",
        paste0("`", name, "` = a numeric vector of length 2 is not allowed: give one number or one string"),
        info = name
      )
    }
  }
})

test_that("kernel options of the wrong kind or out of range get the core's words", {
  cases <- list(
    list(list(bandwidth = "a"), "`bandwidth` = \"a\" is not allowed: a bandwidth > 0 (the kernel's standard deviation)"),
    list(list(bandwidth = -1), "`bandwidth` = -1 is not allowed: a bandwidth > 0 (the kernel's standard deviation)"),
    list(list(bandwidth = NaN), "`bandwidth` = NaN is not allowed: a bandwidth > 0 (the kernel's standard deviation)"),
    list(list(shape = 1), "`shape` = 1 is not allowed: \"box\" or \"gaussian\""),
    list(list(shape = "triangle"), "`shape` = \"triangle\" is not allowed: \"box\" or \"gaussian\""),
    list(list(degree = "a"), "`degree` = \"a\" is not allowed: 0 (local constant) or 1 (local linear)"),
    list(list(degree = 2), "`degree` = 2 is not allowed: 0 (local constant) or 1 (local linear)"),
    list(list(truncation = "a"), "`truncation` = \"a\" is not allowed: a number of bandwidths > 0"),
    list(list(truncation = 0), "`truncation` = 0 is not allowed: a number of bandwidths > 0"),
    list(list(evaluation = 1), "`evaluation` = 1 is not allowed: \"auto\", \"exact\" or \"binned\""),
    list(list(evaluation = "fast"), "`evaluation` = \"fast\" is not allowed: \"auto\", \"exact\" or \"binned\""),
    list(list(bins_per_bandwidth = "a"), "`bins_per_bandwidth` = \"a\" is not allowed: a whole number from 4 to 1024"),
    list(list(bins_per_bandwidth = 4.5), "`bins_per_bandwidth` = 4.5 is not allowed: a whole number from 4 to 1024")
  )
  for (case in cases) {
    expect_tw_error(do.call(smoother_kernel, case[[1]]), "invalid_option", case[[2]],
      info = names(case[[1]])
    )
  }
})

test_that("lowess options of the wrong kind get the core's words", {
  skip_unless_family("lowess")
  expect_tw_error(smoother_lowess(span = "a"), "invalid_option",
    "`span` = \"a\" is not allowed: give a number in (0, 1], the fraction of points in each local fit"
  )
  expect_tw_error(smoother_lowess(iterations = "a"), "invalid_option",
    "`iterations` = \"a\" is not allowed: give a whole number from 0 to 100 (robustness iterations)"
  )
  expect_tw_error(smoother_lowess(delta = "a"), "invalid_option",
    "`delta` = \"a\" is not allowed: give a finite number >= 0 (the x distance within which points are interpolated)"
  )
})

test_that("spline options of the wrong kind get the core's words; lambda with df is refused", {
  expect_tw_error(smoother_spline(lambda = 1, df = 4), "invalid_option",
    "`lambda` = given together with `df` is not allowed: give either lambda or df, or neither for GCV"
  )
  skip_unless_family("spline")
  expect_tw_error(smoother_spline(lambda = "a"), "invalid_option",
    "`lambda` = \"a\" is not allowed: a finite number > 0 (the penalty on the x scale given)"
  )
  expect_tw_error(smoother_spline(df = "a"), "invalid_option",
    "`df` = \"a\" is not allowed: a number > 2 and at most the number of distinct x"
  )
})

test_that("super smoother options of the wrong kind get the core's words", {
  skip_unless_family("super")
  expect_tw_error(smoother_super(span = "a"), "invalid_option",
    "`span` = \"a\" is not allowed: a number in (0, 1] (fixed span) or \"cv\" (variable span)"
  )
  expect_tw_error(smoother_super(bass = "a"), "invalid_option",
    "`bass` = \"a\" is not allowed: a number in [0, 10]"
  )
})

test_that("fit_smoother and predict refuse data of the wrong kind", {
  s <- smoother_kernel(bandwidth = 1)
  expect_tw_error(fit_smoother(s, c("1", "2"), c(1, 2)), "invalid_option",
    "`x` = a character vector of length 2 is not allowed: give numbers"
  )
  expect_tw_error(fit_smoother(s, factor(1:2), c(1, 2)), "invalid_option",
    "`x` = an object of class \"factor\" is not allowed: give numbers"
  )
  expect_tw_error(fit_smoother(s, c(1, 2), c(TRUE, FALSE)), "invalid_option",
    "`y` = a logical vector of length 2 is not allowed: give numbers"
  )
  expect_tw_error(fit_smoother(s, c(1, 2, 3), c(1, 2)), "length_mismatch",
    "`y` has 2 values but `x` has 3: give one value per row in each"
  )
  expect_tw_error(fit_smoother(s, c(1, Inf), c(1, 2)), "non_finite",
    "`x` is not finite at row 2 (value inf): remove the row or give a finite value"
  )
  expect_tw_error(fit_smoother("kernel", 1, 1), "invalid_option",
    paste(
      "`smoother` = \"kernel\" is not allowed: build one with smoother_lowess(),",
      "smoother_kernel(), smoother_spline() or smoother_super()"
    )
  )
  fit <- fit_smoother(s, cars$speed, cars$dist)
  expect_tw_error(predict(fit, "a"), "invalid_option",
    "`newdata` = \"a\" is not allowed: give numbers"
  )
  changed <- fit
  changed$x <- rev(changed$x)
  message <- paste(
    "`object` = a curve whose points were changed is not allowed: `x` must be finite and",
    "increasing without ties, with one `fitted` value each; use a curve from fit_smoother()"
  )
  expect_tw_error(predict(changed, 1), "invalid_option", message)
  changed <- fit
  changed$fitted <- changed$fitted[-1]
  expect_tw_error(predict(changed, 1), "invalid_option", message)
})
