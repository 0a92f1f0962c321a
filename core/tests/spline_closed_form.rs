//! The smoothing spline against closed forms and invariants: interpolation as λ -> 0, the
//! weighted least-squares line as λ -> ∞, leverages against the dense hat matrix, reached df,
//! row-order invariance and the exact bad-input messages.

use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::spline::{
    smoothing_spline, smoothing_spline_with_leverages, Penalty, SplineOptions,
};

/// Leverages against the brute-force diagonal of the hat matrix.
const LEVERAGE_TOL: f64 = 1e-10;
/// Fits against their closed-form limits, relative to sd(y).
const LIMIT_TOL_SD: f64 = 1e-6;
/// A requested df must be reached to at least this.
const DF_TOL: f64 = 1e-6;

fn opts(penalty: Penalty) -> SplineOptions {
    SplineOptions { penalty }
}

/// Deterministic uneven data (a small LCG), with ties when `ties` is set.
fn data(n: usize, ties: bool) -> (Vec<f64>, Vec<f64>) {
    let mut s: u64 = 0x2545_F491_4F6C_DD1D;
    let mut u = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 11) as f64 / (1u64 << 53) as f64
    };
    let x: Vec<f64> = (0..n)
        .map(|_| {
            let v = 10.0 * u();
            if ties {
                (v * 2.0).round() / 2.0
            } else {
                v
            }
        })
        .collect();
    let y = x.iter().map(|t| t.sin() + 0.4 * (u() - 0.5)).collect();
    (x, y)
}

fn sd(y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let m = y.iter().sum::<f64>() / n;
    (y.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0)).sqrt()
}

#[test]
fn tiny_lambda_interpolates_and_full_df_is_exact_interpolation() {
    // Closed form: as λ -> 0 the natural spline interpolates distinct points ("small" is
    // relative to the cube of the smallest spacing, hence 1e-200).
    let (x, y) = data(40, false);
    let c = smoothing_spline(&x, &y, &opts(Penalty::Lambda(1e-200))).unwrap();
    let (xs, ys) = sorted(&x, &y);
    assert_eq!(c.x, xs);
    let d = c
        .fitted
        .iter()
        .zip(&ys)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(d <= LIMIT_TOL_SD * sd(&y), "{d}");
    let c = smoothing_spline(&x, &y, &opts(Penalty::Df(40.0))).unwrap();
    assert_eq!(c.fitted, ys);
    assert_eq!(c.diagnostics.lambda, Some(0.0));
    assert_eq!(c.diagnostics.df, Some(40.0));
}

fn sorted(x: &[f64], y: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut p: Vec<(f64, f64)> = x.iter().cloned().zip(y.iter().cloned()).collect();
    p.sort_by(|a, b| a.0.total_cmp(&b.0));
    p.into_iter().unzip()
}

#[test]
fn huge_lambda_gives_the_least_squares_line() {
    // Closed form: as λ -> ∞ only the unpenalised line is left: ordinary least squares on all
    // observations (ties included), slope = Sxy / Sxx.
    let (x, y) = data(120, true);
    let n = x.len() as f64;
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    let slope = sxy / sxx;
    let c = smoothing_spline(&x, &y, &opts(Penalty::Lambda(1e14))).unwrap();
    let d =
        c.x.iter()
            .zip(&c.fitted)
            .map(|(a, f)| (my + slope * (a - mx) - f).abs())
            .fold(0.0, f64::max);
    assert!(d <= LIMIT_TOL_SD * sd(&y), "{d}");
    assert!((c.diagnostics.df.unwrap() - 2.0).abs() <= DF_TOL);
}

#[test]
fn leverages_equal_the_dense_hat_matrix_diagonal_and_sum_to_df() {
    // Closed form: column k of the hat matrix on the distinct x is the fit to the indicator of
    // x = x_k (tie count as weight), so H_kk is that fit at x_k; built for n = 30.
    for ties in [false, true] {
        let (x, y) = data(30, ties);
        for lam in [1e-4, 0.05, 1.0, 3.0] {
            let tol = LEVERAGE_TOL;
            let o = opts(Penalty::Lambda(lam));
            let (c, lev) = smoothing_spline_with_leverages(&x, &y, &o).unwrap();
            let mut worst: f64 = 0.0;
            for (k, &xk) in c.x.iter().enumerate() {
                let e: Vec<f64> = x.iter().map(|&t| if t == xk { 1.0 } else { 0.0 }).collect();
                let col = smoothing_spline(&x, &e, &o).unwrap();
                worst = worst.max((col.fitted[k] - lev[k]).abs());
            }
            println!(
                "ties {ties} lam {lam}: df {:.3}, worst {worst:.2e}",
                c.diagnostics.df.unwrap()
            );
            assert!(worst <= tol, "ties {ties} lam {lam}: {worst}");
            let sum: f64 = lev.iter().sum();
            println!("  sum - df {:.2e}", sum - c.diagnostics.df.unwrap());
            assert!((sum - c.diagnostics.df.unwrap()).abs() <= tol);
        }
    }
}

#[test]
fn requested_df_is_reached() {
    // Closed form: the reported df is the trace (checked above); here it must equal the target.
    let (x, y) = data(300, true);
    let (c0, _) = smoothing_spline_with_leverages(&x, &y, &opts(Penalty::Lambda(1.0))).unwrap();
    let distinct = c0.x.len() as f64;
    for df in [2.001, 2.5, 4.0, 10.0, 0.5 * distinct, distinct - 0.01] {
        let c = smoothing_spline(&x, &y, &opts(Penalty::Df(df))).unwrap();
        let got = c.diagnostics.df.unwrap();
        assert!((got - df).abs() <= DF_TOL, "df {df}: {got}");
        assert!(c.diagnostics.iterations.unwrap() > 0);
    }
}

