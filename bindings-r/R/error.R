# Every native call answers list(ok = value) or list(error_kind = kind, message = text); this
# turns the second into a condition of class trajweave_<kind>, trajweave_error, error. The
# message is the core's, unchanged.

tw_value <- function(answer) {
  kind <- answer[["error_kind"]]
  if (is.null(kind)) {
    return(answer[["ok"]])
  }
  stop(structure(
    class = c(paste0("trajweave_", kind), "trajweave_error", "error", "condition"),
    list(message = answer[["message"]], call = NULL)
  ))
}

# An option refused on the R side, worded by the core's error type.
tw_stop_option <- function(argument, value, allowed) {
  if (is.character(value)) value <- enc2utf8(value)
  tw_value(.Call(wrap__tw_invalid_option, enc2utf8(argument), value, enc2utf8(allowed)))
}
