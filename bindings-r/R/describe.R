describe <- function(panel, edges = NULL, schedule = NULL, tolerance = NULL) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  numbers <- function(x) if (is.null(x)) NULL else as.double(x)
  value <- tw_value(.Call(
    wrap__tw_describe,
    panel[["pointer"]],
    numbers(edges),
    numbers(schedule),
    numbers(tolerance)
  ))
  class(value) <- "trajweave_description"
  value
}

# The core's text table, verbatim.
format.trajweave_description <- function(x, ...) {
  attr(x, "text", exact = TRUE)
}

print.trajweave_description <- function(x, ...) {
  cat(format(x))
  invisible(x)
}
