# simulate_panel(): the core's seeded simulator through R.

columns <- c("patient", "years", "egfr", "age", "female", "diabetes", "acr")

test_that("the same seed gives the identical data.frame, another seed a different one", {
  a <- simulate_panel(subjects = 40, seed = 7)
  b <- simulate_panel(subjects = 40, seed = 7)
  c <- simulate_panel(subjects = 40, seed = 8)
  expect_s3_class(a, "data.frame")
  expect_identical(names(a), columns)
  expect_identical(a, b)
  expect_false(identical(a$egfr, c$egfr))
  for (column in columns) expect_type(a[[column]], "double")
})

test_that("rows are sorted by patient, then years", {
  s <- simulate_panel(subjects = 60)
  expect_identical(order(s$patient, s$years), seq_len(nrow(s)))
  expect_false(anyNA(s))
})

test_that("subjects = 10 gives patient ids 1 to 10", {
  s <- simulate_panel(subjects = 10)
  expect_identical(unique(s$patient), as.double(1:10))
  # Integer arguments are as good as doubles.
  expect_identical(simulate_panel(subjects = 10L, seed = 2026L), s)
})

test_that("other options are passed by name", {
  quiet <- simulate_panel(subjects = 20, noise_sd = 0, serial_sd = 0)
  expect_identical(nrow(quiet) > 0, TRUE)
  expect_false(identical(quiet$egfr, simulate_panel(subjects = 20)$egfr))
})

test_that("option errors are classed with the core's messages", {
  expect_tw_error(
    simulate_panel(subjects = 0),
    "invalid_option", "`subjects` = 0 is not allowed: a whole number from 1 to 100000000"
  )
  expect_tw_error(
    simulate_panel(noise_sd = -1),
    "invalid_option", "`noise_sd` = -1 is not allowed: a number >= 0"
  )
  err <- expect_error(simulate_panel(noise = 1), class = "trajweave_invalid_option")
  expect_match(conditionMessage(err), "^`simulate option` = \"noise\" is not allowed: use one of: subjects, seed, ")
  expect_tw_error(
    simulate_panel(noise_sd = "a"),
    "invalid_option", "`noise_sd` = \"a\" is not allowed: give one number"
  )
  expect_tw_error(
    simulate_panel(seed = c(1, 2)),
    "invalid_option", "`seed` = a numeric vector of length 2 is not allowed: give one number"
  )
})

test_that("a simulated panel goes through panel_from_frame and describe", {
  s <- simulate_panel(subjects = 30)
  p <- panel_from_frame(s, "patient", "years", "egfr",
    covariates = c("age", "female", "diabetes", "acr")
  )
  d <- describe(p)
  expect_identical(d$subjects, 30)
  expect_identical(d$observations, as.double(nrow(s)))
  expect_identical(d$covariates$name, c("age", "female", "diabetes", "acr"))
  expect_identical(d$covariates$time_fixed, rep(TRUE, 4))
})

test_that("panel_subject_ids gives the panel's ids in sorted order", {
  # Base R reference: sort(unique(ids)).
  p <- panel(c(3L, 1L, 3L, 2L), c(0, 0, 1, 0), c(1, 2, 3, 4))
  expect_identical(panel_subject_ids(p), as.double(sort(unique(c(3L, 1L, 3L, 2L)))))
  q <- panel(c("b", "a", "b"), c(0, 0, 1), c(1, 2, 3))
  expect_identical(panel_subject_ids(q), c("a", "b"))
})
