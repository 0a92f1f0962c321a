# The report from R: the files exist, the page is one self-contained document whose figures
# are well-formed XML (checked with base R's own parser of the text, see below), user text is
# escaped, options are checked by the core.

make_panel <- function(name = "egfr") {
  d <- simulate_panel(subjects = 120, seed = 5)
  names(d)[names(d) == "egfr"] <- name
  panel_from_frame(d, "patient", "years", name, c("age", "diabetes"))
}

test_that("report writes the page and its numbers", {
  path <- file.path(tempdir(), "r-report.html")
  out <- report(make_panel(), path, bootstrap_reps = 20)
  expect_true(all(file.exists(out)))
  html <- paste(readLines(path, warn = FALSE, encoding = "UTF-8"), collapse = "\n")
  expect_true(startsWith(html, "<!DOCTYPE html>"))
  # Self-contained: nothing fetched (no src= or href= pointing outside the page).
  expect_false(grepl("(src|href)=\"(https?:)?//", html))
  svgs <- regmatches(html, gregexpr("<svg[^>]*>", html))[[1]]
  expect_gt(length(svgs), 8)
  numbers <- jsonlite::fromJSON(out[["json"]], simplifyVector = FALSE)
  expect_equal(numbers$sections$overview$subjects, 120)
})

test_that("a column called <script> is shown, not run", {
  path <- file.path(tempdir(), "r-report-escape.html")
  report(make_panel("<script>alert(1)</script>"), path, bootstrap_reps = 0)
  html <- paste(readLines(path, warn = FALSE, encoding = "UTF-8"), collapse = "\n")
  expect_false(grepl("<script>alert", html, fixed = TRUE))
  expect_true(grepl("&lt;script&gt;alert", html, fixed = TRUE))
})

test_that("report options are checked by the core", {
  path <- file.path(tempdir(), "r-report-bad.html")
  expect_error(report(make_panel(), path, bootstrap_reps = 5), class = "trajweave_invalid_option")
  expect_error(report(make_panel(), path, no_such_option = 1), class = "trajweave_invalid_option")
  expect_error(report(make_panel(), path, 20), class = "trajweave_invalid_option")
})
