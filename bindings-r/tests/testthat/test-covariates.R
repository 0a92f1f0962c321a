# Covariate effects and dropout through R: equal-count bands, conditional trends, group and
# dropout curves, the trajectory grid; each against base R computed here, and every argument
# error.

test_that("equal_count_bands on quakes$depth has the ends of graphics::co.intervals", {
  x <- datasets::quakes$depth
  b <- equal_count_bands(x, 6, 0.5)
  expect_s3_class(b, "trajweave_bands")
  ref <- graphics::co.intervals(x, 6, 0.5)
  expect_identical(b$bands$lower, ref[, 1])
  expect_identical(b$bands$upper, ref[, 2])
  counts <- vapply(seq_len(nrow(ref)), function(j) {
    as.double(sum(x >= ref[j, 1] & x <= ref[j, 2]))
  }, numeric(1))
  expect_identical(b$bands$count, counts)
  expect_identical(b$number, 6)
  expect_identical(b$overlap, 0.5)
  expect_identical(b$counted, "values")
  expect_identical(as.data.frame(b), b$bands)
})

test_that("covariate_bands of a time-fixed covariate counts subjects", {
  cw <- chick_frame()
  p <- panel_from_frame(cw, "id", "Time", "weight", covariates = c("diet", "birth"))
  b <- covariate_bands(p, "birth", 3, 0.25)
  expect_identical(b$counted, "subjects")
  birth <- unname(tapply(cw$birth, cw$id, `[`, 1))
  ref <- graphics::co.intervals(birth, 3, 0.25)
  expect_identical(b$bands$lower, ref[, 1])
  expect_identical(b$bands$upper, ref[, 2])
  expect_identical(b$bands$count, as.double(colSums(outer(birth, ref[, 1], ">=") &
    outer(birth, ref[, 2], "<="))))
})

test_that("conditional_trends: each band's line equals lm(weight ~ Time) on its rows", {
  cw <- chick_frame()
  p <- panel_from_frame(cw, "id", "Time", "weight", covariates = c("diet", "birth"))
  b <- covariate_bands(p, "birth", 3, 0.25)
  k <- smoother_kernel(bandwidth = 3)
  ct <- conditional_trends(p, "birth", b, k)
  expect_s3_class(ct, "trajweave_conditional_trends")
  expect_identical(nrow(ct$trends), nrow(b$bands))
  expect_identical(dim(ct$fitted), c(length(ct$at), nrow(b$bands)))
  expect_identical(ct$se_kind, "CR1 cluster-robust by subject")
  for (j in seq_len(nrow(b$bands))) {
    rows <- cw$birth >= b$bands$lower[j] & cw$birth <= b$bands$upper[j]
    sub <- cw[rows, ]
    fit <- coef(lm(weight ~ Time, data = sub))
    expect_lt(abs(ct$trends$slope[j] - fit[[2]]), TOL_TRENDS * abs(fit[[2]]))
    expect_lt(abs(ct$trends$intercept[j] - fit[[1]]), TOL_TRENDS * abs(fit[[1]]))
    expect_identical(ct$trends$observations[j], as.double(nrow(sub)))
    expect_identical(ct$trends$subjects[j], as.double(length(unique(sub$id))))
    expect_true(ct$trends$slope_se[j] > 0)
    # The smooth is the band's own fit, NA outside its observed time range.
    own <- fit_smoother(k, sub$Time, sub$weight)
    inside <- ct$at >= min(sub$Time) & ct$at <= max(sub$Time)
    expect_equal(ct$fitted[inside, j], predict(own, ct$at[inside]), tolerance = TOL_GROUPS)
    expect_true(all(is.na(ct$fitted[!inside, j])))
  }
})

