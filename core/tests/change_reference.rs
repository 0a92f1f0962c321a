//! The average change per time unit (core/src/trend/change.rs) against numpy and statsmodels
//! (tests/fixtures/change_py.json from tests/reference/change_py.py), closed forms on data
//! exactly linear in time, the coverage of its bootstrap intervals in a simulation, and its
//! typed errors.

mod common;

use trajweave_core::numeric::rng::Rng;
use trajweave_core::trend::change::{average_change, ChangeOptions};
use trajweave_core::trend::curve::OptionValue;
use trajweave_core::trend::mean_curve::BootstrapOptions;
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::{Missing, Panel, SubjectIds};

fn panel(subject: Vec<i64>, t: &[f64], y: &[f64]) -> Panel {
    let ids = SubjectIds::Int(subject.into_iter().map(Some).collect());
    Panel::new(ids, t, y, vec![], Missing::Error).unwrap()
}

fn options(central: f64, reps: usize, seed: u64) -> ChangeOptions {
    ChangeOptions {
        central,
        bootstrap: BootstrapOptions {
            reps,
            level: 0.95,
            seed,
        },
    }
}

fn lowess(iterations: f64, delta: f64) -> Smoother {
    Smoother::from_options(
        "lowess",
        &[
            ("iterations".into(), OptionValue::Number(iterations)),
            ("delta".into(), OptionValue::Number(delta)),
        ],
    )
    .unwrap()
}

#[test]
fn window_slope_and_lowess_estimate_match_numpy_and_statsmodels() {
    let f = common::load(include_str!("../../tests/fixtures/change_py.json"));
    let subject: Vec<i64> = f["subject"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_i64().unwrap())
        .collect();
    let (t, y) = (common::numbers(&f["time"]), common::numbers(&f["response"]));
    let p = panel(subject, &t, &y);
    for case in f["cases"].as_array().unwrap() {
        let central = case["central"].as_f64().unwrap();
        let c = average_change(&p, &lowess(0.0, 0.0), &options(central, 20, 1)).unwrap();
        // numpy.quantile(method="linear"): the same type-7 arithmetic, to round-off.
        assert!((c.from - case["from"].as_f64().unwrap()).abs() < 1e-12);
        assert!((c.to - case["to"].as_f64().unwrap()).abs() < 1e-12);
        // statsmodels lowess (it=0, delta=0) + numpy.interp: the fits agree to ~1e-12 x sd(y)
        // (docs/methods-lowess.md), the slope over a window of several years to 1e-10.
        let want = case["lowess_estimate"].as_f64().unwrap();
        assert!(
            (c.estimate - want).abs() < 1e-10,
            "{} vs {want}",
            c.estimate
        );
        // numpy.polyfit(t, y, 1)[0].
        let ols = f["ols_slope"].as_f64().unwrap();
        assert!((c.ols_slope - ols).abs() < 1e-12 * ols.abs().max(1.0));
        assert!(c.lower <= c.estimate && c.estimate <= c.upper);
        assert!(c.ols_lower <= c.ols_slope && c.ols_slope <= c.ols_upper);
    }
}

/// Subjects with their own intercepts (and, when `slope_sd` > 0, slopes) around the line
/// 50 + slope t, seen at irregular times in [0, 6].
fn linear_panel(subjects: usize, slope: f64, slope_sd: f64, noise: f64, seed: u64) -> Panel {
    let (mut id, mut t, mut y) = (Vec::new(), Vec::new(), Vec::new());
    for s in 0..subjects {
        let mut rng = Rng::new(seed, s as u64);
        let (a, b) = (8.0 * rng.normal(), slope_sd * rng.normal());
        let visits = 3 + (rng.uniform() * 5.0) as usize;
        for _ in 0..visits {
            let time = 6.0 * rng.uniform();
            id.push(s as i64 + 1);
            t.push(time);
            y.push(50.0 + a + (slope + b) * time + noise * rng.normal());
        }
    }
    panel(id, &t, &y)
}

/// Subjects in pairs on the line 50 - 1.25 t: a pair shares its visit times and its two
/// members carry opposite noise (a subject offset plus visit noise), so the noise sums to 0 at
/// every distinct time.
fn paired_panel(noise: f64) -> Panel {
    let (mut id, mut t, mut y) = (Vec::new(), Vec::new(), Vec::new());
    for k in 0..20u64 {
        let mut rng = Rng::new(5, k);
        let offset = 6.0 * rng.normal();
        for _ in 0..4 {
            let time = 6.0 * rng.uniform();
            let e = noise * (offset + 2.0 * rng.normal());
            for (member, sign) in [(0, 1.0), (1, -1.0)] {
                id.push(2 * k as i64 + member + 1);
                t.push(time);
                y.push(50.0 - 1.25 * time + sign * e);
            }
        }
    }
    panel(id, &t, &y)
}

fn line_smoothers() -> Vec<Smoother> {
    let kernel =
        Smoother::from_options("kernel", &[("bandwidth".into(), OptionValue::Number(0.8))])
            .unwrap();
    let spline =
        Smoother::from_options("spline", &[("df".into(), OptionValue::Number(5.0))]).unwrap();
    vec![
        lowess(0.0, 0.0),
        kernel,
        spline,
        Smoother::new("spline").unwrap(),
    ]
}

