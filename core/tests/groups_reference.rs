//! Group and dropout curves on R's ChickWeight (tests/fixtures/chickweight_r.json, written by
//! tests/reference/chickweight_r.R): per-diet chick and row counts equal base R table(), each
//! diet's curve equals a fit of that diet's rows alone (brute force), and the dropout cohorts
//! equal R's cohorts of each chick's last day (tapply + findInterval). The trajectory grid on
//! ChickWeight is checked against a brute-force cell mean written here.

mod exact_json;

use exact_json::{int, load_exact, nums};
use serde_json::Value;
use trajweave_core::covariates::groups::{dropout_curves, group_curves};
use trajweave_core::individuals::trajectory_grid::trajectory_grid;
use trajweave_core::trend::smoother::Smoother;
use trajweave_core::{Covariate, Missing, Panel, SubjectId, SubjectIds, TimeGrid};

/// Relative agreement of a cell mean with the brute-force mean (summation order may differ).
const MEAN_REL_TOL: f64 = 1e-13;

fn fixture() -> Value {
    load_exact(include_str!("../../tests/fixtures/chickweight_r.json"))
}

fn chickweight(fx: &Value) -> Panel {
    let ids = nums(&fx["chick"]).iter().map(|&c| Some(c as i64)).collect();
    Panel::new(
        SubjectIds::Int(ids),
        &nums(&fx["time"]),
        &nums(&fx["weight"]),
        vec![Covariate::new("Diet", nums(&fx["diet"]))],
        Missing::Error,
    )
    .unwrap()
}

fn ints(v: &Value) -> Vec<usize> {
    v.as_array().unwrap().iter().map(int).collect()
}

#[test]
fn diet_curves_are_fits_of_each_diet_alone() {
    let fx = fixture();
    let p = chickweight(&fx);
    let (t, w, diet) = (nums(&fx["time"]), nums(&fx["weight"]), nums(&fx["diet"]));
    for family in ["lowess", "spline", "kernel"] {
        let s = Smoother::new(family).unwrap();
        let g = group_curves(&p, "Diet", &s, None).unwrap();
        assert_eq!((g.by.as_str(), g.left_out), ("Diet", 0));
        let levels: Vec<f64> = g.groups.iter().map(|c| c.level.unwrap()).collect();
        assert_eq!(levels, nums(&fx["diet_levels"]));
        let chicks: Vec<usize> = g.groups.iter().map(|c| c.subjects).collect();
        assert_eq!(chicks, ints(&fx["diet_chicks"]), "table(Diet) of chicks");
        let rows: Vec<usize> = g.groups.iter().map(|c| c.observations).collect();
        assert_eq!(rows, ints(&fx["diet_rows"]), "table(Diet) of rows");
        for c in &g.groups {
            // Brute force: that diet's rows in the input order, fitted alone.
            let keep: Vec<usize> = (0..t.len())
                .filter(|&r| diet[r] == c.level.unwrap())
                .collect();
            let x: Vec<f64> = keep.iter().map(|&r| t[r]).collect();
            let y: Vec<f64> = keep.iter().map(|&r| w[r]).collect();
            let direct = s.fit(&x, &y).unwrap();
            assert_eq!(c.curve, direct, "{family} diet {}", c.label);
            // Every diet is seen from day 0 to day 21, so no grid point is outside.
            assert_eq!(c.fitted, direct.predict(&g.at));
        }
    }
}

