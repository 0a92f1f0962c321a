//! Seeded samples of subjects: reproducible, refused when too large, and the spread strategy
//! covers the range of the summary and of follow-up better than a uniform random draw
//! (measured here over 50 seeds against the random strategy, the outside yardstick being the
//! largest gap left in the quantile range by the subjects drawn).

use trajweave_core::individuals::ranking::{rank_subjects, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::{simulate, Panel, SimulateOptions};

/// Spread's mean largest gap must be below this fraction of random's, on each axis.
const SPREAD_GAIN: f64 = 0.75;
const SEEDS: u64 = 50;

fn panel(subjects: usize) -> Panel {
    simulate(&SimulateOptions {
        subjects,
        seed: 2,
        ..Default::default()
    })
    .unwrap()
    .to_panel()
    .unwrap()
}

/// Largest gap between sorted positions in [0, 1], the ends included.
fn largest_gap(mut q: Vec<f64>) -> f64 {
    q.push(0.0);
    q.push(1.0);
    q.sort_by(f64::total_cmp);
    q.windows(2).map(|w| w[1] - w[0]).fold(0.0, f64::max)
}

#[test]
fn same_seed_same_subjects_and_bounds() {
    let p = panel(300);
    for strategy in [Strategy::Random, Strategy::Spread] {
        let a = sample_subjects(&p, None, 12, 7, strategy).unwrap();
        assert_eq!(a, sample_subjects(&p, None, 12, 7, strategy).unwrap());
        assert_ne!(
            a.subjects,
            sample_subjects(&p, None, 12, 8, strategy).unwrap().subjects
        );
        let mut sorted = a.subject_index.clone();
        sorted.dedup();
        assert_eq!(sorted, a.subject_index, "distinct and in panel order");
        assert_eq!(a.subjects.len(), 12);
        let all = sample_subjects(&p, None, 300, 1, strategy).unwrap();
        assert_eq!(all.subject_index, (0..300).collect::<Vec<_>>());
        let e = sample_subjects(&p, None, 301, 1, strategy).unwrap_err();
        assert_eq!(e.kind(), "too_few");
    }
}

#[test]
fn spread_covers_summary_and_follow_up_better_than_random() {
    let p = panel(2000);
    let res = residuals(&p, &MeanModel::Polynomial { degree: 1 })
        .unwrap()
        .residuals;
    let ranking = rank_subjects(&p, &res, Summary::Median).unwrap();
    let m = ranking.subjects.len();
    // Quantile position of each subject on each axis: rank position / (m - 1); follow-up by
    // its mid-rank among the ranked subjects.
    let mut rank_q = vec![f64::NAN; p.n_subjects()];
    for (pos, &i) in ranking.subject_index.iter().enumerate() {
        rank_q[i] = pos as f64 / (m - 1) as f64;
    }
    let fu = |i: usize| {
        let r = p.subject_rows(i);
        p.time()[r.end - 1] - p.time()[r.start]
    };
    let fus: Vec<f64> = ranking.subject_index.iter().map(|&i| fu(i)).collect();
    let fu_q = |i: usize| {
        let v = fu(i);
        let below = fus.iter().filter(|&&x| x < v).count() as f64;
        let equal = fus.iter().filter(|&&x| x == v).count() as f64;
        (below + (equal - 1.0) / 2.0) / (m - 1) as f64
    };
    for k in [9, 25] {
        let mut mean_gap = [[0.0; 2]; 2]; // [strategy][axis]
        for (s, strategy) in [Strategy::Random, Strategy::Spread].into_iter().enumerate() {
            for seed in 0..SEEDS {
                let a = sample_subjects(&p, Some(&ranking), k, seed, strategy).unwrap();
                let g0 = largest_gap(a.subject_index.iter().map(|&i| rank_q[i]).collect());
                let g1 = largest_gap(a.subject_index.iter().map(|&i| fu_q(i)).collect());
                mean_gap[s][0] += g0 / SEEDS as f64;
                mean_gap[s][1] += g1 / SEEDS as f64;
            }
        }
        eprintln!(
            "k = {k}: mean largest gap, summary rank: random {:.3}, spread {:.3}; follow-up: random {:.3}, spread {:.3}",
            mean_gap[0][0], mean_gap[1][0], mean_gap[0][1], mean_gap[1][1]
        );
        for (axis, (spread, random)) in mean_gap[1].iter().zip(&mean_gap[0]).enumerate() {
            assert!(*spread < SPREAD_GAIN * random, "k = {k}, axis {axis}");
        }
    }
}
