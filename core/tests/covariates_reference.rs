//! Conditional trends against statsmodels (OLS with cluster-robust CR1 errors, its default
//! correction) and the trajectory grid against a pandas pivot, both in
//! tests/fixtures/covariates_py.json written by tests/reference/covariates_py.py. The smooth of
//! each interval is checked against a fit of that interval's rows alone (brute force).

mod exact_json;

use exact_json::{int, load_exact, num, nums};
use serde_json::Value;
use trajweave_core::covariates::bands::{Band, Bands};
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::individuals::trajectory_grid::trajectory_grid;
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::{Covariate, Missing, Panel, SubjectId, SubjectIds, TimeGrid};

/// Relative agreement asked of slope, intercept and standard error with statsmodels: both are
/// sums of a few hundred terms, so rounding differs by far less.
const OLS_REL_TOL: f64 = 1e-10;
/// Relative agreement of cell means with pandas' (summation order differs).
const MEAN_REL_TOL: f64 = 1e-13;

fn fixture() -> Value {
    load_exact(include_str!("../../tests/fixtures/covariates_py.json"))
}

/// The fixture's panel with its rows in the order given by `perm` (identity when `None`).
fn panel(fx: &Value, perm: Option<&[usize]>) -> Panel {
    let p = &fx["panel"];
    let n = p["time"].as_array().unwrap().len();
    let order: Vec<usize> = perm.map_or((0..n).collect(), <[usize]>::to_vec);
    let col = |name: &str| -> Vec<f64> {
        let v = nums(&p[name]);
        order.iter().map(|&i| v[i]).collect()
    };
    let ids = col("subject").iter().map(|&s| Some(s as i64)).collect();
    Panel::new(
        SubjectIds::Int(ids),
        &col("time"),
        &col("y"),
        vec![
            Covariate::new("age", col("age")),
            Covariate::new("dose", col("dose")),
        ],
        Missing::Error,
    )
    .unwrap()
}

fn bands_of(cases: &Value) -> Bands {
    Bands {
        bands: cases
            .as_array()
            .unwrap()
            .iter()
            .map(|c| Band {
                lower: num(&c["lower"]),
                upper: num(&c["upper"]),
                count: 0,
            })
            .collect(),
        number: cases.as_array().unwrap().len(),
        overlap: 0.0,
        counted: "values".into(),
    }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn slopes_and_cluster_errors_match_statsmodels() {
    let fx = fixture();
    let p = panel(&fx, None);
    let smoother = Smoother::new("lowess").unwrap();
    let mut worst: f64 = 0.0;
    for by in ["age", "dose"] {
        let cases = &fx["trends"][by];
        let c = conditional_trends(&p, by, &bands_of(cases), &smoother, None).unwrap();
        assert_eq!(c.se_kind, "CR1 cluster-robust by subject");
        for (t, e) in c.trends.iter().zip(cases.as_array().unwrap()) {
            assert_eq!(t.subjects, int(&e["subjects"]), "{by} {:?}", t.band);
            assert_eq!(t.observations, int(&e["observations"]));
            for (ours, theirs) in [
                (t.slope, num(&e["slope"])),
                (t.intercept, num(&e["intercept"])),
                (t.slope_se, num(&e["slope_se"])),
            ] {
                worst = worst.max(rel(ours, theirs));
                assert!(rel(ours, theirs) < OLS_REL_TOL, "{by}: {ours} vs {theirs}");
            }
            // Brute force: the smoother on the interval's rows alone, NaN outside their range.
            let cov = p.covariates().iter().find(|v| v.name == by).unwrap();
            let rows: Vec<usize> = (0..p.n_obs())
                .filter(|&r| t.band.contains(cov.values[r]))
                .collect();
            let tt: Vec<f64> = rows.iter().map(|&r| p.time()[r]).collect();
            let yy: Vec<f64> = rows.iter().map(|&r| p.response()[r]).collect();
            let direct = smoother.fit(&tt, &yy).unwrap().predict(&c.at);
            let (lo, hi) = tt
                .iter()
                .fold((f64::MAX, f64::MIN), |(a, b), &v| (a.min(v), b.max(v)));
            for ((f, d), a) in t.fitted.iter().zip(&direct).zip(&c.at) {
                if *a < lo || *a > hi {
                    assert!(f.is_nan());
                } else {
                    assert_eq!(f, d);
                }
            }
        }
    }
    eprintln!("worst relative difference from statsmodels: {worst:e}");
}

#[test]
fn too_few_subjects_names_the_interval() {
    let fx = fixture();
    let p = panel(&fx, None);
    let bands = Bands {
        bands: vec![Band {
            lower: 1000.0,
            upper: 1001.0,
            count: 0,
        }],
        number: 1,
        overlap: 0.0,
        counted: "subjects".into(),
    };
    let e =
        conditional_trends(&p, "age", &bands, &Smoother::new("lowess").unwrap(), None).unwrap_err();
    assert_eq!(
        e.to_string(),
        "too few subjects for the trend in interval 1 [1000, 1001] of `age`: need at least 2, found 0"
    );
}

/// A seeded permutation (Fisher-Yates on an LCG; any fixed shuffle will do).
fn shuffle(n: usize, mut s: u64) -> Vec<usize> {
    let mut v: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        v.swap(i, (s >> 33) as usize % (i + 1));
    }
    v
}

