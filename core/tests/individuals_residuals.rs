//! Residuals from a mean model against outside references: R's `lm(y ~ poly(t, d, raw =
//! TRUE))` (tests/fixtures/residuals_r.json, tests/reference/residuals_r.R), numpy's `lstsq` and
//! the exact rational least-squares solution (tests/fixtures/residuals_py.json,
//! tests/reference/residuals_py.py); group curves on R's ChickWeight against fits of each
//! diet's rows alone; bad input.

mod common;

use common::{number, numbers};
use serde_json::Value;
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::trend::curve::{Curve, Diagnostics, OptionValue};
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::{Covariate, Missing, Panel, SubjectIds};

/// Residuals must agree with every reference to this fraction of sd(y).
const RESID_TOL_SD: f64 = 1e-10;
/// Coefficients must agree with R's lm and the exact solution to this relative difference.
const COEF_REL_TOL: f64 = 1e-8;

fn r_fixture() -> Value {
    common::load(include_str!("../../tests/fixtures/residuals_r.json"))
}

fn py_fixture() -> Value {
    common::load(include_str!("../../tests/fixtures/residuals_py.json"))
}

fn int_ids(v: &[f64]) -> SubjectIds {
    SubjectIds::Int(v.iter().map(|&x| Some(x as i64)).collect())
}

fn max_abs_diff(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).abs())
        .fold(0.0, f64::max)
}

fn max_rel_diff(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).abs() / y.abs().max(f64::MIN_POSITIVE))
        .fold(0.0, f64::max)
}

#[test]
fn polynomial_matches_lm_lstsq_and_exact() {
    let (rf, pf) = (r_fixture(), py_fixture());
    for (rp, pp) in rf["polynomial"]
        .as_array()
        .unwrap()
        .iter()
        .zip(pf["polynomial"].as_array().unwrap())
    {
        let name = rp["name"].as_str().unwrap();
        let (t, y) = (numbers(&rp["time"]), numbers(&rp["y"]));
        let panel = Panel::new(
            int_ids(&numbers(&rp["subject"])),
            &t,
            &y,
            vec![],
            Missing::Error,
        )
        .unwrap();
        let tol = RESID_TOL_SD * number(&rp["sd_y"]);
        for (rc, pc) in rp["cases"]
            .as_array()
            .unwrap()
            .iter()
            .zip(pp["cases"].as_array().unwrap())
        {
            let d = rc["degree"].as_u64().unwrap() as usize;
            let res = residuals(&panel, &MeanModel::Polynomial { degree: d }).unwrap();
            let ours = panel.to_input_order(&res.residuals);
            let coef = res.coefficients.unwrap();
            // Reference: exact rational least squares (Python fractions), rounded once.
            let exact = numbers(&pc["exact_residuals"]);
            let e_res = max_abs_diff(&ours, &exact);
            let e_coef = max_rel_diff(&coef, &numbers(&pc["exact_coefficients"]));
            eprintln!(
                "{name} d={d}: vs exact: resid {e_res:.2e} (tol {tol:.2e}), coef rel {e_coef:.2e}"
            );
            assert!(
                e_res <= tol && e_coef <= COEF_REL_TOL,
                "{name} d={d} vs exact"
            );
            // Reference: R's lm and numpy's lstsq on centred time (well conditioned).
            let e_lm_c = max_abs_diff(&ours, &numbers(&rc["residuals_centred"]));
            let e_np_c = max_abs_diff(&ours, &numbers(&pc["lstsq_centred_residuals"]));
            eprintln!("{name} d={d}: centred time: vs lm {e_lm_c:.2e}, vs lstsq {e_np_c:.2e}");
            assert!(
                e_lm_c <= tol && e_np_c <= tol,
                "{name} d={d} vs centred references"
            );
            if rc["lm_dropped"].as_bool().unwrap() {
                continue; // R's lm pivots the cubic in years out as collinear: no lm value.
            }
            // Reference: R stats::lm(y ~ poly(t, d, raw = TRUE)) and numpy.linalg.lstsq on the
            // raw design. Their own rounding error grows with the design's condition number
            // kappa (2.2e12 for years, degree 2), so they are held to the larger of our
            // tolerance and eps kappa sd(y); the exact and centred references above are strict.
            let raw_tol = tol.max(f64::EPSILON * number(&rc["kappa"]) * number(&rp["sd_y"]));
            let e_lm = max_abs_diff(&ours, &numbers(&rc["residuals"]));
            let e_lm_coef = max_rel_diff(&coef, &numbers(&rc["coefficients"]));
            let e_np = max_abs_diff(&ours, &numbers(&pc["lstsq_residuals"]));
            eprintln!("{name} d={d}: raw: vs lm resid {e_lm:.2e} coef rel {e_lm_coef:.2e}; vs lstsq {e_np:.2e} (tol {raw_tol:.2e})");
            assert!(e_lm <= raw_tol, "{name} d={d}: vs lm {e_lm}");
            assert!(
                e_lm_coef <= COEF_REL_TOL,
                "{name} d={d}: lm coef {e_lm_coef}"
            );
            assert!(e_np <= raw_tol, "{name} d={d}: vs lstsq {e_np}");
        }
    }
}

fn chick_panel(cw: &Value) -> Panel {
    Panel::new(
        int_ids(&numbers(&cw["subject"])),
        &numbers(&cw["time"]),
        &numbers(&cw["weight"]),
        vec![Covariate::new("diet", numbers(&cw["diet"]))],
        Missing::Error,
    )
    .unwrap()
}

