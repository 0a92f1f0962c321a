# average_change() against base R (quantile type 7, lm, stats::lowess + approx), its typed
# errors; binary responses against stats::lowess.

change_data <- function() {
  f <- tw_fixture("change_py.json")
  list(
    subject = as.integer(unlist(f$subject)), t = tw_numbers(f$time),
    y = tw_numbers(f$response), fixture = f
  )
}

test_that("window, estimate and least-squares slope match base R", {
  d <- change_data()
  p <- panel(d$subject, d$t, d$y)
  s <- smoother_lowess(iterations = 0, delta = 0)
  for (central in c(0.9, 0.5, 1)) {
    c <- average_change(p, s, central = central, reps = 20, seed = 3)
    # R: quantile(type = 7) for the window.
    q <- unname(quantile(d$t, c((1 - central) / 2, (1 + central) / 2), type = 7))
    expect_lt(abs(c$from - q[1]), TOL_QUANTILE)
    expect_lt(abs(c$to - q[2]), TOL_QUANTILE)
    # R: stats::lowess(iter = 0, delta = 0) interpolated by approx(), as the core's predict.
    ref <- stats::lowess(d$t, d$y, f = 2 / 3, iter = 0, delta = 0)
    m <- approx(ref$x, ref$y, xout = q, rule = 2, ties = "ordered")$y
    expect_lt(abs(c$estimate - diff(m) / diff(q)), 1e-10)
    # R: coef(lm(y ~ t)).
    expect_lt(abs(c$ols_slope - unname(coef(lm(d$y ~ d$t))[2])), 1e-12)
    expect_true(c$lower <= c$estimate && c$estimate <= c$upper)
    expect_true(c$ols_lower <= c$ols_slope && c$ols_slope <= c$ols_upper)
    expect_identical(c$reps, 20)
    expect_identical(c$smoother$family, "lowess")
  }
  expect_s3_class(c, "trajweave_change")
  expect_output(print(c), "least squares")
})

test_that("seeded: the same seed gives the same intervals, another seed others", {
  d <- change_data()
  p <- panel(d$subject, d$t, d$y)
  a <- average_change(p, smoother_spline(df = 5), reps = 30, seed = 7)
  expect_identical(a, average_change(p, smoother_spline(df = 5), reps = 30, seed = 7))
  expect_false(identical(a$lower, average_change(p, smoother_spline(df = 5), reps = 30, seed = 8)$lower))
})

test_that("bad options give the core's typed errors", {
  d <- change_data()
  p <- panel(d$subject, d$t, d$y)
  s <- smoother_lowess()
  expect_tw_error(average_change(p, s, central = 0), "invalid_option",
    "`central` = 0 is not allowed: a number in (0, 1], the share of observation times the window covers (e.g. 0.9)"
  )
  expect_tw_error(average_change(p, s, central = 1.5), "invalid_option",
    "`central` = 1.5 is not allowed: a number in (0, 1], the share of observation times the window covers (e.g. 0.9)"
  )
  expect_tw_error(average_change(p, s, reps = 0), "invalid_option",
    "`reps` = 0 is not allowed: a whole number from 10 to 100000"
  )
  expect_tw_error(average_change(p, s, level = 1), "invalid_option",
    "`level` = 1 is not allowed: a number in (0, 1), e.g. 0.95"
  )
  expect_tw_error(average_change(p, s, reps = "many"), "invalid_option",
    "`reps` = \"many\" is not allowed: give one number"
  )
  expect_tw_error(average_change(panel(1:3, c(2, 2, 2), c(1, 2, 3)), s), "too_few",
    paste(
      "too few distinct observation times in the central window for an average change per",
      "time unit: need at least 2, found 1"
    )
  )
})

binary_data <- function() {
  d <- simulate_panel(subjects = 300, seed = 5)
  d$low <- as.numeric(d$egfr < 45)
  d
}

test_that("a binary response: LOWESS without robustness unless asked, as stats::lowess", {
  d <- binary_data()
  p <- panel_from_frame(d, "patient", "years", "low")
  expect_true(panel_is_binary(p))
  expect_false(panel_is_binary(panel_from_frame(d, "patient", "years", "egfr")))
  x <- sort(d$years)
  first <- !duplicated(x)
  delta <- 0.01 * diff(range(d$years))
  m <- expect_silent(mean_curve(p, smoother_lowess()))
  expect_identical(m$curve$settings$iterations, 0)
  expect_length(m$curve$warnings, 0)
  # R: stats::lowess(iter = 0), the fit the core chooses for a 0/1 response.
  ref <- stats::lowess(d$years, d$low, iter = 0, delta = delta)
  expect_lt(max(abs(m$curve$fitted - ref$y[first])), TOL_LOWESS)
  expect_gt(max(m$fitted), 0.05)
  # Asked for: the fit runs (R's iter = 3 gives the same curve) and warns.
  expect_warning(
    m3 <- mean_curve(p, smoother_lowess(iterations = 3)),
    "robustness weights discard the rarer value"
  )
  ref3 <- stats::lowess(d$years, d$low, iter = 3, delta = delta)
  expect_lt(max(abs(m3$curve$fitted - ref3$y[first])), TOL_LOWESS)
  expect_match(m3$curve$warnings, "^the response has two distinct values \\(binary\\)")
  expect_warning(fit_smoother(smoother_lowess(iterations = 1), d$years, d$low), "binary")
})
