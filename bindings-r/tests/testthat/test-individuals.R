# Individual variation through R: residuals, rankings, picks, samples and unusual subjects,
# each against base R computed here, and every error path from R arguments.

# Generated data (no real data): 30 subjects, 3 to 7 visits at times in [0, 2], a quadratic
# trend plus noise; rows shuffled so the caller's row order differs from the panel's.
individual_data <- function() {
  set.seed(20260315)
  visits <- sample(3:7, 30, replace = TRUE)
  id <- rep(seq_len(30) * 10L, visits)
  t <- round(runif(length(id), 0, 2), 3)
  y <- 5 + 2 * t - 0.7 * t^2 + rnorm(length(id), sd = 0.4)
  shuffle <- sample(length(id))
  data.frame(id = id[shuffle], t = t[shuffle], y = y[shuffle])
}

test_that("polynomial residuals equal lm(y ~ poly(t, d, raw = TRUE)), in the caller's order", {
  d <- individual_data()
  p <- panel(d$id, d$t, d$y)
  for (degree in 0:3) {
    r <- panel_residuals(p, residuals_polynomial(degree))
    expect_s3_class(r, "trajweave_residuals")
    # Reference: stats::lm on raw powers of t.
    fit <- if (degree == 0) lm(y ~ 1, data = d) else lm(y ~ poly(t, degree, raw = TRUE), data = d)
    tol <- TOL_RESIDUALS * sd(d$y)
    expect_lt(max(abs(r$residuals - unname(residuals(fit)))), tol)
    expect_lt(max(abs(r$fitted - unname(fitted(fit)))), tol)
    expect_equal(r$coefficients, unname(coef(fit)), tolerance = 1e-8)
    expect_identical(r$model, paste("polynomial of degree", degree))
    expect_null(r$groups)
  }
})

test_that("dropped rows give NA residuals and the rest are unchanged", {
  d <- individual_data()
  d$y[c(4, 9)] <- NA
  p <- panel(d$id, d$t, d$y, missing = "drop")
  r <- panel_residuals(p, residuals_polynomial(1))
  expect_identical(which(is.na(r$residuals)), c(4L, 9L))
  expect_identical(which(is.na(r$fitted)), c(4L, 9L))
  kept <- d[!is.na(d$y), ]
  fit <- lm(y ~ t, data = kept)
  expect_lt(max(abs(r$residuals[!is.na(d$y)] - unname(residuals(fit)))), TOL_RESIDUALS * sd(kept$y))
})

test_that("residuals from a curve, a mean curve and per group are response minus the fit", {
  d <- individual_data()
  d$arm <- as.numeric(d$id %% 20 == 0)
  p <- panel(d$id, d$t, d$y, covariates = list(arm = d$arm))
  k <- smoother_kernel(bandwidth = 0.4)
  m <- mean_curve(p, k)
  from_mean <- panel_residuals(p, m)
  from_curve <- panel_residuals(p, m$curve)
  expect_identical(from_mean$residuals, from_curve$residuals)
  expect_identical(from_mean$model, "curve (kernel)")
  # The core's rule for a curve, through predict().
  expect_equal(from_curve$fitted, predict(m$curve, d$t), tolerance = 1e-14)
  expect_equal(from_curve$residuals, d$y - from_curve$fitted, tolerance = 1e-14)

  g <- panel_residuals(p, residuals_by_group("arm", k))
  expect_identical(g$model, "kernel by arm")
  expect_identical(vapply(g$groups, `[[`, numeric(1), "level"), c(0, 1))
  expect_identical(vapply(g$groups, `[[`, numeric(1), "rows"), as.double(table(d$arm)))
  for (grp in g$groups) {
    rows <- d$arm == grp$level
    expect_s3_class(grp$curve, "trajweave_curve")
    expect_equal(g$fitted[rows], predict(grp$curve, d$t[rows]), tolerance = 1e-14)
  }
})

# Residuals with many exact ties and 3 visits per subject, so base R's median is exact.
tied_data <- function() {
  set.seed(7)
  id <- rep(sample(100:139), each = 3)
  t <- rep(c(0, 1, 2), 40)
  r <- sample(-3:3, 120, replace = TRUE)
  shuffle <- sample(120)
  data.frame(id = id[shuffle], t = t[shuffle], r = as.double(r[shuffle]))
}

