# Correlation structure: binned_correlation(), variogram() and fit_variogram() against base R.
# Every expected value is recomputed here with base R (stats::cor, crossprod, qnorm, outer,
# stats::optim) or a closed form; none comes from trajweave itself.

TOL_CORRELATION <- 1e-12

# A seeded panel on nominal visits 0..5 (jittered by up to 0.2), with cells missing at random,
# a sparse last visit, extra visits farther from a bin's centre and visits outside the edges.
# Rows are shuffled, so the caller's order is not the panel's.
correlation_frame <- function() {
  set.seed(11)
  n <- 40
  rows <- list()
  for (i in seq_len(n)) {
    b <- rnorm(1)
    for (v in 0:5) {
      keep <- if (v == 5) i <= 5 else runif(1) > 0.2
      if (!keep) next
      rows[[length(rows) + 1]] <- data.frame(id = i, t = v + runif(1, -0.2, 0.2), r = b + rnorm(1))
    }
    if (i %% 7 == 0) { # a second visit in bin 2, farther from its centre than 0.2
      rows[[length(rows) + 1]] <- data.frame(id = i, t = 2.4, r = rnorm(1))
    }
    if (i %% 9 == 0) { # a visit beyond the last edge
      rows[[length(rows) + 1]] <- data.frame(id = i, t = 6, r = rnorm(1))
    }
  }
  d <- do.call(rbind, rows)
  d[sample(nrow(d)), ]
}

test_that("binned_correlation matches stats::cor on the wide table (pairwise complete)", {
  d <- correlation_frame()
  edges <- seq(-0.5, 5.5, by = 1)
  centres <- 0:5
  p <- panel(d$id, d$t, d$t)
  res <- binned_correlation(p, d$r, edges = edges)

  # The wide table in base R: in each bin, the subject's visit nearest the bin's centre.
  bin <- findInterval(d$t, edges, rightmost.closed = TRUE)
  inside <- bin >= 1 & bin <= length(centres)
  ids <- sort(unique(d$id))
  wide <- matrix(NA_real_, length(ids), length(centres))
  for (k in which(inside)) {
    i <- match(d$id[k], ids)
    b <- bin[k]
    others <- which(inside & d$id == d$id[k] & bin == b)
    nearest <- others[which.min(abs(d$t[others] - centres[b]))]
    if (nearest == k) wide[i, b] <- d$r[k]
  }
  r <- suppressWarnings(stats::cor(wide, use = "pairwise.complete.obs"))
  n <- crossprod(!is.na(wide))
  r[n < 3] <- NA # below min_count
  dimnames(r) <- dimnames(n) <- list(res$bins, res$bins)
  storage.mode(n) <- "double"

  expect_equal(res$counts, n, tolerance = 0) # base::crossprod of the presence table
  expect_equal(res$correlation, r, tolerance = TOL_CORRELATION) # stats::cor
  # Fisher (1915) limits with stats::qnorm; NA for n <= 3.
  h <- stats::qnorm(0.975) / sqrt(pmax(n - 3, 1))
  lower <- tanh(atanh(r) - h)
  upper <- tanh(atanh(r) + h)
  lower[n <= 3] <- NA
  upper[n <= 3] <- NA
  expect_equal(res$lower, lower, tolerance = TOL_CORRELATION)
  expect_equal(res$upper, upper, tolerance = TOL_CORRELATION)
  expect_true(anyNA(res$correlation) && anyNA(res$lower)) # the sparse last bin shows both NA kinds
  expect_equal(res$means, unname(colMeans(wide, na.rm = TRUE)), tolerance = TOL_CORRELATION)
  expect_equal(res$sds, unname(apply(wide, 2, stats::sd, na.rm = TRUE)),
    tolerance = TOL_CORRELATION
  )
  expect_identical(res$centres, as.double(centres))

  # Lag correlation: the count-weighted mean over the cells (a, a + L) that have one.
  k <- length(centres)
  for (lag in 1:(k - 1)) {
    cells <- cbind(1:(k - lag), (1 + lag):k)
    ok <- !is.na(r[cells])
    w <- n[cells][ok]
    row <- res$lags[res$lags$lag == lag, ]
    expect_equal(row$correlation, sum(w * r[cells][ok]) / sum(w), tolerance = TOL_CORRELATION)
    expect_equal(row$gap, sum(w * lag) / sum(w), tolerance = TOL_CORRELATION)
    expect_identical(row$pairs, sum(w))
    expect_identical(row$cells, as.double(sum(ok)))
  }

  # Visit bookkeeping, counted in base R.
  expect_identical(res$visits_outside, as.double(sum(!inside)))
  expect_identical(res$visits_used, as.double(sum(!is.na(wide))))
  expect_identical(res$visits_unused, as.double(sum(inside) - sum(!is.na(wide))))
  expect_identical(res$level, 0.95)
  expect_identical(res$min_count, 3)
  expect_s3_class(res, "trajweave_correlation")
  expect_output(print(res), "binned correlation: 6 bins")
})

