# Covariate effects and dropout: equal-count bands, trends per band, curves per group and
# per dropout cohort, and the subjects x time bins grid for a heat map of many subjects.

tw_bands <- function(value) {
  class(value) <- "trajweave_bands"
  value
}

equal_count_bands <- function(values, number = 6, overlap = 0.5) {
  tw_bands(tw_value(.Call(
    wrap__tw_equal_count_bands, tw_numbers(values, "values"), number, overlap
  )))
}

covariate_bands <- function(panel, covariate, number = 6, overlap = 0.5) {
  tw_check_panel(panel)
  if (is.character(covariate)) covariate <- enc2utf8(covariate)
  tw_bands(tw_value(.Call(
    wrap__tw_covariate_bands, panel[["pointer"]], covariate, number, overlap
  )))
}

as.data.frame.trajweave_bands <- function(x, row.names = NULL, optional = FALSE, ...) {
  x$bands
}

print.trajweave_bands <- function(x, ...) {
  cat("<trajweave bands: ", format(nrow(x$bands)), " of ", format(x$number),
    " asked, overlap ", format(x$overlap), ", counting ", x$counted, ">\n",
    sep = ""
  )
  print(x$bands, row.names = FALSE)
  invisible(x)
}

conditional_trends <- function(panel, by, bands, smoother, at = NULL) {
  tw_check_panel(panel)
  tw_check_smoother(smoother)
  if (!inherits(bands, "trajweave_bands")) {
    tw_stop_option("bands", bands, "build them with covariate_bands() or equal_count_bands()")
  }
  if (is.character(by)) by <- enc2utf8(by)
  if (!is.null(at)) at <- tw_numbers(at, "at")
  value <- tw_call_smoother(
    wrap__tw_conditional_trends, smoother, panel[["pointer"]], by, unclass(bands), at
  )
  class(value) <- "trajweave_conditional_trends"
  value
}

print.trajweave_conditional_trends <- function(x, ...) {
  cat("<trajweave conditional trends on ", x$covariate, ": ", format(nrow(x$trends)),
    " intervals, ", format(length(x$at)), " grid points; slope SE ", x$se_kind, ">\n",
    sep = ""
  )
  print(x$trends, row.names = FALSE)
  invisible(x)
}

tw_group_curves <- function(value) {
  value$curves <- lapply(value$curves, tw_curve)
  class(value) <- "trajweave_group_curves"
  value
}

group_curves <- function(panel, covariate, smoother, at = NULL) {
  tw_check_panel(panel)
  tw_check_smoother(smoother)
  if (is.character(covariate)) covariate <- enc2utf8(covariate)
  if (!is.null(at)) at <- tw_numbers(at, "at")
  tw_group_curves(tw_call_smoother(
    wrap__tw_group_curves, smoother, panel[["pointer"]], covariate, at
  ))
}

tw_grid_numbers <- function(x, argument) if (is.null(x)) NULL else tw_numbers(x, argument)

dropout_curves <- function(panel, smoother, edges = NULL, schedule = NULL, tolerance = NULL,
                           at = NULL) {
  tw_check_panel(panel)
  tw_check_smoother(smoother)
  tw_group_curves(tw_call_smoother(
    wrap__tw_dropout_curves, smoother, panel[["pointer"]], tw_grid_numbers(edges, "edges"),
    tw_grid_numbers(schedule, "schedule"), tw_grid_numbers(tolerance, "tolerance"),
    tw_grid_numbers(at, "at")
  ))
}

print.trajweave_group_curves <- function(x, ...) {
  cat("<trajweave group curves by ", x$by, ": ", format(nrow(x$groups)), " groups, ",
    format(length(x$at)), " grid points",
    if (x$left_out > 0) paste0(", ", format(x$left_out), " subjects left out") else "",
    ">\n",
    sep = ""
  )
  print(x$groups, row.names = FALSE)
  invisible(x)
}

trajectory_grid <- function(panel, values, order_by, edges = NULL, schedule = NULL,
                            tolerance = NULL) {
  tw_check_panel(panel)
  if (inherits(values, "trajweave_residuals")) values <- values$residuals
  value <- tw_value(.Call(
    wrap__tw_trajectory_grid, panel[["pointer"]], tw_numbers(values, "values"),
    tw_numbers(order_by, "order_by"), tw_grid_numbers(edges, "edges"),
    tw_grid_numbers(schedule, "schedule"), tw_grid_numbers(tolerance, "tolerance")
  ))
  class(value) <- "trajweave_trajectory_grid"
  value
}

print.trajweave_trajectory_grid <- function(x, ...) {
  cat("<trajweave trajectory grid: ", format(length(x$subjects)), " subjects x ",
    format(length(x$bins)), " bins>\n",
    sep = ""
  )
  invisible(x)
}
