//! Boundary flags of the covariance screening, on data whose maximum lies on a boundary for a
//! reason shown in closed form, a capped optimiser and a singular covariance. (The range of
//! intercept + exponential + error at the edge of its interval on exchangeable data is in
//! screen_simulation.rs.)

mod common;

use common::numbers;
use serde_json::Value;
use trajweave_core::correlation::screen::{screen_structures, ScreenOptions, Structure};
use trajweave_core::{Missing, Panel, SubjectIds};

/// The irregular panel of the scipy fixture (times and subjects only are used here).
fn fixture_panel() -> (Vec<Option<i64>>, Vec<f64>, Vec<f64>) {
    let f: Value = common::load(include_str!("../../tests/fixtures/screen_loglik.json"));
    let p = &f["panels"]["slope"];
    let ids = p["subject"]
        .as_array()
        .unwrap()
        .iter()
        .map(Value::as_i64)
        .collect();
    (ids, numbers(&p["time"]), numbers(&p["resid"]))
}

/// Residuals of each subject minus that subject's least-squares fit on `columns` of (1, t):
/// one column centres each subject, two remove each subject's straight line.
fn within_subject_residuals(ids: &[Option<i64>], t: &[f64], r: &[f64], columns: usize) -> Vec<f64> {
    let mut out = r.to_vec();
    let mut start = 0;
    while start < ids.len() {
        let end = (start..ids.len())
            .find(|&k| ids[k] != ids[start])
            .unwrap_or(ids.len());
        let n = (end - start) as f64;
        let tbar = t[start..end].iter().sum::<f64>() / n;
        let rbar = r[start..end].iter().sum::<f64>() / n;
        let sxx: f64 = t[start..end].iter().map(|x| (x - tbar).powi(2)).sum();
        let sxy: f64 = (start..end).map(|k| (t[k] - tbar) * r[k]).sum();
        let b = if columns == 2 { sxy / sxx } else { 0.0 };
        for k in start..end {
            out[k] = r[k] - rbar - b * (t[k] - tbar);
        }
        start = end;
    }
    out
}

fn only(s: Structure) -> ScreenOptions {
    ScreenOptions {
        candidates: vec![s],
        ..Default::default()
    }
}

#[test]
fn between_subject_variances_at_zero_are_flagged() {
    let (ids, t, r) = fixture_panel();
    let panel = Panel::new(SubjectIds::Int(ids.clone()), &t, &r, vec![], Missing::Error).unwrap();
    let n = r.len() as f64;

    // Closed form: residuals centred within each subject have subject totals 0, so the
    // exchangeable likelihood, -1/2 sum [ln det(tau2 (I + g J)) + r'r / tau2] with
    // det(I + g J) = 1 + n g (determinant lemma) and r'(I + g J)^-1 r = r'r (Sherman-Morrison
    // with 1'r = 0), falls with g: the maximum is nu2 = 0, tau2 = mean r^2.
    let centred = within_subject_residuals(&ids, &t, &r, 1);
    let s = screen_structures(&panel, &centred, &only(Structure::Exchangeable)).unwrap();
    let fit = &s.fits[0];
    let mean_sq = centred.iter().map(|v| v * v).sum::<f64>() / n;
    assert_eq!(fit.parameters[0], 0.0);
    assert!((fit.parameters[1] - mean_sq).abs() < 1e-12 * mean_sq);
    assert_eq!(fit.at_boundary, vec![true, false]);
    assert!(fit.flagged);
    assert!(fit.flags[0].starts_with("intercept_variance is at its lower bound 0"));

    // Closed form: residuals orthogonal to each subject's (1, t) have Z_i' r_i = 0, so under
    // V = Z G Z' + tau2 I the quadratic form is r'r / tau2 for every G (Woodbury) while
    // ln det V grows with G: the supremum is at G = 0 with l the independence maximum
    // -N/2 (ln 2 pi + ln mean r^2 + 1).
    let flat = within_subject_residuals(&ids, &t, &r, 2);
    let s = screen_structures(&panel, &flat, &only(Structure::InterceptSlopeError)).unwrap();
    let fit = &s.fits[0];
    let mean_sq = flat.iter().map(|v| v * v).sum::<f64>() / n;
    let l_independence = -0.5 * n * ((2.0 * std::f64::consts::PI).ln() + mean_sq.ln() + 1.0);
    assert!(
        (fit.loglik - l_independence).abs() < 1e-6 * l_independence.abs(),
        "{fit:?}"
    );
    assert!((fit.parameters[3] - mean_sq).abs() < 1e-6 * mean_sq);
    assert!(fit.at_boundary[0] && fit.at_boundary[1], "{fit:?}");
    assert!(!fit.at_boundary[3]);
    assert!(fit.flagged);
    assert!(fit.flags[0].starts_with("intercept_variance is at its lower bound 0"));
    assert!(fit.flags[1].starts_with("slope_variance is at its lower bound 0"));
}

#[test]
fn a_capped_optimiser_is_flagged() {
    let (ids, t, r) = fixture_panel();
    let panel = Panel::new(SubjectIds::Int(ids), &t, &r, vec![], Missing::Error).unwrap();
    let o = ScreenOptions {
        candidates: vec![Structure::InterceptSlopeExponentialError],
        max_iterations: 3,
        ..Default::default()
    };
    let fit = &screen_structures(&panel, &r, &o).unwrap().fits[0];
    assert!(!fit.converged);
    assert!(fit.flagged);
    assert_eq!(
        fit.flags.last().unwrap(),
        "the optimiser stopped at max_iterations without converging"
    );
}

#[test]
fn a_singular_fit_is_flagged() {
    // Two visits at the same time make two rows of a pure exponential covariance equal (a
    // singular matrix whatever the parameters).
    let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2)]);
    let t = [0.0, 0.0, 0.0, 1.0];
    let r = [0.5, -0.2, 1.0, 0.3];
    let panel = Panel::new(ids, &t, &r, vec![], Missing::Error).unwrap();
    let fit = &screen_structures(&panel, &r, &only(Structure::Exponential))
        .unwrap()
        .fits[0];
    assert_eq!(fit.loglik, f64::NEG_INFINITY);
    assert!(fit.flagged);
    assert_eq!(fit.at_boundary, vec![false, false]);
    assert_eq!(fit.flags, vec!["the covariance is not positive definite"]);
}
