panel <- function(subject, time, response, covariates = NULL, missing = "error") {
  subject <- subject_ids(subject)
  covariates <- covariate_columns(covariates)
  pointer <- tw_value(.Call(
    wrap__tw_panel,
    subject,
    as.double(time),
    as.double(response),
    names(covariates),
    unname(covariates),
    missing
  ))
  structure(list(pointer = pointer), class = "trajweave_panel")
}

panel_from_frame <- function(data, subject, time, response, covariates = character(),
                             missing = "error") {
  if (!is.list(data)) {
    tw_stop_option("data", data, "give a data.frame (or a named list of columns)")
  }
  columns <- names(data)
  if (is.null(columns)) columns <- character()
  pick <- function(argument, name) {
    if (!is.character(name) || length(name) != 1L || is.na(name)) {
      tw_stop_option(argument, name, "give one column name as a string")
    }
    if (!name %in% columns) {
      tw_stop_option(argument, name, no_such_column(columns))
    }
    data[[name]]
  }
  subject_name <- subject
  time_name <- time
  response_name <- response
  subject <- pick("subject", subject)
  time <- pick("time", time)
  response <- pick("response", response)
  if (!is.character(covariates) || anyNA(covariates)) {
    tw_stop_option("covariates", covariates, "give column names as a character vector")
  }
  unknown <- covariates[!covariates %in% columns]
  if (length(unknown) > 0L) {
    tw_stop_option("covariates", unknown[[1L]], no_such_column(columns))
  }
  p <- panel(subject, time, response, covariates = as.list(data)[covariates], missing = missing)
  # Column names for labels (the report's axes).
  p[["columns"]] <- c(subject_name, time_name, response_name)
  p
}

# The panel's subject ids in sorted order: the order of per-subject inputs such as
# trajectory_grid()'s order_by.
panel_subject_ids <- function(panel) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_value(.Call(wrap__tw_panel_info, panel[["pointer"]]))$subject_ids
}

# Rows dropped under missing = "drop" per column with a missing cell (subject, time,
# response, then covariates; a row missing in two columns counts in both), as a named vector.
panel_dropped_by_column <- function(panel) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_value(.Call(wrap__tw_panel_info, panel[["pointer"]]))$dropped_by_column
}

# Whether the response holds exactly two distinct values (a 0/1 outcome); LOWESS then runs
# without robustness iterations unless they are set.
panel_is_binary <- function(panel) {
  if (!inherits(panel, "trajweave_panel")) {
    tw_stop_option("panel", panel, "build one with panel() or panel_from_frame()")
  }
  tw_value(.Call(wrap__tw_panel_info, panel[["pointer"]]))$binary
}

print.trajweave_panel <- function(x, ...) {
  info <- tw_value(.Call(wrap__tw_panel_info, x[["pointer"]]))
  cat("<trajweave panel>\n")
  cat("subjects      ", format(info$subjects), "\n", sep = "")
  cat("observations  ", format(info$observations), " (of ", format(info$rows_input),
      " rows; ", format(info$rows_dropped), " dropped)\n", sep = "")
  if (length(info$dropped_by_column) > 0L) {
    cat("missing       ", paste(names(info$dropped_by_column), info$dropped_by_column,
      collapse = ", "), " (rows, by column)\n", sep = "")
  }
  if (length(info$covariates) > 0L) {
    cat("covariates    ", paste(info$covariates, collapse = ", "), "\n", sep = "")
  }
  invisible(x)
}

no_such_column <- function(columns) {
  paste0("no such column; the columns are ", paste(columns, collapse = ", "))
}

# Integer, double and character ids go to the core as they are; a factor goes as its labels.
# Text is made UTF-8 here, and text that cannot be is refused with the row.
subject_ids <- function(subject) {
  if (is.factor(subject)) {
    subject <- as.character(subject)
  }
  if (is.character(subject)) {
    subject <- enc2utf8(subject)
    bad <- which(!validUTF8(subject))
    if (length(bad) > 0L) {
      row <- bad[[1L]]
      tw_value(.Call(
        wrap__tw_invalid_value, "subject", as.double(row),
        iconv(subject[[row]], "", "UTF-8", sub = "byte"),
        "text ids must be valid UTF-8"
      ))
    }
  }
  subject
}

# NULL, a named list or a data.frame of numeric (or logical) columns, as a named list of
# doubles. Names are left for the core to check.
covariate_columns <- function(covariates) {
  if (is.null(covariates)) {
    return(structure(list(), names = character()))
  }
  if (!is.list(covariates)) {
    tw_stop_option(
      "covariates", covariates,
      "give NULL, a named list or a data.frame of numeric columns"
    )
  }
  covariates <- as.list(covariates)
  labels <- names(covariates)
  if (is.null(labels)) labels <- rep("", length(covariates))
  labels[is.na(labels)] <- ""
  for (k in seq_along(covariates)) {
    column <- covariates[[k]]
    if (!(is.numeric(column) || is.logical(column)) || is.factor(column)) {
      tw_stop_option(
        labels[[k]], column,
        "give numeric covariates; code text or factors as numbers first"
      )
    }
  }
  structure(lapply(covariates, as.double), names = enc2utf8(labels))
}