#[test]
fn dropout_cohorts_match_r_last_days() {
    let fx = fixture();
    let p = chickweight(&fx);
    let s = Smoother::new("lowess").unwrap();
    for case in fx["dropout"].as_array().unwrap() {
        let grid = TimeGrid::edges(nums(&case["edges"])).unwrap();
        let d = dropout_curves(&p, &grid, &s, None).unwrap();
        let labels: Vec<String> = ints(&case["bins"]).iter().map(|&b| grid.label(b)).collect();
        assert_eq!(
            d.groups.iter().map(|g| g.label.clone()).collect::<Vec<_>>(),
            labels
        );
        let chicks: Vec<usize> = d.groups.iter().map(|g| g.subjects).collect();
        assert_eq!(chicks, ints(&case["chicks"]), "{}", case["name"]);
        let rows: Vec<usize> = d.groups.iter().map(|g| g.observations).collect();
        assert_eq!(rows, ints(&case["rows"]));
        assert_eq!(d.left_out, int(&case["left_out"]));
        assert!(d.groups.iter().all(|g| g.level.is_none()));
        // A cohort's curve is not drawn past its last visit.
        let last = d.groups[0].curve.x.last().copied().unwrap();
        for (a, f) in d.at.iter().zip(&d.groups[0].fitted) {
            assert_eq!(f.is_nan(), *a > last);
        }
    }
    // The chick lost after day 2 has two distinct times, too few for a smoothing spline.
    let grid = TimeGrid::edges(nums(&fx["dropout"][0]["edges"])).unwrap();
    let e = dropout_curves(&p, &grid, &Smoother::new("spline").unwrap(), None).unwrap_err();
    assert_eq!(e.kind(), "too_few");
    assert!(
        e.to_string().contains("in the dropout cohort [1, 3)"),
        "{e}"
    );
}

#[test]
fn group_errors() {
    let fx = fixture();
    let ids = nums(&fx["chick"]).iter().map(|&c| Some(c as i64)).collect();
    let w = nums(&fx["weight"]);
    let p = Panel::new(
        SubjectIds::Int(ids),
        &nums(&fx["time"]),
        &w,
        vec![Covariate::new("weight", w.clone())],
        Missing::Error,
    )
    .unwrap();
    let e = group_curves(&p, "weight", &Smoother::new("lowess").unwrap(), None).unwrap_err();
    assert!(
        e.to_string().starts_with("`covariate` = \"weight\" with "),
        "{e}"
    );
    assert!(e.to_string().contains("at most 50 levels"));
    let grid = TimeGrid::edges(vec![100.0, 200.0]).unwrap();
    let e = dropout_curves(&p, &grid, &Smoother::new("lowess").unwrap(), None).unwrap_err();
    assert_eq!(e.kind(), "empty");
}

#[test]
fn trajectory_grid_on_chickweight() {
    let fx = fixture();
    let p = chickweight(&fx);
    let (chick, t, w) = (nums(&fx["chick"]), nums(&fx["time"]), nums(&fx["weight"]));
    let edges = vec![0.0, 7.0, 14.0, 21.0];
    let grid = TimeGrid::edges(edges.clone()).unwrap();
    // Order by R's last day (fixture, by chick id = panel order), ties by id.
    let last = nums(&fx["last_day"]);
    let g = trajectory_grid(&p, p.response(), &grid, &last).unwrap();
    let mut order: Vec<(f64, i64)> = nums(&fx["last_chick"])
        .iter()
        .zip(&last)
        .map(|(&c, &l)| (l, c as i64))
        .collect();
    order.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let want: Vec<SubjectId> = order.iter().map(|&(_, c)| SubjectId::Int(c)).collect();
    assert_eq!(g.subjects, want);
    for (row, &(_, c)) in order.iter().enumerate() {
        for b in 0..3 {
            // Brute force over the input rows: bins [0, 7), [7, 14), [14, 21].
            let inb = |x: f64| x >= edges[b] && (x < edges[b + 1] || (b == 2 && x == 21.0));
            let cell: Vec<f64> = (0..t.len())
                .filter(|&r| chick[r] as i64 == c && inb(t[r]))
                .map(|r| w[r])
                .collect();
            assert_eq!(g.counts[row * 3 + b] as usize, cell.len());
            let v = g.values[row * 3 + b];
            if cell.is_empty() {
                assert!(v.is_nan());
            } else {
                let mean = cell.iter().sum::<f64>() / cell.len() as f64;
                assert!((v - mean).abs() <= MEAN_REL_TOL * mean, "{v} vs {mean}");
            }
        }
    }
}
