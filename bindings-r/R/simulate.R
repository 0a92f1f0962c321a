# Named simulate_panel() because stats already has a simulate() generic.
simulate_panel <- function(subjects = 3000, seed = 2026, ...) {
  options <- c(list(subjects = subjects, seed = seed), list(...))
  labels <- names(options)
  labels[is.na(labels)] <- ""
  tw_value(.Call(wrap__tw_simulate, enc2utf8(labels), unname(options)))
}
