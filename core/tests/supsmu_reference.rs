//! The super smoother against R's `stats::supsmu` (R 4.2.2) through tests/fixtures/supsmu_r.json,
//! written by tests/reference/supsmu_r.R; its bad-input errors; and seeded property checks.

mod common;

use common::{number, numbers};
use serde_json::Value;
use trajweave_core::numeric::rng::Rng;
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::supsmu::{super_smoother, SuperSmootherOptions};

/// Fitted values must agree with R's to this fraction of sd(y).
const R_TOL_SD: f64 = 1e-6;
/// Relative tolerance of the affine-equivariance property.
const AFFINE_REL_TOL: f64 = 1e-10;

fn options(case: &Value) -> SuperSmootherOptions {
    let mut o = SuperSmootherOptions::default();
    let span = match &case["span"] {
        Value::String(s) => OptionValue::Text(s.clone()),
        v => OptionValue::Number(number(v)),
    };
    o.set("span", &span).unwrap();
    o.set("bass", &OptionValue::Number(number(&case["bass"])))
        .unwrap();
    o
}

#[test]
fn matches_r_supsmu() {
    // Reference: R's stats::supsmu(x, y, span, bass) on cars, a generated set and a short set.
    let fixture = common::load(include_str!("../../tests/fixtures/supsmu_r.json"));
    for data in fixture["datasets"].as_array().unwrap() {
        let name = data["name"].as_str().unwrap();
        let (x, y) = (numbers(&data["x"]), numbers(&data["y"]));
        let tol = R_TOL_SD * number(&data["sd_y"]);
        for case in data["cases"].as_array().unwrap() {
            let o = options(case);
            let c = super_smoother(&x, &y, &o).unwrap();
            let (want_x, want) = (numbers(&case["x"]), numbers(&case["fitted"]));
            assert_eq!(c.x, want_x, "{name} {o:?}: distinct x");
            let worst = c
                .fitted
                .iter()
                .zip(&want)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            eprintln!("{name} {o:?}: max |ours - R| = {worst:.3e} (tol {tol:.3e})");
            assert!(worst <= tol, "{name} {o:?}: max difference {worst}");
            assert_eq!(c.method, "super");
            assert_eq!(c.diagnostics.n, x.len());
            assert_eq!(c.diagnostics.span, o.span);
            assert_eq!(
                c.settings,
                serde_json::json!({"span": o.span, "bass": o.bass})
            );
        }
    }
}

#[test]
fn bad_input_errors() {
    // Exact messages of the core's error enum (docs/errors.md).
    let mut o = SuperSmootherOptions::default();
    let msg = |r: trajweave_core::Result<()>| r.unwrap_err().to_string();
    let span_allowed = "a number in (0, 1] (fixed span) or \"cv\" (variable span)";
    assert_eq!(
        msg(o.set("span", &OptionValue::Number(0.0))),
        format!("`span` = 0 is not allowed: {span_allowed}")
    );
    assert_eq!(
        msg(o.set("span", &OptionValue::Number(1.5))),
        format!("`span` = 1.5 is not allowed: {span_allowed}")
    );
    assert_eq!(
        msg(o.set("span", &OptionValue::Text("abc".into()))),
        format!("`span` = \"abc\" is not allowed: {span_allowed}")
    );
    assert_eq!(
        msg(o.set("bass", &OptionValue::Number(11.0))),
        "`bass` = 11 is not allowed: a number in [0, 10]"
    );
    assert_eq!(
        msg(o.set("bass", &OptionValue::Text("high".into()))),
        "`bass` = \"high\" is not allowed: a number in [0, 10]"
    );
    assert_eq!(
        msg(o.set("width", &OptionValue::Number(1.0))),
        "`super smoother option` = \"width\" is not allowed: use one of: span, bass"
    );
    assert_eq!(
        o,
        SuperSmootherOptions::default(),
        "failed sets change nothing"
    );
    let bad = SuperSmootherOptions {
        span: Some(0.0),
        bass: 0.0,
    };
    assert_eq!(
        super_smoother(&[1.0, 2.0, 3.0, 4.0], &[1.0; 4], &bad)
            .unwrap_err()
            .kind(),
        "invalid_option"
    );

    let d = SuperSmootherOptions::default();
    let err = |x: &[f64], y: &[f64]| super_smoother(x, y, &d).unwrap_err().to_string();
    assert_eq!(
        err(&[1.0, 2.0, 3.0, 4.0], &[1.0, 2.0, 3.0]),
        "`y` has 3 values but `x` has 4: give one value per row in each"
    );
    assert_eq!(
        err(&[1.0, 2.0, 3.0, 4.0], &[1.0, f64::NAN, 3.0, 4.0]),
        "`y` is not finite at row 2 (value NaN): remove the row or give a finite value"
    );
    assert_eq!(
        err(&[1.0, 2.0, 3.0], &[1.0, 2.0, 3.0]),
        "too few points for the super smoother: need at least 4, found 3"
    );
    assert_eq!(
        err(&[2.0; 5], &[1.0, 2.0, 3.0, 4.0, 5.0]),
        "too few distinct x values for the super smoother: need at least 2, found 1"
    );
}