test_that("binned_correlation takes a level, a bin count and a schedule", {
  d <- correlation_frame()
  p <- panel(d$id, d$t, d$t)
  res <- binned_correlation(p, d$r, schedule = 0:5, tolerance = 0.3, level = 0.9)
  n <- res$counts[1, 2]
  r <- res$correlation[1, 2]
  # Fisher limits at 90% with stats::qnorm.
  expect_equal(res$lower[1, 2], tanh(atanh(r) - stats::qnorm(0.95) / sqrt(n - 3)),
    tolerance = TOL_CORRELATION
  )
  expect_identical(res$level, 0.9)
  counted <- binned_correlation(p, d$r, bins = 3)
  expect_identical(length(counted$bins), 3L)
})

# ChickWeight residuals from the mean log weight at each day.
chick_residuals <- function() {
  cw <- chick_frame()
  cw$r <- log(cw$weight) - ave(log(cw$weight), cw$Time)
  cw
}

test_that("variogram of ChickWeight residuals matches a base-R computation", {
  cw <- chick_residuals()
  p <- panel_from_frame(cw, "id", "Time", "weight")
  # Days are 0, 2, ..., 20 and 21, so lags 1, 3, ..., 21 occur too (each involving day 21):
  # these edges put each of the lags 2, 3, 4, 5 and 6 alone in a bin.
  edges <- c(1.5, 2.5, 3.5, 4.5, 5.5, 6.5)
  vg <- variogram(p, cw$r, lag_edges = edges, min_pairs = 1)

  # All within-chick pairs j < k by outer(), in base R.
  u <- v <- s <- numeric(0)
  for (id in unique(cw$id)) {
    rows <- cw[cw$id == id, ]
    rows <- rows[order(rows$Time), ]
    upper <- upper.tri(diag(nrow(rows)))
    u <- c(u, outer(rows$Time, rows$Time, function(a, b) b - a)[upper])
    v <- c(v, (outer(rows$r, rows$r, "-")^2 / 2)[upper])
    s <- c(s, abs(outer(rows$r, rows$r, "-"))[upper])
  }
  bin <- findInterval(u, edges, rightmost.closed = TRUE)
  for (b in seq_len(length(edges) - 1)) {
    inb <- bin == b
    expect_identical(length(unique(u[inb])), 1L) # one lag per bin
    expect_identical(vg$bins$pairs[b], as.double(sum(inb)))
    expect_equal(vg$bins$lag[b], mean(u[inb]), tolerance = 1e-12)
    expect_equal(vg$bins$classical[b], mean(v[inb]), tolerance = 1e-12)
    # Cressie & Hawkins (1980) robust estimate, their formula.
    nb <- sum(inb)
    expect_equal(vg$bins$robust[b], mean(sqrt(s[inb]))^4 / (0.457 + 0.494 / nb) / 2,
      tolerance = 1e-12
    )
  }
  expect_identical(vg$pairs_in_bins, as.double(sum(bin >= 1 & bin < length(edges))))
  expect_identical(vg$pairs_outside, as.double(length(u) - vg$pairs_in_bins))
  expect_identical(vg$max_lag, 6.5)

  # Process variance: the mean half squared difference over all pairs of rows of different
  # chicks, by brute force.
  between <- outer(cw$id, cw$id, "!=") & upper.tri(diag(nrow(cw)))
  half <- outer(cw$r, cw$r, "-")^2 / 2
  expect_identical(vg$between_pairs, as.double(sum(between)))
  expect_equal(vg$process_variance, mean(half[between]), tolerance = 1e-12)
  expect_equal(vg$variance, stats::var(cw$r), tolerance = 1e-12)
  # Visit times over the rows of the same pairs (each pair gives both of its times).
  idx <- which(between, arr.ind = TRUE)
  both <- c(cw$Time[idx[, 1]], cw$Time[idx[, 2]])
  expect_equal(vg$time_mean, mean(both), tolerance = 1e-12)
  expect_equal(vg$time_variance, mean((both - mean(both))^2), tolerance = 1e-10)
  expect_identical(vg$subjects, 50)
  expect_identical(vg$observations, as.double(nrow(cw)))
  expect_null(vg$sample)
  expect_null(vg$smoothed)
  expect_output(print(vg), "variogram: 5 lag bins")
})

