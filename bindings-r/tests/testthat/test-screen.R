# Covariance screening: structure_loglik(), screen_structures(), implied_correlation() and
# process_variance(). Every expected value is computed here with base R (chol, backsolve,
# crossprod, outer, cov2cor), is a closed form, the generating truth of a simulation, or comes
# from R's nlme (tests/fixtures/screen_nlme_r.json); none comes from trajweave itself.

TOL_LOGLIK <- 1e-9
TOL_PROCESS <- 1e-12

# Base R: the multivariate normal log density of r_i ~ N(0, V_i), summed over subjects, with
# V_i = L L' from chol() (R returns the upper factor U = L'):
# -1/2 (n log 2 pi + 2 sum log diag(L) + |L^-1 r|^2).
mvn_loglik <- function(id, t, r, covariance) {
  total <- 0
  for (s in unique(id)) {
    k <- which(id == s)
    k <- k[order(t[k])]
    V <- covariance(t[k])
    U <- chol(V)
    z <- backsolve(U, r[k], transpose = TRUE) # solves L z = r
    total <- total - 0.5 * (length(k) * log(2 * pi) + 2 * sum(log(diag(U))) + sum(z^2))
  }
  total
}

# A seeded panel with irregular, distinct visit times per subject (1 to 6 visits), rows
# shuffled so that the caller's order is not the panel's.
irregular_frame <- function() {
  set.seed(21)
  rows <- list()
  for (i in 1:30) {
    n <- sample(1:6, 1)
    t <- sort(runif(n, 0, 5))
    rows[[i]] <- data.frame(id = i, t = t, r = rnorm(n, sd = 1.5))
  }
  d <- do.call(rbind, rows)
  d[sample(nrow(d)), ]
}

# Z G Z' with Z = cbind(1, t) and G from two variances and a correlation.
slope_part <- function(t, v0, v1, r) {
  c01 <- r * sqrt(v0 * v1)
  Z <- cbind(1, t)
  Z %*% matrix(c(v0, c01, c01, v1), 2) %*% t(Z)
}

test_that("structure_loglik matches a base-R normal density on irregular visits", {
  d <- irregular_frame()
  p <- panel(d$id, d$t, d$r)
  lag <- function(t) abs(outer(t, t, "-"))
  cases <- list(
    independence = list(c(2.3), function(t) diag(2.3, length(t))),
    exchangeable = list(
      c(1.5, 0.7),
      function(t) matrix(1.5, length(t), length(t)) + diag(0.7, length(t))
    ),
    exponential = list(c(2, 1.3), function(t) 2 * exp(-lag(t) / 1.3)),
    gaussian = list(c(2, 1.3), function(t) 2 * exp(-(lag(t) / 1.3)^2)),
    intercept_exponential_error = list(
      c(1.2, 0.8, 1.5, 0.4),
      function(t) 1.2 + 0.8 * exp(-lag(t) / 1.5) + diag(0.4, length(t))
    ),
    intercept_slope_error = list(
      c(1.1, 0.2, -0.3, 0.6),
      function(t) slope_part(t, 1.1, 0.2, -0.3) + diag(0.6, length(t))
    ),
    intercept_slope_exponential_error = list(
      c(1.1, 0.2, 0.4, 0.8, 1.5, 0.3),
      function(t) slope_part(t, 1.1, 0.2, 0.4) + 0.8 * exp(-lag(t) / 1.5) + diag(0.3, length(t))
    )
  )
  for (name in names(cases)) {
    expected <- mvn_loglik(d$id, d$t, d$r, cases[[name]][[2]]) # base::chol, base::backsolve
    got <- structure_loglik(p, d$r, name, cases[[name]][[1]])
    expect_equal(got, expected, tolerance = TOL_LOGLIK, info = name)
  }
})

