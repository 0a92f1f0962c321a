# describe() on R's ChickWeight data (datasets package; Crowder & Hand 1990, Analysis of
# Repeated Measures, example 5.3): 50 chicks weighed on a 12-day schedule, some lost early.
# Every expected value is recomputed here in base R from the data themselves.

chick_days <- c(0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 20, 21)

chick_description <- function() {
  p <- panel_from_frame(datasets::ChickWeight, "Chick", "Time", "weight")
  describe(p, schedule = chick_days, tolerance = 0.4)
}

test_that("ChickWeight: sizes, visits and follow-up match base R", {
  cw <- datasets::ChickWeight
  d <- chick_description()
  expect_identical(d$subjects, as.double(nlevels(cw$Chick)))
  expect_identical(d$observations, as.double(nrow(cw)))
  expect_identical(d$rows_dropped, 0)
  expect_identical(d$time_range, range(as.double(cw$Time)))

  # Five numbers of visits per chick: quantile(), type 7 (R's default).
  visits <- quantile(as.vector(table(cw$Chick)), type = 7)
  got <- d$visits_per_subject
  expect_equal(unname(c(got$min, got$q1, got$median, got$q3, got$max)),
    unname(visits),
    tolerance = TOL_QUANTILE
  )

  # Follow-up: last minus first weighing day per chick.
  follow <- quantile(tapply(cw$Time, cw$Chick, function(t) max(t) - min(t)))
  got <- d$follow_up
  expect_equal(unname(c(got$min, got$q1, got$median, got$q3, got$max)),
    unname(follow),
    tolerance = TOL_QUANTILE
  )
})

test_that("ChickWeight: per-chick visits and follow-up match counts of rows", {
  cw <- datasets::ChickWeight
  d <- chick_description()
  per <- d$per_subject
  expect_s3_class(per, "data.frame")
  # Ids are text: the factor's labels.
  expect_type(per$subject, "character")
  expect_setequal(per$subject, levels(cw$Chick))
  visits <- table(cw$Chick)
  got <- setNames(per$visits, per$subject)
  expect_identical(got[names(visits)], setNames(as.double(visits), names(visits)))
  first <- tapply(as.double(cw$Time), cw$Chick, min)
  last <- tapply(as.double(cw$Time), cw$Chick, max)
  expect_identical(setNames(per$first, per$subject)[names(first)], c(first))
  expect_identical(setNames(per$last, per$subject)[names(last)], c(last))
})

test_that("ChickWeight: patterns on the schedule match a base-R classification", {
  cw <- datasets::ChickWeight
  d <- chick_description()
  per <- d$grid$per_subject
  expect_s3_class(per, "data.frame")
  expect_type(per$subject, "character")

  # Each weighing day is a scheduled day, so every visit is in its own bin and the seen marks
  # count the visits.
  expect_identical(d$grid$outside, 0)
  visits <- table(cw$Chick)
  seen_count <- nchar(gsub(".", "", per$seen, fixed = TRUE))
  names(seen_count) <- per$subject
  expect_identical(as.vector(seen_count[names(visits)]), as.vector(visits))

  # Base-R classification on the 12-day schedule: complete = seen every day; monotone = seen
  # exactly on the first L days, L < 12; intermittent otherwise.
  expected <- vapply(levels(cw$Chick), function(chick) {
    observed <- chick_days %in% cw$Time[cw$Chick == chick]
    seen <- sum(observed)
    if (seen == length(chick_days)) {
      "complete"
    } else if (all(observed[seq_len(seen)])) {
      "monotone"
    } else {
      "intermittent"
    }
  }, character(1))
  got <- setNames(per$pattern, per$subject)
  expect_identical(got[names(expected)], expected)

  counts <- table(factor(expected, levels = c("complete", "monotone", "intermittent")))
  patterns <- d$grid$patterns
  expect_identical(
    c(patterns$complete, patterns$monotone, patterns$intermittent),
    as.double(counts)
  )
  expect_identical(patterns$unobserved, 0)
})