test_that("rank by median follows tapply(r, id, median), ties by id", {
  d <- tied_data()
  p <- panel(d$id, d$t, d$r)
  ranking <- rank_subjects(p, d$r)
  expect_s3_class(ranking, "trajweave_ranking")
  med <- tapply(d$r, d$id, median) # names sorted by id
  ids <- as.numeric(names(med))
  expected <- order(med, ids)
  expect_identical(ranking$subjects, ids[expected])
  expect_identical(ranking$values, unname(as.vector(med))[expected])
  expect_identical(ranking$ranks, as.double(1:40))
  expect_identical(ranking$observations, rep(3, 40))
  expect_identical(ranking$summary, "median")
  expect_null(ranking$p)
  expect_identical(ranking$unranked, numeric(0))
  frame <- as.data.frame(ranking)
  expect_identical(names(frame), c("subject", "rank", "value", "observations"))
  expect_identical(frame$subject, ranking$subjects)
})

test_that("rank by a quantile and by the mean follow quantile() and mean()", {
  d <- tied_data()
  p <- panel(d$id, d$t, d$r)
  q <- rank_subjects(p, d$r, "quantile", p = 0.25)
  ref <- tapply(d$r, d$id, quantile, probs = 0.25, names = FALSE)
  expect_equal(q$values, sort(unname(as.vector(ref))), tolerance = TOL_QUANTILE)
  expect_identical(q$p, 0.25)
  m <- rank_subjects(p, d$r, "mean")
  expect_equal(m$values, sort(unname(as.vector(tapply(d$r, d$id, mean)))), tolerance = 1e-14)
})

test_that("a slope is undefined for a subject seen at one time: it is listed as unranked", {
  p <- panel(c("a", "a", "b", "b", "c"), c(0, 1, 0, 2, 1), c(1, 2, 3, 5, 2))
  ranking <- rank_subjects(p, c(0, 1, 0, 4, 1), "slope")
  expect_identical(ranking$subjects, c("a", "b"))
  expect_identical(ranking$values, c(1, 2))
  expect_identical(ranking$unranked, "c")
})

test_that("picks are at rank 1 + floor(q (m - 1) + 1/2) with their trajectories", {
  d <- tied_data()
  p <- panel(d$id, d$t, d$r)
  ranking <- rank_subjects(p, d$r)
  qs <- c(0, 0.1, 0.25, 0.5, 0.9, 1)
  picks <- pick_subjects(p, d$r, ranking, qs)
  expect_s3_class(picks, "trajweave_picks")
  m <- length(ranking$subjects)
  rank <- 1 + floor(qs * (m - 1) + 1 / 2)
  expect_identical(picks$picks$quantile, qs)
  expect_identical(picks$picks$rank, rank)
  expect_identical(picks$picks$subject, ranking$subjects[rank])
  expect_identical(picks$picks$value, ranking$values[rank])
  for (k in seq_along(qs)) {
    rows <- d[d$id == picks$picks$subject[k], ]
    rows <- rows[order(rows$t), ]
    tr <- picks$trajectories[[k]]
    expect_identical(names(tr), c("time", "response", "residual"))
    expect_identical(tr$time, rows$t)
    expect_identical(tr$response, rows$r)
    expect_identical(tr$residual, rows$r)
  }
})

test_that("the same seed gives the same sample; samples are subjects in id order", {
  d <- individual_data()
  p <- panel(d$id, d$t, d$y)
  for (strategy in c("random", "spread")) {
    a <- sample_subjects(p, 6, seed = 11, strategy = strategy)
    expect_s3_class(a, "trajweave_sample")
    expect_identical(a, sample_subjects(p, 6, seed = 11, strategy = strategy))
    expect_length(a$subjects, 6)
    expect_true(all(a$subjects %in% d$id))
    expect_identical(a$subjects, sort(a$subjects))
    expect_identical(a$strategy, strategy)
    expect_identical(a$seed, 11)
  }
  seeds <- lapply(1:5, function(s) sample_subjects(p, 6, seed = s)$subjects)
  expect_gt(length(unique(seeds)), 1)
  r <- panel_residuals(p, residuals_polynomial(2))
  ranking <- rank_subjects(p, r)
  s <- sample_subjects(p, 5, seed = 3, strategy = "spread", ranking = ranking)
  expect_identical(s, sample_subjects(p, 5, seed = 3, strategy = "spread", ranking = ranking))
})

