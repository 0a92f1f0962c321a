# The mean curve's average change per time unit over the central share of the observation
# times, with subject-bootstrap percentile intervals, and the least-squares slope beside it.
# Every number and check is the core's; the result is its JSON, converted generically.
average_change <- function(panel, smoother, central = 0.9, reps = 200, level = 0.95, seed = 1) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_check_smoother(smoother)
  value <- tw_call_smoother(
    wrap__tw_average_change, smoother, panel[["pointer"]], central, reps, level, seed
  )
  for (w in value$warnings) warning(w, call. = FALSE)
  class(value) <- "trajweave_change"
  value
}

print.trajweave_change <- function(x, ...) {
  cat("<trajweave average change: ", x$smoother$family, " mean curve from ", format(x$from),
    " to ", format(x$to), " (central ", format(x$central), ")>\n",
    sep = ""
  )
  pct <- paste0(format(100 * x$level), "%")
  cat("mean curve:    ", format(x$estimate, digits = 6), "  ", pct, " interval ",
    format(x$lower, digits = 6), " to ", format(x$upper, digits = 6), "\n",
    sep = ""
  )
  cat("least squares: ", format(x$ols_slope, digits = 6), "  ", pct, " interval ",
    format(x$ols_lower, digits = 6), " to ", format(x$ols_upper, digits = 6), "\n",
    sep = ""
  )
  cat(format(x$reps), " subject resamples (seed ", format(x$seed, scientific = FALSE), "), ",
    format(x$failed), " failed\n",
    sep = ""
  )
  for (w in x$warnings) cat("warning: ", w, "\n", sep = "")
  invisible(x)
}
