//! describe against tests/fixtures/describe_small.json, whose expected values were recomputed
//! with pandas/numpy by tests/reference/describe_reference.py (quantiles: numpy "linear",
//! Hyndman & Fan type 7).

mod common;

use common::{build, number, numbers, FIXTURE_TOL};
use serde_json::Value;
use trajweave_core::{describe, TimeGrid};

fn close(got: f64, want: &Value, what: &str) {
    let want = number(want);
    assert!(
        (got - want).abs() <= FIXTURE_TOL,
        "{what}: got {got}, want {want}"
    );
}

#[test]
fn describe_matches_pandas_reference() {
    let fixture = common::load(include_str!("../../tests/fixtures/describe_small.json"));
    for case in fixture["cases"].as_array().unwrap() {
        let name = case["name"].as_str().unwrap();
        let panel = build(case).unwrap();
        let g = &case["grid"];
        let grid = TimeGrid::from_options(
            g.get("edges").map(numbers),
            g.get("schedule").map(numbers),
            g.get("tolerance").map(number),
        )
        .unwrap();
        let d = describe(&panel, grid.as_ref()).unwrap();
        let got = serde_json::to_value(&d).unwrap();
        let want = &case["expected"];
        for key in [
            "subjects",
            "observations",
            "rows_input",
            "rows_dropped",
            "gap_count",
            "single_visit_subjects",
            "duplicated_rows",
            "covariates",
            "per_subject",
        ] {
            assert_eq!(got[key], want[key], "{name}: {key}");
        }
        for key in ["visits_per_subject", "follow_up", "gaps"] {
            for q in ["min", "q1", "median", "q3", "max"] {
                close(
                    got[key][q].as_f64().unwrap(),
                    &want[key][q],
                    &format!("{name}: {key}.{q}"),
                );
            }
        }
        close(d.time_range[0], &want["time_range"][0], name);
        close(d.time_range[1], &want["time_range"][1], name);

        let gd = d.grid.as_ref().unwrap();
        let wg = &want["grid"];
        let subjects: Vec<usize> = gd.bins.iter().map(|b| b.subjects).collect();
        let visits: Vec<usize> = gd.bins.iter().map(|b| b.observations).collect();
        assert_eq!(
            serde_json::to_value(subjects).unwrap(),
            wg["bin_subjects"],
            "{name}"
        );
        assert_eq!(
            serde_json::to_value(visits).unwrap(),
            wg["bin_observations"],
            "{name}"
        );
        assert_eq!(gd.outside as u64, wg["outside"].as_u64().unwrap(), "{name}");
        assert_eq!(
            serde_json::to_value(gd.patterns).unwrap(),
            wg["patterns"],
            "{name}"
        );
        let per: Vec<Value> = gd
            .per_subject
            .iter()
            .map(
                |p| serde_json::json!({"subject": p.subject, "pattern": p.pattern, "seen": p.seen}),
            )
            .collect();
        assert_eq!(Value::Array(per), wg["per_subject"], "{name}");
    }
}