test_that("unusual subjects and observations: the planted outliers, robust z by median and MAD", {
  d <- individual_data()
  d$y[d$id == 70] <- d$y[d$id == 70] + 8 # a subject far above the rest
  spike <- which(d$id == 150)[1]
  d$y[spike] <- d$y[spike] - 6 # one wild observation
  p <- panel(d$id, d$t, d$y)
  r <- panel_residuals(p, residuals_polynomial(2))
  ranking <- rank_subjects(p, r)
  u <- unusual_subjects(p, r, ranking)
  expect_s3_class(u, "trajweave_unusual")
  # Reference: stats::median and stats::mad (normal-consistent constant to 16 digits).
  expect_equal(u$center, median(ranking$values), tolerance = 1e-14)
  expect_equal(u$scale, mad(ranking$values, constant = 1.482602218505602), tolerance = 1e-14)
  z <- (ranking$values - u$center) / u$scale
  flagged <- ranking$subjects[abs(z) > 3.5]
  expect_setequal(u$subjects$subject, flagged)
  expect_true(70 %in% u$subjects$subject)
  expect_identical(names(u$observations),
    c("subject", "time", "response", "residual", "standardised", "row"))
  expect_true(spike %in% u$observations$row)
  hit <- u$observations[u$observations$row == spike, ]
  expect_identical(hit$subject, 150)
  expect_identical(hit$response, d$y[spike])
  expect_identical(hit$residual, r$residuals[spike])
  none <- unusual_subjects(p, r, ranking, subject_threshold = 1e6, observation_threshold = 1e6)
  expect_identical(nrow(none$subjects), 0L)
  expect_identical(nrow(none$observations), 0L)
})

# --- errors ---------------------------------------------------------------------------------

small_panel <- function() {
  panel(c(1L, 1L, 2L, 2L, 3L, 3L), c(0, 1, 0, 1, 0, 1), c(1, 2, 3, 5, 2, 2),
    covariates = list(arm = c(0, 0, 1, 1, 0, 0))
  )
}

test_that("mean-model arguments are refused with their class and message", {
  p <- small_panel()
  expect_tw_error(panel_residuals(list(), residuals_polynomial(1)), "invalid_option",
    "`panel` = a list of length 0 is not allowed: build one with panel() or panel_from_frame()")
  expect_tw_error(panel_residuals(p, 3), "invalid_option", paste(
    "`mean` = 3 is not allowed: give a curve (fit_smoother()), a mean curve (mean_curve()),",
    "residuals_polynomial(degree) or residuals_by_group(covariate, smoother)"
  ))
  expect_tw_error(residuals_polynomial("a"), "invalid_option",
    "`degree` = \"a\" is not allowed: give one number")
  expect_tw_error(residuals_polynomial(1.5), "invalid_option",
    "`degree` = 1.5 is not allowed: a polynomial degree from 0 to 3")
  expect_tw_error(residuals_polynomial(4), "invalid_option",
    "`degree` = 4 is not allowed: a polynomial degree from 0 to 3")
  expect_tw_error(residuals_by_group(1, smoother_kernel()), "invalid_option",
    "`covariate` = 1 is not allowed: give one covariate name as a string")
  expect_tw_error(residuals_by_group("arm", "kernel"), "invalid_option", paste0(
    "`smoother` = \"kernel\" is not allowed: build one with smoother_lowess(), ",
    "smoother_kernel(), smoother_spline() or smoother_super()"
  ))
  expect_tw_error(panel_residuals(p, residuals_by_group("sex", smoother_kernel())),
    "invalid_option",
    "`covariate` = \"sex\" is not allowed: use one of the panel's covariates: \"arm\"")
  expect_tw_error(panel_residuals(panel(1:2, c(0, 0), c(1, 2)), residuals_polynomial(1)),
    "too_few",
    "too few distinct times for a polynomial of degree 1: need at least 2, found 1")
  bent <- fit_smoother(smoother_kernel(bandwidth = 1), c(0, 1, 2), c(1, 2, 3))
  bent$x <- rev(bent$x)
  expect_tw_error(panel_residuals(p, bent), "invalid_option", paste(
    "`mean` = a curve whose points were changed is not allowed: `x` must be finite and",
    "increasing without ties, with one `fitted` value each; use a curve from fit_smoother()"
  ))
})

