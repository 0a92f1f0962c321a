//! Covariance screening against scipy (tests/fixtures/screen_loglik.json, written by
//! tests/reference/screen_py.py): log-likelihoods at fixed parameters vs the sum over
//! subjects of scipy.stats.multivariate_normal.logpdf, and maximised fits vs
//! scipy.optimize.minimize of the same likelihood, and (intercept + slope + error) vs
//! statsmodels MixedLM; closed forms for independence, for unstructured with complete data, and
//! for the boundary fits of residuals with no between-subject part.

mod common;

use common::numbers;
use serde_json::Value;
use trajweave_core::correlation::screen::{
    implied_correlation, screen_structures, structure_loglik, ScreenOptions, Structure,
};
use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};

/// |l - l_scipy| at fixed parameters, absolute (|l| is a few hundred here).
const FIXED_TOL: f64 = 1e-9;
/// |l_max - l_max scipy|, absolute.
const MAX_LOGLIK_TOL: f64 = 1e-6;
/// Relative difference of maximising parameters (the likelihood is flat near its maximum).
const MAX_PARAM_REL_TOL: f64 = 1e-3;

fn fixture() -> Value {
    common::load(include_str!("../../tests/fixtures/screen_loglik.json"))
}

fn panel_of(f: &Value, name: &str) -> (Panel, Vec<f64>) {
    let p = &f["panels"][name];
    let ids = SubjectIds::Int(
        p["subject"]
            .as_array()
            .unwrap()
            .iter()
            .map(Value::as_i64)
            .collect(),
    );
    let time = numbers(&p["time"]);
    let resid = numbers(&p["resid"]);
    let panel = Panel::new(ids, &time, &resid, vec![], Missing::Error).unwrap();
    // The residuals ride along as the response, so they come out in panel order.
    let r = panel.response().to_vec();
    (panel, r)
}

fn grid(f: &Value) -> TimeGrid {
    TimeGrid::schedule(
        numbers(&f["schedule"]["times"]),
        f["schedule"]["tolerance"].as_f64().unwrap(),
    )
    .unwrap()
}

#[test]
fn loglik_at_fixed_parameters_matches_scipy_logpdf() {
    // Source: scipy.stats.multivariate_normal.logpdf summed over subjects.
    let f = fixture();
    let g = grid(&f);
    for case in f["fixed"].as_array().unwrap() {
        let (panel, r) = panel_of(&f, case["panel"].as_str().unwrap());
        let s = Structure::parse(case["structure"].as_str().unwrap()).unwrap();
        let l = structure_loglik(&panel, &r, s, &numbers(&case["parameters"]), Some(&g)).unwrap();
        let want = case["loglik"].as_f64().unwrap();
        assert!(
            (l - want).abs() < FIXED_TOL,
            "{}: {l} vs scipy {want}",
            s.name()
        );
    }
}

#[test]
fn maxima_match_scipy_minimize() {
    // Source: scipy.optimize.minimize (Nelder-Mead from several starts, BFGS polish) of the
    // same likelihood built from multivariate_normal.logpdf.
    let f = fixture();
    let options = ScreenOptions {
        grid: Some(grid(&f)),
        ..Default::default()
    };
    for name in ["irregular", "schedule", "slope"] {
        let (panel, r) = panel_of(&f, name);
        let s = screen_structures(&panel, &r, &options).unwrap();
        for want in f["maxima"].as_array().unwrap() {
            if want["panel"] != name {
                continue;
            }
            let structure = want["structure"].as_str().unwrap();
            let fit = s.fits.iter().find(|x| x.structure == structure).unwrap();
            let wl = want["loglik"].as_f64().unwrap();
            assert!(
                (fit.loglik - wl).abs() < MAX_LOGLIK_TOL,
                "{structure} on {name}: l = {} vs scipy {wl}",
                fit.loglik
            );
            assert!(fit.converged, "{structure}: {fit:?}");
            for (a, b) in fit.parameters.iter().zip(numbers(&want["parameters"])) {
                assert!(
                    (a - b).abs() <= MAX_PARAM_REL_TOL * b.abs().max(1e-2),
                    "{structure} on {name}: {:?} vs scipy {b}",
                    fit.parameters
                );
            }
        }
    }
}

