//! Criterion benchmarks of the correlation structure at 1e4 and 1e5 subjects x 10 visits
//! (visit k at k + U(-0.15, 0.15), residual = subject effect + noise, the project's seeded
//! generator): the variogram (20 lag bins), the process variance, the binned correlation on a
//! yearly schedule, and the screening of the five irregular-time candidates.
//! `cargo bench -p trajweave-core --bench correlation` (also run by `make bench`).

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::correlation::screen::{screen_structures, ScreenOptions, Structure};
use trajweave_core::correlation::variogram::{process_variance, variogram, VariogramOptions};
use trajweave_core::numeric::rng::Rng;
use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};

fn panel(subjects: usize) -> Panel {
    let mut rng = Rng::new(3, 0);
    let (mut ids, mut t, mut r) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..subjects {
        let u = 2.0 * rng.normal();
        for k in 0..10 {
            ids.push(Some(i as i64));
            t.push(k as f64 + 0.3 * (rng.uniform() - 0.5));
            r.push(u + rng.normal());
        }
    }
    Panel::new(SubjectIds::Int(ids), &t, &r, vec![], Missing::Error).unwrap()
}

fn correlation(c: &mut Criterion) {
    let mut g = c.benchmark_group("correlation");
    g.sample_size(10);
    let grid = TimeGrid::schedule((0..10).map(f64::from).collect(), 0.5).unwrap();
    for s in [10_000, 100_000] {
        let p = panel(s);
        let r = p.response().to_vec();
        let o = VariogramOptions {
            max_lag: Some(10.0),
            ..Default::default()
        };
        g.bench_with_input(BenchmarkId::new("variogram", s), &s, |b, _| {
            b.iter(|| variogram(&p, &r, &o).unwrap())
        });
        g.bench_with_input(BenchmarkId::new("process_variance", s), &s, |b, _| {
            b.iter(|| process_variance(&p, &r).unwrap())
        });
        g.bench_with_input(BenchmarkId::new("binned_correlation", s), &s, |b, _| {
            b.iter(|| binned_correlation(&p, &r, &grid, &CorrelationOptions::default()).unwrap())
        });
        let so = ScreenOptions {
            candidates: Structure::ALL
                .iter()
                .copied()
                .filter(|c| !c.needs_grid())
                .collect(),
            ..Default::default()
        };
        if s <= 10_000 {
            g.bench_with_input(BenchmarkId::new("screen", s), &s, |b, _| {
                b.iter(|| screen_structures(&p, &r, &so).unwrap())
            });
        }
    }
    g.finish();
}

criterion_group!(benches, correlation);
criterion_main!(benches);