test_that("ranking arguments are refused with their class and message", {
  p <- small_panel()
  r <- panel_residuals(p, residuals_polynomial(1))
  summaries <- "use \"median\", \"mean\", \"quantile\" (with p), \"rms\", \"max_abs\" or \"slope\""
  expect_tw_error(rank_subjects(p, "a"), "invalid_option",
    "`residuals` = \"a\" is not allowed: give numbers")
  expect_tw_error(rank_subjects(p, r$residuals[-1]), "length_mismatch",
    "`residuals` has 5 values but `the panel's rows` has 6: give one value per row in each")
  expect_tw_error(rank_subjects(p, replace(r$residuals, 3, NA)), "non_finite",
    "`residuals` is not finite at row 3 (value NaN): remove the row or give a finite value")
  expect_tw_error(rank_subjects(p, r, "mode"), "invalid_option",
    paste0("`summary` = \"mode\" is not allowed: ", summaries))
  expect_tw_error(rank_subjects(p, r, 1), "invalid_option",
    paste0("`summary` = 1 is not allowed: ", summaries))
  expect_tw_error(rank_subjects(p, r, "median", p = 0.5), "invalid_option",
    "`p` = 0.5 is not allowed: p is used only by the \"quantile\" summary, not by \"median\"")
  expect_tw_error(rank_subjects(p, r, "quantile"), "invalid_option",
    "`p` = none is not allowed: the \"quantile\" summary needs p, a probability in [0, 1]")
  expect_tw_error(rank_subjects(p, r, "quantile", p = "a"), "invalid_option",
    "`p` = \"a\" is not allowed: give one number")
  expect_tw_error(rank_subjects(p, r, "quantile", p = 2), "invalid_option",
    "`p` = 2 is not allowed: a probability in [0, 1]")
})

test_that("pick, sample and unusual arguments are refused with their class and message", {
  p <- small_panel()
  r <- panel_residuals(p, residuals_polynomial(1))
  ranking <- rank_subjects(p, r)
  other <- rank_subjects(panel(1:2, c(0, 0), c(1, 2)), c(0.5, 1))
  foreign <- "`ranking` = a ranking of other subjects is not allowed: pass the ranking rank_subjects made from this panel"
  expect_tw_error(pick_subjects(p, r, list(), 0.5), "invalid_option",
    "`ranking` = a list of length 0 is not allowed: pass a ranking made by rank_subjects()")
  expect_tw_error(pick_subjects(p, r, other, 0.5), "invalid_option", foreign)
  expect_tw_error(pick_subjects(p, r, ranking, "a"), "invalid_option",
    "`quantiles` = \"a\" is not allowed: give numbers")
  expect_tw_error(pick_subjects(p, r, ranking, 1.5), "invalid_option",
    "`quantiles` = 1.5 is not allowed: quantiles in [0, 1]")
  expect_tw_error(pick_subjects(p, r, ranking, numeric()), "invalid_option",
    "`quantiles` = none is not allowed: give at least one quantile in [0, 1]")
  lost <- ranking
  lost$pointer <- NULL
  expect_tw_error(pick_subjects(p, r, lost, 0.5), "invalid_option", paste(
    "`ranking` = an empty or foreign pointer is not allowed: pass a ranking made by",
    "rank_subjects() in this R session; rankings do not survive saveRDS() or a restart"
  ))

  expect_tw_error(sample_subjects(p, 0), "invalid_option",
    "`k` = 0 is not allowed: a number of subjects of at least 1")
  expect_tw_error(sample_subjects(p, 2.5), "invalid_option",
    "`k` = 2.5 is not allowed: a number of subjects of at least 1")
  expect_tw_error(sample_subjects(p, "2"), "invalid_option",
    "`k` = \"2\" is not allowed: give one number")
  expect_tw_error(sample_subjects(p, 4), "too_few",
    "too few subjects for a sample of k = 4: need at least 4, found 3")
  expect_tw_error(sample_subjects(p, 2, strategy = "even"), "invalid_option",
    "`strategy` = \"even\" is not allowed: use \"random\" or \"spread\"")
  expect_tw_error(sample_subjects(p, 2, strategy = 1), "invalid_option",
    "`strategy` = 1 is not allowed: use \"random\" or \"spread\"")
  expect_tw_error(sample_subjects(p, 2, seed = -1), "invalid_option",
    "`seed` = -1 is not allowed: a whole number from 0 to 2^53 - 1")
  expect_tw_error(sample_subjects(p, 2, ranking = "x"), "invalid_option",
    "`ranking` = \"x\" is not allowed: pass a ranking made by rank_subjects()")
  expect_tw_error(sample_subjects(p, 1, ranking = other), "invalid_option", foreign)

  expect_tw_error(unusual_subjects(p, r, ranking, subject_threshold = "a"), "invalid_option",
    "`subject_threshold` = \"a\" is not allowed: give one number")
  expect_tw_error(unusual_subjects(p, r, ranking, observation_threshold = 0), "invalid_option",
    "`observation_threshold` = 0 is not allowed: a threshold on |robust z| > 0 (the default is 3.5)")
  expect_tw_error(unusual_subjects(p, r, other), "invalid_option", foreign)
  expect_tw_error(unusual_subjects(p, r$residuals[1:2], ranking), "length_mismatch",
    "`residuals` has 2 values but `the panel's rows` has 6: give one value per row in each")
})
