# Smoother specs: a family name and the options given (NULL means "the core's default", so a
# NULL option is left out). The core checks every option when the spec is made and again at
# each fit; R only collects the arguments.

new_smoother <- function(family, options) {
  options <- Filter(Negate(is.null), options)
  options <- lapply(options, function(v) if (is.character(v)) enc2utf8(v) else v)
  spec <- structure(list(family = family, options = options), class = "trajweave_smoother")
  tw_call_smoother(wrap__tw_smoother_check, spec)
  spec
}

# Calls a native entry point with the spec (family and options) as its first argument.
tw_call_smoother <- function(entry, smoother, ...) {
  tw_value(.Call(entry, unclass(smoother), ...))
}

smoother_lowess <- function(span = NULL, iterations = NULL, delta = NULL) {
  new_smoother("lowess", list(span = span, iterations = iterations, delta = delta))
}

smoother_kernel <- function(bandwidth = NULL, shape = NULL, degree = NULL, truncation = NULL,
                            evaluation = NULL, bins_per_bandwidth = NULL) {
  new_smoother("kernel", list(
    bandwidth = bandwidth, shape = shape, degree = degree, truncation = truncation,
    evaluation = evaluation, bins_per_bandwidth = bins_per_bandwidth
  ))
}

# Either the penalty or the target df fixes the amount of smoothing; with neither, the core
# chooses it by GCV.
smoother_spline <- function(lambda = NULL, df = NULL) {
  if (!is.null(lambda) && !is.null(df)) {
    tw_value(.Call(
      wrap__tw_invalid_option_text, "lambda", "given together with `df`",
      "give either lambda or df, or neither for GCV"
    ))
  }
  options <- if (!is.null(lambda)) {
    list(lambda = lambda)
  } else if (!is.null(df)) {
    list(df = df)
  } else {
    list(gcv = "gcv")
  }
  new_smoother("spline", options)
}

smoother_super <- function(span = NULL, bass = NULL) {
  new_smoother("super", list(span = span, bass = bass))
}

print.trajweave_smoother <- function(x, ...) {
  cat("<trajweave smoother: ", x$family, ">\n", sep = "")
  options <- x$options
  if (length(options) == 0L) {
    cat("  (the core's defaults)\n")
  }
  for (name in names(options)) {
    v <- options[[name]]
    shown <- if (is.character(v)) encodeString(v, quote = "\"") else format(v, digits = 15)
    cat("  ", name, " = ", shown, "\n", sep = "")
  }
  invisible(x)
}

tw_check_smoother <- function(smoother) {
  if (!inherits(smoother, "trajweave_smoother")) {
    tw_stop_option(
      "smoother", smoother,
      "build one with smoother_lowess(), smoother_kernel(), smoother_spline() or smoother_super()"
    )
  }
}

# Numbers for the core: numeric (double or integer) vectors only, so text or factors are
# refused by name rather than turned into NA.
tw_numbers <- function(x, argument) {
  if (!is.numeric(x)) {
    tw_stop_option(argument, x, "give numbers")
  }
  as.double(x)
}

fit_smoother <- function(smoother, x, y) {
  tw_check_smoother(smoother)
  curve <- tw_call_smoother(
    wrap__tw_fit_smoother, smoother, tw_numbers(x, "x"), tw_numbers(y, "y")
  )
  tw_curve(curve)
}

# A curve from the native side: classed, its warnings (if any) raised as R warnings.
tw_curve <- function(curve) {
  for (w in curve$warnings) warning(w, call. = FALSE)
  class(curve) <- "trajweave_curve"
  curve
}

# The curve at newdata by the core's rule: linear between the fitted points, the end values
# beyond them, NaN at NaN. Without newdata, the fit at the curve's own points.
predict.trajweave_curve <- function(object, newdata = object$x, ...) {
  tw_value(.Call(
    wrap__tw_predict_curve, tw_numbers(object$x, "object"), tw_numbers(object$fitted, "object"),
    tw_numbers(newdata, "newdata")
  ))
}

print.trajweave_curve <- function(x, ...) {
  d <- x$diagnostics
  parts <- paste0("n = ", format(d$n, scientific = FALSE))
  for (name in c("df", "bandwidth", "span")) {
    if (!is.null(d[[name]])) parts <- c(parts, paste0(name, " = ", format(d[[name]], digits = 4)))
  }
  cat("<trajweave curve: ", x$method, ", ", paste(parts, collapse = ", "), ">\n", sep = "")
  invisible(x)
}
