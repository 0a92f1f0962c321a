//! Timing printout for the smoothing spline (not a benchmark harness, not asserted):
//! `cargo run --release -p trajweave-core --example spline_timing -- 100000 1000000`
use std::time::Instant;
use trajweave_core::trend::spline::{
    smoothing_spline, smoothing_spline_with_leverages, Penalty, SplineOptions,
};

fn main() {
    // `grid` as first argument: x = 10 (i + U/2) / n (spacing bounded below) instead of uniform.
    let grid = std::env::args().nth(1).as_deref() == Some("grid");
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    for n in sizes {
        let mut s: u64 = 42;
        let mut u = || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        };
        let x: Vec<f64> = (0..n)
            .map(|i| {
                if grid {
                    10.0 * (i as f64 + 0.5 * u()) / n as f64
                } else {
                    10.0 * u()
                }
            })
            .collect();
        let truth = |t: f64| t.sin() + 0.5 * (2.3 * t).cos();
        // Gaussian-ish noise (sum of 4 uniforms), sd about 0.3.
        let y: Vec<f64> = x
            .iter()
            .map(|&t| truth(t) + 0.3 * ((u() + u() + u() + u() - 2.0) * 3f64.sqrt()))
            .collect();
        for p in [Penalty::Lambda(1e-3), Penalty::Df(10.0), Penalty::Gcv] {
            let t0 = Instant::now();
            let c = smoothing_spline(&x, &y, &SplineOptions { penalty: p }).unwrap();
            let dt = t0.elapsed().as_secs_f64();
            let err =
                c.x.iter()
                    .zip(&c.fitted)
                    .map(|(&t, f)| (f - truth(t)).abs())
                    .fold(0.0, f64::max);
            let d = &c.diagnostics;
            println!(
                "n {n:>9} {p:<14?} {dt:>7.3} s  df {:.9} lambda {:.6e} gcv {:.9} iters {} max|fit-truth| {err:.3e} boundary {}",
                d.df.unwrap(), d.lambda.unwrap(), d.gcv.unwrap(), d.iterations.unwrap(),
                c.settings.get("gcv_boundary").map(|v| v.to_string()).unwrap_or_default()
            );
        }
        if n <= 1_000_000 {
            let t0 = Instant::now();
            let (c, lev) = smoothing_spline_with_leverages(
                &x,
                &y,
                &SplineOptions {
                    penalty: Penalty::Df(10.0),
                },
            )
            .unwrap();
            println!(
                "n {n:>9} leverages at df 10: {:.3} s, sum - df {:.3e}",
                t0.elapsed().as_secs_f64(),
                lev.iter().sum::<f64>() - c.diagnostics.df.unwrap()
            );
        }
    }
}
