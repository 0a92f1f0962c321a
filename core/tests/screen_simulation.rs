//! Covariance screening on data from `trajweave_core::simulate` with a known covariance:
//! the generating structure must rank first by AIC and its parameters must come back.
//!
//! Reference: the generating model itself (simulate's documented formula). Covariate effects,
//! the random slope and dropout are switched off, so by simulate's documentation the mean is
//! exactly intercept + slope t, and the residuals are y minus that known mean (no mean model
//! is fitted). Then y - mean = U + W(t) + e with var U = sd_intercept^2, W stationary with
//! variance serial_sd^2 and correlation exp(-|u| / serial_range), var e = noise_sd^2.

use trajweave_core::screen::{screen_structures, ScreenOptions, Screening};
use trajweave_core::{simulate, SimulateOptions};

/// Subjects per simulated panel and the seed (fixed, so the test is deterministic).
const SUBJECTS: usize = 1500;
const SEED: u64 = 515;
/// Relative tolerance on recovered variances and the range (about 4 to 5 standard errors
/// at this size).
const REL_TOL: f64 = 0.2;

fn screen(sd_intercept: f64, serial_sd: f64, noise_sd: f64) -> Screening {
    let o = SimulateOptions {
        subjects: SUBJECTS,
        seed: SEED,
        sd_intercept,
        serial_sd,
        serial_range: 1.5,
        noise_sd,
        sd_slope: 0.0,
        age_effect: 0.0,
        female_effect: 0.0,
        diabetes_slope: 0.0,
        acr_slope: 0.0,
        dropout_base: -1e3,
        dropout_decline: 0.0,
        dialysis_threshold: -1e9,
        ..Default::default()
    };
    let panel = simulate(&o).unwrap().to_panel().unwrap();
    let resid: Vec<f64> = panel
        .time()
        .iter()
        .zip(panel.response())
        .map(|(&t, &y)| y - (o.intercept + o.slope * t))
        .collect();
    screen_structures(&panel, &resid, &ScreenOptions::default()).unwrap()
}

fn check(s: &Screening, structure: &str, truth: &[f64]) {
    let best = &s.fits[0];
    eprintln!("{structure}: {:?} (generated {truth:?})", best.parameters);
    assert_eq!(best.structure, structure, "ranking: {:#?}", s.fits);
    assert!(best.converged);
    for ((name, got), want) in best.parameter_names.iter().zip(&best.parameters).zip(truth) {
        assert!(
            (got - want).abs() <= REL_TOL * want,
            "{structure}: {name} = {got}, generated with {want}"
        );
    }
}

#[test]
fn independence_is_recovered() {
    check(&screen(0.0, 0.0, 3.0), "independence", &[9.0]);
}

#[test]
fn exchangeable_is_recovered() {
    check(&screen(5.0, 0.0, 3.0), "exchangeable", &[25.0, 9.0]);
}

#[test]
fn exponential_is_recovered() {
    check(&screen(0.0, 4.0, 0.0), "exponential", &[16.0, 1.5]);
}

#[test]
fn intercept_exponential_error_is_recovered() {
    check(
        &screen(5.0, 4.0, 2.0),
        "intercept_exponential_error",
        &[25.0, 16.0, 1.5, 4.0],
    );
}
