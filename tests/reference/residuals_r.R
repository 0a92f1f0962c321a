# Recomputes tests/fixtures/residuals_r.json with base R, the outside reference for
# core/tests/individuals_residuals.rs and core/tests/individuals_ranking.rs.
#
# 1. Polynomial residuals: stats::lm(y ~ poly(t, d, raw = TRUE)) (lm(y ~ 1) for d = 0) on two
#    generated panels, one with time in [0, 10] and one with time in calendar years (2000 to
#    2010, badly scaled for raw powers). Where lm's pivoting drops a column as collinear
#    (years, degree 3) the case is written with "lm_dropped": true and no lm values. Raw powers
#    of years are ill conditioned, so lm's own error there is large; each case also holds the
#    2-norm condition number of lm's design (kappa(exact = TRUE)), and the residuals of the same
#    least-squares problem posed on centred time, lm(y ~ poly(t - mean(t), d, raw = TRUE)) (the
#    same column space, so the same residuals in exact arithmetic, and well conditioned).
# 2. ChickWeight (R's datasets): residuals from the day means, weight - ave(weight, Time), and
#    per chick the median and 0.25 quantile (quantile type 7), mean, root mean square, largest
#    absolute value (tapply) and the least-squares slope on Time (coef(lm(r ~ Time))[2]).
# Run from the repository root:
#
#   Rscript tests/reference/residuals_r.R          # rewrite the fixture
#   Rscript tests/reference/residuals_r.R --check  # exit 1 if the committed fixture would change

fixture <- file.path("tests", "fixtures", "residuals_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) ifelse(is.na(v), "\"nan\"", sprintf("%.17g", v))
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")

set.seed(20240612)
n <- 240
subject_a <- sample(rep(1:40, each = 6))           # rows in random order
time_a <- round(10 * runif(n), 3)
y_a <- 3 + 2 * time_a - 0.3 * time_a^2 + 0.02 * time_a^3 + rnorm(40)[subject_a] + rnorm(n)
subject_b <- sample(rep(1:30, each = 8))
time_b <- 2000 + round(10 * runif(n), 4)            # calendar years
y_b <- 50 + 0.8 * (time_b - 2005) - 0.05 * (time_b - 2005)^2 + rnorm(n, sd = 2)
panels <- list(
  list(name = "unit", subject = subject_a, time = time_a, y = y_a),
  list(name = "years", subject = subject_b, time = time_b, y = y_b)
)

poly_out <- character()
for (p in panels) {
  cases <- character()
  for (d in 0:3) {
    tc <- p$time - mean(p$time)
    fit <- if (d == 0) lm(p$y ~ 1) else lm(p$y ~ poly(p$time, d, raw = TRUE))
    fit_c <- if (d == 0) lm(p$y ~ 1) else lm(p$y ~ poly(tc, d, raw = TRUE))
    co <- unname(coef(fit))
    if (anyNA(co)) {
      cases <- c(cases, sprintf(
        "{\"degree\": %d, \"lm_dropped\": true, \"residuals_centred\": %s}",
        d, vec(unname(residuals(fit_c)))))
    } else {
      cases <- c(cases, sprintf(
        paste0("{\"degree\": %d, \"lm_dropped\": false, \"kappa\": %s, \"coefficients\": %s,",
               " \"residuals\": %s, \"residuals_centred\": %s}"),
        d, num(kappa(model.matrix(fit), exact = TRUE)), vec(co), vec(unname(residuals(fit))),
        vec(unname(residuals(fit_c)))))
    }
  }
  poly_out <- c(poly_out, sprintf(
    "{\"name\": \"%s\", \"sd_y\": %s, \"subject\": %s, \"time\": %s, \"y\": %s,\n \"cases\": [\n  %s]}",
    p$name, num(sd(p$y)), vec(p$subject), vec(p$time), vec(p$y),
    paste(cases, collapse = ",\n  ")))
}

cw <- datasets::ChickWeight
chick <- as.integer(as.character(cw$Chick))
r <- cw$weight - ave(cw$weight, cw$Time)
ids <- sort(unique(chick))
f <- factor(chick, levels = ids)
per <- function(g) unname(tapply(r, f, g))
slope <- sapply(ids, function(i) unname(coef(lm(r[chick == i] ~ cw$Time[chick == i]))[2]))
chicks <- sprintf(paste0(
  "{\"subject\": %s, \"time\": %s, \"weight\": %s, \"diet\": %s, \"residual\": %s,\n",
  " \"ids\": %s, \"median\": %s, \"q25\": %s, \"mean\": %s, \"rms\": %s, \"max_abs\": %s,",
  " \"slope\": %s}"),
  vec(chick), vec(cw$Time), vec(cw$weight), vec(as.integer(cw$Diet)), vec(r), vec(ids),
  vec(per(median)), vec(per(function(v) quantile(v, 0.25, type = 7))), vec(per(mean)),
  vec(per(function(v) sqrt(mean(v^2)))), vec(per(function(v) max(abs(v)))), vec(slope))

text <- paste0(
  "{\"source\": \"R ", getRversion(), " stats::lm, tapply, quantile(type = 7) and ",
  "datasets::ChickWeight, written by tests/reference/residuals_r.R\",\n\"polynomial\": [\n",
  paste(poly_out, collapse = ",\n"), "],\n\"chickweight\": ", chicks, "}\n")

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/residuals_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