test_that("group_curves on ChickWeight by diet: counts of table(), fits of each diet alone", {
  cw <- chick_frame()
  p <- panel_from_frame(cw, "id", "Time", "weight", covariates = "diet")
  k <- smoother_kernel(bandwidth = 2)
  at <- seq(0, 21, by = 1.5)
  g <- group_curves(p, "diet", k, at = at)
  expect_s3_class(g, "trajweave_group_curves")
  chicks <- table(tapply(cw$diet, cw$id, `[`, 1))
  expect_identical(g$groups$level, as.double(names(chicks)))
  expect_identical(g$groups$label, names(chicks))
  expect_identical(g$groups$subjects, as.double(chicks))
  expect_identical(g$groups$observations, as.double(table(cw$diet)))
  expect_identical(g$at, at)
  expect_identical(colnames(g$fitted), names(chicks))
  expect_identical(names(g$curves), names(chicks))
  expect_identical(g$left_out, 0)
  for (level in names(chicks)) {
    sub <- cw[cw$diet == as.numeric(level), ]
    own <- fit_smoother(k, sub$Time, sub$weight)
    curve <- g$curves[[level]]
    expect_s3_class(curve, "trajweave_curve")
    expect_identical(curve$x, own$x)
    expect_equal(curve$fitted, own$fitted, tolerance = TOL_GROUPS)
    expect_equal(g$fitted[, level], predict(own, at), tolerance = TOL_GROUPS)
  }
})

test_that("dropout_curves groups chicks by the bin of their last visit", {
  cw <- chick_frame()
  p <- panel_from_frame(cw, "id", "Time", "weight")
  edges <- c(0, 8, 16, 21)
  d <- dropout_curves(p, smoother_kernel(bandwidth = 2), edges = edges)
  last <- tapply(cw$Time, cw$id, max)
  bins <- table(findInterval(last, edges, rightmost.closed = TRUE))
  expect_identical(d$by, "dropout")
  expect_identical(d$groups$subjects, as.double(bins))
  expect_true(all(is.na(d$groups$level)))
  expect_identical(d$left_out, 0)
})

test_that("trajectory_grid cells are tapply(values, list(id, bin), mean), rows by order_by", {
  set.seed(99)
  id <- rep(c(5L, 2L, 9L, 7L), c(6, 4, 5, 3))
  t <- round(runif(length(id), 0, 3), 2)
  y <- round(rnorm(length(id)), 3)
  shuffle <- sample(length(id))
  id <- id[shuffle]
  t <- t[shuffle]
  y <- y[shuffle]
  p <- panel(id, t, y)
  edges <- c(0, 1, 2, 3)
  order_by <- c(3, 1, 3, 0) # subjects 2, 5, 7, 9 in sorted-id order
  g <- trajectory_grid(p, y, order_by, edges = edges)
  expect_s3_class(g, "trajweave_trajectory_grid")
  ids <- sort(unique(id))
  rows <- ids[order(order_by, ids)]
  expect_identical(g$subjects, as.double(rows))
  expect_identical(g$order_values, sort(order_by))
  bin <- factor(findInterval(t, edges, rightmost.closed = TRUE), levels = 1:3)
  ref <- tapply(y, list(id, bin), mean)
  ref <- ref[as.character(rows), ]
  expect_identical(dim(g$values), c(4L, 3L))
  expect_identical(rownames(g$values), as.character(rows))
  expect_identical(colnames(g$values), g$bins)
  expect_equal(unname(g$values), unname(ref), tolerance = 1e-14)
  counts <- table(factor(id, levels = rows), bin)
  expect_identical(unname(g$counts), unname(matrix(as.double(counts), 4, 3)))
})

# --- errors ---------------------------------------------------------------------------------

test_that("band arguments are refused with their class and message", {
  p <- panel(c(1L, 1L, 2L, 2L, 3L, 3L), c(0, 1, 0, 1, 0, 1), c(1, 2, 3, 5, 2, 2),
    covariates = list(arm = c(0, 0, 1, 1, 0, 0))
  )
  expect_tw_error(equal_count_bands("a"), "invalid_option",
    "`values` = \"a\" is not allowed: give numbers")
  expect_tw_error(equal_count_bands(1:10, 0), "invalid_option",
    "`number` = 0 is not allowed: give a whole number of intervals >= 1")
  expect_tw_error(equal_count_bands(1:10, 2.5), "invalid_option",
    "`number` = 2.5 is not allowed: give a whole number of intervals >= 1")
  expect_tw_error(equal_count_bands(1:10, 2, 1), "invalid_option",
    "`overlap` = 1 is not allowed: give a fraction in [0, 1), e.g. 0.5")
  expect_tw_error(equal_count_bands(1:10, 2, "a"), "invalid_option",
    "`overlap` = \"a\" is not allowed: give one number")
  expect_tw_error(equal_count_bands(c(1, NA, 3), 2), "non_finite",
    "`values` is not finite at row 2 (value NaN): remove the row or give a finite value")
  expect_tw_error(equal_count_bands(1:3, 4), "too_few",
    "too few values for 4 equal-count intervals: need at least 4, found 3")
  expect_tw_error(covariate_bands(p, 1), "invalid_option",
    "`covariate` = 1 is not allowed: give one covariate name as a string")
  expect_tw_error(covariate_bands(p, "sex", 2), "invalid_option",
    "`covariate` = \"sex\" is not allowed: use one of the panel's covariates: \"arm\"")
  expect_tw_error(covariate_bands(list(), "arm"), "invalid_option",
    "`panel` = a list of length 0 is not allowed: build one with panel() or panel_from_frame()")
})

