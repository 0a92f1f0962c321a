//! The shared bad-input fixture (tests/fixtures/bad_input.json): every case gives its
//! documented kind and exact message. The Python and R suites read the same file.

use serde_json::Value;
use trajweave_core::{
    describe, Covariate, Error, Missing, Panel, SimulateOptions, SubjectIds, TimeGrid,
};

fn fixture() -> Value {
    let text = include_str!("../../tests/fixtures/bad_input.json");
    serde_json::from_str(text).expect("fixture is valid JSON")
}

fn number(v: &Value) -> f64 {
    match v {
        Value::String(s) => match s.as_str() {
            "nan" => f64::NAN,
            "inf" => f64::INFINITY,
            "-inf" => f64::NEG_INFINITY,
            other => panic!("fixture: unknown number {other}"),
        },
        other => other.as_f64().expect("fixture: number"),
    }
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("fixture: array")
        .iter()
        .map(number)
        .collect()
}

fn subjects(case: &Value) -> SubjectIds {
    let raw = case["subject"].as_array().expect("fixture: subject array");
    match case["subject_type"]
        .as_str()
        .expect("fixture: subject_type")
    {
        "int" => SubjectIds::Int(raw.iter().map(|v| v.as_i64()).collect()),
        "float" => SubjectIds::Float(raw.iter().map(number).collect()),
        "text" => SubjectIds::Text(raw.iter().map(|v| v.as_str().map(String::from)).collect()),
        other => panic!("fixture: subject_type {other}"),
    }
}

fn build(case: &Value) -> Result<Panel, Error> {
    let covariates = case
        .get("covariates")
        .and_then(Value::as_object)
        .map(|m| {
            m.iter()
                .map(|(k, v)| Covariate::new(k.clone(), numbers(v)))
                .collect()
        })
        .unwrap_or_default();
    let missing: Missing = case
        .get("missing")
        .and_then(Value::as_str)
        .unwrap_or("error")
        .parse()?;
    Panel::new(
        subjects(case),
        &numbers(&case["time"]),
        &numbers(&case["response"]),
        covariates,
        missing,
    )
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
