# Recomputes tests/fixtures/screen_nlme_r.json: maximum-likelihood fits of the random-slope
# covariance structures by R's nlme (a test-only reference, Debian r-cran-nlme), the outside
# reference for core/tests/screen_nlme.rs.
#
# trajweave screens residuals with the mean fixed at 0; lme always estimates fixed effects. So
# lme is fitted with one fixed intercept, y ~ 1, by ML, and the fixture stores y and lme's
# estimate b of that intercept: the Rust test screens r = y - b. Because lme's (b, theta) is
# the joint maximum of l(beta, theta), theta maximises l(b, theta) over theta, so trajweave's
# maximum on r must be lme's theta with lme's log-likelihood (same Gaussian density, all
# constants included). lme's parameters map as:
#   getVarCov(fit)                 -> intercept_variance, slope_variance (G at time 0, the
#                                     times as given) and intercept_slope_correlation;
#   sigma^2 (1 - nugget), range    -> serial_variance, range (corExp: exp(-d / range));
#   sigma^2 nugget (or sigma^2)    -> error_variance.
#
# Cases:
# - ChickWeight (R base datasets): y = log(weight) minus the mean log weight of each day
#   (days 0, 2, ..., 21 are shared by all chicks), id = Chick, time = Time in days;
#   random = ~ Time | Chick, without and with corExp(form = ~ Time | Chick, nugget = TRUE).
#   With the serial part the maximum lies on the boundary (a nugget and an intercept
#   variance near 0): only the log-likelihood is compared there (`compare` = "loglik").
# - a simulated panel (set.seed(13), 250 subjects, 3 to 9 irregular visits): random intercept
#   and slope (G = [[4, 0.4], [0.4, 0.3]]), exponential serial process (variance 2, range 1.2)
#   and error (variance 0.8) around a mean of 10; both structures, interior maxima.
#
# Run from the repository root:
#
#   Rscript tests/reference/screen_nlme_r.R          # rewrite the fixture
#   Rscript tests/reference/screen_nlme_r.R --check  # exit 1 if the committed fixture would change

suppressPackageStartupMessages(library(nlme))

fixture <- file.path("tests", "fixtures", "screen_nlme_r.json")
check <- "--check" %in% commandArgs(trailingOnly = TRUE)

num <- function(v) sprintf("%.17g", v)
vec <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")
ints <- function(v) paste0("[", paste(as.integer(v), collapse = ", "), "]")

control <- lmeControl(
  maxIter = 1000, msMaxIter = 1000, msMaxEval = 5000, tolerance = 1e-10, msTol = 1e-12,
  niterEM = 50
)

# lme by ML with a fixed intercept; `serial` adds corExp with a nugget.
fit_case <- function(name, d, serial, compare, ctl = control) {
  fit <- if (serial) {
    lme(y ~ 1,
      random = ~ time | id, data = d, method = "ML", control = ctl,
      correlation = corExp(form = ~ time | id, nugget = TRUE)
    )
  } else {
    lme(y ~ 1, random = ~ time | id, data = d, method = "ML", control = ctl)
  }
  g <- unclass(getVarCov(fit))
  s2 <- fit$sigma^2
  pars <- c(g[1, 1], g[2, 2], g[1, 2] / sqrt(g[1, 1] * g[2, 2]))
  if (serial) {
    ce <- coef(fit$modelStruct$corStruct, unconstrained = FALSE)
    pars <- c(pars, s2 * (1 - ce[["nugget"]]), ce[["range"]], s2 * ce[["nugget"]])
  } else {
    pars <- c(pars, s2)
  }
  structure <- if (serial) "intercept_slope_exponential_error" else "intercept_slope_error"
  sprintf(
    paste0(
      "{\"name\": \"%s\", \"structure\": \"%s\", \"compare\": \"%s\",\n",
      " \"fixed_intercept\": %s, \"loglik\": %s, \"parameters\": %s,\n",
      " \"subject\": %s,\n \"time\": %s,\n \"y\": %s}"
    ),
    name, structure, compare, num(fixef(fit)[[1]]), num(as.numeric(logLik(fit))), vec(pars),
    ints(d$id), vec(d$time), vec(d$y)
  )
}

cw <- as.data.frame(ChickWeight)
chick <- data.frame(id = as.integer(as.character(cw$Chick)), time = cw$Time, y = log(cw$weight))
chick$y <- chick$y - ave(chick$y, chick$time)

set.seed(13)
G <- matrix(c(4, 0.4, 0.4, 0.3), 2)
L <- t(chol(G))
rows <- list()
for (i in 1:250) {
  n <- sample(3:9, 1)
  t <- cumsum(c(runif(1, 0, 0.5), runif(n - 1, 0.2, 1.5)))
  b <- L %*% rnorm(2)
  w <- numeric(n)
  w[1] <- rnorm(1, 0, sqrt(2))
  for (j in seq_len(n)[-1]) {
    rho <- exp(-(t[j] - t[j - 1]) / 1.2)
    w[j] <- rho * w[j - 1] + sqrt(2 * (1 - rho^2)) * rnorm(1)
  }
  rows[[i]] <- data.frame(id = i, time = t, y = 10 + b[1] + b[2] * t + w + rnorm(n, 0, sqrt(0.8)))
}
simulated <- do.call(rbind, rows)

cases <- c(
  fit_case("chickweight", chick, FALSE, "loglik_and_parameters"),
  # nlminb stops with "singular convergence" on this boundary maximum and optim's BFGS stops
  # 0.08 short of it; optim's Nelder-Mead with many iterations gets within 0.003.
  fit_case("chickweight", chick, TRUE, "loglik",
    ctl = lmeControl(opt = "optim", optimMethod = "Nelder-Mead", msMaxIter = 20000)
  ),
  fit_case("simulated", simulated, FALSE, "loglik_and_parameters"),
  fit_case("simulated", simulated, TRUE, "loglik_and_parameters")
)

text <- paste0(
  "{\"source\": \"R ", getRversion(), " nlme ", packageVersion("nlme"), " lme(y ~ 1, random = ",
  "~ time | id[, correlation = corExp(form = ~ time | id, nugget = TRUE)], method = \\\"ML\\\"); ",
  "written by tests/reference/screen_nlme_r.R\",\n\"cases\": [\n",
  paste(cases, collapse = ",\n"), "]}\n"
)

if (check) {
  old <- if (file.exists(fixture)) paste0(paste(readLines(fixture), collapse = "\n"), "\n") else ""
  if (!identical(old, text)) {
    message(fixture, " differs from what tests/reference/screen_nlme_r.R would write")
    quit(status = 1)
  }
  message(fixture, " is up to date")
} else {
  writeLines(text, fixture, sep = "")
}
