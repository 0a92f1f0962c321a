//! mean_curve's subject bootstrap and tune_smoother's cross-validation, checked against
//! brute-force recomputation and closed-form cases.

use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::trend::tune::tune_smoother;
use trajweave_core::{simulate, Missing, Panel, SimulateOptions, SubjectIds};

fn small_panel() -> Panel {
    simulate(&SimulateOptions {
        subjects: 12,
        seed: 5,
        ..Default::default()
    })
    .unwrap()
    .to_panel()
    .unwrap()
}

fn kernel(h: f64) -> Smoother {
    Smoother::from_options("kernel", &[("bandwidth".into(), OptionValue::Number(h))]).unwrap()
}

#[test]
fn leave_one_subject_out_equals_brute_force_refits() {
    let p = small_panel();
    let candidates = [0.3, 0.8, 2.0];
    let got = tune_smoother(&p, &kernel(1.0), None, &candidates, None, 0).unwrap();
    assert_eq!(got.scheme, "leave-one-subject-out");
    // Brute force: for each subject, fit on the others' rows by hand, predict its rows.
    for (c, &h) in candidates.iter().enumerate() {
        let mut sse = 0.0;
        for i in 0..p.n_subjects() {
            let (mut tx, mut ty) = (vec![], vec![]);
            for j in (0..p.n_subjects()).filter(|&j| j != i) {
                for r in p.subject_rows(j) {
                    tx.push(p.time()[r]);
                    ty.push(p.response()[r]);
                }
            }
            let curve = kernel(h).fit(&tx, &ty).unwrap();
            for r in p.subject_rows(i) {
                let e = curve.predict(&[p.time()[r]])[0] - p.response()[r];
                sse += e * e;
            }
        }
        let want = sse / p.n_obs() as f64;
        assert!(
            (got.scores[c] - want).abs() <= 1e-12 * want,
            "{h}: {} vs {want}",
            got.scores[c]
        );
    }
    let best = (0..3)
        .min_by(|&a, &b| got.scores[a].total_cmp(&got.scores[b]))
        .unwrap();
    assert_eq!(got.best_index, best);
}

#[test]
fn k_folds_cover_every_subject_once_and_are_seeded() {
    let p = small_panel();
    let a = tune_smoother(&p, &kernel(1.0), None, &[0.5, 1.0], Some(4), 9).unwrap();
    let b = tune_smoother(&p, &kernel(1.0), None, &[0.5, 1.0], Some(4), 9).unwrap();
    assert_eq!(a, b);
    assert_eq!((a.folds, a.scheme.as_str()), (4, "k-fold"));
    let e = tune_smoother(&p, &kernel(1.0), None, &[0.5], Some(1), 9).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`folds` = 1 is not allowed: a whole number from 2 to the number of subjects (12)"
    );
    let e = tune_smoother(&p, &kernel(1.0), None, &[-1.0], None, 9).unwrap_err();
    assert_eq!(e.kind(), "invalid_option");
    let e = tune_smoother(&p, &kernel(1.0), None, &[], None, 9).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`candidates` = none is not allowed: give at least one candidate value"
    );
}

#[test]
fn identical_subjects_give_a_band_of_zero_width() {
    // Closed form: if every subject has the same rows, every resample is the same data.
    let (mut ids, mut t, mut y) = (vec![], vec![], vec![]);
    for s in 0..8 {
        for k in 0..6 {
            ids.push(Some(s));
            t.push(k as f64);
            y.push((k as f64).sqrt());
        }
    }
    let p = Panel::new(SubjectIds::Int(ids), &t, &y, vec![], Missing::Error).unwrap();
    let boot = BootstrapOptions {
        reps: 20,
        level: 0.9,
        seed: 3,
    };
    let m = mean_curve(&p, &kernel(0.7), None, Some(&boot)).unwrap();
    let band = m.band.unwrap();
    for k in 0..m.at.len() {
        assert!(
            (band.lower[k] - m.fitted[k]).abs() < 1e-12
                && (band.upper[k] - m.fitted[k]).abs() < 1e-12
        );
    }
}

#[test]
fn band_is_the_same_for_any_thread_count() {
    let p = simulate(&SimulateOptions {
        subjects: 80,
        ..Default::default()
    })
    .unwrap()
    .to_panel()
    .unwrap();
    let boot = BootstrapOptions {
        reps: 30,
        ..Default::default()
    };
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| mean_curve(&p, &kernel(0.5), None, Some(&boot)).unwrap())
    };
    let (one, two) = (run(1), run(2));
    assert_eq!(one, two);
    let band = one.band.unwrap();
    let inside = (0..one.at.len())
        .filter(|&k| band.lower[k] <= one.fitted[k] && one.fitted[k] <= band.upper[k])
        .count();
    assert!(
        inside >= 95,
        "the fit lies inside its own band at {inside} of 101 points"
    );
    let e = mean_curve(
        &p,
        &kernel(0.5),
        None,
        Some(&BootstrapOptions {
            reps: 5,
            ..Default::default()
        }),
    )
    .unwrap_err();
    assert_eq!(
        e.to_string(),
        "`reps` = 5 is not allowed: a whole number from 10 to 100000"
    );
}
