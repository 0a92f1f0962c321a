# The exploration report: one self-contained HTML page with figures and a JSON file with
# every number shown, from the same renderer as the CLI's `trajweave report` and Python's
# trajweave.report().

report <- function(panel, path, ..., time_unit = NULL, response_unit = NULL, source = NULL,
                   columns = NULL) {
  tw_check_panel(panel)
  if (is.null(columns)) columns <- panel[["columns"]]
  if (is.null(columns)) columns <- c("subject", "time", "response")
  if (!is.character(columns) || length(columns) != 3L || anyNA(columns)) {
    tw_stop_option("columns", columns, "give three names: subject, time and response")
  }
  if (!is.character(path) || length(path) != 1L || is.na(path)) {
    tw_stop_option("path", path, "give one file name, e.g. \"report.html\"")
  }
  options <- list(...)
  if (length(options) > 0L && (is.null(names(options)) || any(names(options) == ""))) {
    tw_stop_option("...", "an unnamed value", "name each report option, e.g. bootstrap_reps = 100")
  }
  text <- function(x) if (is.character(x)) enc2utf8(x) else x
  value <- tw_value(.Call(
    wrap__tw_report, panel[["pointer"]], text(columns[[1L]]), text(columns[[2L]]),
    text(columns[[3L]]), text(time_unit), text(response_unit), text(source),
    if (length(options)) enc2utf8(names(options)) else NULL, lapply(options, text)
  ))
  json_path <- sub("\\.[^./\\\\]*$", "", path)
  json_path <- paste0(json_path, ".json")
  write_bytes <- function(file, s) {
    con <- file(file, "wb")
    on.exit(close(con))
    writeBin(charToRaw(enc2utf8(s)), con)
  }
  write_bytes(path, value$html)
  write_bytes(json_path, value$json)
  # The paths written; read the numbers with e.g. jsonlite::fromJSON(json_path).
  invisible(c(html = path, json = json_path))
}