test_that("structure_loglik matches a base-R normal density for toeplitz and unstructured on a schedule", {
  set.seed(22)
  k <- 5
  rows <- list()
  for (i in 1:40) {
    seen <- sort(c(0, sample(1:(k - 1), sample(2:(k - 1), 1)))) # bins of the visits
    rows[[i]] <- data.frame(id = i, t = seen + runif(length(seen), -0.2, 0.2), bin = seen + 1)
  }
  d <- do.call(rbind, rows)
  d$r <- rnorm(nrow(d))
  d <- d[sample(nrow(d)), ]
  p <- panel(d$id, d$t, d$r)
  schedule <- 0:(k - 1)
  bin_of <- function(t) round(t) + 1 # the schedule window each visit lies in

  lags <- c(2, 1.2, 0.8, 0.5, 0.3)
  toeplitz_V <- stats::toeplitz(lags)
  expected <- mvn_loglik(d$id, d$t, d$r, function(t) toeplitz_V[bin_of(t), bin_of(t), drop = FALSE])
  got <- structure_loglik(p, d$r, "toeplitz", lags, schedule = schedule, tolerance = 0.25)
  expect_equal(got, expected, tolerance = TOL_LOGLIK) # stats::toeplitz, base::chol

  A <- matrix(rnorm(k * k), k)
  S <- crossprod(A) + diag(0.5, k)
  upper_by_row <- t(S)[lower.tri(S, diag = TRUE)] # cov_0_0, cov_0_1, ..., cov_1_1, ...
  expected <- mvn_loglik(d$id, d$t, d$r, function(t) S[bin_of(t), bin_of(t), drop = FALSE])
  got <- structure_loglik(p, d$r, "unstructured", upper_by_row, schedule = schedule, tolerance = 0.25)
  expect_equal(got, expected, tolerance = TOL_LOGLIK) # base::chol
})

test_that("structure_loglik is -Inf where base R finds the matrix not positive definite", {
  # Two visits at the same time make two rows of a pure serial covariance equal.
  p <- panel(c(1, 1, 2, 2), c(0, 0, 0, 1), c(0.5, -0.2, 1, 0.3))
  V <- 2 * exp(-abs(outer(c(0, 0), c(0, 0), "-")) / 1)
  expect_identical(qr(V)$rank, 1L) # base::qr: singular
  expect_identical(structure_loglik(p, c(0.5, -0.2, 1, 0.3), "exponential", c(2, 1)), -Inf)

  # The screening keeps such a fit, last, with loglik -Inf and NA parameters.
  set.seed(23)
  id <- rep(1:20, each = 4)
  t <- rep(c(0, 1, 1, 2), 20)
  r <- rnorm(80) + rep(rnorm(20), each = 4)
  s <- screen_structures(panel(id, t, r), r, candidates = c("exponential", "exchangeable"))
  expect_identical(s$fits$structure, c("exchangeable", "exponential"))
  expect_identical(s$fits$loglik[2], -Inf)
  expect_identical(s$fits$delta_aic[2], Inf)
  expect_true(all(is.na(s$parameters$exponential)))
  expect_false(is.na(s$fits$note[2]))
})

# Simulated panels with the covariate effects, the random slope and dropout switched off, so the
# residuals from the generating mean 58 - 1.2 t are intercept + serial process + error only.
plain_simulation <- function(subjects, seed, ...) {
  simulate_panel(
    subjects = subjects, seed = seed, age_effect = 0, female_effect = 0, diabetes_slope = 0,
    acr_slope = 0, sd_slope = 0, dropout_base = -50, dropout_decline = 0,
    dialysis_threshold = -1e9, ...
  )
}

screen_simulation <- function(sim, ...) {
  p <- panel_from_frame(sim, "patient", "years", "egfr")
  r <- sim$egfr - (58 - 1.2 * sim$years)
  list(panel = p, residuals = r, screening = screen_structures(p, r, ...))
}

# The maximised log-likelihood of every finite fit equals structure_loglik at its parameters.
expect_loglik_at_parameters <- function(x, ...) {
  s <- x$screening
  for (i in which(is.finite(s$fits$loglik))) {
    name <- s$fits$structure[i]
    again <- structure_loglik(x$panel, x$residuals, name, s$parameters[[name]], ...)
    expect_equal(again, s$fits$loglik[i], tolerance = TOL_LOGLIK, info = name)
  }
}

# Each estimate within `share` of the generating value (the truth of the simulation).
expect_near_truth <- function(estimate, truth, share) {
  expect_named(estimate, names(truth))
  expect_true(all(abs(estimate / truth - 1) < share), info = paste(format(estimate), collapse = " "))
}

