bootstrap_options <- function(reps = 200, level = 0.95, seed = 1) {
  value <- tw_value(.Call(wrap__tw_bootstrap_options, reps, level, seed))
  class(value) <- "trajweave_bootstrap_options"
  value
}

mean_curve <- function(panel, smoother, at = NULL, bootstrap = NULL) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_check_smoother(smoother)
  if (!is.null(at)) at <- tw_numbers(at, "at")
  if (!is.null(bootstrap) && !inherits(bootstrap, "trajweave_bootstrap_options")) {
    tw_stop_option("bootstrap", bootstrap, "give NULL or bootstrap_options(reps, level, seed)")
  }
  value <- tw_call_smoother(
    wrap__tw_mean_curve, smoother, panel[["pointer"]], at, unclass(bootstrap)
  )
  value$curve <- tw_curve(value$curve)
  class(value) <- "trajweave_mean_curve"
  value
}

print.trajweave_mean_curve <- function(x, ...) {
  cat("<trajweave mean curve>\n")
  print(x$curve)
  cat("at ", length(x$at), " points from ", format(min(x$at)), " to ", format(max(x$at)), "\n",
    sep = ""
  )
  b <- x$band
  if (!is.null(b)) {
    cat("band: ", format(100 * b$level), "% pointwise, ", format(b$reps), " subject-bootstrap ",
      "replicates (seed ", format(b$seed, scientific = FALSE), ", ", format(b$failed),
      " failed)\n",
      sep = ""
    )
  }
  invisible(x)
}