#[test]
fn row_order_does_not_change_the_curve() {
    // Invariant: a permutation of rows (ties included) gives the identical curve, bit for bit.
    let (x, y) = data(200, true);
    let idx: Vec<usize> = (0..x.len()).map(|i| (i * 37 + 11) % x.len()).collect();
    let (px, py): (Vec<f64>, Vec<f64>) = idx.iter().map(|&i| (x[i], y[i])).unzip();
    for p in [Penalty::Lambda(0.3), Penalty::Df(7.0), Penalty::Gcv] {
        let a = smoothing_spline(&x, &y, &opts(p)).unwrap();
        let b = smoothing_spline(&px, &py, &opts(p)).unwrap();
        assert_eq!(a, b, "{p:?}");
    }
}

#[test]
fn affine_change_of_y_carries_through() {
    // Invariant: the smoother is linear and reproduces constants: fit(a + b y) = a + b fit(y).
    let (x, y) = data(100, true);
    let y2: Vec<f64> = y.iter().map(|v| 1000.0 - 3.0 * v).collect();
    let o = opts(Penalty::Df(6.0));
    let (a, b) = (
        smoothing_spline(&x, &y, &o).unwrap(),
        smoothing_spline(&x, &y2, &o).unwrap(),
    );
    for (f, g) in a.fitted.iter().zip(&b.fitted) {
        assert!((1000.0 - 3.0 * f - g).abs() <= 1e-9 * 1000.0);
    }
}

#[test]
fn bad_input_errors_are_exact() {
    let o = SplineOptions::default();
    let msg = |r: trajweave_core::Result<_>| {
        r.map(|_: trajweave_core::trend::curve::Curve| ())
            .unwrap_err()
            .to_string()
    };
    assert_eq!(
        msg(smoothing_spline(&[1.0, 2.0, 3.0], &[1.0, 2.0], &o)),
        "`y` has 2 values but `x` has 3: give one value per row in each"
    );
    assert_eq!(
        msg(smoothing_spline(
            &[1.0, 2.0, f64::INFINITY],
            &[1.0, 2.0, 3.0],
            &o
        )),
        "`x` is not finite at row 3 (value inf): remove the row or give a finite value"
    );
    assert_eq!(
        msg(smoothing_spline(
            &[1.0, 2.0, 2.0, 1.0],
            &[1.0, 2.0, 3.0, 4.0],
            &o
        )),
        "too few distinct x values for a smoothing spline: need at least 3, found 2"
    );
    let x = [1.0, 2.0, 3.0, 4.0, 4.0];
    let y = [1.0, 3.0, 2.0, 5.0, 4.0];
    assert_eq!(
        msg(smoothing_spline(&x, &y, &opts(Penalty::Df(4.5)))),
        "`df` = 4.5 is not allowed: a number > 2 and at most the number of distinct x (here 4)"
    );
    assert_eq!(
        msg(smoothing_spline(&x, &y, &opts(Penalty::Lambda(0.0)))),
        "`lambda` = 0 is not allowed: a finite number > 0 (the penalty on the x scale given)"
    );
    let mut s = SplineOptions::default();
    let e = s.set("spar", &OptionValue::Number(0.5)).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`spar` = 0.5 is not allowed: not a spline option; use one of lambda, df, gcv"
    );
    let e = s.set("df", &OptionValue::Number(2.0)).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`df` = 2 is not allowed: a number > 2 and at most the number of distinct x"
    );
    let e = s
        .set("lambda", &OptionValue::Text("big".into()))
        .unwrap_err();
    assert_eq!(
        e.to_string(),
        "`lambda` = \"big\" is not allowed: a finite number > 0 (the penalty on the x scale given)"
    );
    let e = s.set("lambda", &OptionValue::Number(f64::NAN)).unwrap_err();
    assert_eq!(e.kind(), "invalid_option");
    assert_eq!(s, SplineOptions::default(), "a failed set changes nothing");
    s.set("lambda", &OptionValue::Number(2.0)).unwrap();
    assert_eq!(s.penalty, Penalty::Lambda(2.0));
    s.set("gcv", &OptionValue::Number(1.0)).unwrap();
    assert_eq!(s.penalty, Penalty::Gcv);
}

#[test]
fn settings_and_diagnostics_are_reported() {
    let (x, y) = data(60, true);
    let c = smoothing_spline(&x, &y, &opts(Penalty::Df(5.0))).unwrap();
    assert_eq!(c.method, "spline");
    assert_eq!(
        c.settings["penalty"],
        serde_json::json!({"by": "df", "value": 5.0})
    );
    assert_eq!(
        c.settings["lambda"],
        serde_json::json!(c.diagnostics.lambda.unwrap())
    );
    let g = smoothing_spline(&x, &y, &SplineOptions::default()).unwrap();
    assert_eq!(g.settings["penalty"], serde_json::json!({"by": "gcv"}));
    assert!(g.diagnostics.gcv.unwrap().is_finite());
    // A straight line with noise-free data: GCV keeps smoothing to the line and says so.
    let yl: Vec<f64> = x.iter().map(|t| 2.0 * t + 1.0).collect();
    let l = smoothing_spline(&x, &yl, &SplineOptions::default()).unwrap();
    println!("line: {}", l.settings);
}