test_that("screen_structures ranks the generating structure first and recovers it", {
  # 2000 subjects, about 15000 visits: sampling errors of a few per cent.
  # Random intercept plus error only (serial_sd = 0): exchangeable, nu2 = 100, tau2 = 9.
  ex <- screen_simulation(plain_simulation(2000, 7, serial_sd = 0))
  s <- ex$screening
  expect_s3_class(s, "trajweave_screening")
  expect_identical(s$fits$structure[1], "exchangeable")
  expect_near_truth(s$parameters$exchangeable,
    c(intercept_variance = 100, error_variance = 9), 0.1
  )
  expect_loglik_at_parameters(ex)

  # The defaults: intercept (sd 10) + exponential serial (sd 4, range 1.5) + error (sd 3).
  iee <- screen_simulation(plain_simulation(2000, 8))
  s <- iee$screening
  expect_identical(s$fits$structure[1], "intercept_exponential_error")
  expect_near_truth(s$parameters$intercept_exponential_error,
    c(intercept_variance = 100, serial_variance = 16, range = 1.5, error_variance = 9), 0.15
  )
  expect_loglik_at_parameters(iee)

  # Serial process alone (no intercept, no error): exponential, s2 = 16, range 1.5.
  expo <- screen_simulation(plain_simulation(2000, 9, sd_intercept = 0, noise_sd = 0))
  s <- expo$screening
  expect_identical(s$fits$structure[1], "exponential")
  expect_near_truth(s$parameters$exponential, c(variance = 16, range = 1.5), 0.1)
  expect_loglik_at_parameters(expo)
})

test_that("screen_structures reports every field, AIC and BIC by their definitions", {
  x <- screen_simulation(plain_simulation(150, 3))
  s <- x$screening
  f <- s$fits
  expect_named(f, c(
    "structure", "n_parameters", "loglik", "aic", "bic", "delta_aic", "delta_bic",
    "iterations", "converged", "flagged", "note"
  ))
  expect_named(s, c(
    "fits", "parameters", "at_boundary", "flags", "skipped", "subjects", "observations",
    "time_origin"
  ))
  expect_identical(names(s$parameters), f$structure)
  expect_identical(names(s$at_boundary), f$structure)
  expect_identical(lapply(s$at_boundary, names), lapply(s$parameters, names))
  expect_identical(unname(vapply(s$flags, length, 1L) > 0), f$flagged)
  expect_identical(s$time_origin, 0)
  expect_true(all(c("intercept_slope_error", "intercept_slope_exponential_error") %in% f$structure))
  expect_identical(unname(lengths(s$parameters)), as.integer(f$n_parameters))
  expect_identical(f$structure, f$structure[order(f$aic)])
  expect_equal(s$observations, length(x$residuals)) # no row dropped
  expect_equal(s$subjects, 150) # every simulated subject has a first visit
  # Akaike (1974), Schwarz (1978) with N the observations.
  expect_equal(f$aic, -2 * f$loglik + 2 * f$n_parameters, tolerance = 1e-14)
  expect_equal(f$bic, -2 * f$loglik + f$n_parameters * log(length(x$residuals)), tolerance = 1e-14)
  expect_equal(f$delta_aic, f$aic - min(f$aic), tolerance = 1e-14)
  expect_identical(s$skipped$structure, c("toeplitz", "unstructured")) # no grid given
  expect_output(print(s), "covariance screening")
})

test_that("unstructured on complete data is the base-R covariance of the residual table", {
  # Every subject seen at 0, 0.5, ..., 5 (no jitter, no missed visit, same follow-up).
  sim <- plain_simulation(200, 5, visit_jitter = 0, missed_visit = 0, min_years = 5, max_years = 5)
  schedule <- seq(0, 5, by = 0.5)
  x <- screen_simulation(sim,
    candidates = c("unstructured", "toeplitz", "exponential"), schedule = schedule,
    tolerance = 0.1
  )
  s <- x$screening
  expect_setequal(s$fits$structure, c("unstructured", "toeplitz", "exponential"))
  wide <- matrix(x$residuals[order(sim$patient, sim$years)], ncol = length(schedule), byrow = TRUE)
  S <- crossprod(wide) / nrow(wide) # the complete-data ML covariance (divisor m)
  expect_equal(unname(s$parameters$unstructured), t(S)[lower.tri(S, diag = TRUE)],
    tolerance = 1e-8
  )
  expect_loglik_at_parameters(x, schedule = schedule, tolerance = 0.1)
})

