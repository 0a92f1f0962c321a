# Recomputes tests/fixtures/supsmu_r.json with R's stats::supsmu (Friedman's super smoother as
# shipped in base R), the outside reference for core/tests/supsmu_reference.rs.
#
# Inputs: R's `cars` data (speed has ties), a generated set of 500 points (uneven spacing, ties,
# rows in random order; fixed seed, written into the fixture as input) and a short set of 7
# points. For each: variable span ("cv") with bass 0, 5 and 10, and fixed spans 0.3 and 0.05.
# Run from the repository root:
#
#   Rscript tests/reference/supsmu_r.R          # rewrite the fixture
#   Rscript tests/reference/supsmu_r.R --check  # exit 1 if the committed fixture would change

fixture <- file.path("tests", "fixtures", "supsmu_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) sprintf("%.17g", v)
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")

set.seed(20240611)
n <- 500
gx <- round(10 * runif(n)^2, 2)          # denser near 0, rounded so that x repeats
gy <- sin(gx) + 0.1 * gx + rnorm(n, sd = 0.2 + 0.05 * gx)
datasets <- list(
  list(name = "cars", x = cars$speed, y = cars$dist),
  list(name = "generated", x = gx, y = gy),
  list(name = "short", x = c(3, 1, 2, 2, 5, 4, 7), y = c(1.5, 0.2, 0.9, 1.4, 2.8, 2.0, 2.2))
)
settings <- list(
  list(span = "cv", bass = 0), list(span = "cv", bass = 5), list(span = "cv", bass = 10),
  list(span = 0.3, bass = 0), list(span = 0.05, bass = 0)
)

out <- character()
for (d in datasets) {
  cases <- character()
  for (s in settings) {
    fit <- stats::supsmu(d$x, d$y, span = s$span, bass = s$bass)
    span_json <- if (identical(s$span, "cv")) "\"cv\"" else num(s$span)
    cases <- c(cases, sprintf(
      "{\"span\": %s, \"bass\": %s, \"x\": %s, \"fitted\": %s}",
      span_json, num(s$bass), vec(fit$x), vec(fit$y)))
  }
  out <- c(out, sprintf(
    "{\"name\": \"%s\", \"sd_y\": %s, \"x\": %s, \"y\": %s,\n \"cases\": [\n  %s]}",
    d$name, num(sd(d$y)), vec(d$x), vec(d$y), paste(cases, collapse = ",\n  ")))
}
text <- paste0(
  "{\"source\": \"R ", getRversion(), " stats::supsmu(x, y, span, bass), ",
  "written by tests/reference/supsmu_r.R\",\n\"datasets\": [\n",
  paste(out, collapse = ",\n"), "]}\n")

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/supsmu_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
