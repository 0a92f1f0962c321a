//! The random-slope structures against R's nlme (tests/fixtures/screen_nlme_r.json, written by
//! tests/reference/screen_nlme_r.R): lme(y ~ 1, random = ~ time | id [, correlation =
//! corExp(form = ~ time | id, nugget = TRUE)], method = "ML") on ChickWeight (log weight minus
//! each day's mean) and on a simulated panel.
//!
//! The adjustment for lme's fixed intercept b (documented in the R script): the residuals
//! screened here are y - b. lme's (b, theta) maximises l(beta, theta) jointly, so theta
//! maximises l(b, theta): our maximum on y - b must be lme's theta and lme's log-likelihood
//! (its ML logLik, all constants included). Nothing else is adjusted; the one extra parameter
//! of lme (b) matters for its AIC, not for l. Also checked: our l at lme's parameters is lme's
//! logLik (1e-9 relative). Where lme's maximum lies on the boundary (ChickWeight with the
//! serial part), only the log-likelihoods are compared: ours must be at least lme's.

mod common;

use common::numbers;
use serde_json::Value;
use trajweave_core::correlation::screen::{
    screen_structures, structure_loglik, ScreenOptions, Structure,
};
use trajweave_core::{Missing, Panel, SubjectIds};

/// Relative agreement of maximised log-likelihoods and (interior maxima) parameters with lme.
const NLME_REL_TOL: f64 = 1e-4;
/// Relative agreement of our log-likelihood at lme's parameters with lme's logLik.
const AT_PARAMETERS_REL_TOL: f64 = 1e-9;

#[test]
fn random_slope_maxima_match_nlme_lme() {
    let f: Value = common::load(include_str!("../../tests/fixtures/screen_nlme_r.json"));
    for case in f["cases"].as_array().unwrap() {
        let label = format!("{} {}", case["name"], case["structure"]);
        let ids = SubjectIds::Int(
            case["subject"]
                .as_array()
                .unwrap()
                .iter()
                .map(Value::as_i64)
                .collect(),
        );
        let b = case["fixed_intercept"].as_f64().unwrap();
        let r: Vec<f64> = numbers(&case["y"]).iter().map(|y| y - b).collect();
        // The residuals ride along as the response, so they come out in panel order.
        let panel = Panel::new(ids, &numbers(&case["time"]), &r, vec![], Missing::Error).unwrap();
        let structure = Structure::parse(case["structure"].as_str().unwrap()).unwrap();
        let options = ScreenOptions {
            candidates: vec![structure],
            ..Default::default()
        };
        let fit = &screen_structures(&panel, panel.response(), &options)
            .unwrap()
            .fits[0];
        eprintln!("{label}: {fit:?}");
        let want = case["loglik"].as_f64().unwrap();
        // The same density: l at lme's parameters is lme's logLik.
        let lme_parameters = numbers(&case["parameters"]);
        let at =
            structure_loglik(&panel, panel.response(), structure, &lme_parameters, None).unwrap();
        assert!(
            (at - want).abs() <= AT_PARAMETERS_REL_TOL * want.abs(),
            "{label}: l at lme's parameters {at} vs nlme {want}"
        );
        assert!(fit.converged, "{label}");
        if case["compare"] == "loglik_and_parameters" {
            assert!(
                (fit.loglik - want).abs() <= NLME_REL_TOL * want.abs(),
                "{label}: l = {} vs nlme {want}",
                fit.loglik
            );
            assert!(!fit.flagged, "{label}: {:?}", fit.flags);
            for (a, w) in fit.parameters.iter().zip(numbers(&case["parameters"])) {
                assert!(
                    (a - w).abs() <= NLME_REL_TOL * w.abs(),
                    "{label}: {:?} vs nlme {w}",
                    fit.parameters
                );
            }
        } else {
            // A maximum on the boundary (lme's nugget and intercept variance near 0, where
            // its optimiser stops short of the edge): lme's point is one of ours, so our
            // maximum is at least its l and within 1e-4 of it; and ours is flagged.
            assert!(
                fit.loglik >= want && fit.loglik - want <= NLME_REL_TOL * want.abs(),
                "{label}: l = {} vs nlme {want}",
                fit.loglik
            );
            assert!(fit.flagged, "{label}: {fit:?}");
        }
    }
}