test_that("random-slope maxima match nlme::lme by ML (tests/fixtures/screen_nlme_r.json)", {
  # lme(y ~ 1, random = ~ time | id [, corExp(nugget = TRUE)], method = "ML"): its fixed
  # intercept b is removed (r = y - b; lme's theta maximises l(b, theta), see the R script),
  # then our maximum is lme's log-likelihood and, where interior, its parameters.
  fx <- tw_fixture("screen_nlme_r.json")
  for (case in fx$cases) {
    label <- paste(case$name, case$structure)
    id <- as.integer(unlist(case$subject))
    r <- tw_numbers(case$y) - case$fixed_intercept
    p <- panel(id, tw_numbers(case$time), r)
    s <- screen_structures(p, r, candidates = case$structure)
    want <- case$loglik
    # Our density at lme's parameters is lme's logLik.
    at <- structure_loglik(p, r, case$structure, tw_numbers(case$parameters))
    expect_equal(at, want, tolerance = 1e-9, info = label)
    if (case$compare == "loglik_and_parameters") {
      expect_equal(s$fits$loglik, want, tolerance = 1e-4, info = label)
      expect_equal(unname(s$parameters[[1]]), tw_numbers(case$parameters),
        tolerance = 1e-4, info = label
      )
      expect_false(s$fits$flagged, info = label)
    } else {
      # lme stops on the boundary short of the edge: ours is at least its l, and flagged.
      expect_gte(s$fits$loglik, want)
      expect_equal(s$fits$loglik, want, tolerance = 1e-4, info = label)
      expect_true(s$fits$flagged, info = label)
    }
  }
})

test_that("a between-subject variance at its bound 0 is flagged (closed form)", {
  # Residuals centred within each subject have subject totals 0, so the exchangeable
  # likelihood falls with nu2 (determinant lemma, Sherman-Morrison): nu2 = 0, tau2 = mean r^2.
  d <- irregular_frame()
  r <- d$r - ave(d$r, d$id)
  p <- panel(d$id, d$t, r)
  s <- screen_structures(p, r, candidates = "exchangeable")
  expect_equal(unname(s$parameters$exchangeable), c(0, mean(r^2)), tolerance = 1e-12)
  expect_identical(unname(s$at_boundary$exchangeable), c(TRUE, FALSE))
  expect_true(s$fits$flagged)
  expect_match(s$flags$exchangeable[1], "^intercept_variance is at its lower bound 0")
  expect_output(print(s), "flag on exchangeable: intercept_variance is at its lower bound 0")
  # An optimiser stopped by max_iterations is flagged too.
  s <- screen_structures(p, d$r, candidates = "intercept_slope_error", max_iterations = 2)
  expect_false(s$fits$converged)
  expect_identical(
    s$flags$intercept_slope_error[length(s$flags$intercept_slope_error)],
    "the optimiser stopped at max_iterations without converging"
  )
})

test_that("implied_correlation is cov2cor of the two-visit covariance built in base R", {
  lags <- c(0, 0.5, 2, -1)
  cases <- list(
    list("exchangeable", c(3, 1), function(t) matrix(3, 2, 2) + diag(1, 2)),
    list("exponential", c(2, 1.5), function(t) 2 * exp(-abs(outer(t, t, "-")) / 1.5)),
    list("intercept_slope_error", c(1.1, 0.2, -0.3, 0.6), function(t) {
      slope_part(t, 1.1, 0.2, -0.3) + diag(0.6, 2)
    }),
    list("intercept_slope_exponential_error", c(1.1, 0.2, 0.4, 0.8, 1.5, 0.3), function(t) {
      slope_part(t, 1.1, 0.2, 0.4) + 0.8 * exp(-abs(outer(t, t, "-")) / 1.5) + diag(0.3, 2)
    })
  )
  for (case in cases) {
    for (t0 in c(0, 3)) {
      # Two separate measurements at t0 and t0 + u: each with its own error.
      expected <- vapply(lags, function(u) cov2cor(case[[3]](c(t0, t0 + u)))[1, 2], 1)
      got <- implied_correlation(case[[1]], case[[2]], time = t0, lags = lags)
      expect_equal(got, expected, tolerance = 1e-14, info = case[[1]])
    }
  }
  expect_error(implied_correlation("toeplitz", c(2, 1), 0, 1),
    class = "trajweave_invalid_option", regexp = "`grid`"
  )
  expect_identical(
    implied_correlation("toeplitz", c(2, 1), 0, c(1, 5), schedule = c(0, 1), tolerance = 0.2),
    c(0.5, NA)
  )
})