#[test]
fn row_order_and_thread_count_change_nothing() {
    let fx = fixture();
    let n = fx["panel"]["time"].as_array().unwrap().len();
    let base = panel(&fx, None);
    let s = Smoother::new("spline").unwrap();
    let bands = bands_of(&fx["trends"]["dose"]);
    let run = |p: &Panel, threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| conditional_trends(p, "dose", &bands, &s, None).unwrap())
    };
    let expected = run(&base, 1);
    for seed in 1..4 {
        let p = panel(&fx, Some(&shuffle(n, seed)));
        let got = run(&p, 3);
        // Bit-identical, NaN included: compare the serialised results.
        assert_eq!(
            serde_json::to_string(&got).unwrap(),
            serde_json::to_string(&expected).unwrap()
        );
        let g = TimeGrid::edges(vec![0.0, 2.0, 5.0, 10.0]).unwrap();
        let ord: Vec<f64> = (0..p.n_subjects()).map(|i| (i % 5) as f64).collect();
        let a = trajectory_grid(&p, p.response(), &g, &ord).unwrap();
        let b = trajectory_grid(&base, base.response(), &g, &ord).unwrap();
        assert_eq!(
            serde_json::to_string(&a).unwrap(),
            serde_json::to_string(&b).unwrap()
        );
    }
}

#[test]
fn trajectory_grid_matches_pandas_pivot() {
    let fx = fixture();
    let p = panel(&fx, None);
    let gx = &fx["grid"];
    let grid = TimeGrid::edges(nums(&fx["edges"])).unwrap();
    // order_by is given per subject id; map it onto the panel's subject order.
    let ids = nums(&gx["order_by_subjects"]);
    let vals = nums(&gx["order_by"]);
    let order_by: Vec<f64> = p
        .ids()
        .iter()
        .map(|id| {
            let SubjectId::Int(i) = id else {
                panic!("int ids")
            };
            vals[ids.iter().position(|&s| s as i64 == *i).unwrap()]
        })
        .collect();
    let g = trajectory_grid(&p, p.response(), &grid, &order_by).unwrap();
    let subjects: Vec<SubjectId> = nums(&gx["subjects"])
        .iter()
        .map(|&s| SubjectId::Int(s as i64))
        .collect();
    assert_eq!(g.subjects, subjects);
    let counts: Vec<u32> = nums(&gx["counts"]).iter().map(|&c| c as u32).collect();
    assert_eq!(g.counts, counts);
    for (ours, theirs) in g.values.iter().zip(nums(&gx["values"])) {
        if theirs.is_nan() {
            assert!(ours.is_nan());
        } else {
            assert!(rel(*ours, theirs) < MEAN_REL_TOL, "{ours} vs {theirs}");
        }
    }
    assert_eq!(
        g.bins,
        vec!["[0, 2)", "[2, 4)", "[4, 6)", "[6, 8)", "[8, 10]"]
    );
}

#[test]
fn trajectory_grid_errors() {
    let fx = fixture();
    let p = panel(&fx, None);
    let grid = TimeGrid::edges(vec![0.0, 10.0]).unwrap();
    let ord = vec![0.0; p.n_subjects()];
    let e = trajectory_grid(&p, &[1.0], &grid, &ord).unwrap_err();
    assert_eq!(
        e.to_string(),
        "`values` has 1 values but `the panel's rows` has 371: give one value per row in each"
    );
    let mut v = p.response().to_vec();
    v[0] = f64::NAN;
    let e = trajectory_grid(&p, &v, &grid, &ord).unwrap_err();
    assert_eq!(e.row(), Some(p.order()[0] + 1));
    let e = trajectory_grid(&p, p.response(), &grid, &[f64::INFINITY]).unwrap_err();
    assert_eq!(e.kind(), "length_mismatch");
}
