# Correlation structure of residuals: the correlation between time bins, the empirical
# variogram with the process variance, and a parametric variogram model fitted to it.
# Residuals are one per input row in your row order, as for rank_subjects().

binned_correlation <- function(panel, residuals, bins = NULL, edges = NULL, schedule = NULL,
                               tolerance = NULL, level = 0.95, min_count = 3) {
  tw_check_panel(panel)
  value <- tw_value(.Call(
    wrap__tw_binned_correlation, panel[["pointer"]], tw_residual_values(residuals),
    tw_grid_numbers(bins, "bins"), tw_grid_numbers(edges, "edges"),
    tw_grid_numbers(schedule, "schedule"), tw_grid_numbers(tolerance, "tolerance"),
    level, min_count
  ))
  class(value) <- "trajweave_correlation"
  value
}

print.trajweave_correlation <- function(x, ...) {
  cat("<trajweave binned correlation: ", format(length(x$bins)), " bins, ",
    format(x$visits_used), " visits used, ", format(x$visits_outside), " outside the bins, ",
    format(x$visits_unused), " not nearest their bin's centre>\n",
    sep = ""
  )
  print(round(x$correlation, 3))
  cat("by lag:\n")
  print(x$lags, row.names = FALSE, digits = 3)
  invisible(x)
}

variogram <- function(panel, residuals, lag_bins = NULL, lag_kind = NULL, lag_edges = NULL,
                      max_lag = NULL, min_pairs = 30, sample = NULL, seed = 1,
                      smoother = NULL) {
  tw_check_panel(panel)
  if (is.character(lag_kind)) lag_kind <- enc2utf8(lag_kind)
  if (is.character(sample)) sample <- enc2utf8(sample)
  if (!is.null(smoother)) {
    tw_check_smoother(smoother)
    smoother <- unclass(smoother)
  }
  value <- tw_value(.Call(
    wrap__tw_variogram, panel[["pointer"]], tw_residual_values(residuals),
    tw_grid_numbers(lag_bins, "lag_bins"), lag_kind, tw_grid_numbers(lag_edges, "lag_edges"),
    tw_grid_numbers(max_lag, "max_lag"), min_pairs, sample, seed, smoother
  ))
  if (!is.null(value$smoothed)) value$smoothed <- tw_curve(value$smoothed)
  class(value) <- "trajweave_variogram"
  value
}

print.trajweave_variogram <- function(x, ...) {
  cat("<trajweave variogram: ", format(nrow(x$bins)), " lag bins to ", format(x$max_lag),
    ", ", format(x$pairs_in_bins), " within-subject pairs (", format(x$pairs_outside),
    " beyond), process variance ", format(x$process_variance, digits = 6), ">\n",
    sep = ""
  )
  print(x$bins, row.names = FALSE, digits = 4)
  if (!is.null(x$sample)) cat("sample: ", format(nrow(x$sample)), " pairs\n", sep = "")
  if (!is.null(x$smoothed)) {
    cat("smoothed (", x$smoothed$method, ") on ", format(x$smoothed_pairs), " pairs\n", sep = "")
  }
  invisible(x)
}

# The variogram travels back to the core as the list variogram() returned.
fit_variogram <- function(vg, model = "exponential", estimate = "classical",
                          random_slope = FALSE) {
  if (!inherits(vg, "trajweave_variogram")) {
    tw_stop_option("vg", vg, "pass a variogram made by variogram()")
  }
  if (is.character(model)) model <- enc2utf8(model)
  if (is.character(estimate)) estimate <- enc2utf8(estimate)
  value <- tw_value(.Call(wrap__tw_fit_variogram, vg, model, estimate, random_slope))
  for (w in value$warnings) warning(w, call. = FALSE)
  class(value) <- "trajweave_variogram_fit"
  value
}

print.trajweave_variogram_fit <- function(x, ...) {
  cat("<trajweave variogram fit: ", x$model, if (x$random_slope) " with a random slope",
    " on the ", x$estimate, " estimate, ",
    format(x$bins_used), " bins, ", if (x$converged) "converged" else "not converged",
    " after ", format(x$iterations), " iterations>\n",
    sep = ""
  )
  shown <- c(
    "error variance (tau^2)" = x$error_variance,
    "serial variance (sigma^2)" = x$serial_variance,
    "range (phi)" = x$range
  )
  if (x$random_slope) {
    shown <- c(shown,
      "slope variance (omega^2)" = x$slope_variance,
      "intercept variance at the mean visit time (nu^2)" = x$intercept_variance,
      "mean visit time" = x$intercept_time
    )
  } else {
    shown <- c(shown, "random-intercept variance (nu^2)" = x$intercept_variance)
  }
  shown <- c(shown, "process variance" = x$process_variance)
  for (name in names(shown)) {
    cat("  ", name, ": ", format(shown[[name]], digits = 6), "\n", sep = "")
  }
  for (w in x$warnings) cat("warning: ", w, "\n", sep = "")
  for (f in x$flags) cat("flag: ", f, "\n", sep = "")
  cat("reading: ", x$reading, "\n", sep = "")
  invisible(x)
}

# Both fits (with and without a random slope) and which the documented rule prefers; no
# warnings are raised: read each fit's flags.
compare_variogram_fits <- function(vg, model = "exponential", estimate = "classical") {
  if (!inherits(vg, "trajweave_variogram")) {
    tw_stop_option("vg", vg, "pass a variogram made by variogram()")
  }
  if (is.character(model)) model <- enc2utf8(model)
  if (is.character(estimate)) estimate <- enc2utf8(estimate)
  value <- tw_value(.Call(wrap__tw_compare_variogram_fits, vg, model, estimate))
  class(value$stationary) <- "trajweave_variogram_fit"
  class(value$random_slope) <- "trajweave_variogram_fit"
  class(value) <- "trajweave_variogram_comparison"
  value
}

print.trajweave_variogram_comparison <- function(x, ...) {
  cat("<trajweave variogram comparison: ", x$stationary$model, " model; the random slope ",
    "lowers the criterion by ", format(100 * x$criterion_reduction, digits = 3), "%; preferred: ",
    x$preferred, ">\n",
    sep = ""
  )
  cat("reason: ", x$reason, "\n", sep = "")
  invisible(x)
}

process_variance <- function(panel, residuals) {
  tw_check_panel(panel)
  tw_value(.Call(wrap__tw_process_variance, panel[["pointer"]], tw_residual_values(residuals)))
}
