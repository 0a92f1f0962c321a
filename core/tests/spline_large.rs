//! The smoothing spline at large n, where a normal-equation solve loses its digits:
//! - tests/fixtures/spline_exact.json: Reinsch's algorithm in 60-digit decimal arithmetic at
//!   n = 2000 (tests/reference/spline_exact.py), exact to the last bit of a double;
//! - closed forms and invariants at n = 2e5: a straight line is reproduced for any λ (it is
//!   in the null space of the penalty), a requested df is reached, GCV has an interior
//!   minimum, and scaling x by c with λ by c³ leaves the fit unchanged;
//! - the same at n = 1e7, ignored by default (about 10 s in release):
//!   `cargo test --release -p trajweave-core --test spline_large -- --ignored`.

mod common;

use common::{number, numbers};
use trajweave_core::trend::spline::{
    smoothing_spline, smoothing_spline_with_leverages, Penalty, SplineOptions,
};

/// Against the 60-digit reference, relative to sd(y).
const EXACT_FIT_TOL_SD: f64 = 1e-10;
/// df against the 60-digit reference.
const EXACT_DF_TOL: f64 = 1e-9;
/// Closed forms and invariants, relative to the largest |value|.
const REL_TOL: f64 = 1e-9;
/// A requested df must be reached to at least this.
const DF_TOL: f64 = 1e-6;
/// The sum of the leverages against the reported df.
const LEVERAGE_SUM_TOL: f64 = 1e-8;

const N_LARGE: usize = 200_000;

fn opts(penalty: Penalty) -> SplineOptions {
    SplineOptions { penalty }
}

/// The 64-bit LCG of tests/reference/spline_exact.py: uniform doubles on [0, 1).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// x = 10 u, y = x (10 - x) / 25 + (v - 0.5), drawn u, v, u, v, ... (as the reference script).
fn data(n: usize, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut g = Lcg(seed);
    (0..n)
        .map(|_| {
            let u = g.next();
            let v = g.next();
            let x = 10.0 * u;
            (x, x * (10.0 - x) / 25.0 + (v - 0.5))
        })
        .unzip()
}

fn sd(y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let m = y.iter().sum::<f64>() / n;
    (y.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0)).sqrt()
}

fn max_abs(v: &[f64]) -> f64 {
    v.iter().fold(0.0, |a, b| a.max(b.abs()))
}

fn max_abs_diff(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max)
}

#[test]
fn fits_at_n_2000_match_reinsch_in_60_digit_arithmetic() {
    // Reference: tests/reference/spline_exact.py (Reinsch's algorithm, decimal arithmetic).
    let fixture = common::load(include_str!("../../tests/fixtures/spline_exact.json"));
    let n = fixture["n"].as_u64().unwrap() as usize;
    let (x, y) = data(n, fixture["seed"].as_u64().unwrap());
    assert_eq!(numbers(&fixture["x_check"]), [x[0], x[1], x[n - 1]]);
    assert_eq!(numbers(&fixture["y_check"]), [y[0], y[1], y[n - 1]]);
    let s = sd(&y);
    for f in fixture["fits"].as_array().unwrap() {
        let lam = number(&f["lam"]);
        let c = smoothing_spline(&x, &y, &opts(Penalty::Lambda(lam))).unwrap();
        let d = max_abs_diff(&c.fitted, &numbers(&f["fitted"])) / s;
        let ddf = (c.diagnostics.df.unwrap() - number(&f["df"])).abs();
        println!(
            "lam {lam:e}: df {:.6}, fit diff {d:.2e} sd, df diff {ddf:.2e}",
            number(&f["df"])
        );
        assert!(d <= EXACT_FIT_TOL_SD, "lam {lam}: {d}");
        assert!(ddf <= EXACT_DF_TOL, "lam {lam}: {ddf}");
    }
}

#[test]
fn a_straight_line_is_reproduced_for_any_lambda() {
    // Closed form: a + b x has f'' = 0, so it minimises both terms of the criterion at once.
    let (mut x, _) = data(N_LARGE, 7);
    // Some ties as well (weights above 1).
    for v in x.iter_mut().step_by(3) {
        *v = (*v * 100.0).round() / 100.0;
    }
    let line: Vec<f64> = x.iter().map(|t| 3.5 - 0.25 * t).collect();
    for lam in [1e-9, 1e-3, 1.0, 1e4, 1e12] {
        let c = smoothing_spline(&x, &line, &opts(Penalty::Lambda(lam))).unwrap();
        let truth: Vec<f64> = c.x.iter().map(|t| 3.5 - 0.25 * t).collect();
        let d = max_abs_diff(&c.fitted, &truth) / max_abs(&truth);
        println!(
            "line lam {lam:e}: df {:.4}, rel diff {d:.2e}",
            c.diagnostics.df.unwrap()
        );
        assert!(d <= REL_TOL, "lam {lam}: {d}");
    }
}

