//! Covariance screening on data from `trajweave_core::simulate` with a known covariance:
//! the generating structure must rank first by AIC and its parameters must come back.
//!
//! Reference: the generating model itself (simulate's documented formula). Covariate effects,
//! the random slope and dropout are switched off, so by simulate's documentation the mean is
//! exactly intercept + slope t, and the residuals are y minus that known mean (no mean model
//! is fitted). Then y - mean = U + W(t) + e with var U = sd_intercept^2, W stationary with
//! variance serial_sd^2 and correlation exp(-|u| / serial_range), var e = noise_sd^2.

use trajweave_core::correlation::screen::{screen_structures, ScreenOptions, Screening};
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

#[test]
fn thread_count_changes_nothing() {
    // Bit-identical results with 1 and 3 threads (fixed subject blocks, block-order sums).
    let o = SimulateOptions {
        subjects: 1300,
        seed: 8,
        visit_interval: 1.0,
        visit_jitter: 0.05,
        max_years: 5.5,
        min_years: 5.5,
        ..Default::default()
    };
    let panel = simulate(&o).unwrap().to_panel().unwrap();
    let resid: Vec<f64> = panel.response().iter().map(|y| y - 50.0).collect();
    let options = ScreenOptions {
        grid: Some(
            trajweave_core::TimeGrid::schedule((0..6).map(f64::from).collect(), 0.3).unwrap(),
        ),
        ..Default::default()
    };
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| screen_structures(&panel, &resid, &options).unwrap())
    };
    let (a, b) = (run(1), run(3));
    assert_eq!(a.fits.len(), 7);
    for (x, y) in a.fits.iter().zip(&b.fits) {
        assert_eq!(x.loglik.to_bits(), y.loglik.to_bits(), "{}", x.structure);
        let bits = |v: &[f64]| v.iter().map(|p| p.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&x.parameters), bits(&y.parameters), "{}", x.structure);
    }
}
