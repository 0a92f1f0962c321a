# Recomputes tests/fixtures/chickweight_r.json from R's ChickWeight (base datasets: 578 weights
# of 50 chicks on four diets, days 0 to 21, some chicks lost early), the outside reference for
# core/tests/groups_reference.rs: per-diet chick and row counts by base R table(), and each
# chick's last day (tapply(Time, Chick, max)) with its dropout cohort on bin edges by
# findInterval(rightmost.closed = TRUE). Run from the repository root:
#
#   Rscript tests/reference/chickweight_r.R          # rewrite the fixture
#   Rscript tests/reference/chickweight_r.R --check  # exit 1 if the committed fixture would change

fixture <- file.path("tests", "fixtures", "chickweight_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) sprintf("%.17g", v)
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")
ints <- function(v) paste0("[", paste(as.integer(v), collapse = ", "), "]")

cw <- as.data.frame(ChickWeight)
chick <- as.integer(as.character(cw$Chick))
diet <- as.integer(as.character(cw$Diet))
first <- !duplicated(chick)
diet_chicks <- table(diet[first])
diet_rows <- table(diet)
last <- tapply(cw$Time, chick, max)        # names are chick ids, sorted numerically
visits <- tapply(cw$Time, chick, length)

grids <- list(
  list(name = "every day its own bin", edges = c(0, 1, seq(3, 19, 2), 20.5, 21)),
  list(name = "days 20 and 21 outside", edges = c(0, 1, seq(3, 19, 2)))
)
grid_json <- character()
for (g in grids) {
  bin <- findInterval(last, g$edges, rightmost.closed = TRUE)
  inside <- bin >= 1 & bin < length(g$edges) & last >= g$edges[1] & last <= g$edges[length(g$edges)]
  bins <- sort(unique(bin[inside]))
  grid_json <- c(grid_json, sprintf(
    "{\"name\": \"%s\", \"edges\": %s, \"bins\": %s, \"chicks\": %s, \"rows\": %s, \"left_out\": %d}",
    g$name, vec(g$edges), ints(bins - 1),
    ints(sapply(bins, function(b) sum(inside & bin == b))),
    ints(sapply(bins, function(b) sum(visits[inside & bin == b]))),
    sum(!inside)))
}

text <- paste0(
  "{\"source\": \"R ", getRversion(), " datasets::ChickWeight; counts by table(), last day by ",
  "tapply(Time, Chick, max), cohorts by findInterval(rightmost.closed = TRUE); written by ",
  "tests/reference/chickweight_r.R\",\n",
  "\"chick\": ", ints(chick), ",\n\"time\": ", vec(cw$Time), ",\n\"weight\": ", vec(cw$weight),
  ",\n\"diet\": ", ints(diet), ",\n",
  "\"diet_levels\": ", ints(names(diet_chicks)), ",\n",
  "\"diet_chicks\": ", ints(diet_chicks), ",\n\"diet_rows\": ", ints(diet_rows), ",\n",
  "\"last_chick\": ", ints(names(last)), ",\n\"last_day\": ", vec(last), ",\n",
  "\"dropout\": [\n  ", paste(grid_json, collapse = ",\n  "), "]}\n")

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/chickweight_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