test_that("ChickWeight: bin counts match a table of weighing days", {
  cw <- datasets::ChickWeight
  d <- chick_description()
  bins <- d$grid$bins
  expect_s3_class(bins, "data.frame")
  by_day <- table(factor(cw$Time, levels = chick_days))
  # One weighing per chick and day, so subjects and visits per bin are both the day's rows.
  expect_identical(bins$subjects, as.double(by_day))
  expect_identical(bins$observations, as.double(by_day))
  expect_identical(bins$label, as.character(chick_days))
  expect_equal(bins$lower, chick_days - 0.4, tolerance = 0)
  expect_identical(d$grid$grid$kind, "schedule")
  expect_identical(d$grid$grid$times, chick_days)
})

test_that("missing = \"drop\" reports the rows dropped", {
  p <- panel(c(1L, 1L, 2L, 2L), c(0, 1, 0, 1), c(5, NA, 7, Inf), missing = "drop")
  d <- describe(p)
  expect_identical(d$rows_input, 4)
  expect_identical(d$rows_dropped, 2)
  expect_identical(d$observations, 2)
  expect_identical(d$single_visit_subjects, 2)
  # No subject has two visits left: no gap summary.
  expect_null(d$gaps)
  expect_identical(d$gap_count, 0)
})

test_that("print shows the core's text verbatim", {
  d <- chick_description()
  text <- attr(d, "text")
  expect_type(text, "character")
  expect_identical(capture.output(print(d)), strsplit(text, "\n", fixed = TRUE)[[1]])
  expect_identical(format(d), text)
  expect_match(text, "^subjects +50\n")
  shown <- NULL
  capture.output(shown <- withVisible(print(d)))
  expect_false(shown$visible)
})

test_that("a panel prints its size", {
  p <- panel(c(1L, 1L, 2L), c(0, 1, 0), c(5, NA, 7), covariates = list(age = c(50, 50, 60)),
    missing = "drop"
  )
  out <- capture.output(print(p))
  expect_identical(out, c(
    "<trajweave panel>",
    "subjects      2",
    "observations  2 (of 3 rows; 1 dropped)",
    "missing       response 1 (rows, by column)",
    "covariates    age"
  ))
})

test_that("missing = \"drop\" drops a missing cell in any column used and counts it", {
  set.seed(11)
  n <- 200
  frame <- data.frame(
    id = sample(1:30, n, replace = TRUE), t = runif(n, 0, 5), y = rnorm(n),
    age = rnorm(n, 60, 5), sex = rbinom(n, 1, 0.5)
  )
  frame$id[sample(n, 5)] <- NA
  frame$t[sample(n, 8)] <- NA
  frame$y[sample(n, 12)] <- NA
  frame$age[sample(n, 9)] <- NA
  frame$sex[sample(n, 3)] <- NA
  p <- panel_from_frame(frame, "id", "t", "y", c("age", "sex"), missing = "drop")
  d <- describe(p)
  # Reference: base R complete.cases() and colSums(is.na()).
  expect_identical(d$observations, as.double(sum(complete.cases(frame))))
  expect_identical(d$rows_dropped, as.double(sum(!complete.cases(frame))))
  nas <- colSums(is.na(frame))
  expected <- setNames(as.double(nas), c("subject", "time", "response", "age", "sex"))
  expect_identical(d$dropped_by_column$column, names(expected))
  expect_identical(d$dropped_by_column$rows, unname(expected))
  expect_identical(panel_dropped_by_column(p), expected)
  expect_output(print(p), "missing       subject 5, time 8, response 12, age 9, sex 3 (rows, by column)",
    fixed = TRUE)
  # Under "error", the first incomplete row (base R: which(!complete.cases())) is named.
  first <- which(!complete.cases(frame))[[1L]]
  column <- c("subject", "time", "response", "age", "sex")[which(is.na(frame[first, ]))[[1L]]]
  expect_tw_error(
    panel_from_frame(frame, "id", "t", "y", c("age", "sex")),
    "missing",
    sprintf("`%s` is missing at row %d: pass missing = \"drop\" to drop such rows, or fill them in",
      column, first)
  )
  # A missing text id is dropped, never a subject called "NA".
  q <- panel(c("a", NA, "b"), c(0, 0, 0), c(1, 2, 3), missing = "drop")
  expect_identical(panel_subject_ids(q), c("a", "b"))
})
