# Covariance-structure screening: candidate within-subject covariance structures fitted to the
# residuals by maximum likelihood and ranked by AIC. Residuals are one per input row in your
# row order; the grid (edges, or a schedule with a tolerance) is needed by toeplitz and
# unstructured only.

# Structure names as text for the core; anything else reaches it unchanged to be refused by name.
tw_structure_names <- function(x) {
  if (is.factor(x)) x <- as.character(x)
  if (is.character(x)) x <- enc2utf8(x)
  x
}

screen_structures <- function(panel, residuals, candidates = NULL, edges = NULL,
                              schedule = NULL, tolerance = NULL, max_iterations = 1000,
                              convergence = 1e-10) {
  tw_check_panel(panel)
  if (!is.null(candidates)) candidates <- tw_structure_names(candidates)
  value <- tw_value(.Call(
    wrap__tw_screen_structures, panel[["pointer"]], tw_residual_values(residuals), candidates,
    tw_grid_numbers(edges, "edges"), tw_grid_numbers(schedule, "schedule"),
    tw_grid_numbers(tolerance, "tolerance"), max_iterations, convergence
  ))
  class(value) <- "trajweave_screening"
  value
}

print.trajweave_screening <- function(x, ...) {
  cat("<trajweave covariance screening: ", format(nrow(x$fits)), " structures fitted to ",
    format(x$observations), " observations of ", format(x$subjects),
    " subjects, best by AIC first>\n",
    sep = ""
  )
  print(x$fits[, c(
    "structure", "n_parameters", "loglik", "aic", "delta_aic", "converged", "flagged"
  )], row.names = FALSE, digits = 6)
  for (i in which(!is.na(x$fits$note))) {
    cat("note on ", x$fits$structure[i], ": ", x$fits$note[i], "\n", sep = "")
  }
  for (name in names(x$flags)) {
    for (f in x$flags[[name]]) cat("flag on ", name, ": ", f, "\n", sep = "")
  }
  for (i in seq_len(nrow(x$skipped))) {
    cat("skipped ", x$skipped$structure[i], ": ", x$skipped$reason[i], "\n", sep = "")
  }
  invisible(x)
}

structure_loglik <- function(panel, residuals, structure, parameters, edges = NULL,
                             schedule = NULL, tolerance = NULL) {
  tw_check_panel(panel)
  tw_value(.Call(
    wrap__tw_structure_loglik, panel[["pointer"]], tw_residual_values(residuals),
    tw_structure_names(structure), tw_numbers(parameters, "parameters"),
    tw_grid_numbers(edges, "edges"), tw_grid_numbers(schedule, "schedule"),
    tw_grid_numbers(tolerance, "tolerance")
  ))
}

implied_correlation <- function(structure, parameters, time, lags, edges = NULL,
                                schedule = NULL, tolerance = NULL) {
  tw_value(.Call(
    wrap__tw_implied_correlation, tw_structure_names(structure),
    tw_numbers(parameters, "parameters"), time, tw_numbers(lags, "lags"),
    tw_grid_numbers(edges, "edges"), tw_grid_numbers(schedule, "schedule"),
    tw_grid_numbers(tolerance, "tolerance")
  ))
}