#[test]
fn lines_with_cancelling_subject_noise_give_the_slope_exactly() {
    // Closed form: each smoother here is linear in y with weights that depend on x alone and
    // are equal for tied x (LOWESS without robustness, local-linear kernel, spline at any
    // penalty), and reproduces lines; the noise sums to 0 at every distinct time, so the fit
    // is the line 50 - 1.25 t and its average slope is -1.25. The least-squares slope is
    // -1.25 exactly for the same reason.
    let p = paired_panel(1.0);
    for s in line_smoothers() {
        let c = average_change(&p, &s, &options(0.9, 20, 2)).unwrap();
        assert!(
            (c.estimate + 1.25).abs() < 1e-9,
            "{}: {}",
            s.family(),
            c.estimate
        );
        assert!((c.ols_slope + 1.25).abs() < 1e-12, "{}", c.ols_slope);
    }
}

#[test]
fn exact_lines_give_the_slope_in_every_replicate() {
    // Closed form: with no noise every resample lies on the line too, so both intervals
    // collapse onto -1.25.
    let p = paired_panel(0.0);
    for s in line_smoothers()
        .into_iter()
        .chain([Smoother::new("lowess").unwrap()])
    {
        let c = average_change(&p, &s, &options(0.9, 20, 2)).unwrap();
        for v in [
            c.estimate,
            c.lower,
            c.upper,
            c.ols_slope,
            c.ols_lower,
            c.ols_upper,
        ] {
            assert!((v + 1.25).abs() < 1e-9, "{}: {v}", s.family());
        }
        assert_eq!(c.failed, 0);
    }
}

#[test]
fn linear_mean_with_subject_noise_gives_the_slope_within_error() {
    // Closed form: the mean curve is 50 - 1.25 t; subject intercepts and visit noise average
    // out, so a line-reproducing smoother (LOWESS degree 1, spline) estimates -1.25 with a
    // standard error of about 0.1 here; the interval must hold it, the estimate be near it.
    let p = linear_panel(150, -1.25, 0.0, 2.0, 11);
    for s in [lowess(0.0, 0.0), Smoother::new("spline").unwrap()] {
        let c = average_change(&p, &s, &options(0.9, 100, 3)).unwrap();
        assert!(
            (c.estimate + 1.25).abs() < 0.3,
            "{}: {}",
            s.family(),
            c.estimate
        );
        assert!(c.lower < -1.25 && -1.25 < c.upper, "{}: {c:?}", s.family());
    }
}

#[test]
fn intervals_cover_the_true_slope_in_a_simulation() {
    // 40 simulated panels with random intercepts and slopes around the mean line
    // 50 - 1.25 t (the truth, the average derivative over any window). At nominal 0.95 the
    // count of intervals holding -1.25 is Binomial(40, 0.95) for an exact interval (mean 38);
    // the percentile interval of a cluster bootstrap with 60 subjects is known to cover a
    // little less (Davison & Hinkley 1997, ch. 5). We ask for at least 34 of 40 for each
    // interval (an exact 0.95 interval falls below that with probability 0.05; the seeds are
    // fixed, so the test is deterministic).
    let smoother =
        Smoother::from_options("spline", &[("df".into(), OptionValue::Number(4.0))]).unwrap();
    let (mut hit, mut hit_ols) = (0, 0);
    for seed in 0..40 {
        let p = linear_panel(60, -1.25, 0.5, 2.0, 100 + seed);
        let c = average_change(&p, &smoother, &options(0.9, 100, seed)).unwrap();
        hit += usize::from(c.lower <= -1.25 && -1.25 <= c.upper);
        hit_ols += usize::from(c.ols_lower <= -1.25 && -1.25 <= c.ols_upper);
    }
    assert!(
        hit >= 34,
        "estimate interval held the truth {hit} times of 40"
    );
    assert!(
        hit_ols >= 34,
        "ols interval held the truth {hit_ols} times of 40"
    );
}

#[test]
fn same_result_for_any_thread_count() {
    let p = linear_panel(50, -1.0, 0.3, 1.0, 9);
    let s = Smoother::new("super").unwrap();
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| average_change(&p, &s, &options(0.9, 30, 4)).unwrap())
    };
    assert_eq!(run(1), run(2));
}

#[test]
fn typed_errors() {
    let p = linear_panel(20, -1.0, 0.0, 1.0, 1);
    let s = Smoother::new("lowess").unwrap();
    let message = |o: ChangeOptions| average_change(&p, &s, &o).unwrap_err().to_string();
    let central = "a number in (0, 1], the share of observation times the window covers (e.g. 0.9)";
    for bad in [0.0, -0.5, 1.5, f64::NAN] {
        assert_eq!(
            message(options(bad, 20, 1)),
            format!("`central` = {bad} is not allowed: {central}")
        );
    }
    assert_eq!(
        message(options(0.9, 0, 1)),
        "`reps` = 0 is not allowed: a whole number from 10 to 100000"
    );
    let mut o = options(0.9, 20, 1);
    o.bootstrap.level = 1.0;
    assert_eq!(
        message(o),
        "`level` = 1 is not allowed: a number in (0, 1), e.g. 0.95"
    );
    assert_eq!(
        ChangeOptions::from_numbers(0.9, 20.5, 0.95, 1.0)
            .unwrap_err()
            .kind(),
        "invalid_option"
    );
    // Every visit at one time: the window has zero width.
    let flat = panel(vec![1, 2, 3], &[2.0, 2.0, 2.0], &[1.0, 2.0, 3.0]);
    let e = average_change(&flat, &s, &options(0.9, 20, 1)).unwrap_err();
    assert_eq!(
        e.to_string(),
        "too few distinct observation times in the central window for an average change per \
         time unit: need at least 2, found 1"
    );
}
