//! A core result's serde JSON, as R values. One generic rule set, so every result the core can
//! serialise reaches R field for field:
//!
//! - object -> named list; `null` -> `NULL`;
//! - array of scalars of one kind (numbers, strings or booleans, `null` allowed as `NA`) ->
//!   double, character or logical vector;
//! - array of objects with the same keys whose values are all scalars -> data.frame, each column
//!   by the rule above (if a column mixes kinds, the array stays a list);
//! - any other array -> list.
//!
//! Numbers are read with `as_f64`, exact for every f64 the core writes.

use extendr_api::prelude::*;
use serde_json::{Map, Value};

use crate::convert::{data_frame, named_list};
use crate::error::Failure;

/// The R value for a JSON value.
pub fn to_robj(v: &Value) -> Result<Robj, Failure> {
    Ok(match v {
        Value::Null => ().into(),
        Value::Bool(b) => (*b).into(),
        Value::Number(n) => n.as_f64().unwrap_or(f64::NAN).into(),
        Value::String(s) => s.as_str().into(),
        Value::Array(items) => array(items)?,
        Value::Object(map) => object(map)?,
    })
}

fn object(map: &Map<String, Value>) -> Result<Robj, Failure> {
    let values = map.values().map(to_robj).collect::<Result<Vec<_>, _>>()?;
    named_list(map.keys().map(String::as_str), values)
}

fn array(items: &[Value]) -> Result<Robj, Failure> {
    let refs: Vec<&Value> = items.iter().collect();
    if !items.is_empty() {
        if let Some(v) = atomic(&refs) {
            return Ok(v);
        }
        if let Some(df) = records(items)? {
            return Ok(df);
        }
    }
    let values = items.iter().map(to_robj).collect::<Result<Vec<_>, _>>()?;
    Ok(List::from_values(values).into())
}

#[derive(Clone, Copy, PartialEq)]
enum Kind {
    Number,
    Text,
    Bool,
}

fn kind(v: &Value) -> Option<Kind> {
    match v {
        Value::Number(_) => Some(Kind::Number),
        Value::String(_) => Some(Kind::Text),
        Value::Bool(_) => Some(Kind::Bool),
        _ => None,
    }
}

/// An atomic vector when every item is a scalar of one kind or `null`; `None` otherwise.
/// All `null` gives a logical `NA` vector, as R's own `NA` is logical.
fn atomic(items: &[&Value]) -> Option<Robj> {
    let mut common = None;
    for v in items {
        if v.is_null() {
            continue;
        }
        let k = kind(v)?;
        if common.is_some_and(|c| c != k) {
            return None;
        }
        common = Some(k);
    }
    Some(match common {
        Some(Kind::Number) => items.iter().map(|v| v.as_f64()).collect_robj(),
        Some(Kind::Text) => items.iter().map(|v| v.as_str()).collect_robj(),
        Some(Kind::Bool) | None => items.iter().map(|v| v.as_bool()).collect_robj(),
    })
}

/// A data.frame when every item is an object with the first one's keys and scalar values, and
/// each column is atomic; `None` otherwise.
fn records(items: &[Value]) -> Result<Option<Robj>, Failure> {
    let Some(first) = items[0].as_object() else {
        return Ok(None);
    };
    let keys: Vec<&str> = first.keys().map(String::as_str).collect();
    let same_shape = items.iter().all(|item| {
        item.as_object().is_some_and(|m| {
            m.len() == keys.len()
                && keys
                    .iter()
                    .all(|k| m.get(*k).is_some_and(|v| v.is_null() || kind(v).is_some()))
        })
    });
    if !same_shape {
        return Ok(None);
    }
    let mut columns = Vec::with_capacity(keys.len());
    for k in &keys {
        let cells: Vec<&Value> = items.iter().map(|item| &item[*k]).collect();
        match atomic(&cells) {
            Some(column) => columns.push(column),
            None => return Ok(None),
        }
    }
    data_frame(keys.into_iter(), columns, items.len()).map(Some)
}