test_that("variogram bins of equal width, a pair sample and a smoothed variogram", {
  cw <- chick_residuals()
  p <- panel_from_frame(cw, "id", "Time", "weight")
  vg <- variogram(p, cw$r, lag_bins = 7, max_lag = 21, sample = "all",
    smoother = smoother_lowess(span = 0.5)
  )
  expect_identical(vg$bins$lower, 21 * (0:6) / 7)
  expect_identical(nrow(vg$sample), as.integer(vg$pairs_in_bins))
  # Every within-chick pair, recomputed with outer() in base R, in the sample.
  v <- unlist(lapply(split(cw$r, cw$id), function(r) {
    (outer(r, r, "-")^2 / 2)[upper.tri(diag(length(r)))]
  }))
  expect_equal(sort(vg$sample$half_sq_diff), sort(unname(v)), tolerance = 1e-12)
  expect_true(all(vg$sample$subject %in% cw$id))
  expect_s3_class(vg$smoothed, "trajweave_curve")
  expect_identical(vg$smoothed_pairs, as.double(nrow(vg$sample)))
  some <- variogram(p, cw$r, sample = 100, seed = 3)
  expect_identical(nrow(some$sample), 100L)
  expect_identical(variogram(p, cw$r, sample = 100, seed = 3)$sample, some$sample)
  counted <- variogram(p, cw$r, lag_bins = 4, lag_kind = "equal_count", min_pairs = 1)
  expect_identical(nrow(counted$bins), 4L)
})

# Residuals with a random slope about t = 5: within-subject differences at lag 10 are about
# 10 b, far above the between-subject spread, so the fitted sill exceeds the process variance.
slope_panel <- function() {
  set.seed(5)
  d <- expand.grid(t = 0:10, id = 1:60)
  b <- stats::rnorm(60)
  d$r <- b[d$id] * (d$t - 5) + stats::rnorm(nrow(d), sd = 0.1)
  d
}

test_that("fit_variogram warns when the fitted sill exceeds the process variance", {
  d <- slope_panel()
  p <- panel(d$id, d$t, d$r)
  vg <- variogram(p, d$r, lag_bins = 10, min_pairs = 1)
  expect_warning(fit <- fit_variogram(vg), "exceeds the process variance")
  expect_identical(fit$intercept_variance, 0)
  # The condition the warning states, from the returned numbers.
  expect_gt(fit$error_variance + fit$serial_variance, vg$process_variance)
  expect_true(any(grepl("nu^2 is set to 0", fit$warnings, fixed = TRUE)))
})

