//! Times the super smoother (not a test; figures are printed, never asserted).
//!
//! `cargo run --release -p trajweave-core --example supsmu_speed -- 1000000 [file]` fits n
//! generated points (uneven x with ties, rows in random order) with the default options and
//! the fixed span 0.3; with `file`, also writes x then y as little-endian doubles so R can time
//! `stats::supsmu` on the same data; with a second file, also writes the default fit there
//! (distinct x then fitted values, little-endian doubles) for comparison.

use std::time::Instant;

use trajweave_core::numeric::rng::Rng;
use trajweave_core::{super_smoother, SuperSmootherOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).map_or(Ok(1_000_000), |s| s.parse())?;
    let mut rng = Rng::new(42, 0);
    let x: Vec<f64> = (0..n)
        .map(|_| (1e4 * 10.0 * rng.uniform().powi(2)).round() / 1e4)
        .collect();
    let y: Vec<f64> = x.iter().map(|&t| t.sin() + 0.3 * rng.normal()).collect();
    if let Some(path) = args.get(2) {
        let bytes: Vec<u8> = x.iter().chain(&y).flat_map(|v| v.to_le_bytes()).collect();
        std::fs::write(path, bytes)?;
    }
    if let Some(path) = args.get(3) {
        let c = super_smoother(&x, &y, &SuperSmootherOptions::default())?;
        let bytes: Vec<u8> =
            c.x.iter()
                .chain(&c.fitted)
                .flat_map(|v| v.to_le_bytes())
                .collect();
        std::fs::write(path, bytes)?;
    }
    let threads = rayon::current_num_threads();
    for (label, o) in [
        ("cv", SuperSmootherOptions::default()),
        (
            "span 0.3",
            SuperSmootherOptions {
                span: Some(0.3),
                bass: 0.0,
            },
        ),
    ] {
        let mut best = f64::INFINITY;
        for _ in 0..3 {
            let t = Instant::now();
            let c = super_smoother(&x, &y, &o)?;
            best = best.min(t.elapsed().as_secs_f64());
            std::hint::black_box(c);
        }
        println!("n={n} threads={threads} {label}: {best:.3} s (best of 3)");
    }
    Ok(())
}