#[test]
fn implied_correlation_matches_numpy() {
    // Source: V_01 / sqrt(V_00 V_11) of the 2 x 2 covariance built with numpy in
    // tests/reference/screen_py.py for the times [t, t + u].
    let f = fixture();
    for case in f["implied"].as_array().unwrap() {
        let s = Structure::parse(case["structure"].as_str().unwrap()).unwrap();
        let got = implied_correlation(
            s,
            &numbers(&case["parameters"]),
            case["time"].as_f64().unwrap(),
            &numbers(&case["lags"]),
            None,
        )
        .unwrap();
        for (a, b) in got.iter().zip(numbers(&case["correlation"])) {
            assert!((a - b).abs() < 1e-14, "{}: {got:?} vs numpy {b}", s.name());
        }
    }
}

#[test]
fn intercept_slope_error_matches_statsmodels_mixedlm() {
    // Source: statsmodels MixedLM (ML, no fixed effects, exog_re = [1, time]): its llf,
    // cov_re (G at time 0) and scale (the error variance).
    let f = fixture();
    let (panel, r) = panel_of(&f, "slope");
    let options = ScreenOptions {
        candidates: vec![Structure::InterceptSlopeError],
        ..Default::default()
    };
    let s = screen_structures(&panel, &r, &options).unwrap();
    let fit = &s.fits[0];
    assert!(!fit.flagged, "{fit:?}");
    for want in f["mixedlm"].as_array().unwrap() {
        let wl = want["loglik"].as_f64().unwrap();
        assert!(
            (fit.loglik - wl).abs() <= MAX_LOGLIK_TOL * wl.abs(),
            "l = {} vs MixedLM {wl}",
            fit.loglik
        );
        for (a, b) in fit.parameters.iter().zip(numbers(&want["parameters"])) {
            assert!(
                (a - b).abs() <= MAX_PARAM_REL_TOL * b.abs(),
                "{:?} vs MixedLM {b}",
                fit.parameters
            );
        }
    }
}

#[test]
fn closed_forms() {
    // Independence: s2_hat = mean(r^2) (closed form). Unstructured with complete data: the
    // EM fixed point is S = (1 / subjects) sum r_i r_i' (the multivariate normal MLE with
    // known zero mean), computed here by hand.
    let f = fixture();
    let (panel, r) = panel_of(&f, "irregular");
    let only = |c: Structure, g: Option<TimeGrid>| ScreenOptions {
        candidates: vec![c],
        grid: g,
        ..Default::default()
    };
    let s = screen_structures(&panel, &r, &only(Structure::Independence, None)).unwrap();
    let mean_sq = r.iter().map(|v| v * v).sum::<f64>() / r.len() as f64;
    assert!((s.fits[0].parameters[0] - mean_sq).abs() < 1e-12 * mean_sq);

    // Complete data on bins 0..3: 7 subjects seen at every bin.
    let k = 3;
    let m = 7;
    let mut ids = Vec::new();
    let mut time = Vec::new();
    let mut y = Vec::new();
    for i in 0..m {
        for b in 0..k {
            ids.push(Some(i as i64));
            time.push(b as f64 + 0.01 * i as f64);
            y.push(((i * 7 + b * 3) % 11) as f64 - 5.0 + 0.3 * b as f64);
        }
    }
    let panel = Panel::new(SubjectIds::Int(ids), &time, &y, vec![], Missing::Error).unwrap();
    let g = TimeGrid::schedule(vec![0.0, 1.0, 2.0], 0.2).unwrap();
    let s = screen_structures(&panel, &y, &only(Structure::Unstructured, Some(g))).unwrap();
    let mut idx = 0;
    for a in 0..k {
        for b in a..k {
            let want: f64 = (0..m).map(|i| y[i * k + a] * y[i * k + b]).sum::<f64>() / m as f64;
            let got = s.fits[0].parameters[idx];
            assert!(
                (got - want).abs() < 1e-10 * want.abs().max(1.0),
                "cov_{a}_{b}"
            );
            idx += 1;
        }
    }
}