test_that("fit_variogram on a simulated panel: finite, a minimum of Cressie's criterion", {
  # No random or covariate slopes, so the variogram levels off within the lags seen.
  s <- simulate_panel(subjects = 400, seed = 4, sd_slope = 0, diabetes_slope = 0, acr_slope = 0)
  p <- panel_from_frame(s, "patient", "years", "egfr")
  r <- panel_residuals(p, residuals_polynomial(1))
  vg <- variogram(p, r, lag_bins = 12)
  expect_silent(fit <- fit_variogram(vg))
  expect_identical(fit$warnings, character(0))
  expect_true(fit$converged)
  for (name in c("error_variance", "serial_variance", "range", "intercept_variance",
                 "process_variance", "criterion")) {
    expect_true(is.finite(fit[[name]]), info = name)
  }
  expect_true(all(is.finite(as.matrix(fit$curve))))
  expect_identical(fit$process_variance, vg$process_variance)

  # The curve by its closed form from the returned parameters.
  rho <- exp(-fit$curve$lag / fit$range)
  tau2 <- fit$error_variance
  s2 <- fit$serial_variance
  nu2 <- fit$intercept_variance
  expect_equal(fit$curve$variogram, tau2 + s2 * (1 - rho), tolerance = 1e-12)
  expect_equal(fit$curve$serial_correlation, rho, tolerance = 1e-12)
  expect_equal(fit$curve$correlation, (nu2 + s2 * rho) / (nu2 + s2 + tau2), tolerance = 1e-12)
  expect_identical(fit$curve$lag, vg$max_lag * (0:100) / 100)

  # Cressie (1985) weighted least squares, recomputed in R; stats::optim (BFGS) started at the
  # fit cannot lower it, and stats::optim (Nelder-Mead) from a neutral start finds the same
  # parameters.
  ok <- !is.na(vg$bins$classical)
  b <- vg$bins[ok, ]
  cressie <- function(x) {
    m <- x[1]^2 + x[2]^2 * (1 - exp(-b$lag / exp(x[3])))
    sum(b$pairs * (b$classical / m - 1)^2)
  }
  at <- c(sqrt(tau2), sqrt(s2), log(fit$range))
  expect_equal(fit$criterion, cressie(at), tolerance = 1e-10)
  better <- stats::optim(at, cressie, method = "BFGS", control = list(reltol = 1e-14))
  expect_gt(better$value, fit$criterion * (1 - 1e-10))
  neutral <- stats::optim(c(1, 1, 0), cressie, control = list(reltol = 1e-14, maxit = 5000))
  expect_equal(c(neutral$par[1:2]^2, exp(neutral$par[3])), c(tau2, s2, fit$range),
    tolerance = 1e-4
  )
  expect_identical(fit$bins_used, as.double(sum(ok)))

  gauss <- suppressWarnings(fit_variogram(vg, model = "gaussian", estimate = "robust"))
  expect_equal(gauss$curve$serial_correlation, exp(-(gauss$curve$lag / gauss$range)^2),
    tolerance = 1e-12
  )
  expect_identical(c(gauss$model, gauss$estimate), c("gaussian", "robust"))
  expect_output(print(fit), "variogram fit: exponential")
})