fn generated(n: usize, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = Rng::new(seed, 0);
    let x: Vec<f64> = (0..n)
        .map(|_| (100.0 * rng.uniform().powi(2)).round() / 10.0)
        .collect();
    let y = x.iter().map(|&t| t.sin() + 0.3 * rng.normal()).collect();
    (x, y)
}

fn all_options() -> Vec<SuperSmootherOptions> {
    let o = |span, bass| SuperSmootherOptions { span, bass };
    vec![o(None, 0.0), o(None, 5.0), o(Some(0.3), 0.0)]
}

#[test]
fn permuting_rows_gives_the_identical_curve() {
    // Invariant: the fit depends on the set of (x, y) pairs only.
    let (x, y) = generated(700, 11);
    let mut order: Vec<usize> = (0..x.len()).collect();
    let mut rng = Rng::new(5, 0);
    for i in (1..order.len()).rev() {
        order.swap(i, (rng.uniform() * (i + 1) as f64) as usize % (i + 1));
    }
    let xp: Vec<f64> = order.iter().map(|&i| x[i]).collect();
    let yp: Vec<f64> = order.iter().map(|&i| y[i]).collect();
    for o in all_options() {
        assert_eq!(
            super_smoother(&x, &y, &o).unwrap(),
            super_smoother(&xp, &yp, &o).unwrap(),
            "{o:?}"
        );
    }
}

#[test]
fn affine_change_of_y_carries_through() {
    // Invariant: every step is linear in y or depends on ratios of residuals, so
    // a + b y gives a + b fit.
    let (x, y) = generated(600, 3);
    // b > 0 only: tied x are ordered by y, which a negative b reverses (as in R).
    for (a, b) in [(-40.0, 2.5), (7.0, 0.01)] {
        let ty: Vec<f64> = y.iter().map(|v| a + b * v).collect();
        for o in all_options() {
            let f = super_smoother(&x, &y, &o).unwrap();
            let g = super_smoother(&x, &ty, &o).unwrap();
            let scale = g.fitted.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
            for (u, v) in f.fitted.iter().zip(&g.fitted) {
                assert!(
                    (a + b * u - v).abs() <= AFFINE_REL_TOL * scale,
                    "{o:?}, a = {a}, b = {b}: {} vs {v}",
                    a + b * u
                );
            }
        }
    }
}

#[test]
fn thread_count_does_not_change_the_fit() {
    // Invariant: the parallel passes are independent, so 1 and 2 threads agree bit for bit.
    let (x, y) = generated(60_000, 8); // long enough for the two-block passes
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| super_smoother(&x, &y, &SuperSmootherOptions::default()).unwrap())
    };
    assert_eq!(run(1), run(2));
}
