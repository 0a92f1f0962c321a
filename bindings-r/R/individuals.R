# Individual variation: residuals from a mean model, subjects ranked by a summary of their
# residuals, the subjects at chosen quantiles, seeded samples and unusual subjects. Per-row
# values are in the caller's row order, NA in dropped rows; ranks and rows count from 1.
# Named panel_residuals() because residuals() is a generic in stats.

tw_check_panel <- function(panel) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
}

# Mean-model specs are checked by the core when made, as smoother specs are.
new_mean_model <- function(spec) {
  spec <- structure(spec, class = "trajweave_mean_model")
  tw_value(.Call(wrap__tw_mean_model_check, unclass(spec)))
  spec
}

residuals_polynomial <- function(degree = 1) {
  new_mean_model(list(kind = "polynomial", degree = degree))
}

residuals_by_group <- function(covariate, smoother) {
  tw_check_smoother(smoother)
  if (is.character(covariate)) covariate <- enc2utf8(covariate)
  new_mean_model(list(kind = "by_group", covariate = covariate, smoother = unclass(smoother)))
}

print.trajweave_mean_model <- function(x, ...) {
  if (identical(x$kind, "polynomial")) {
    cat("<trajweave mean model: polynomial of degree ", format(x$degree), ">\n", sep = "")
  } else {
    cat("<trajweave mean model: ", x$smoother$family, " by ", x$covariate, ">\n", sep = "")
  }
  invisible(x)
}

# The mean model as the native side reads it: a spec, or a curve's points.
tw_mean_spec <- function(mean) {
  if (inherits(mean, "trajweave_mean_curve")) mean <- mean$curve
  if (inherits(mean, "trajweave_curve")) {
    return(list(
      kind = "curve", method = mean$method,
      x = tw_numbers(mean$x, "mean"), fitted = tw_numbers(mean$fitted, "mean")
    ))
  }
  if (inherits(mean, "trajweave_mean_model")) {
    return(unclass(mean))
  }
  tw_stop_option(
    "mean", mean,
    paste(
      "give a curve (fit_smoother()), a mean curve (mean_curve()),",
      "residuals_polynomial(degree) or residuals_by_group(covariate, smoother)"
    )
  )
}

panel_residuals <- function(panel, mean) {
  tw_check_panel(panel)
  value <- tw_value(.Call(wrap__tw_panel_residuals, panel[["pointer"]], tw_mean_spec(mean)))
  if (!is.null(value$groups)) {
    value$groups <- lapply(value$groups, function(g) {
      g$curve <- tw_curve(g$curve)
      g
    })
  }
  class(value) <- "trajweave_residuals"
  value
}

print.trajweave_residuals <- function(x, ...) {
  cat("<trajweave residuals: ", x$model, ", ", format(sum(!is.na(x$residuals))), " of ",
    format(length(x$residuals)), " rows>\n",
    sep = ""
  )
  if (!is.null(x$coefficients)) {
    cat("coefficients (intercept first): ", paste(format(x$coefficients, digits = 6),
      collapse = " "
    ), "\n", sep = "")
  }
  invisible(x)
}

# Residuals given as panel_residuals() returned them, or as numbers (one per input row).
tw_residual_values <- function(residuals) {
  if (inherits(residuals, "trajweave_residuals")) residuals <- residuals$residuals
  tw_numbers(residuals, "residuals")
}

tw_check_ranking <- function(ranking) {
  if (!inherits(ranking, "trajweave_ranking")) {
    tw_stop_option("ranking", ranking, "pass a ranking made by rank_subjects()")
  }
  ranking[["pointer"]]
}

rank_subjects <- function(panel, residuals, summary = "median", p = NULL) {
  tw_check_panel(panel)
  value <- tw_value(.Call(
    wrap__tw_rank_subjects, panel[["pointer"]], tw_residual_values(residuals), summary, p
  ))
  class(value) <- "trajweave_ranking"
  value
}

as.data.frame.trajweave_ranking <- function(x, row.names = NULL, optional = FALSE, ...) {
  data.frame(
    subject = x$subjects, rank = x$ranks, value = x$values, observations = x$observations,
    row.names = row.names
  )
}

print.trajweave_ranking <- function(x, ...) {
  what <- if (is.null(x$p)) x$summary else paste0(x$summary, " (p = ", format(x$p), ")")
  cat("<trajweave ranking by ", what, ": ", format(length(x$subjects)), " subjects ranked, ",
    format(length(x$unranked)), " unranked>\n",
    sep = ""
  )
  table <- as.data.frame(x)
  print(table[seq_len(min(6L, nrow(table))), , drop = FALSE], row.names = FALSE)
  if (length(x$subjects) > 6L) cat("...\n")
  invisible(x)
}

pick_subjects <- function(panel, residuals, ranking, quantiles) {
  tw_check_panel(panel)
  pointer <- tw_check_ranking(ranking)
  value <- tw_value(.Call(
    wrap__tw_pick_subjects, panel[["pointer"]], tw_residual_values(residuals), pointer,
    tw_numbers(quantiles, "quantiles")
  ))
  class(value) <- "trajweave_picks"
  value
}

print.trajweave_picks <- function(x, ...) {
  cat("<trajweave picks: ", format(nrow(x$picks)), " subjects>\n", sep = "")
  print(x$picks, row.names = FALSE)
  invisible(x)
}

sample_subjects <- function(panel, k, seed = 1, strategy = "random", ranking = NULL) {
  tw_check_panel(panel)
  pointer <- if (is.null(ranking)) NULL else tw_check_ranking(ranking)
  value <- tw_value(.Call(
    wrap__tw_sample_subjects, panel[["pointer"]], k, seed, strategy, pointer
  ))
  class(value) <- "trajweave_sample"
  value
}

print.trajweave_sample <- function(x, ...) {
  cat("<trajweave sample: ", format(length(x$subjects)), " subjects, ", x$strategy,
    ", seed ", format(x$seed, scientific = FALSE), ">\n",
    sep = ""
  )
  print(x$subjects)
  invisible(x)
}

unusual_subjects <- function(panel, residuals, ranking, subject_threshold = 3.5,
                             observation_threshold = 3.5) {
  tw_check_panel(panel)
  pointer <- tw_check_ranking(ranking)
  value <- tw_value(.Call(
    wrap__tw_unusual_subjects, panel[["pointer"]], tw_residual_values(residuals), pointer,
    subject_threshold, observation_threshold
  ))
  class(value) <- "trajweave_unusual"
  value
}

print.trajweave_unusual <- function(x, ...) {
  cat("<trajweave unusual: ", format(nrow(x$subjects)), " subjects beyond |z| > ",
    format(x$threshold), ", ", format(nrow(x$observations)), " observations beyond |z| > ",
    format(x$observation_threshold), ">\n",
    sep = ""
  )
  invisible(x)
}
