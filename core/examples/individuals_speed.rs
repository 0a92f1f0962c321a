//! Timing of residuals (polynomial degree 1) + ranking (median) + picks at 1e6 subjects x 10
//! visits. Run: `cargo run --release -p trajweave-core --example individuals_speed`.
//! Panel construction is timed separately (it is not part of the three steps).

use std::time::Instant;

use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::numeric::rng::Rng;
use trajweave_core::{Missing, Panel, SubjectIds};

fn main() -> trajweave_core::Result<()> {
    let (subjects, visits) = (1_000_000usize, 10usize);
    let n = subjects * visits;
    let mut rng = Rng::new(1, 0);
    let ids = SubjectIds::Int((0..n).map(|k| Some((k / visits) as i64)).collect());
    let time: Vec<f64> = (0..n)
        .map(|k| (k % visits) as f64 + 0.5 * rng.uniform())
        .collect();
    let response: Vec<f64> = time
        .iter()
        .map(|t| 90.0 - 1.5 * t + 5.0 * rng.normal())
        .collect();
    let t0 = Instant::now();
    let panel = Panel::new(ids, &time, &response, vec![], Missing::Error)?;
    let t_panel = t0.elapsed();

    let mut best = [f64::INFINITY; 4];
    for _ in 0..5 {
        let t0 = Instant::now();
        let r = residuals(&panel, &MeanModel::Polynomial { degree: 1 })?;
        let t1 = Instant::now();
        let ranking = rank_subjects(&panel, &r.residuals, Summary::Median)?;
        let t2 = Instant::now();
        let picks = pick_subjects(
            &panel,
            &r.residuals,
            &ranking,
            &[0.05, 0.25, 0.5, 0.75, 0.95],
        )?;
        let t3 = Instant::now();
        assert_eq!(picks.len(), 5);
        let parts = [t1 - t0, t2 - t1, t3 - t2, t3 - t0];
        for (b, p) in best.iter_mut().zip(parts) {
            *b = b.min(p.as_secs_f64());
        }
    }
    println!(
        "{subjects} subjects x {visits} visits, {} threads (panel build {:.3} s, not counted)",
        rayon::current_num_threads(),
        t_panel.as_secs_f64()
    );
    println!(
        "best of 5: residuals {:.3} s, ranking {:.3} s, picks {:.6} s, total {:.3} s",
        best[0], best[1], best[2], best[3]
    );
    Ok(())
}
