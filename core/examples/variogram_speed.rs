//! Times the variogram, process variance and binned correlation at registry size:
//! `cargo run --release -p trajweave-core --example variogram_speed -- 1000000 10`.

use std::time::Instant;

use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::correlation::variogram::{variogram, VariogramOptions};
use trajweave_core::numeric::rng::Rng;
use trajweave_core::{Missing, Panel, SubjectIds, TimeGrid};

fn main() -> trajweave_core::Result<()> {
    let args: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let (subjects, visits) = (
        args.first().copied().unwrap_or(100_000),
        args.get(1).copied().unwrap_or(10),
    );
    let mut rng = Rng::new(5, 0);
    let (mut ids, mut t, mut r) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..subjects {
        for j in 0..visits {
            ids.push(Some(i as i64));
            t.push(j as f64 + 0.3 * (rng.uniform() - 0.5));
            r.push(rng.normal());
        }
    }
    let panel = Panel::new(SubjectIds::Int(ids), &t, &r, vec![], Missing::Error)?;
    let o = VariogramOptions {
        max_lag: Some(visits as f64),
        ..Default::default()
    };
    for _ in 0..3 {
        let start = Instant::now();
        let vg = variogram(&panel, panel.response(), &o)?;
        println!(
            "variogram: {:.3} s ({} pairs)",
            start.elapsed().as_secs_f64(),
            vg.pairs_in_bins
        );
    }
    let grid = TimeGrid::schedule((0..visits).map(|j| j as f64).collect(), 0.5)?;
    for _ in 0..3 {
        let start = Instant::now();
        let c = binned_correlation(
            &panel,
            panel.response(),
            &grid,
            &CorrelationOptions::default(),
        )?;
        println!(
            "binned correlation: {:.3} s ({} used)",
            start.elapsed().as_secs_f64(),
            c.visits_used
        );
    }
    Ok(())
}
