//! Criterion benchmarks of the smoothers at n = 1e4, 1e5, 1e6 on x uniform on [0, 10] (in
//! random order) and y = sin(x) + N(0, 0.3^2), from the project's own seeded generator.
//! Run with `make bench` (which also runs the cross-tool comparison) or
//! `cargo bench -p trajweave-core --bench smoothers`.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use trajweave_core::numeric::rng::Rng;
use trajweave_core::trend::kernel::{kernel_smooth, KernelOptions, KernelShape};
use trajweave_core::trend::smoother::Smoother;

fn data(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut r = Rng::new(1, 0);
    let x: Vec<f64> = (0..n).map(|_| 10.0 * r.uniform()).collect();
    let y = x.iter().map(|&v| v.sin() + 0.3 * r.normal()).collect();
    (x, y)
}

fn kernel(c: &mut Criterion) {
    let mut g = c.benchmark_group("kernel");
    g.sample_size(10);
    for n in [10_000, 100_000, 1_000_000] {
        let (x, y) = data(n);
        for shape in [KernelShape::Box, KernelShape::Gaussian] {
            let o = KernelOptions {
                bandwidth: Some(0.1),
                shape,
                ..Default::default()
            };
            g.bench_with_input(BenchmarkId::new(format!("{shape:?}"), n), &n, |b, _| {
                b.iter(|| kernel_smooth(&x, &y, &o).unwrap())
            });
        }
    }
    g.finish();
}

/// Each family at its defaults, through the same dispatch the fronts use.
fn families(c: &mut Criterion) {
    let mut g = c.benchmark_group("smoother");
    g.sample_size(10);
    for n in [10_000, 100_000, 1_000_000] {
        let (x, y) = data(n);
        for family in ["lowess", "spline", "super"] {
            let Ok(s) = Smoother::new(family) else {
                continue;
            };
            g.bench_with_input(BenchmarkId::new(family, n), &n, |b, _| {
                b.iter(|| s.fit(&x, &y).unwrap())
            });
        }
    }
    g.finish();
}

criterion_group!(benches, kernel, families);
criterion_main!(benches);
