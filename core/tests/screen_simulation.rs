//! Covariance screening on data from `trajweave_core::simulate` with a known covariance:
//! the generating structure must rank first by AIC and its parameters must come back.
//!
//! The demo data (every simulator setting on, residuals from a cubic mean without covariates):
//! intercept + slope + exponential + error ranks first, within 20 % of the values the
//! simulator's settings and covariate distributions imply (derived in that test).
//!
//! The other panels:
//! Reference: the generating model itself (simulate's documented formula). Covariate effects,
//! the random slope and dropout are switched off, so by simulate's documentation the mean is
//! exactly intercept + slope t, and the residuals are y minus that known mean (no mean model
//! is fitted). Then y - mean = U + W(t) + e with var U = sd_intercept^2, W stationary with
//! variance serial_sd^2 and correlation exp(-|u| / serial_range), var e = noise_sd^2.

use trajweave_core::correlation::screen::{screen_structures, ScreenOptions, Screening};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
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
    assert!(best.converged && !best.flagged, "{best:?}");
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
    let s = screen(5.0, 0.0, 3.0);
    check(&s, "exchangeable", &[25.0, 9.0]);
    // With no serial process, intercept + exponential + error can only gain by a serial part
    // that acts as a second random intercept: its range runs up the ridge to the end of the
    // searched interval (10 x the longest follow-up), which the flags must say.
    let iee = s
        .fits
        .iter()
        .find(|f| f.structure == "intercept_exponential_error")
        .unwrap();
    let range = iee
        .parameter_names
        .iter()
        .position(|n| n == "range")
        .unwrap();
    assert!(iee.at_boundary[range], "{iee:?}");
    assert!(iee.flagged);
    assert!(iee
        .flags
        .iter()
        .any(|f| f.starts_with("range is at the upper edge of its searched interval")));
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
    assert_eq!(a.fits.len(), 9);
    for (x, y) in a.fits.iter().zip(&b.fits) {
        assert_eq!(x.loglik.to_bits(), y.loglik.to_bits(), "{}", x.structure);
        let bits = |v: &[f64]| v.iter().map(|p| p.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&x.parameters), bits(&y.parameters), "{}", x.structure);
    }
}

/// Covariate distributions of `simulate` (core/src/data/simulate.rs, module doc): age ~
/// N(62, 12^2) clipped to [18, 95], female ~ Bernoulli(0.45), diabetes ~ Bernoulli(0.35),
/// acr ~ exp(N(ln 30, 1.2^2)), all independent of each other and of the random effects.
const AGE_SD: f64 = 12.0;
const P_FEMALE: f64 = 0.45;
const P_DIABETES: f64 = 0.35;
const LN_ACR_SD: f64 = 1.2;

#[test]
fn demo_data_random_slope_structure_is_recovered() {
    // The demo data: `simulate` with its defaults (3000 subjects, seed 2026; the bundled CSV
    // is the same panel rounded to 2 decimals). Residuals from a cubic polynomial in time
    // fitted to all rows (a mean without covariates), so the covariate effects stay in the
    // residuals as extra between-subject variation:
    //
    // intercept (time 0) = a_age (age - 60) + a_female female + U: variance
    //   sd_intercept^2 + a_age^2 var(age) + a_female^2 p (1 - p)
    //   = 100 + 0.09 x 144 + 4 x 0.2475 = 113.95
    //   (the clipping of age at 18 and 95, 3.7 and 2.75 SDs out, changes var(age) by < 0.5 %);
    // slope = g_diab diabetes + g_acr ln(acr / 30) + V: variance
    //   sd_slope^2 + g_diab^2 p (1 - p) + g_acr^2 1.2^2 = 1.44 + 0.2275 + 0.5184 = 2.186;
    // serial variance serial_sd^2 = 16, range serial_range = 1.5, error noise_sd^2 = 9.
    // Informative dropout and the fitted mean bias these a little; 20 % is about 3 to 5
    // standard errors at this size.
    let o = SimulateOptions::default();
    let intercept = o.sd_intercept.powi(2)
        + (o.age_effect * AGE_SD).powi(2)
        + o.female_effect.powi(2) * P_FEMALE * (1.0 - P_FEMALE);
    let slope = o.sd_slope.powi(2)
        + o.diabetes_slope.powi(2) * P_DIABETES * (1.0 - P_DIABETES)
        + (o.acr_slope * LN_ACR_SD).powi(2);
    let truth = [
        ("intercept_variance", intercept),
        ("slope_variance", slope),
        ("serial_variance", o.serial_sd.powi(2)),
        ("range", o.serial_range),
        ("error_variance", o.noise_sd.powi(2)),
    ];
    let panel = simulate(&o).unwrap().to_panel().unwrap();
    let r = residuals(&panel, &MeanModel::Polynomial { degree: 3 }).unwrap();
    let s = screen_structures(&panel, &r.residuals, &ScreenOptions::default()).unwrap();
    let best = &s.fits[0];
    eprintln!("{best:?}");
    assert_eq!(
        best.structure, "intercept_slope_exponential_error",
        "{:#?}",
        s.fits
    );
    assert!(best.converged && !best.flagged, "{best:?}");
    assert_eq!(s.time_origin, 0.0);
    for (name, want) in truth {
        let k = best.parameter_names.iter().position(|n| n == name).unwrap();
        let got = best.parameters[k];
        assert!(
            (got - want).abs() <= REL_TOL * want,
            "{name} = {got}, implied by the simulator {want}"
        );
    }
}