#[test]
fn curve_of_day_means_matches_r_ave() {
    // Reference: R's weight - ave(weight, Time) on ChickWeight. The curve through the day
    // means is built here by brute force from the input rows.
    let cw = r_fixture()["chickweight"].clone();
    let panel = chick_panel(&cw);
    let (t, w) = (numbers(&cw["time"]), numbers(&cw["weight"]));
    let mut days: Vec<f64> = t.clone();
    days.sort_by(f64::total_cmp);
    days.dedup();
    let means: Vec<f64> = days
        .iter()
        .map(|d| {
            let v: Vec<f64> = t
                .iter()
                .zip(&w)
                .filter(|(a, _)| *a == d)
                .map(|(_, b)| *b)
                .collect();
            v.iter().sum::<f64>() / v.len() as f64
        })
        .collect();
    let curve = Curve::new(
        "day means",
        days,
        means,
        Value::Null,
        Diagnostics::new(t.len()),
    );
    let res = residuals(&panel, &MeanModel::Curve(curve)).unwrap();
    let e = max_abs_diff(
        &panel.to_input_order(&res.residuals),
        &numbers(&cw["residual"]),
    );
    assert!(e <= 1e-10, "vs R ave: {e}");
    assert_eq!(res.model, "curve (day means)");
}

#[test]
fn by_group_equals_each_diet_fitted_alone() {
    // Reference: a brute-force fit of each diet's rows alone with the same smoother (a box
    // kernel with a fixed bandwidth, whose evaluation is exact), evaluated at those rows.
    let cw = r_fixture()["chickweight"].clone();
    let panel = chick_panel(&cw);
    let smoother = Smoother::from_options(
        "kernel",
        &[
            ("shape".into(), OptionValue::Text("box".into())),
            ("bandwidth".into(), OptionValue::Number(2.0)),
        ],
    )
    .unwrap();
    let model = MeanModel::ByGroup {
        covariate: "diet".into(),
        smoother: smoother.clone(),
    };
    let res = residuals(&panel, &model).unwrap();
    let fitted = panel.to_input_order(&res.fitted);
    let (t, w, diet) = (
        numbers(&cw["time"]),
        numbers(&cw["weight"]),
        numbers(&cw["diet"]),
    );
    let groups = res.groups.as_ref().unwrap();
    assert_eq!(
        groups.iter().map(|g| g.level).collect::<Vec<_>>(),
        vec![1.0, 2.0, 3.0, 4.0]
    );
    for (g, level) in groups.iter().zip(1..=4) {
        let rows: Vec<usize> = (0..t.len()).filter(|&k| diet[k] == level as f64).collect();
        let x: Vec<f64> = rows.iter().map(|&k| t[k]).collect();
        let y: Vec<f64> = rows.iter().map(|&k| w[k]).collect();
        let alone = smoother.fit(&x, &y).unwrap();
        assert_eq!(g.rows, rows.len());
        assert_eq!(g.curve, alone, "diet {level}: curve");
        for (&k, f) in rows.iter().zip(alone.predict(&x)) {
            assert_eq!(fitted[k], f, "diet {level}, row {}", k + 1);
            assert_eq!(panel.to_input_order(&res.residuals)[k], w[k] - f);
        }
    }
    assert_eq!(res.model, "kernel by diet");
}

#[test]
fn bad_input_errors() {
    let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2), Some(2)]);
    let panel = Panel::new(
        ids,
        &[0.0, 1.0, 0.0, 1.0],
        &[1.0, 2.0, 3.0, 4.0],
        vec![Covariate::new("arm", vec![1.0, 1.0, 2.0, 2.0])],
        Missing::Error,
    )
    .unwrap();
    let e = residuals(&panel, &MeanModel::Polynomial { degree: 4 }).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`degree` = 4 is not allowed: a polynomial degree from 0 to 3"
    );
    let e = residuals(&panel, &MeanModel::Polynomial { degree: 2 }).unwrap_err();
    assert_eq!(
        e.to_string(),
        "too few distinct times for a polynomial of degree 2: need at least 3, found 2"
    );
    let model = MeanModel::ByGroup {
        covariate: "dose".into(),
        smoother: Smoother::new("kernel").unwrap(),
    };
    let e = residuals(&panel, &model).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`covariate` = \"dose\" is not allowed: use one of the panel's covariates: \"arm\""
    );
    let model = MeanModel::ByGroup {
        covariate: "arm".into(),
        smoother: Smoother::new("spline").unwrap(),
    };
    let e = residuals(&panel, &model).unwrap_err();
    assert_eq!(e.kind(), "too_few");
    assert!(e.to_string().contains("in level 1 of `arm`"), "{e}");

    let n = 60;
    let ids = SubjectIds::Int((0..n).map(Some).collect());
    let v: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let many = Panel::new(
        ids,
        &v,
        &v,
        vec![Covariate::new("id", v.clone())],
        Missing::Error,
    )
    .unwrap();
    let model = MeanModel::ByGroup {
        covariate: "id".into(),
        smoother: Smoother::new("kernel").unwrap(),
    };
    let e = residuals(&many, &model).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`covariate` = \"id\" (more than 50 distinct values) is not allowed: a covariate with at \
         most 50 levels; group a continuous covariate into bands first"
    );
}
