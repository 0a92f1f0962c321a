# Every case of tests/fixtures/bad_input.json: the same kind and the exact message as the core.

test_that("panel cases give the core's kind and message", {
  fixture <- tw_fixture("bad_input.json")
  for (case in fixture$panel_cases) {
    covariates <- if (is.null(case$covariates)) NULL else lapply(case$covariates, tw_numbers)
    missing <- if (is.null(case$missing)) "error" else case$missing
    expect_tw_error(
      panel(tw_subjects(case), tw_numbers(case$time), tw_numbers(case$response),
        covariates = covariates, missing = missing
      ),
      case$kind, case$message,
      info = case$name
    )
  }
})

test_that("describe cases give the core's kind and message", {
  fixture <- tw_fixture("bad_input.json")
  one_row <- panel(1L, 0, 1)
  for (case in fixture$describe_cases) {
    g <- case$grid
    grid_option <- function(x) if (is.null(x)) NULL else tw_numbers(x)
    expect_tw_error(
      describe(one_row,
        edges = grid_option(g$edges), schedule = grid_option(g$schedule),
        tolerance = grid_option(g$tolerance)
      ),
      case$kind, case$message,
      info = case$name
    )
  }
})

test_that("simulate cases give the core's kind and message", {
  fixture <- tw_fixture("bad_input.json")
  for (case in fixture$simulate_cases) {
    options <- lapply(case$options, tw_number)
    expect_tw_error(do.call(simulate_panel, options), case$kind, case$message, info = case$name)
  }
})

# R-only cases: what the R front adds on top of the core.

frame <- data.frame(id = c(1L, 1L, 2L), t = c(0, 1, 0), y = c(5, 6, 7), age = c(50, 50, 60))

test_that("a column name not in the data.frame is refused with the columns listed", {
  expect_tw_error(
    panel_from_frame(frame, "id", "t", "weight"),
    "invalid_option",
    "`response` = \"weight\" is not allowed: no such column; the columns are id, t, y, age"
  )
  expect_tw_error(
    panel_from_frame(frame, "patient", "t", "y"),
    "invalid_option",
    "`subject` = \"patient\" is not allowed: no such column; the columns are id, t, y, age"
  )
  expect_tw_error(
    panel_from_frame(frame, "id", "t", "y", covariates = c("age", "sex")),
    "invalid_option",
    "`covariates` = \"sex\" is not allowed: no such column; the columns are id, t, y, age"
  )
})

test_that("core errors pass through panel_from_frame", {
  bad <- frame
  bad$t[2] <- NA
  expect_tw_error(
    panel_from_frame(bad, "id", "t", "y"),
    "missing",
    "`time` is missing at row 2: pass missing = \"drop\" to drop such rows, or fill them in"
  )
})

test_that("a factor subject works and its labels become text ids", {
  p <- panel(factor(c("b", "a", "b")), c(0, 0, 1), c(1, 2, 3))
  d <- describe(p, edges = c(0, 1))
  expect_identical(d$subjects, 2)
  expect_identical(d$grid$per_subject$subject, c("a", "b"))
  expect_tw_error(
    panel(factor(c("a", NA)), c(0, 0), c(1, 2)),
    "missing",
    "`subject` is missing at row 2: pass missing = \"drop\" to drop such rows, or fill them in"
  )
})

test_that("integer vectors are accepted for response, time and covariates", {
  p <- panel(c(1L, 1L, 2L), 0:2, 5:7, covariates = list(dose = 1:3))
  d <- describe(p)
  expect_identical(d$observations, 3)
  expect_identical(d$time_range, c(0, 2))
  expect_identical(d$covariates$name, "dose")
})

test_that("arguments of an unusable type are refused in the core's words", {
  expect_tw_error(
    panel(c(TRUE, FALSE), c(0, 0), c(1, 2)),
    "invalid_option",
    "`subject` = a logical vector of length 2 is not allowed: give integer, numeric, character or factor ids"
  )
  expect_tw_error(
    panel(1:2, c(0, 0), c(1, 2), covariates = list(sex = c("f", "m"))),
    "invalid_option",
    "`sex` = a character vector of length 2 is not allowed: give numeric covariates; code text or factors as numbers first"
  )
  expect_tw_error(
    panel(1:2, c(0, 0), c(1, 2), missing = NA),
    "invalid_option",
    "`missing` = NA is not allowed: use \"error\" (the default) or \"drop\""
  )
  expect_tw_error(
    describe(frame),
    "invalid_option",
    "`panel` = an object of class \"data.frame\" is not allowed: build one with panel() or panel_from_frame()"
  )
  expect_tw_error(
    describe(panel(1L, 0, 1), schedule = c(0, 1), tolerance = c(0.1, 0.2)),
    "invalid_option",
    "`tolerance` = a numeric vector of length 2 is not allowed: give one number"
  )
})

test_that("a panel restored from disk is refused, not dereferenced", {
  path <- tempfile(fileext = ".rds")
  on.exit(unlink(path))
  saveRDS(panel(1L, 0, 1), path)
  expect_tw_error(
    describe(readRDS(path)),
    "invalid_option",
    paste(
      "`panel` = an empty or foreign pointer is not allowed: build the panel in this R session",
      "with panel() or panel_from_frame(); panels do not survive saveRDS() or a restart"
    )
  )
})

test_that("subject ids: numbers compare numerically, text exactly", {
  # Reference: base R length(unique()) on the same vectors.
  numeric <- c(1, 1.0, 2)
  text <- c("007", "7", "007")
  expect_identical(length(panel_subject_ids(panel(numeric, c(0, 1, 0), c(1, 2, 3)))),
    length(unique(numeric)))
  expect_identical(panel_subject_ids(panel(text, c(0, 1, 0), c(1, 2, 3))), sort(unique(text)))
})
