//! Reading the shared fixtures of tests/fixtures (also read by the Python and R suites).
#![allow(dead_code)]

use serde_json::Value;
use trajweave_core::{Covariate, Error, Missing, Panel, SubjectIds};

/// Absolute tolerance for values that are sums and quantiles of a few exact decimals.
pub const FIXTURE_TOL: f64 = 1e-12;

pub fn load(text: &str) -> Value {
    serde_json::from_str(text).expect("fixture is valid JSON")
}

/// A fixture number: a JSON number or one of the strings "nan", "inf", "-inf".
pub fn number(v: &Value) -> f64 {
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

pub fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("fixture: array")
        .iter()
        .map(number)
        .collect()
}

/// Subject ids typed by `subject_type` (int, float, text), or by the values when absent.
pub fn subjects(case: &Value) -> SubjectIds {
    let raw = case["subject"].as_array().expect("fixture: subject array");
    let kind = case
        .get("subject_type")
        .and_then(Value::as_str)
        .unwrap_or_else(|| {
            if raw.iter().any(Value::is_string) {
                "text"
            } else {
                "int"
            }
        });
    match kind {
        "int" => SubjectIds::Int(raw.iter().map(Value::as_i64).collect()),
        "float" => SubjectIds::Float(raw.iter().map(number).collect()),
        "text" => SubjectIds::Text(raw.iter().map(|v| v.as_str().map(String::from)).collect()),
        other => panic!("fixture: subject_type {other}"),
    }
}

/// The panel a fixture case describes.
pub fn build(case: &Value) -> Result<Panel, Error> {
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
