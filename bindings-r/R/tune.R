# best_index counts from 1 (R's indexing): scores[best_index, ] is the best row.
tune_smoother <- function(panel, smoother, candidates, parameter = NULL, folds = NULL,
                          seed = 1) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_check_smoother(smoother)
  if (is.character(parameter)) parameter <- enc2utf8(parameter)
  value <- tw_call_smoother(
    wrap__tw_tune_smoother, smoother, panel[["pointer"]], tw_numbers(candidates, "candidates"),
    parameter, folds, seed
  )
  class(value) <- "trajweave_tuning"
  value
}

print.trajweave_tuning <- function(x, ...) {
  cat("<trajweave tuning: ", x$family, " ", x$parameter, ", ", x$scheme, ", ",
    format(x$folds), " folds>\n",
    sep = ""
  )
  cat("best ", x$parameter, " = ", format(x$best, digits = 15), " (candidate ",
    format(x$best_index), " of ", nrow(x$scores), ")\n",
    sep = ""
  )
  print(x$scores, row.names = FALSE)
  invisible(x)
}