test_that("fit_variogram with a random slope: stats::optim finds the same minimum", {
  # The simulator with a random slope (SD 1.2) and no covariate slopes or dropout; residuals
  # about the known mean 58 - 1.2 t.
  s <- simulate_panel(
    subjects = 800, seed = 21, age_effect = 0, female_effect = 0, diabetes_slope = 0,
    acr_slope = 0, dropout_base = -40, dropout_decline = 0, dialysis_threshold = -1e9
  )
  p <- panel_from_frame(s, "patient", "years", "egfr")
  r <- s$egfr - (58 - 1.2 * s$years)
  vg <- variogram(p, r, max_lag = 6, lag_bins = 15)
  expect_silent(fit <- fit_variogram(vg, random_slope = TRUE))
  expect_true(fit$random_slope)
  expect_false(fit$flagged)
  expect_identical(fit$flags, character(0))
  expect_identical(fit$at_boundary, character(0))

  # Cressie (1985) with the slope term, recomputed in R; stats::optim (Nelder-Mead, then
  # BFGS) from a neutral start finds the same parameters.
  ok <- !is.na(vg$bins$classical)
  b <- vg$bins[ok, ]
  cressie <- function(x) {
    m <- x[1]^2 + x[2]^2 * (1 - exp(-b$lag / exp(x[3]))) + x[4]^2 * b$lag^2 / 2
    sum(b$pairs * (b$classical / m - 1)^2)
  }
  theta <- c(fit$error_variance, fit$serial_variance, fit$range, fit$slope_variance)
  expect_equal(fit$criterion, cressie(c(sqrt(theta[1:2]), log(theta[3]), sqrt(theta[4]))),
    tolerance = 1e-10
  )
  o <- stats::optim(c(2, 3, 0, 1), cressie, control = list(reltol = 1e-15, maxit = 20000))
  o <- stats::optim(o$par, cressie, method = "BFGS", control = list(reltol = 1e-15))
  expect_equal(c(o$par[1:2]^2, exp(o$par[3]), o$par[4]^2), theta, tolerance = 1e-4)

  # nu^2 at the weighted mean visit time and the curves, closed forms.
  nu2 <- vg$process_variance - (theta[1] + theta[2] + theta[4] * vg$time_variance)
  expect_equal(fit$intercept_variance, max(nu2, 0), tolerance = 1e-12)
  expect_identical(fit$intercept_time, vg$time_mean)
  u <- fit$curve$lag
  expect_equal(fit$curve$variogram, theta[1] + theta[2] * (1 - exp(-u / theta[3])) +
    theta[4] * u^2 / 2, tolerance = 1e-12)
  expect_true(all(is.na(fit$curve$correlation)))
  expect_identical(fit$curve_correlation_kind, "not_identified")
  expect_output(print(fit), "slope variance \\(omega\\^2\\)")

  # Both fits side by side: the same as fitted one by one, and the documented rule.
  cmp <- compare_variogram_fits(vg)
  expect_s3_class(cmp, "trajweave_variogram_comparison")
  expect_identical(cmp$random_slope, fit)
  expect_identical(cmp$stationary, suppressWarnings(fit_variogram(vg)))
  expect_equal(cmp$criterion_reduction,
    1 - cmp$random_slope$criterion / cmp$stationary$criterion,
    tolerance = 1e-15
  )
  expected <- if (!fit$flagged && cmp$criterion_reduction >= 0.5) {
    "random_slope"
  } else if (!cmp$stationary$flagged) {
    "stationary"
  } else {
    "neither"
  }
  expect_identical(cmp$preferred, expected)
  expect_output(print(cmp), "preferred: ")
})

test_that("a variogram saved and restored fits the same", {
  cw <- chick_residuals()
  p <- panel_from_frame(cw, "id", "Time", "weight")
  vg <- variogram(p, cw$r, lag_bins = 10, sample = 40, smoother = smoother_lowess())
  path <- tempfile(fileext = ".rds")
  on.exit(unlink(path))
  saveRDS(vg, path)
  expect_identical(
    suppressWarnings(fit_variogram(readRDS(path))), suppressWarnings(fit_variogram(vg))
  )
})

