# Recomputes tests/fixtures/bands_r.json with R's graphics::co.intervals(x, number, overlap),
# the outside reference for core/tests/bands_reference.rs. Counts are the numbers of values in
# each closed interval, sum(x >= lo & x <= hi), computed here in R.
#
# Inputs: R's quakes$depth (base datasets, 1000 values with many ties), generated values with
# heavy ties (fixed seed, written into the fixture), and small sets whose interval positions
# fall exactly on a half (rounding ties) or whose intervals repeat (and are dropped).
# Run from the repository root:
#
#   Rscript tests/reference/bands_r.R          # rewrite the fixture
#   Rscript tests/reference/bands_r.R --check  # exit 1 if the committed fixture would change

fixture <- file.path("tests", "fixtures", "bands_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) sprintf("%.17g", v)
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")

set.seed(20240612)
tied <- round(3 * rnorm(200))
skewed <- round(exp(rnorm(150)), 1)
datasets <- list(
  list(name = "quakes$depth", x = quakes$depth,
       settings = list(c(6, 0.5), c(4, 0.25), c(10, 0.1), c(3, 0), c(1, 0), c(12, 0.9),
                       c(20, 0.75), c(2, 0.5))),
  list(name = "generated ties", x = tied,
       settings = list(c(6, 0.5), c(10, 0.3), c(25, 0.5), c(40, 0), c(3, 0.95))),
  list(name = "generated skewed", x = skewed,
       settings = list(c(5, 0.5), c(8, 0.2), c(15, 0.6))),
  list(name = "1..9 (half positions)", x = c(9, 3, 1, 7, 5, 2, 8, 4, 6),
       settings = list(c(2, 0), c(3, 0.5), c(4, 0.5), c(9, 0))),
  list(name = "1..10", x = 1:10, settings = list(c(4, 0.5), c(10, 0.5), c(5, 0))),
  list(name = "three values, repeated", x = rep(c(1, 2, 3), c(10, 1, 10)),
       settings = list(c(8, 0.5), c(3, 0), c(21, 0))),
  list(name = "constant", x = rep(5, 6), settings = list(c(3, 0.5)))
)

out <- character()
for (d in datasets) {
  cases <- character()
  for (s in d$settings) {
    iv <- graphics::co.intervals(d$x, number = s[1], overlap = s[2])
    counts <- apply(iv, 1, function(e) sum(d$x >= e[1] & d$x <= e[2]))
    cases <- c(cases, sprintf(
      "{\"number\": %d, \"overlap\": %s, \"lower\": %s, \"upper\": %s, \"count\": [%s]}",
      as.integer(s[1]), num(s[2]), vec(iv[, 1]), vec(iv[, 2]),
      paste(counts, collapse = ", ")))
  }
  out <- c(out, sprintf("{\"name\": \"%s\", \"x\": %s,\n \"cases\": [\n  %s]}",
                        d$name, vec(d$x), paste(cases, collapse = ",\n  ")))
}
text <- paste0(
  "{\"source\": \"R ", getRversion(), " graphics::co.intervals(x, number, overlap); ",
  "count = sum(x >= lower & x <= upper); written by tests/reference/bands_r.R\",\n",
  "\"datasets\": [\n", paste(out, collapse = ",\n"), "]}\n")

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/bands_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