#[test]
fn requested_df_is_reached_at_n_200000() {
    // Closed form: the reported df is the trace of the hat matrix, here the sum of leverages
    // (each checked against the brute-force hat matrix in spline_closed_form.rs).
    let (x, y) = data(N_LARGE, 11);
    for df in [10.0, 50.0] {
        let (c, lev) = smoothing_spline_with_leverages(&x, &y, &opts(Penalty::Df(df))).unwrap();
        let got = c.diagnostics.df.unwrap();
        let sum: f64 = lev.iter().sum();
        println!(
            "df {df}: reached {got:.12}, sum of leverages - df {:.2e}, iterations {}",
            sum - got,
            c.diagnostics.iterations.unwrap()
        );
        assert!((got - df).abs() <= DF_TOL, "df {df}: {got}");
        assert!((sum - got).abs() <= LEVERAGE_SUM_TOL, "df {df}: {sum}");
        assert!(lev.iter().all(|&h| (0.0..=1.0).contains(&h)));
    }
}

#[test]
fn gcv_has_an_interior_minimum_at_n_200000() {
    // Definition: the chosen λ is an interior local minimum of N RSS / (N - df)², so fits at
    // λ moved by 1% either way score no lower.
    let (x, y) = data(N_LARGE, 13);
    let c = smoothing_spline(&x, &y, &SplineOptions::default()).unwrap();
    let (df, gcv, lam) = (
        c.diagnostics.df.unwrap(),
        c.diagnostics.gcv.unwrap(),
        c.diagnostics.lambda.unwrap(),
    );
    println!(
        "GCV: df {df:.6}, lambda {lam:.6e}, gcv {gcv:.12}, iterations {}",
        c.diagnostics.iterations.unwrap()
    );
    assert!(gcv.is_finite() && df > 2.0 && df < c.x.len() as f64);
    assert_eq!(c.settings["gcv_boundary"], serde_json::Value::Null);
    for f in [0.99, 1.01] {
        let o = smoothing_spline(&x, &y, &opts(Penalty::Lambda(lam * f))).unwrap();
        assert!(
            o.diagnostics.gcv.unwrap() >= gcv * (1.0 - 1e-12),
            "factor {f}"
        );
    }
}

#[test]
fn scaling_x_by_c_and_lambda_by_c_cubed_leaves_the_fit_unchanged() {
    // Invariant: ∫ f''(x)² dx = c⁻³ ∫ f''(t)² dt for t = c x.
    let (x, y) = data(N_LARGE, 17);
    let lam = 0.05;
    let base = smoothing_spline(&x, &y, &opts(Penalty::Lambda(lam))).unwrap();
    for c in [1e-3, 1e4] {
        let xc: Vec<f64> = x.iter().map(|v| v * c).collect();
        let s = smoothing_spline(&xc, &y, &opts(Penalty::Lambda(lam * c * c * c))).unwrap();
        let d = max_abs_diff(&base.fitted, &s.fitted) / max_abs(&base.fitted);
        let ddf = (base.diagnostics.df.unwrap() - s.diagnostics.df.unwrap()).abs();
        println!("scale {c:e}: rel diff {d:.2e}, df diff {ddf:.2e}");
        assert!(d <= REL_TOL, "c {c}: {d}");
        assert!(
            ddf <= REL_TOL * base.diagnostics.df.unwrap(),
            "c {c}: {ddf}"
        );
    }
}

#[test]
#[ignore = "n = 1e7: run in release"]
fn df_and_gcv_at_n_ten_million() {
    // Closed form as above (df is the trace) and the GCV definition.
    let (x, y) = data(10_000_000, 19);
    let c = smoothing_spline(&x, &y, &opts(Penalty::Df(10.0))).unwrap();
    let got = c.diagnostics.df.unwrap();
    println!("1e7 df 10: reached {got:.12}");
    assert!((got - 10.0).abs() <= DF_TOL);
    let g = smoothing_spline(&x, &y, &SplineOptions::default()).unwrap();
    println!(
        "1e7 GCV: df {:.6}, gcv {:.12}, boundary {}",
        g.diagnostics.df.unwrap(),
        g.diagnostics.gcv.unwrap(),
        g.settings["gcv_boundary"]
    );
    assert!(g.diagnostics.gcv.unwrap().is_finite());
    assert_eq!(g.settings["gcv_boundary"], serde_json::Value::Null);
}