test_that("bad input gives classed conditions with the core's messages", {
  d <- correlation_frame()
  p <- panel(d$id, d$t, d$t)
  expect_tw_error(
    binned_correlation(p, d$r[-1], edges = c(0, 1, 2)),
    "length_mismatch",
    paste0(
      "`residuals` has ", nrow(d) - 1, " values but `the panel's rows` has ", nrow(d),
      ": give one value per row in each"
    )
  )
  bad <- d$r
  bad[4] <- NaN
  expect_tw_error(
    variogram(p, bad),
    "non_finite",
    "`residuals` is not finite at row 4 (value NaN): remove the row or give a finite value"
  )
  expect_tw_error(
    variogram(p, d$r, lag_kind = "quantile"),
    "invalid_option",
    "`lag_kind` = \"quantile\" is not allowed: \"equal_width\" or \"equal_count\""
  )
  expect_tw_error(
    variogram(p, d$r, sample = "many"),
    "invalid_option",
    "`sample` = \"many\" is not allowed: \"all\" or a whole number of pairs"
  )
  expect_tw_error(
    binned_correlation(p, d$r, bins = 4, edges = c(0, 1, 2)),
    "invalid_option",
    "`bins` = given with edges or a schedule is not allowed: give one of: bins, edges, or a schedule with a tolerance"
  )
  expect_tw_error(
    fit_variogram(list(bins = 1)),
    "invalid_option",
    "`vg` = a list of length 1 is not allowed: pass a variogram made by variogram()"
  )
  vg <- variogram(p, d$r, min_pairs = 1)
  edited <- vg
  edited$bins <- edited$bins[-1, c("lag", "pairs")]
  expect_tw_error(
    fit_variogram(edited),
    "invalid_option",
    "`vg` = an object of class \"trajweave_variogram\" is not allowed: pass a variogram made by variogram(), unchanged in shape"
  )
  expect_tw_error(
    fit_variogram(vg, random_slope = NA),
    "invalid_option",
    "`random_slope` = NA is not allowed: TRUE or FALSE"
  )
  expect_tw_error(
    fit_variogram(vg, random_slope = c(TRUE, FALSE)),
    "invalid_option",
    "`random_slope` = a logical vector of length 2 is not allowed: TRUE or FALSE"
  )
  three <- variogram(p, d$r, lag_edges = c(0, 1.5, 3, 4.5), min_pairs = 1)
  expect_tw_error(
    compare_variogram_fits(three),
    "too_few",
    paste0(
      "too few lag bins with an estimate for a variogram model fit with a random slope ",
      "(4 parameters): need at least 4, found 3"
    )
  )
  expect_tw_error(
    fit_variogram(vg, model = "spherical"),
    "invalid_option",
    "`model` = \"spherical\" is not allowed: \"exponential\" or \"gaussian\""
  )
})

test_that("text ids and dropped rows: residuals follow the caller's rows, the sample its ids", {
  cw <- chick_residuals()
  cw$name <- paste0("chick-", cw$id)
  cw$y <- cw$weight
  cw$y[c(3, 100)] <- NA # dropped rows; their residuals are not read
  p <- panel_from_frame(cw, "name", "Time", "y", missing = "drop")
  r <- cw$r
  r[c(3, 100)] <- NaN
  kept <- cw[-c(3, 100), ]
  vg <- variogram(p, r, lag_bins = 10, min_pairs = 1, sample = "all")
  expect_type(vg$sample$subject, "character")
  expect_true(all(vg$sample$subject %in% kept$name))
  # The process variance over the kept rows, by brute force in base R.
  between <- outer(kept$id, kept$id, "!=") & upper.tri(diag(nrow(kept)))
  expect_equal(vg$process_variance, mean((outer(kept$r, kept$r, "-")^2 / 2)[between]),
    tolerance = 1e-12
  )
  # A variogram carrying text ids refits the same without its sample.
  without <- vg
  without$sample <- NULL
  expect_identical(suppressWarnings(fit_variogram(vg)), suppressWarnings(fit_variogram(without)))
  res <- binned_correlation(p, r, schedule = c(0, 10, 21), tolerance = 0.5)
  wide <- sapply(c(0, 10, 21), function(day) {
    on_day <- kept[kept$Time == day, ]
    on_day$r[match(unique(kept$id), on_day$id)]
  })
  r_base <- stats::cor(wide, use = "pairwise.complete.obs") # stats::cor
  expect_equal(unname(res$correlation), r_base, tolerance = TOL_CORRELATION)
})
