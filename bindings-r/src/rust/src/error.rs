//! Errors as R sees them: one answer shape for success and failure.
//!
//! A core [`trajweave_core::Error`] travels as its `kind()` and its `to_string()`, nothing else,
//! so the R condition's class and message are exactly the core's. Failures of the binding
//! itself (an R object of an unexpected shape that the R wrapper should have prevented) travel
//! as kind `internal`.

use extendr_api::prelude::*;
use trajweave_core::Error;

/// Why a binding call did not produce a value.
pub enum Failure {
    /// The core refused the input; the user can act on it.
    Core(Error),
    /// The binding itself failed: a bug to report, not a user error.
    Internal(String),
}

impl From<Error> for Failure {
    fn from(e: Error) -> Self {
        Failure::Core(e)
    }
}

impl From<extendr_api::Error> for Failure {
    fn from(e: extendr_api::Error) -> Self {
        Failure::Internal(e.to_string())
    }
}

/// What the inner function of each entry point returns.
pub type Outcome = std::result::Result<Robj, Failure>;

/// An option error worded by the core's own `Display`, for checks the R side needs to make
/// (an unknown column, an argument of the wrong shape).
pub fn invalid_option(argument: &str, value: String, allowed: &str) -> Failure {
    Failure::Core(Error::InvalidOption {
        argument: argument.to_string(),
        value,
        allowed: allowed.to_string(),
    })
}

/// Turns an outcome into the list the R wrapper reads: `list(ok = value)` or
/// `list(error_kind = kind, message = text)`.
pub fn respond(outcome: Outcome) -> Robj {
    let (names, values): ([&str; 2], [Robj; 2]) = match outcome {
        Ok(value) => return answer(&["ok"], [value]),
        Err(Failure::Core(e)) => (
            ["error_kind", "message"],
            [e.kind().into(), e.to_string().into()],
        ),
        Err(Failure::Internal(msg)) => (
            ["error_kind", "message"],
            [
                "internal".into(),
                format!("internal error in the trajweave R binding (please report it): {msg}")
                    .into(),
            ],
        ),
    };
    answer(&names, values)
}

fn answer<const N: usize>(names: &[&str; N], values: [Robj; N]) -> Robj {
    // Names and values have the same length, so naming cannot fail; if it ever did, the
    // unnamed list still reaches R, whose wrapper reports a malformed answer.
    let mut list: Robj = List::from_values(values).into();
    let _ = list.set_names(names.iter());
    list
}

/// The error answer for an option the R wrapper found wrong; `value` is shown as the core shows
/// values (text quoted, numbers plain).
#[extendr]
fn tw_invalid_option(argument: &str, value: Robj, allowed: &str) -> Robj {
    respond(Err(invalid_option(
        argument,
        crate::convert::value_text(&value),
        allowed,
    )))
}

/// The error answer for an option refused for how it combines with others; `value` is shown
/// as given (for example "given together with `df`").
#[extendr]
fn tw_invalid_option_text(argument: &str, value: &str, allowed: &str) -> Robj {
    respond(Err(invalid_option(argument, value.to_string(), allowed)))
}

/// The error answer for a value the R wrapper found unusable at a row (counted from 1).
#[extendr]
fn tw_invalid_value(argument: &str, row: f64, value: &str, expected: &str) -> Robj {
    respond(Err(Failure::Core(Error::InvalidValue {
        argument: argument.to_string(),
        row: row as usize,
        value: value.to_string(),
        expected: expected.to_string(),
    })))
}

extendr_module! {
    mod error;
    fn tw_invalid_option;
    fn tw_invalid_option_text;
    fn tw_invalid_value;
}
