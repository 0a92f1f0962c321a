//! The shared bad-input fixture (tests/fixtures/bad_input.json): every case gives its
//! documented kind and exact message. The Python and R suites read the same file.

mod common;

use common::{build, number, numbers};
use serde_json::Value;
use trajweave_core::{describe, Error, Missing, Panel, SimulateOptions, SubjectIds, TimeGrid};

fn fixture() -> Value {
    common::load(include_str!("../../tests/fixtures/bad_input.json"))
}

fn check(name: &str, got: Result<impl std::fmt::Debug, Error>, case: &Value) {
    let err = got.expect_err(name);
    assert_eq!(err.kind(), case["kind"].as_str().unwrap(), "{name}");
    assert_eq!(err.to_string(), case["message"].as_str().unwrap(), "{name}");
}

#[test]
fn panel_cases() {
    for case in fixture()["panel_cases"].as_array().unwrap() {
        check(case["name"].as_str().unwrap(), build(case), case);
    }
}

#[test]
fn describe_cases() {
    let panel = Panel::new(
        SubjectIds::Int(vec![Some(1)]),
        &[0.0],
        &[1.0],
        vec![],
        Missing::Error,
    )
    .unwrap();
    for case in fixture()["describe_cases"].as_array().unwrap() {
        let g = &case["grid"];
        let got = TimeGrid::from_options(
            g.get("edges").map(numbers),
            g.get("schedule").map(numbers),
            g.get("tolerance").map(number),
        )
        .and_then(|grid| describe(&panel, grid.as_ref()));
        check(case["name"].as_str().unwrap(), got, case);
    }
}

#[test]
fn simulate_cases() {
    for case in fixture()["simulate_cases"].as_array().unwrap() {
        let mut o = SimulateOptions::default();
        let got = case["options"]
            .as_object()
            .unwrap()
            .iter()
            .try_for_each(|(k, v)| o.set(k, number(v)).map(|_| ()))
            .and_then(|()| trajweave_core::simulate(&o));
        check(case["name"].as_str().unwrap(), got, case);
    }
}

#[test]
fn legal_oddities_are_reported_not_refused() {
    // One-visit subjects and duplicated (subject, time) rows are legal (DESIGN.md).
    let ids = SubjectIds::Int(vec![Some(1), Some(1), Some(2)]);
    let p = Panel::new(
        ids,
        &[0.0, 0.0, 3.0],
        &[1.0, 2.0, 3.0],
        vec![],
        Missing::Error,
    )
    .unwrap();
    let d = describe(&p, None).unwrap();
    assert_eq!((d.single_visit_subjects, d.duplicated_rows), (1, 1));
}
