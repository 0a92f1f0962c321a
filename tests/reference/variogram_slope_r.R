# Recomputes tests/fixtures/variogram_slope_r.json with R's stats::optim, the outside reference
# for the variogram model fits in core/tests/variogram_fit_reference.rs.
#
# Criterion: Cressie (1985), sum_h N_h (gammahat_h / gamma(u_h) - 1)^2, with
# gamma(u) = tau^2 + sigma^2 (1 - exp(-u / phi)) + omega^2 u^2 / 2 (random slope; the stationary
# model without the last term), the range bounded by 10 x the maximum lag as in trajweave.
#
# Input: a panel generated here with R's generator (set.seed; random intercept and slope,
# correlated; an exponential serial process drawn exactly at irregular times; measurement
# error; mean 0, so the values are the residuals). Its empirical variogram is computed here in
# base R by enumerating every within-subject pair (12 equal-width lag bins to 5, classical
# estimate, fewer than 30 pairs: no estimate), the process variance and the weighted mean and
# variance of the visit times by enumerating every between-subject pair. The bins are written
# into the fixture as the input of the fits.
#
# Fits: stats::optim on (sqrt tau^2, sqrt sigma^2, log phi, sqrt omega^2) from a grid of starts,
# each run Nelder-Mead, then BFGS, then Nelder-Mead again (reltol 1e-15); the lowest criterion
# is kept.
#
# Run from the repository root:
#
#   Rscript tests/reference/variogram_slope_r.R          # rewrite the fixture
#   Rscript tests/reference/variogram_slope_r.R --check  # exit 1 if the committed fixture would change

fixture <- file.path("tests", "fixtures", "variogram_slope_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) ifelse(is.na(v), "null", sprintf("%.17g", v))
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")

max_lag <- 5
bins <- 12
min_pairs <- 30
cap <- 10 * max_lag

set.seed(20260612)
rows <- list()
for (i in 1:300) {
  follow <- runif(1, 2, 7)
  t <- 0
  repeat {
    nxt <- t[length(t)] + runif(1, 0.25, 0.8)
    if (nxt > follow) break
    t <- c(t, nxt)
  }
  z <- rnorm(2)
  b0 <- 6 * z[1]
  b1 <- 1.1 * (-0.2 * z[1] + sqrt(1 - 0.04) * z[2])
  w <- numeric(length(t))
  w[1] <- sqrt(6) * rnorm(1)
  for (j in seq_along(t)[-1]) {
    r <- exp(-(t[j] - t[j - 1]) / 0.9)
    w[j] <- r * w[j - 1] + sqrt(6 * (1 - r^2)) * rnorm(1)
  }
  y <- b0 + b1 * t + w + sqrt(3) * rnorm(length(t))
  rows[[i]] <- data.frame(id = i, t = t, r = y)
}
d <- do.call(rbind, rows)

# Within-subject pairs.
u <- v <- numeric()
for (part in split(d, d$id)) {
  if (nrow(part) < 2) next
  k <- which(upper.tri(diag(nrow(part))), arr.ind = TRUE)
  u <- c(u, abs(part$t[k[, 2]] - part$t[k[, 1]]))
  v <- c(v, (part$r[k[, 2]] - part$r[k[, 1]])^2 / 2)
}
keep <- u <= max_lag
u <- u[keep]
v <- v[keep]
edges <- seq(0, max_lag, length.out = bins + 1)
which_bin <- pmin(findInterval(u, edges), bins)
pairs <- tabulate(which_bin, bins)
lag <- ifelse(pairs > 0, tapply(u, factor(which_bin, levels = 1:bins), mean), NA)
classical <- ifelse(pairs >= min_pairs, tapply(v, factor(which_bin, levels = 1:bins), mean), NA)
lag <- as.vector(lag)
classical <- as.vector(classical)

# Between-subject pairs.
between <- outer(d$id, d$id, "!=") & upper.tri(diag(nrow(d)))
idx <- which(between, arr.ind = TRUE)
process_variance <- mean((d$r[idx[, 1]] - d$r[idx[, 2]])^2 / 2)
both <- c(d$t[idx[, 1]], d$t[idx[, 2]])
time_mean <- mean(both)
time_variance <- mean((both - time_mean)^2)
rm(between, idx, both)

ok <- !is.na(classical)
b <- data.frame(u = lag[ok], g = classical[ok], n = pairs[ok])
natural <- function(x, slope) {
  c(x[1]^2, x[2]^2, min(exp(x[3]), cap), if (slope) x[4]^2 else 0)
}
cressie <- function(x, slope) {
  p <- natural(x, slope)
  m <- p[1] + p[2] * (1 - exp(-b$u / p[3])) + p[4] * b$u^2 / 2
  sum(b$n * (b$g / m - 1)^2)
}

fit <- function(slope) {
  level <- mean(b$g)
  best <- NULL
  for (share in c(0.1, 0.3, 1)) {
    for (part in c(0.25, 0.5)) {
      x <- c(sqrt(part * level), sqrt((1 - part) * level), log(share * max_lag))
      if (slope) x <- c(x, sqrt(0.1 * level / max_lag^2))
      f <- function(x) cressie(x, slope)
      o <- stats::optim(x, f, method = "Nelder-Mead", control = list(reltol = 1e-15, maxit = 20000))
      o <- stats::optim(o$par, f, method = "BFGS", control = list(reltol = 1e-15, maxit = 20000))
      o <- stats::optim(o$par, f, method = "Nelder-Mead", control = list(reltol = 1e-15, maxit = 20000))
      if (is.null(best) || o$value < best$value) best <- o
    }
  }
  p <- natural(best$par, slope)
  sprintf(
    paste0(
      "{\"model\": \"exponential\", \"estimate\": \"classical\", \"random_slope\": %s, ",
      "\"error_variance\": %s, \"serial_variance\": %s, \"range\": %s, ",
      "\"slope_variance\": %s, \"criterion\": %s}"
    ),
    if (slope) "true" else "false", num(p[1]), num(p[2]), num(p[3]), num(p[4]), num(best$value)
  )
}

text <- paste0(
  "{\"source\": \"R ", getRversion(), " base enumeration and stats::optim (Nelder-Mead, BFGS), ",
  "written by tests/reference/variogram_slope_r.R\",\n",
  "\"variogram\": {\"lag\": ", vec(lag), ", \"pairs\": ", vec(pairs),
  ", \"classical\": ", vec(classical), ", \"robust\": ", vec(rep(NA, bins)),
  ", \"max_lag\": ", num(max_lag), ", \"process_variance\": ", num(process_variance),
  ", \"time_mean\": ", num(time_mean), ", \"time_variance\": ", num(time_variance), "},\n",
  "\"fits\": [\n", fit(TRUE), ",\n", fit(FALSE), "]}\n"
)

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/variogram_slope_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