test_that("process_variance matches a brute-force mean over between-subject pairs", {
  d <- irregular_frame()
  p <- panel(d$id, d$t, d$r)
  half_sq <- outer(d$r, d$r, "-")^2 / 2
  between <- outer(d$id, d$id, "!=") & upper.tri(half_sq)
  expected <- mean(half_sq[between]) # base::outer over all pairs of rows
  expect_equal(process_variance(p, d$r), expected, tolerance = TOL_PROCESS)
  # The same number variogram() reports beside its bins.
  vg <- variogram(p, d$r, lag_bins = 2, min_pairs = 1)
  expect_equal(process_variance(p, d$r), vg$process_variance, tolerance = 0)
})

test_that("screening refuses bad input with classed conditions naming the argument", {
  d <- irregular_frame()
  p <- panel(d$id, d$t, d$r)
  expect_error(screen_structures(p, d$r, candidates = "ar1"),
    class = "trajweave_invalid_option", regexp = "`candidates` = \"ar1\""
  )
  expect_error(screen_structures(p, d$r, candidates = NA_character_),
    class = "trajweave_invalid_option", regexp = "`candidates`"
  )
  expect_error(structure_loglik(p, d$r, "ar1", 1),
    class = "trajweave_invalid_option", regexp = "`structure`"
  )
  expect_error(structure_loglik(p, d$r, "exponential", 1),
    class = "trajweave_invalid_option", regexp = "`parameters`.*exponential takes 2 parameters"
  )
  expect_error(screen_structures(p, d$r, candidates = "toeplitz"),
    class = "trajweave_invalid_option", regexp = "`grid`"
  )
  expect_error(structure_loglik(p, d$r, "unstructured", 1),
    class = "trajweave_invalid_option", regexp = "`grid`"
  )
  expect_error(screen_structures(p, d$r[-1]),
    class = "trajweave_length_mismatch", regexp = "`residuals`"
  )
  expect_error(structure_loglik(p, c(d$r, 0), "independence", 1),
    class = "trajweave_length_mismatch", regexp = "`residuals`"
  )
  expect_error(process_variance(p, d$r[-1]),
    class = "trajweave_length_mismatch", regexp = "`residuals`"
  )
  expect_error(screen_structures(p, d$r, convergence = 0.5),
    class = "trajweave_invalid_option", regexp = "`convergence`"
  )
  expect_error(screen_structures(p, d$r, max_iterations = 0),
    class = "trajweave_invalid_option", regexp = "`max_iterations`"
  )
  expect_error(screen_structures(p, "a"),
    class = "trajweave_invalid_option", regexp = "`residuals`"
  )
  expect_tw_error(
    structure_loglik(p, d$r, "intercept_slope_error", c(1, 0.5, 1.5, 1)), "invalid_option",
    paste(
      "`parameters` = intercept_slope_correlation = 1.5 is not allowed:",
      "intercept_slope_correlation must be in [-1, 1]"
    )
  )
  expect_tw_error(
    implied_correlation("intercept_slope_exponential_error", rep(1, 5), 0, 1), "invalid_option",
    paste(
      "`parameters` = 5 value(s) is not allowed: intercept_slope_exponential_error takes 6",
      "parameters: intercept_variance, slope_variance, intercept_slope_correlation,",
      "serial_variance, range, error_variance"
    )
  )
  expect_error(implied_correlation("ar1", 1, 0, 1),
    class = "trajweave_invalid_option", regexp = "`structure`"
  )
})