test_that("trend, curve and grid arguments are refused with their class and message", {
  p <- panel(c(1L, 1L, 2L, 2L, 3L, 3L), c(0, 1, 0, 1, 0, 1), c(1, 2, 3, 5, 2, 2),
    covariates = list(arm = c(0, 0, 1, 1, 0, 0))
  )
  k <- smoother_kernel()
  b <- covariate_bands(p, "arm", 1, 0)
  expect_tw_error(conditional_trends(p, "arm", list(), k), "invalid_option",
    "`bands` = a list of length 0 is not allowed: build them with covariate_bands() or equal_count_bands()")
  expect_tw_error(conditional_trends(p, 2, b, k), "invalid_option",
    "`by` = 2 is not allowed: give one covariate name as a string")
  expect_tw_error(conditional_trends(p, "arm", b, "kernel"), "invalid_option", paste0(
    "`smoother` = \"kernel\" is not allowed: build one with smoother_lowess(), ",
    "smoother_kernel(), smoother_spline() or smoother_super()"
  ))
  expect_tw_error(conditional_trends(p, "arm", b, k, at = "a"), "invalid_option",
    "`at` = \"a\" is not allowed: give numbers")
  edited <- b
  edited$bands$count <- "x"
  expect_tw_error(conditional_trends(p, "arm", edited, k), "invalid_option", paste(
    "`bands` = a list of length 4 is not allowed: pass bands made by covariate_bands() or",
    "equal_count_bands(), unchanged in shape"
  ))
  expect_tw_error(group_curves(p, 1, k), "invalid_option",
    "`covariate` = 1 is not allowed: give one covariate name as a string")
  expect_tw_error(group_curves(p, "sex", k), "invalid_option",
    "`covariate` = \"sex\" is not allowed: use one of the panel's covariates: \"arm\"")
  expect_tw_error(group_curves(p, "arm", k, at = c(0, NaN)), "non_finite",
    "`at` is not finite at row 2 (value NaN): remove the row or give a finite value")
  not_given <- "`edges` = not given is not allowed: give bin edges, or a schedule with a tolerance"
  expect_tw_error(dropout_curves(p, k), "invalid_option", not_given)
  expect_tw_error(dropout_curves(p, k, edges = "a"), "invalid_option",
    "`edges` = \"a\" is not allowed: give numbers")
  expect_tw_error(dropout_curves(p, k, edges = c(5, 6)), "empty", paste(
    "no rows left in any dropout cohort: no subject's last visit falls in a bin of the grid;",
    "widen the grid"
  ))
  expect_tw_error(trajectory_grid(p, 1:6, 1:3), "invalid_option", not_given)
  expect_tw_error(trajectory_grid(p, 1:5, 1:3, edges = c(0, 1)), "length_mismatch",
    "`values` has 5 values but `the panel's rows` has 6: give one value per row in each")
  expect_tw_error(trajectory_grid(p, 1:6, 1:2, edges = c(0, 1)), "length_mismatch",
    "`order_by` has 2 values but `the panel's subjects` has 3: give one value per row in each")
  expect_tw_error(trajectory_grid(p, 1:6, c("a", "b", "c"), edges = c(0, 1)), "invalid_option",
    "`order_by` = a character vector of length 3 is not allowed: give numbers")
  expect_tw_error(trajectory_grid(p, 1:6, c(1, NA, 3), edges = c(0, 1)), "non_finite",
    "`order_by` is not finite at row 2 (value NaN): remove the row or give a finite value")
})
